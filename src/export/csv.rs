//! CSV of computed curves. Numbers are written in Rust's shortest round-trip form (with an
//! exponent for tiny and huge values, see [`Short`]), so reading a file back gives exactly the
//! numbers that were computed.

use std::io::{self, Write};

use crate::analysis::compare::Figures;
use crate::analysis::monitor::MonitorCurve;
use crate::analysis::sensitivity::{LayerSensitivity, Sensitivity, rank};
use crate::analysis::tolerance::Envelope;
use crate::analysis::{AngleScan, COLUMN_NAMES, Curves, Spectrum};
use crate::number::Short;

fn write_rows(mut w: impl Write, x_name: &str, x: &[f64], curves: &Curves) -> io::Result<()> {
    write!(w, "{x_name}")?;
    for name in COLUMN_NAMES {
        write!(w, ",{name}")?;
    }
    writeln!(w)?;
    let cols = curves.columns();
    for (i, xi) in x.iter().enumerate() {
        write!(w, "{}", Short(*xi))?;
        for c in cols {
            write!(w, ",{}", Short(c[i]))?;
        }
        writeln!(w)?;
    }
    w.flush()
}

/// `wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A` (fractions; R, T, A are the s/p means).
///
/// ```
/// let s = stackwise::analysis::Spectrum::default();
/// let mut out = Vec::new();
/// stackwise::export::csv::write_spectrum(&mut out, &s).unwrap();
/// assert_eq!(String::from_utf8(out).unwrap(), "wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A\n");
/// ```
pub fn write_spectrum(w: impl Write, s: &Spectrum) -> io::Result<()> {
    write_rows(w, "wavelength_nm", &s.wavelength_nm, &s.curves)
}

/// `aoi_deg,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A`.
pub fn write_angles(w: impl Write, s: &AngleScan) -> io::Result<()> {
    write_rows(w, "aoi_deg", &s.aoi_deg, &s.curves)
}

/// `wavelength_nm,n,k`.
pub fn write_nk(mut w: impl Write, rows: &[(f64, f64, f64)]) -> io::Result<()> {
    writeln!(w, "wavelength_nm,n,k")?;
    for (wl, n, k) in rows {
        writeln!(w, "{},{},{}", Short(*wl), Short(*n), Short(*k))?;
    }
    w.flush()
}

/// The tolerance envelope: `wavelength_nm,nominal,p05,…` — one column per percentile, named
/// `p` and the percentile with two digits (`p05`, `p50`, `p95`; fractions).
///
/// ```
/// use stackwise::analysis::tolerance::{Envelope, ToleranceStop};
/// let e = Envelope {
///     wavelength_nm: vec![500.0], nominal: vec![0.1], percentiles: vec![5.0, 95.0],
///     bands: vec![vec![0.08], vec![0.13]], runs_done: 10, stop: ToleranceStop::Completed,
///     warnings: vec![], passed: None,
/// };
/// let mut out = Vec::new();
/// stackwise::export::csv::write_envelope(&mut out, &e).unwrap();
/// assert_eq!(String::from_utf8(out).unwrap(), "wavelength_nm,nominal,p05,p95\n500,0.1,0.08,0.13\n");
/// ```
pub fn write_envelope(mut w: impl Write, e: &Envelope) -> io::Result<()> {
    write!(w, "wavelength_nm,nominal")?;
    for p in &e.percentiles {
        write!(w, ",p{p:02}")?;
    }
    writeln!(w)?;
    for (i, wl) in e.wavelength_nm.iter().enumerate() {
        write!(w, "{wl},{}", e.nominal[i])?;
        for band in &e.bands {
            write!(w, ",{}", band[i])?;
        }
        writeln!(w)?;
    }
    w.flush()
}

/// Layer sensitivities, most sensitive first: `layer,material,nm,sensitivity` (the RMS change
/// of the quantity per 1 % thickness change, a fraction).
pub fn write_sensitivity(w: impl Write, s: &Sensitivity) -> io::Result<()> {
    write_layer_sensitivities(w, &s.layers)
}

/// Any per-layer sensitivities (of the spectrum or of the merit), most sensitive first:
/// `layer,material,nm,sensitivity`.
pub fn write_layer_sensitivities(mut w: impl Write, layers: &[LayerSensitivity]) -> io::Result<()> {
    writeln!(w, "layer,material,nm,sensitivity")?;
    for l in rank(layers) {
        writeln!(
            w,
            "{},{},{},{}",
            l.layer,
            field(&l.material),
            l.nm,
            l.sensitivity
        )?;
    }
    w.flush()
}

/// The monitoring curve: `deposited_nm,layer,signal` (signal a fraction).
pub fn write_monitor(mut w: impl Write, m: &MonitorCurve) -> io::Result<()> {
    writeln!(w, "deposited_nm,layer,signal")?;
    for ((x, layer), signal) in m.deposited_nm.iter().zip(&m.layer).zip(&m.signal) {
        writeln!(w, "{x},{layer},{signal}")?;
    }
    w.flush()
}

/// Quotes a CSV field when it holds a comma, quote or line break.
///
/// ```
/// use stackwise::export::csv::field;
/// assert_eq!(field("TiO2"), "TiO2");
/// assert_eq!(field("Sellmeier, 3 terms"), "\"Sellmeier, 3 terms\"");
/// assert_eq!(field("a \"b\""), "\"a \"\"b\"\"\"");
/// ```
#[must_use]
pub fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_owned()
    }
}

/// The compare table: one row per design,
/// `design,from_nm,to_nm,points,R_mean,R_min,R_min_nm,R_max,R_max_nm,T_mean,T_min,T_min_nm,T_max,T_max_nm`
/// (fractions and nm, full precision).
pub fn write_compare(mut w: impl Write, rows: &[(String, Figures)]) -> io::Result<()> {
    writeln!(
        w,
        "design,from_nm,to_nm,points,R_mean,R_min,R_min_nm,R_max,R_max_nm,\
         T_mean,T_min,T_min_nm,T_max,T_max_nm"
    )?;
    for (name, f) in rows {
        let (r, t) = (&f.r, &f.t);
        writeln!(
            w,
            "{},{},{},{},{},{},{},{},{},{},{},{},{},{}",
            field(name),
            Short(f.from_nm),
            Short(f.to_nm),
            f.points,
            Short(r.mean),
            Short(r.min),
            Short(r.min_at_nm),
            Short(r.max),
            Short(r.max_at_nm),
            Short(t.mean),
            Short(t.min),
            Short(t.min_at_nm),
            Short(t.max),
            Short(t.max_at_nm)
        )?;
    }
    w.flush()
}
