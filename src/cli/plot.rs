//! `stackwise plot`: a spectrum plot of one or more designs as PNG or SVG.

use std::io::Write;
use std::path::Path;

use anyhow::{Context as _, Result};

use super::{PlotArgs, load_design, print_warnings};
use crate::analysis::{self, SweepData};
use crate::export;

pub(super) fn image_kind(path: &Path) -> Result<export::plot::ImageFormat> {
    Ok(export::plot::ImageFormat::for_path(path)?)
}

pub(super) fn plot(a: &PlotArgs, stderr: &mut dyn Write) -> Result<()> {
    let kind = image_kind(&a.out)?;
    // The size is checked before any sweep runs.
    export::plot::check_size(kind, a.width, a.height)?;
    let first = load_design(&a.design)?;
    let sweep = a.range.sweep(first.reference_nm, a.aoi, a.side.into())?;
    let mut designs = vec![first];
    for p in &a.compare {
        designs.push(load_design(p)?);
    }
    let mut spectra = Vec::with_capacity(designs.len());
    for d in &designs {
        let data = analysis::run_sweep(&d.resolve()?, &sweep)
            .with_context(|| format!("design {:?}", d.name))?;
        print_warnings(data.warnings(), stderr)?;
        if let SweepData::Spectrum(s) = data {
            spectra.push(s);
        }
    }
    let named: Vec<(&str, &analysis::Spectrum)> = designs
        .iter()
        .map(|d| d.name.as_str())
        .zip(&spectra)
        .collect();
    let mut spec = export::plot::spectrum_plot(&named, a.quantity.into(), a.pol.into());
    spec.caution = export::caution_for(
        a.caution,
        designs.iter().map(|d| d.name.as_str()),
        spectra.iter().flat_map(|s| s.curves.r.iter().copied()),
        spectra.iter().flat_map(|s| s.curves.t.iter().copied()),
    )
    .map(str::to_owned);
    let (w, h) = (a.width, a.height);
    let bytes = match kind {
        export::plot::ImageFormat::Png => export::plot::render_png(&spec, w, h)?,
        export::plot::ImageFormat::Svg => export::plot::render_svg(&spec, w, h)?.into_bytes(),
    };
    export::write_atomic(&a.out, &bytes)
        .with_context(|| format!("cannot write {}", a.out.display()))?;
    Ok(())
}
