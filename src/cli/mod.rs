//! The command line: the same engine as the window, without a window.
//!
//! Each command beyond a few lines has its own file here (its `Args` struct and a `run`
//! function); this file holds the parser, the shared argument types and the dispatch.

mod admittance;
mod color;
mod field;
mod fit;
pub mod guard;
mod info;
mod library;
mod map;
mod measured;
mod monitor;
pub mod optimize;
mod phase;
mod plot;
mod sensitivity;
mod tolerance;
mod views;

pub use admittance::AdmittanceArgs;
pub use color::ColorArgs;
pub use field::{FieldArgs, SpArg};
pub use fit::FitArgs;
pub use map::{AngleRange, MapArgs, parse_angles};
pub use monitor::MonitorArgs;
pub use phase::PhaseArgs;
pub use sensitivity::SensitivityArgs;
pub use tolerance::ToleranceArgs;

use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context as _, Result, bail};
use clap::{Args, CommandFactory as _, FromArgMatches as _, Parser, Subcommand, ValueEnum};

use crate::analysis::{self, Sweep, SweepData, Warning};
use crate::design::{Design, Pol, Quantity, file};
use crate::export;
use crate::optics::Side;

/// Design and analyse optical thin-film coatings. With no command, opens the window.
#[derive(Debug, Parser)]
#[command(
    name = "stackwise",
    version,
    about,
    args_conflicts_with_subcommands = true
)]
pub struct Cli {
    /// Design files to open in the window (none: a demo design).
    pub designs: Vec<PathBuf>,
    /// What to do without a window.
    #[command(subcommand)]
    pub command: Option<Command>,
}

/// Which side the light comes from.
#[derive(Clone, Copy, Debug, ValueEnum)]
pub enum SideArg {
    /// From the incident medium onto the coating.
    Front,
    /// From the exit medium through the substrate.
    Back,
}

impl From<SideArg> for Side {
    fn from(s: SideArg) -> Self {
        match s {
            SideArg::Front => Side::Front,
            SideArg::Back => Side::Back,
        }
    }
}

/// A wavelength range; each bound defaults by command.
#[derive(Debug, Clone, Copy, clap::Args)]
pub struct Range {
    /// First wavelength, nm.
    #[arg(long)]
    pub from: Option<f64>,
    /// Last wavelength, nm.
    #[arg(long)]
    pub to: Option<f64>,
    /// Wavelength step, nm [default: 400 steps over the range].
    #[arg(long)]
    pub step: Option<f64>,
}

impl Range {
    /// The wavelength sweep these bounds ask for: given bounds, else 0.7 to 1.5 × the
    /// reference wavelength; 400 steps unless a step is given.
    pub fn sweep(self, reference_nm: f64, aoi_deg: f64, side: Side) -> Result<Sweep> {
        let (lo, hi) = Sweep::default_span_nm(reference_nm);
        let (from_nm, to_nm) = (self.from.unwrap_or(lo), self.to.unwrap_or(hi));
        let sweep = match self.step {
            Some(step_nm) => Sweep::Wavelength {
                from_nm,
                to_nm,
                step_nm,
                aoi_deg,
                side,
            },
            None => Sweep::wavelengths_in_default_steps(from_nm, to_nm, aoi_deg, side),
        };
        sweep
            .points()
            .context("wavelength range (--from, --to, --step)")?;
        Ok(sweep)
    }

    /// The wavelengths: given bounds, else `lo`/`hi`; 400 steps unless a step is given.
    pub fn wavelengths_nm(self, lo: f64, hi: f64) -> Result<Vec<f64>> {
        let from = self.from.unwrap_or(lo);
        let to = self.to.unwrap_or(hi);
        let step = self
            .step
            .unwrap_or(((to - from) / 400.0).max(f64::MIN_POSITIVE));
        analysis::wavelengths_nm(from, to, step).context("wavelength range (--from, --to, --step)")
    }
}

/// A plotted quantity.
#[derive(Clone, Copy, Debug, ValueEnum)]
pub enum QuantityArg {
    /// Reflectance.
    R,
    /// Transmittance.
    T,
    /// Absorptance.
    A,
}

impl From<QuantityArg> for Quantity {
    fn from(q: QuantityArg) -> Self {
        match q {
            QuantityArg::R => Quantity::R,
            QuantityArg::T => Quantity::T,
            QuantityArg::A => Quantity::A,
        }
    }
}

/// A measured quantity.
#[derive(Clone, Copy, Debug, ValueEnum)]
pub enum MeasuredQuantityArg {
    /// Reflectance.
    R,
    /// Transmittance.
    T,
}

