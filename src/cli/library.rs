//! `stackwise nk` and `stackwise materials`: the materials library as CSV.

use std::io::Write;
use std::path::Path;

use anyhow::Result;

use super::{Range, load_design};
use crate::export;
use crate::material::{Catalog, builtin};

/// A material's n and k over wavelength: `wavelength_nm,n,k`.
pub(super) fn nk(
    material: &str,
    range: Range,
    design: Option<&Path>,
    stdout: &mut dyn Write,
    stderr: &mut dyn Write,
) -> Result<()> {
    let d = design.map(load_design).transpose()?;
    let user = d.as_ref().map_or(&[][..], |d| &d.materials[..]);
    let m = Catalog::new(user).get(material)?;
    let (lo, hi) = m.valid_range_nm();
    let (lo, hi) = if hi.is_finite() {
        (lo, hi)
    } else {
        (300.0, 1100.0)
    };
    let wl = range.wavelengths_nm(lo, hi)?;
    if let Some(w) = m.range_warning(&wl) {
        writeln!(stderr, "warning: {w}")?;
    }
    let rows = wl
        .iter()
        .map(|&w| m.index_at(w).map(|n| (w, n.re, n.im)))
        .collect::<Result<Vec<_>, _>>()?;
    export::csv::write_nk(stdout, &rows)?;
    Ok(())
}

/// The built-in library: `name,model,min_nm,max_nm,source`.
pub(super) fn materials(stdout: &mut dyn Write) -> Result<()> {
    writeln!(stdout, "name,model,min_nm,max_nm,source")?;
    for m in builtin() {
        let (lo, hi) = m.valid_range_nm();
        let fmt = |x: f64| {
            if x.is_finite() && x > 0.0 {
                x.to_string()
            } else {
                String::new()
            }
        };
        writeln!(
            stdout,
            "{},{},{},{},{}",
            export::csv::field(&m.name),
            export::csv::field(m.model.kind_name()),
            fmt(lo),
            fmt(hi),
            export::csv::field(&m.source)
        )?;
    }
    Ok(())
}
