//! `stackwise field`: the |E|² profile through the stack at one wavelength.

use std::io::Write;
use std::path::PathBuf;

use anyhow::{Result, bail};
use clap::{Args, ValueEnum};

use super::{emit, load_design, print_warnings};
use crate::analysis::field::{FieldProfile, InterfaceField, field_profile};
use crate::cautions;
use crate::optics::field::Polarisation;

/// A polarisation of one coherent problem.
#[derive(Clone, Copy, Debug, ValueEnum)]
pub enum SpArg {
    /// s (TE).
    S,
    /// p (TM).
    P,
}

impl From<SpArg> for Polarisation {
    fn from(p: SpArg) -> Self {
        match p {
            SpArg::S => Polarisation::S,
            SpArg::P => Polarisation::P,
        }
    }
}

/// Settings of the field command.
#[derive(Debug, Args)]
pub struct FieldArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Vacuum wavelength, nm.
    #[arg(long)]
    pub wavelength: f64,
    /// Angle of incidence in degrees, in the incident medium.
    #[arg(long, default_value_t = 0.0)]
    pub aoi: f64,
    /// Polarisation; for p the whole field |E_x|² + |E_z|² is shown.
    #[arg(long, value_enum, default_value_t = SpArg::S)]
    pub pol: SpArg,
    /// Largest depth step between samples, nm [default: wavelength / 200].
    #[arg(long)]
    pub step: Option<f64>,
    /// Instead of the profile, one row per layer with its peak and the |E|² at its top and
    /// bottom interfaces: layer,material,top_nm,bottom_nm,peak_e2,peak_depth_nm,top_e2,bottom_e2.
    #[arg(long)]
    pub peaks: bool,
    /// Write the CSV here instead of standard output.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// `depth_nm,layer,e2`: depth from the front surface (negative in the incident medium), the
/// layer number (0 = substrate, N + 1 = incident medium), |E|² relative to the incident wave.
pub fn write_profile(w: &mut dyn Write, f: &FieldProfile) -> std::io::Result<()> {
    writeln!(w, "depth_nm,layer,e2")?;
    for (p, layer) in f.points.iter().zip(&f.point_layer) {
        writeln!(w, "{},{layer},{}", p[0], p[1])?;
    }
    Ok(())
}

/// One row per layer (top of the stack first) with its peak and its interfaces' |E|² (the
/// larger side).
pub fn write_peaks(w: &mut dyn Write, f: &FieldProfile) -> std::io::Result<()> {
    writeln!(
        w,
        "layer,material,top_nm,bottom_nm,peak_e2,peak_depth_nm,top_e2,bottom_e2"
    )?;
    for (i, l) in f.layers.iter().enumerate() {
        let top = f
            .interfaces
            .get(i)
            .map_or(f64::NAN, InterfaceField::peak_e2);
        let bottom = f
            .interfaces
            .get(i + 1)
            .map_or(f64::NAN, InterfaceField::peak_e2);
        writeln!(
            w,
            "{},{},{},{},{},{},{top},{bottom}",
            l.layer,
            crate::export::csv::field(&l.material),
            l.top_nm,
            l.bottom_nm,
            l.peak_e2,
            l.peak_depth_nm
        )?;
    }
    Ok(())
}

/// Runs the field command.
pub fn run(a: &FieldArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    if !(a.wavelength.is_finite() && a.wavelength > 0.0) {
        bail!(
            "--wavelength must be a positive number of nm, got {}",
            a.wavelength
        );
    }
    let step = a.step.unwrap_or(a.wavelength / 200.0);
    let f = field_profile(&d.resolve()?, a.wavelength, a.aoi, a.pol.into(), step)?;
    print_warnings(&f.warnings, stderr)?;
    writeln!(stderr, "caution: {}", cautions::FIELD)?;
    emit(a.out.as_deref(), stdout, |w| {
        if a.peaks {
            write_peaks(w, &f)
        } else {
            write_profile(w, &f)
        }
    })
}
