//! `stackwise measured` (a measured curve against a design) and `stackwise compare` (band
//! figures of several designs).

use std::io::Write;

use anyhow::{Context as _, Result, bail};

use super::{CompareArgs, MeasuredArgs, Range, emit, load_design, print_warnings};
use crate::analysis;
use crate::analysis::measured::{ValueScale, parse_measured_csv, rms_difference};
use crate::design::Quantity;
use crate::export;
use crate::material::import::WavelengthUnit;
use crate::optics::Side;

pub(super) fn compare(
    a: &CompareArgs,
    stdout: &mut dyn Write,
    stderr: &mut dyn Write,
) -> Result<()> {
    let band = Range {
        from: Some(a.from),
        to: Some(a.to),
        step: a.step,
    };
    let wl = band.wavelengths_nm(a.from, a.to)?;
    let mut rows = Vec::with_capacity(a.designs.len());
    for path in &a.designs {
        let d = load_design(path)?;
        let s = analysis::spectrum(&d.resolve()?, &wl, a.aoi, Side::Front)
            .with_context(|| format!("design {:?}", d.name))?;
        print_warnings(&s.warnings, stderr)?;
        let f = analysis::compare::band_figures(&s, a.from, a.to)
            .with_context(|| format!("design {:?}", d.name))?;
        rows.push((d.name, f));
    }
    emit(a.out.as_deref(), stdout, |w| {
        export::csv::write_compare(w, &rows)
    })
}

pub(super) fn measured(
    a: &MeasuredArgs,
    stdout: &mut dyn Write,
    stderr: &mut dyn Write,
) -> Result<()> {
    let (measured, design, quantity, aoi) = (&a.measured, &a.design, a.quantity.into(), a.aoi);
    let text = std::fs::read_to_string(measured)
        .with_context(|| format!("cannot read {}", measured.display()))?;
    let m = parse_measured_csv(&text, WavelengthUnit::Auto, ValueScale::Auto)
        .with_context(|| format!("in {}", measured.display()))?;
    let d = load_design(design)?;
    let (Some(&lo), Some(&hi)) = (m.wavelength_nm.first(), m.wavelength_nm.last()) else {
        bail!("{} holds no rows", measured.display());
    };
    // Compute on a grid at least as fine as the measurement, over its span.
    let finest = m
        .wavelength_nm
        .windows(2)
        .map(|w| w[1] - w[0])
        .fold(f64::INFINITY, f64::min);
    let step = finest.min((hi - lo) / 400.0).max((hi - lo) / 100_000.0);
    let mut wl =
        analysis::wavelengths_nm(lo, hi, step).context("the measured file's wavelength span")?;
    if wl.last().is_some_and(|&last| last < hi) {
        wl.push(hi);
    }
    let s = analysis::spectrum(&d.resolve()?, &wl, aoi, Side::Front)?;
    print_warnings(&s.warnings, stderr)?;
    for note in &m.notes {
        writeln!(stdout, "note: {note}")?;
    }
    writeln!(
        stdout,
        "wavelength unit: {}   value scale: {}",
        m.unit_used, m.scale_used
    )?;
    let q = match quantity {
        Quantity::R => "R",
        Quantity::T => "T",
        Quantity::A => "A",
    };
    let Some((rms, n)) = rms_difference(&m, &s, quantity) else {
        bail!(
            "the measured curve ({lo}–{hi} nm) and the computed one do not overlap; \
             check the wavelength unit"
        );
    };
    if !rms.is_finite() {
        bail!(
            "the RMS difference of {} from the design is not a finite number; check the \
             measured values",
            measured.display()
        );
    }
    writeln!(
        stdout,
        "{q} (mean of s and p) at {aoi}°: RMS difference {:.4} percentage points over {n} points, {lo}–{hi} nm",
        100.0 * rms
    )?;
    writeln!(stdout, "rms_fraction,{rms}")?;
    Ok(())
}
