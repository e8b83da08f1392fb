//! `stackwise monitor`: the optical monitoring signal through a whole run.

use std::io::Write;
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::{MeasuredQuantityArg, PolArg, emit, load_design};
use crate::analysis::monitor::{MonitorSettings, monitor};
use crate::export;

/// Settings of the monitor command.
#[derive(Debug, Args)]
pub struct MonitorArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Monitor wavelength, nm.
    #[arg(long, allow_negative_numbers = true)]
    pub wavelength: f64,
    /// What the monitor measures.
    #[arg(long, value_enum, default_value_t = MeasuredQuantityArg::T)]
    pub quantity: MeasuredQuantityArg,
    /// Angle of incidence of the monitor beam in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Polarisation of the monitor beam.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Spacing of the rows in deposited thickness, nm (each layer's end is a row as well).
    #[arg(long, default_value_t = 1.0, allow_negative_numbers = true)]
    pub step_nm: f64,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Runs the command: CSV `deposited_nm,layer,signal` on standard output (or `--out`), the
/// per-layer table on standard error.
pub fn run(a: &MonitorArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    let settings = MonitorSettings {
        wavelength_nm: a.wavelength,
        aoi_deg: a.aoi,
        quantity: a.quantity.into(),
        pol: a.pol.into(),
        step_nm: a.step_nm,
    };
    let m = monitor(&d.resolve()?, &settings)
        .with_context(|| format!("monitoring curve of {}", a.design.display()))?;
    emit(a.out.as_deref(), stdout, |w| {
        export::csv::write_monitor(w, &m)
    })?;
    writeln!(
        stderr,
        "{:>5}  {:<16} {:>10} {:>10} {:>9} {:>9} {:>8}",
        "layer", "material", "start_nm", "end_nm", "start", "end", "turns"
    )?;
    for l in &m.layers {
        writeln!(
            stderr,
            "{:>5}  {:<16} {:>10.2} {:>10.2} {:>9.5} {:>9.5} {:>8}",
            l.layer,
            l.material,
            l.start_nm,
            l.end_nm,
            l.start_signal,
            l.end_signal,
            l.turning_points_nm.len()
        )?;
    }
    Ok(())
}