impl From<MeasuredQuantityArg> for Quantity {
    fn from(q: MeasuredQuantityArg) -> Self {
        match q {
            MeasuredQuantityArg::R => Quantity::R,
            MeasuredQuantityArg::T => Quantity::T,
        }
    }
}

/// A polarisation.
#[derive(Clone, Copy, Debug, ValueEnum)]
pub enum PolArg {
    /// s (TE).
    S,
    /// p (TM).
    P,
    /// Mean of s and p (unpolarised).
    Mean,
}

impl From<PolArg> for Pol {
    fn from(p: PolArg) -> Self {
        match p {
            PolArg::S => Pol::S,
            PolArg::P => Pol::P,
            PolArg::Mean => Pol::Mean,
        }
    }
}

pub use crate::export::report::ReportFormat;

/// Settings of the plot command.
#[derive(Debug, Args)]
pub struct PlotArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// The image to write: FILE.png or FILE.svg.
    #[arg(long)]
    pub out: PathBuf,
    /// Further designs to draw on the same plot (repeat the option for each).
    #[arg(long)]
    pub compare: Vec<PathBuf>,
    /// Wavelengths [default: 0.7 to 1.5 × the reference wavelength, 400 steps].
    #[command(flatten)]
    pub range: Range,
    /// Angle of incidence in degrees, in the medium the light comes from.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Side the light comes from.
    #[arg(long, value_enum, default_value_t = SideArg::Front)]
    pub side: SideArg,
    /// What to plot.
    #[arg(long, value_enum, default_value_t = QuantityArg::R)]
    pub quantity: QuantityArg,
    /// Polarisation.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Image width in pixels.
    #[arg(long, default_value_t = 1200)]
    pub width: u32,
    /// Image height in pixels.
    #[arg(long, default_value_t = 800)]
    pub height: u32,
    /// Print the safety caution on the image even when the design's name does not call
    /// for it.
    #[arg(long)]
    pub caution: bool,
}

/// Settings of the report command.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Output format.
    #[arg(long, value_enum, default_value_t = ReportFormat::Markdown)]
    pub format: ReportFormat,
    /// Write the report here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Settings of the measured command.
#[derive(Debug, Args)]
pub struct MeasuredArgs {
    /// The measured curve (.csv): wavelength (nm or µm), value (percent or fraction).
    pub measured: PathBuf,
    /// The design file (.ron).
    pub design: PathBuf,
    /// Which quantity the file holds (mean of s and p).
    #[arg(long, value_enum, default_value_t = MeasuredQuantityArg::T)]
    pub quantity: MeasuredQuantityArg,
    /// Angle of incidence of the measurement, degrees.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
}

