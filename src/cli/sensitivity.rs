//! `stackwise sensitivity`: how much each layer's thickness moves the merit (when the design
//! has targets) or the spectrum, ranked.

use std::io::Write;
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::{MeasuredQuantityArg, PolArg, Range, emit, load_design, print_warnings};
use crate::analysis::sensitivity::sensitivity;
use crate::export;
use crate::optimize::merit_sensitivity;

/// Settings of the sensitivity command.
#[derive(Debug, Args)]
pub struct SensitivityArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Wavelengths of the RMS [default: 0.7 to 1.5 × the reference wavelength, 400 steps].
    #[command(flatten)]
    pub range: Range,
    /// Angle of incidence in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// The quantity whose change is measured.
    #[arg(long, value_enum, default_value_t = MeasuredQuantityArg::R)]
    pub quantity: MeasuredQuantityArg,
    /// Polarisation.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Show the spectrum's RMS change even when the design has targets.
    #[arg(long)]
    pub spectrum: bool,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Runs the command: CSV `layer,material,nm,sensitivity`, most sensitive layer first; which
/// sensitivity it is goes to standard error.
pub fn run(a: &SensitivityArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    if !d.targets.is_empty() && !a.spectrum {
        let s = merit_sensitivity(&d)
            .with_context(|| format!("sensitivity of {}", a.design.display()))?;
        emit(a.out.as_deref(), stdout, |w| {
            export::csv::write_layer_sensitivities(w, &s.layers)
        })?;
        writeln!(
            stderr,
            "sensitivity of the merit (now {:.6}): the larger change of merit when one layer is \
             1 % thinner or thicker; --spectrum shows the spectrum's RMS change instead",
            s.merit
        )?;
        return Ok(());
    }
    let wl = a
        .range
        .wavelengths_nm(0.7 * d.reference_nm, 1.5 * d.reference_nm)?;
    let s = sensitivity(&d.resolve()?, &wl, a.aoi, a.quantity.into(), a.pol.into())
        .with_context(|| format!("sensitivity of {}", a.design.display()))?;
    print_warnings(&s.warnings, stderr)?;
    emit(a.out.as_deref(), stdout, |w| {
        export::csv::write_sensitivity(w, &s)
    })?;
    writeln!(
        stderr,
        "sensitivity of the spectrum: RMS change of {} ({}) over {} wavelengths per 1 % \
         thickness change",
        s.quantity.describe(),
        s.pol.describe(),
        s.wavelength_nm.len()
    )?;
    Ok(())
}
