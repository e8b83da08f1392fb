//! `stackwise tolerance`: the Monte Carlo envelope of a design as CSV.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;

use anyhow::{Context as _, Result, bail};
use clap::Args;

use super::{MeasuredQuantityArg, PolArg, Range, emit, load_design, print_warnings};
use crate::analysis::tolerance::{
    DEFAULT_INDEX_PCT, DEFAULT_SYSTEMATIC_PCT, DEFAULT_THICKNESS_PCT, ToleranceSettings,
};
use crate::export;
use crate::optimize::tolerance_with_yield;

/// Settings of the tolerance command.
#[derive(Debug, Args)]
pub struct ToleranceArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Number of Monte Carlo runs.
    #[arg(long, default_value_t = 1000, allow_negative_numbers = true)]
    pub runs: i64,
    /// Seed of the random draws: the same seed gives the same result.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// σ of each layer's random thickness error, %.
    #[arg(long, default_value_t = DEFAULT_THICKNESS_PCT, allow_negative_numbers = true)]
    pub thickness_pct: f64,
    /// σ of the thickness error shared by all layers, %.
    #[arg(long, default_value_t = DEFAULT_SYSTEMATIC_PCT, allow_negative_numbers = true)]
    pub systematic_pct: f64,
    /// σ of each layer material's index error, %.
    #[arg(long, default_value_t = DEFAULT_INDEX_PCT, allow_negative_numbers = true)]
    pub index_pct: f64,
    /// The quantity to spread.
    #[arg(long, value_enum, default_value_t = MeasuredQuantityArg::R)]
    pub quantity: MeasuredQuantityArg,
    /// Polarisation.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Wavelengths [default: 0.7 to 1.5 × the reference wavelength, 400 steps].
    #[command(flatten)]
    pub range: Range,
    /// Angle of incidence in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Runs the command: CSV `wavelength_nm,nominal,p05,p50,p95` on standard output (or `--out`),
/// a summary line on standard error (with the yield against the targets when the design has
/// targets: the share of runs of merit 0, see `optimize::tolerance_with_yield`).
pub fn run(a: &ToleranceArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let Ok(runs) = usize::try_from(a.runs) else {
        bail!("--runs must be at least 1, got {}", a.runs);
    };
    let d = load_design(&a.design)?;
    let wl = a
        .range
        .wavelengths_nm(0.7 * d.reference_nm, 1.5 * d.reference_nm)?;
    let settings = ToleranceSettings {
        runs,
        seed: a.seed,
        thickness_pct: a.thickness_pct,
        systematic_pct: a.systematic_pct,
        index_pct: a.index_pct,
        quantity: a.quantity.into(),
        pol: a.pol.into(),
        aoi_deg: a.aoi,
        ..ToleranceSettings::default()
    };
    let started = std::time::Instant::now();
    let e = tolerance_with_yield(&d, &wl, &settings, |_| ControlFlow::Continue(()))
        .with_context(|| format!("tolerances of {}", a.design.display()))?;
    print_warnings(&e.warnings, stderr)?;
    emit(a.out.as_deref(), stdout, |w| {
        export::csv::write_envelope(w, &e)
    })?;
    let yield_text = match (e.passed, e.yield_fraction()) {
        (Some(passed), Some(y)) => format!(
            "; yield {:.1} % ({passed} of {} runs meet every target)",
            100.0 * y,
            e.runs_done
        ),
        _ => String::new(),
    };
    writeln!(
        stderr,
        "tolerance: {} runs (seed {}) in {:.2} s; σ thickness {} %, systematic {} %, index {} %{yield_text}",
        e.runs_done,
        settings.seed,
        started.elapsed().as_secs_f64(),
        settings.thickness_pct,
        settings.systematic_pct,
        settings.index_pct
    )?;
    Ok(())
}
