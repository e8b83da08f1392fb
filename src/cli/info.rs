//! `stackwise info`: the layer tables of a design (both faces), with QWOT and optical
//! thickness, and its targets in words.

use std::io::Write;

use anyhow::Result;

use crate::design::Design;
use crate::export;

/// Writes the layer tables of `d`.
pub(super) fn info(d: &Design, out: &mut dyn Write) -> Result<()> {
    writeln!(out, "{}", d.name)?;
    let sub = match d.substrate_mm {
        Some(mm) => format!("{} ({mm} mm, back surface counted)", d.substrate),
        None => format!("{} (semi-infinite)", d.substrate),
    };
    writeln!(
        out,
        "incident: {}   substrate: {sub}   exit: {}   reference: {} nm",
        d.incident, d.exit, d.reference_nm
    )?;
    let r = export::report::LayerReport::new(d)?;
    info_table(out, "layer", &r.rows)?;
    writeln!(out, "{} layers, {:.3} nm in all", r.rows.len(), r.total_nm)?;
    if !r.back_rows.is_empty() {
        writeln!(out, "back face (layer 1 on the substrate):")?;
        info_table(out, "back", &r.back_rows)?;
        writeln!(
            out,
            "{} back layers, {:.3} nm in all",
            r.back_rows.len(),
            r.back_total_nm()
        )?;
    }
    if !d.targets.is_empty() {
        writeln!(out, "targets:")?;
        for (i, t) in d.targets.iter().enumerate() {
            writeln!(out, "  {}. {} (weight {})", i + 1, t.describe(), t.weight)?;
        }
    }
    Ok(())
}

/// One face's layer table for `info`.
fn info_table(out: &mut dyn Write, first: &str, rows: &[export::report::LayerRow]) -> Result<()> {
    writeln!(
        out,
        "{first:>5}  {:<16} {:>12} {:>9} {:>14}",
        "material", "nm", "QWOT", "optical nm"
    )?;
    for r in rows {
        writeln!(
            out,
            "{:>5}  {:<16} {:>12.3} {:>9.4} {:>14.3}{}",
            r.no,
            r.material,
            r.nm,
            r.qwot,
            r.optical_nm,
            if r.locked { "  locked" } else { "" }
        )?;
    }
    Ok(())
}
