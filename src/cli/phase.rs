//! `stackwise phase`: phase, group delay and GDD of r and t over wavelength.

use std::io::Write;
use std::path::PathBuf;

use anyhow::Result;
use clap::Args;

use super::{Range, emit, load_design, print_warnings};
use crate::analysis::phase::{PhaseSpectrum, phase_spectrum};
use crate::optics::Side;

/// The CSV header of `stackwise phase`.
pub const HEADER: &str = "wavelength_nm,phase_r_s_deg,phase_r_p_deg,phase_t_s_deg,phase_t_p_deg,\
                          gd_r_s_fs,gd_r_p_fs,gdd_r_s_fs2,gdd_r_p_fs2";

/// Settings of the phase command.
#[derive(Debug, Args)]
pub struct PhaseArgs {
    /// The design file (.ron).
    pub design: PathBuf,
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

/// Writes the phase CSV (header [`HEADER`]).
pub fn write_phase(w: &mut dyn Write, p: &PhaseSpectrum) -> std::io::Result<()> {
    writeln!(w, "{HEADER}")?;
    for (i, wl) in p.wavelength_nm.iter().enumerate() {
        writeln!(
            w,
            "{wl},{},{},{},{},{},{},{},{}",
            p.r_s.phase_deg[i],
            p.r_p.phase_deg[i],
            p.t_s.phase_deg[i],
            p.t_p.phase_deg[i],
            p.r_s.gd_fs[i],
            p.r_p.gd_fs[i],
            p.r_s.gdd_fs2[i],
            p.r_p.gdd_fs2[i]
        )?;
    }
    Ok(())
}

/// Runs the phase command.
pub fn run(a: &PhaseArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    let wl = a
        .range
        .wavelengths_nm(0.7 * d.reference_nm, 1.5 * d.reference_nm)?;
    let p = phase_spectrum(&d.resolve()?, &wl, a.aoi, Side::Front)?;
    print_warnings(&p.warnings, stderr)?;
    emit(a.out.as_deref(), stdout, |w| write_phase(w, &p))
}