/// Settings of the compare command.
#[derive(Debug, Args)]
pub struct CompareArgs {
    /// The design files (.ron), two or more.
    #[arg(required = true, num_args = 2..)]
    pub designs: Vec<PathBuf>,
    /// Band start, nm.
    #[arg(long)]
    pub from: f64,
    /// Band end, nm.
    #[arg(long)]
    pub to: f64,
    /// Wavelength step inside the band, nm [default: 400 steps over the band].
    #[arg(long)]
    pub step: Option<f64>,
    /// Angle of incidence in degrees.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Headless commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// R, T, A over wavelength as CSV: wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A.
    Spectrum {
        /// The design file (.ron).
        design: PathBuf,
        /// Wavelengths [default: 0.7 to 1.5 × the reference wavelength, 400 steps].
        #[command(flatten)]
        range: Range,
        /// Angle of incidence in degrees, in the medium the light comes from.
        #[arg(long, default_value_t = 0.0)]
        aoi: f64,
        /// Side the light comes from.
        #[arg(long, value_enum, default_value_t = SideArg::Front)]
        side: SideArg,
        /// Write the CSV here instead of standard output.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// R, T, A over the angle of incidence as CSV: aoi_deg,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A.
    Angles {
        /// The design file (.ron).
        design: PathBuf,
        /// Wavelength, nm.
        #[arg(long)]
        wavelength: f64,
        /// First angle, degrees.
        #[arg(long, default_value_t = analysis::FULL_ANGLE_FROM_DEG)]
        from: f64,
        /// Last angle, degrees (below 90).
        #[arg(long, default_value_t = analysis::FULL_ANGLE_TO_DEG)]
        to: f64,
        /// Angle step, degrees.
        #[arg(long, default_value_t = 1.0)]
        step: f64,
        /// Side the light comes from.
        #[arg(long, value_enum, default_value_t = SideArg::Front)]
        side: SideArg,
        /// Write the CSV here instead of standard output.
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// A material's n and k over wavelength as CSV: wavelength_nm,n,k.
    Nk {
        /// Material name (built-in, or defined in --design).
        material: String,
        /// Wavelengths [default: the material's data, or 300 to 1100 nm, 400 steps].
        #[command(flatten)]
        range: Range,
        /// A design whose own materials may be named as well.
        #[arg(long)]
        design: Option<PathBuf>,
    },
    /// The built-in materials as CSV: name,model,min_nm,max_nm,source.
    Materials,
    /// A plot image of R, T or A over wavelength: PNG or SVG, chosen by the --out extension.
    Plot(PlotArgs),
    /// The layer report: per layer nm, QWOT, optical and cumulative thickness; totals.
    Report(ReportArgs),
    /// Compares a measured R or T curve (CSV: wavelength, value) with a design's computed one.
    Measured(MeasuredArgs),
    /// Figures of several designs over a band as CSV: mean, minimum and maximum of R and T
    /// (mean of s and p) and where each extreme lies.
    Compare(CompareArgs),
    /// Monte Carlo tolerances as CSV: wavelength_nm,nominal,p05,p50,p95 (fractions); a
    /// summary on standard error.
    Tolerance(ToleranceArgs),
    /// Each layer's sensitivity as CSV, most sensitive first: layer,material,nm,sensitivity
    /// (change of the merit per 1 % thickness change when the design has targets, else RMS
    /// change of R or T); which one goes to standard error.
    Sensitivity(SensitivityArgs),
    /// The optical monitoring signal through the run as CSV: deposited_nm,layer,signal; the
    /// per-layer table (start, end, turning points) on standard error.
    Monitor(MonitorArgs),
    /// Phase (unwrapped, degrees), group delay (fs) and GDD (fs²) of r and t over wavelength
    /// as CSV: wavelength_nm,phase_r_s_deg,phase_r_p_deg,phase_t_s_deg,phase_t_p_deg,
    /// gd_r_s_fs,gd_r_p_fs,gdd_r_s_fs2,gdd_r_p_fs2.
    Phase(PhaseArgs),
    /// The electric-field intensity |E|² through the stack, relative to the incident wave, as
    /// CSV: depth_nm,layer,e2 (depth from the incident side; layer 0 = substrate, N + 1 =
    /// incident medium).
    Field(FieldArgs),
    /// The admittance locus at one wavelength as CSV: layer,re,im (layer 0 = the substrate's
    /// admittance, last row N + 1 = the incident medium's).
    Admittance(AdmittanceArgs),
    /// The colour of reflected and transmitted light as CSV: light,X,Y,Z,x,y,L,a,b.
    Color(ColorArgs),
    /// R or T over wavelength × angle as CSV (wavelength_nm,aoi_deg,value), or a heat map
    /// with --out FILE.png / FILE.svg.
    Map(MapArgs),
    /// Refines the thicknesses (with --needle: inserts layers too) to meet the design's
    /// targets; writes the new design to --out and the merit to standard output.
    Optimize(optimize::OptimizeArgs),
    /// Fits a design's thicknesses (with --index-scale also a factor on each material's n) to
    /// a measured R or T curve; writes the fitted design to --out, RMS before and after and
    /// each layer's change to standard output.
    Fit(FitArgs),
    /// The layer table of a design: material, nm, QWOT and optical thickness.
    Info {
        /// The design file (.ron).
        design: PathBuf,
    },
}

/// Parses the process arguments and runs; `open_window` is called when no command is given.
/// Before anything runs, a command's `--out` is checked against its inputs and the window's
/// arguments against mistyped commands ([`guard`]).
pub fn main(open_window: impl FnOnce(Vec<PathBuf>) -> Result<()>) -> ExitCode {
    let matches = Cli::command().get_matches();
    let cli = Cli::from_arg_matches(&matches).unwrap_or_else(|e| e.exit());
    let result = match cli.command {
        None => guard::window_args(&cli.designs).and_then(|()| open_window(cli.designs)),
        Some(cmd) => guard::outputs(&matches)
            .and_then(|()| run(cmd, &mut io::stdout().lock(), &mut io::stderr().lock())),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            // Causes whose text the message already carries are not repeated.
            let msg = e.chain().skip(1).fold(format!("error: {e}"), |msg, cause| {
                let cause = cause.to_string();
                if msg.contains(&cause) {
                    msg
                } else {
                    format!("{msg}\n  caused by: {cause}")
                }
            });
            log::error!("{msg}");
            // Standard error is the place for this; a failed write there has nowhere to go.
            writeln!(io::stderr(), "{msg}").ok();
            ExitCode::FAILURE
        }
    }
}

/// Loads and checks a design file, with the path in any error.
pub fn load_design(path: &Path) -> Result<Design> {
    let d = file::load(path)?;
    if let Err(e) = d.validate() {
        bail!("{e} (in {})", path.display());
    }
    Ok(d)
}

/// Writes what `fill` produces to the file `out` (atomically: never half written) or, without
/// one, to standard output.
fn emit(
    out: Option<&Path>,
    stdout: &mut dyn Write,
    fill: impl FnOnce(&mut Vec<u8>) -> io::Result<()>,
) -> Result<()> {
    let mut bytes = Vec::new();
    fill(&mut bytes)?;
    match out {
        Some(p) => export::write_atomic(p, &bytes)
            .with_context(|| format!("cannot write {}", p.display()))?,
        None => stdout.write_all(&bytes)?,
    }
    Ok(())
}

fn print_warnings(warnings: &[Warning], stderr: &mut dyn Write) -> Result<()> {
    for w in warnings {
        writeln!(stderr, "warning: {w}")?;
    }
    Ok(())
}

/// Loads `design`, runs the sweep `make` describes for it, and writes the CSV: the
/// `spectrum` and `angles` commands.
fn write_sweep(
    design: &Path,
    make: impl FnOnce(&Design) -> Result<Sweep>,
    out: Option<&Path>,
    stdout: &mut dyn Write,
    stderr: &mut dyn Write,
) -> Result<()> {
    let d = load_design(design)?;
    let sweep = make(&d)?;
    let data = analysis::run_sweep(&d.resolve()?, &sweep)?;
    print_warnings(data.warnings(), stderr)?;
    emit(out, stdout, |w| match &data {
        SweepData::Spectrum(s) => export::csv::write_spectrum(w, s),
        SweepData::Angles(a) => export::csv::write_angles(w, a),
    })
}

/// Runs one command, writing results to `stdout` and warnings to `stderr`.
pub fn run(cmd: Command, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    match cmd {
        Command::Spectrum {
            design,
            range,
            aoi,
            side,
            out,
        } => write_sweep(
            &design,
            |d| range.sweep(d.reference_nm, aoi, side.into()),
            out.as_deref(),
            stdout,
            stderr,
        )?,
        Command::Angles {
            design,
            wavelength,
            from,
            to,
            step,
            side,
            out,
        } => {
            let sweep = |_: &Design| {
                if !(wavelength.is_finite() && wavelength > 0.0) {
                    bail!("--wavelength must be a positive number of nm, got {wavelength}");
                }
                let sweep = Sweep::Angle {
                    wavelength_nm: wavelength,
                    from_deg: from,
                    to_deg: to,
                    step_deg: step,
                    side: side.into(),
                };
                sweep
                    .points()
                    .context("angle range (--from, --to, --step)")?;
                Ok(sweep)
            };
            write_sweep(&design, sweep, out.as_deref(), stdout, stderr)?;
        }
        Command::Nk {
            material,
            range,
            design,
        } => library::nk(&material, range, design.as_deref(), stdout, stderr)?,
        Command::Materials => library::materials(stdout)?,
        Command::Plot(args) => plot::plot(&args, stderr)?,
        Command::Report(args) => report_cmd(&args, stdout)?,
        Command::Measured(args) => measured::measured(&args, stdout, stderr)?,
        Command::Compare(args) => measured::compare(&args, stdout, stderr)?,
        Command::Tolerance(args) => tolerance::run(&args, stdout, stderr)?,
        Command::Sensitivity(args) => sensitivity::run(&args, stdout, stderr)?,
        Command::Monitor(args) => monitor::run(&args, stdout, stderr)?,
        cmd @ (Command::Phase(_)
        | Command::Field(_)
        | Command::Admittance(_)
        | Command::Color(_)
        | Command::Map(_)) => views::run(&cmd, stdout, stderr)?,
        Command::Optimize(args) => optimize::run(&args, stdout, stderr)?,
        Command::Fit(args) => fit::run(&args, stdout, stderr)?,
        Command::Info { design } => {
            let d = load_design(&design)?;
            info::info(&d, stdout)?;
        }
    }
    Ok(())
}

fn report_cmd(a: &ReportArgs, stdout: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    let r = export::report::LayerReport::new(&d)
        .with_context(|| format!("layer report of {}", a.design.display()))?;
    let text = r.render(a.format);
    emit(a.out.as_deref(), stdout, |w| w.write_all(text.as_bytes()))
}
