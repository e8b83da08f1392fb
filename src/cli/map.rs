//! `stackwise map`: R or T over wavelength × angle, as long-format CSV or a heat-map image.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;

use anyhow::{Context as _, Result};
use clap::Args;

use super::plot::image_kind;
use super::{PolArg, QuantityArg, Range, emit, load_design, print_warnings};
use crate::analysis;
use crate::analysis::map::{RtMap, rt_map};
use crate::export;
use crate::export::heatmap::{map_heatmap, render_heatmap_png, render_heatmap_svg};
use crate::export::plot::ImageFormat;

/// An angle range FROM:TO:STEP in degrees.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AngleRange {
    /// First angle.
    pub from_deg: f64,
    /// Last angle.
    pub to_deg: f64,
    /// Step.
    pub step_deg: f64,
}

/// Parses `FROM:TO:STEP` (degrees).
pub fn parse_angles(s: &str) -> Result<AngleRange, String> {
    let parts: Vec<&str> = s.split(':').collect();
    let [from, to, step] = parts.as_slice() else {
        return Err(format!("{s:?} is not FROM:TO:STEP, e.g. 0:80:1"));
    };
    let num = |what: &str, t: &str| {
        t.trim()
            .parse::<f64>()
            .map_err(|_| format!("{what} {t:?} in {s:?} is not a number"))
    };
    Ok(AngleRange {
        from_deg: num("FROM", from)?,
        to_deg: num("TO", to)?,
        step_deg: num("STEP", step)?,
    })
}

/// Settings of the map command.
#[derive(Debug, Args)]
pub struct MapArgs {
    /// The design file (.ron).
    pub design: PathBuf,
    /// Wavelengths [default: 0.7 to 1.5 × the reference wavelength, 400 steps].
    #[command(flatten)]
    pub range: Range,
    /// Angles of incidence FROM:TO:STEP in degrees (each below 90).
    #[arg(long, value_parser = parse_angles, default_value = "0:80:1")]
    pub angles: AngleRange,
    /// What to map.
    #[arg(long, value_enum, default_value_t = QuantityArg::R)]
    pub quantity: QuantityArg,
    /// Polarisation.
    #[arg(long, value_enum, default_value_t = PolArg::Mean)]
    pub pol: PolArg,
    /// Write here: FILE.png or FILE.svg for a heat map, any other name for the CSV.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Image width in pixels.
    #[arg(long, default_value_t = 1200)]
    pub width: u32,
    /// Image height in pixels.
    #[arg(long, default_value_t = 800)]
    pub height: u32,
}

/// `wavelength_nm,aoi_deg,value`, one row per point, angle by angle.
pub fn write_map(w: &mut dyn Write, m: &RtMap) -> std::io::Result<()> {
    writeln!(w, "wavelength_nm,aoi_deg,value")?;
    for (i, aoi) in m.aoi_deg.iter().enumerate() {
        for (wl, v) in m.wavelength_nm.iter().zip(m.row(i)) {
            writeln!(w, "{wl},{aoi},{v}")?;
        }
    }
    Ok(())
}

/// Runs the map command.
pub fn run(a: &MapArgs, stdout: &mut dyn Write, stderr: &mut dyn Write) -> Result<()> {
    let d = load_design(&a.design)?;
    let wl = a
        .range
        .wavelengths_nm(0.7 * d.reference_nm, 1.5 * d.reference_nm)?;
    let r = a.angles;
    let angles = analysis::angles_deg(r.from_deg, r.to_deg, r.step_deg)
        .context("angle range (--angles FROM:TO:STEP)")?;
    let m = rt_map(
        &d.resolve()?,
        &wl,
        &angles,
        a.quantity.into(),
        a.pol.into(),
        |_| ControlFlow::Continue(()),
    )?;
    print_warnings(&m.warnings, stderr)?;
    let image = a.out.as_deref().map(image_kind).and_then(Result::ok);
    match (a.out.as_deref(), image) {
        (Some(path), Some(kind)) => {
            let mut spec = map_heatmap(&d.name, &m);
            let values = m.values.iter().copied();
            let (r, t): (Vec<f64>, Vec<f64>) = match a.quantity {
                QuantityArg::R => (values.collect(), Vec::new()),
                QuantityArg::T => (Vec::new(), values.collect()),
                QuantityArg::A => (Vec::new(), Vec::new()),
            };
            spec.caution = export::caution_for(false, [d.name.as_str()], r, t).map(str::to_owned);
            let bytes = match kind {
                ImageFormat::Png => render_heatmap_png(&spec, a.width, a.height)?,
                ImageFormat::Svg => render_heatmap_svg(&spec, a.width, a.height)?.into_bytes(),
            };
            export::write_atomic(path, &bytes)
                .with_context(|| format!("cannot write {}", path.display()))?;
            Ok(())
        }
        (out, _) => emit(out, stdout, |w| write_map(w, &m)),
    }
}
