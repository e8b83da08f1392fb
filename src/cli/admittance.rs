//! `stackwise admittance`: the admittance locus at one wavelength.

use std::io::Write;
use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::Args;

use super::field::SpArg;
use super::{emit, load_design, print_warnings};
use crate::analysis::admittance::{AdmittanceLocus, admittance_locus};

/// Settings of the admittance command.
#[derive(Debug, Args)]
pub struct AdmittanceArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Vacuum wavelength, nm.
    #[arg(long)]
    pub wavelength: f64,
    /// Angle of incidence in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Polarisation (tilted admittances: s: N cos θ, p: N / cos θ).
    #[arg(long, value_enum, default_value_t = SpArg::S)]
    pub pol: SpArg,
    /// Largest thickness step between points, nm [default: wavelength / 200].
    #[arg(long)]
    pub step: Option<f64>,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// `layer,re,im`: the substrate's admittance (layer 0), the locus through each layer (its
/// number), and last the incident medium's admittance (layer N + 1), in units of the
/// free-space admittance.
pub fn write_locus(w: &mut dyn Write, y: &AdmittanceLocus) -> std::io::Result<()> {
    writeln!(w, "layer,re,im")?;
    for (p, layer) in y.points.iter().zip(&y.point_layer) {
        writeln!(w, "{layer},{},{}", p[0], p[1])?;
    }
    let incident = y.boundaries.len();
    writeln!(w, "{incident},{},{}", y.incident[0], y.incident[1])
}

/// Runs the admittance command.
pub fn run(a: &AdmittanceArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    if !(a.wavelength.is_finite() && a.wavelength > 0.0) {
        bail!(
            "--wavelength must be a positive number of nm, got {}",
            a.wavelength
        );
    }
    let step = a.step.unwrap_or(a.wavelength / 200.0);
    let y = admittance_locus(&d.resolve()?, a.wavelength, a.aoi, a.pol.into(), step)?;
    print_warnings(&y.warnings, stderr)?;
    emit(a.out.as_deref(), stdout, |w| write_locus(w, &y))
}
