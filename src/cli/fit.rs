//! `stackwise fit`: fit a design's thicknesses (and optionally index scales) to a measured
//! R or T curve; write the fitted design as a new file.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::{MeasuredQuantityArg, PolArg, emit, load_design};
use crate::analysis::measured::{ValueScale, parse_measured_csv};
use crate::design::file;
use crate::design::output::refuse_input;
use crate::material::import::WavelengthUnit;
use crate::optimize::fit::{FitSettings, fit};

/// Settings of the fit command.
#[derive(Debug, Args)]
pub struct FitArgs {
    /// The measured curve (.csv): wavelength (nm or µm), value (percent or fraction).
    pub measured: PathBuf,
    /// The design that was deposited (.ron).
    pub design: PathBuf,
    /// Which quantity the file holds.
    #[arg(long, value_enum)]
    pub quantity: MeasuredQuantityArg,
    /// Angle of incidence of the measurement, degrees.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Polarisation of the measurement.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Also fit one scale factor on n of each layer material.
    #[arg(long)]
    pub index_scale: bool,
    /// Where to write the fitted design (.ron); never one of the inputs.
    #[arg(long)]
    pub out: PathBuf,
}

/// Runs the command: RMS before and after and the per-layer changes on standard output, the
/// fitted design to `--out`.
pub fn run(a: &FitArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    // `cli::main` checks this too (`guard::outputs`); here it also holds when `run` is called
    // on its own.
    refuse_input(&a.out, &[a.measured.as_path(), a.design.as_path()])?;
    let text = std::fs::read_to_string(&a.measured)
        .with_context(|| format!("cannot read {}", a.measured.display()))?;
    let m = parse_measured_csv(&text, WavelengthUnit::Auto, ValueScale::Auto)
        .with_context(|| format!("in {}", a.measured.display()))?;
    for note in &m.notes {
        writeln!(stderr, "note: {note}")?;
    }
    let d = load_design(&a.design)?;
    let settings = FitSettings {
        quantity: a.quantity.into(),
        pol: a.pol.into(),
        aoi_deg: a.aoi,
        index_scale: a.index_scale,
        ..FitSettings::default()
    };
    let f = fit(&d, &m, &settings, |_| ControlFlow::Continue(())).with_context(|| {
        format!(
            "cannot fit {} to {}",
            a.design.display(),
            a.measured.display()
        )
    })?;
    let text = file::to_ron_string(&f.design)?;
    emit(Some(&a.out), stdout, |w| {
        w.extend_from_slice(text.as_bytes());
        Ok(())
    })?;
    if f.points_skipped > 0 {
        writeln!(
            stderr,
            "note: {} measured points lie outside a material's data range and were not used",
            f.points_skipped
        )?;
    }
    writeln!(
        stderr,
        "stopped: {} after {} iterations",
        f.stop, f.iterations
    )?;
    writeln!(
        stdout,
        "rms before {:.6} after {:.6} ({} points)",
        f.rms_before, f.rms_after, f.points_used
    )?;
    writeln!(
        stdout,
        "layer,material,designed_nm,fitted_nm,change_nm,change_pct"
    )?;
    for l in &f.layers {
        writeln!(
            stdout,
            "{},{},{:.3},{:.3},{:+.3},{:+.3}{}",
            l.layer,
            l.material,
            l.designed_nm,
            l.fitted_nm,
            l.change_nm(),
            l.change_pct(),
            if l.locked { ",locked" } else { "" }
        )?;
    }
    for s in &f.scales {
        writeln!(stdout, "index scale {} {:.6}", s.material, s.scale)?;
    }
    Ok(())
}
