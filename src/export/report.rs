//! The layer report: one row per layer (number, material, physical thickness, QWOT and optical
//! thickness at the reference wavelength, running total of physical thickness), totals per
//! material and overall, and a header naming the design, its media and the reference
//! wavelength. A design with a coated back face gets a second layer table for it. Built once
//! ([`LayerReport::new`]) and written as CSV, Markdown or HTML.
//!
//! ```
//! use stackwise::design::{Design, Layer, Nm};
//! use stackwise::export::report::LayerReport;
//! use stackwise::material::{Material, Model};
//! let mut d = Design::new_empty("Two layers");
//! d.materials.push(Material::user("H", Model::Constant { n: 2.0, k: 0.0 }));
//! d.layers.push(Layer::new("H", Nm::new(68.75)?));
//! d.layers.push(Layer::new("H", Nm::new(31.25)?));
//! let r = LayerReport::new(&d)?;
//! assert_eq!(r.total_nm, 100.0);
//! assert_eq!(r.per_material[0].count, 2);
//! assert_eq!(r.rows[0].qwot, 1.0);
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use std::fmt::{self, Write as _};

use super::ExportError;
use crate::design::{Design, Face, reference_index};
use crate::material::Catalog;

/// One layer's line.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerRow {
    /// Layer number (1 = on the substrate).
    pub no: usize,
    /// Material name.
    pub material: String,
    /// Physical thickness (nm).
    pub nm: f64,
    /// Quarter waves at the reference wavelength.
    pub qwot: f64,
    /// Optical thickness n·d at the reference wavelength (nm).
    pub optical_nm: f64,
    /// Physical thickness of layers 1 to this one (nm).
    pub cumulative_nm: f64,
    /// Whether optimisation leaves this layer alone.
    pub locked: bool,
}

/// Totals for one material.
#[derive(Clone, Debug, PartialEq)]
pub struct MaterialTotal {
    /// Material name.
    pub material: String,
    /// Number of layers of it.
    pub count: usize,
    /// Their physical thickness together (nm).
    pub nm: f64,
}

/// A layer report format.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum ReportFormat {
    /// Comma-separated values, full precision.
    Csv,
    /// Markdown tables.
    #[value(name = "md")]
    Markdown,
    /// A self-contained HTML page.
    Html,
}

impl ReportFormat {
    /// The usual file name extension, without the dot.
    #[must_use]
    pub fn extension(self) -> &'static str {
        match self {
            Self::Csv => "csv",
            Self::Markdown => "md",
            Self::Html => "html",
        }
    }
}

/// The whole report, ready to write in any format.
#[derive(Clone, Debug, PartialEq)]
pub struct LayerReport {
    /// Design name.
    pub name: String,
    /// Incident medium.
    pub incident: String,
    /// Substrate, with its thickness or "semi-infinite".
    pub substrate: String,
    /// Exit medium.
    pub exit: String,
    /// Reference wavelength (nm).
    pub reference_nm: f64,
    /// The layers, layer 1 first.
    pub rows: Vec<LayerRow>,
    /// The back face's layers, layer 1 (on the substrate) first; empty for a bare back face.
    pub back_rows: Vec<LayerRow>,
    /// Totals per material, in order of first use.
    pub per_material: Vec<MaterialTotal>,
    /// Total physical thickness (nm) of the front coating.
    pub total_nm: f64,
    /// A line printed under the header (see [`super::SAFETY_CAUTION`]).
    pub caution: Option<String>,
}

impl LayerReport {
    /// The report as text in `format`.
    #[must_use]
    pub fn render(&self, format: ReportFormat) -> String {
        match format {
            ReportFormat::Csv => self.to_csv(),
            ReportFormat::Markdown => self.to_markdown(),
            ReportFormat::Html => self.to_html(),
        }
    }

    /// Builds the report; fails if a layer's material has no index at the reference
    /// wavelength.
    pub fn new(d: &Design) -> Result<Self, ExportError> {
        let rows = face_rows(d, Face::Front)?;
        let back_rows = face_rows(d, Face::Back)?;
        let mut per_material: Vec<MaterialTotal> = Vec::new();
        for r in &rows {
            if let Some(t) = per_material.iter_mut().find(|t| t.material == r.material) {
                t.count += 1;
                t.nm += r.nm;
            } else {
                per_material.push(MaterialTotal {
                    material: r.material.clone(),
                    count: 1,
                    nm: r.nm,
                });
            }
        }
        let total_nm = rows.last().map_or(0.0, |r| r.cumulative_nm);
        let substrate = match d.substrate_mm {
            Some(mm) => format!("{} ({mm} mm)", d.substrate),
            None => format!("{} (semi-infinite)", d.substrate),
        };
        Ok(Self {
            name: d.name.clone(),
            incident: d.incident.clone(),
            substrate,
            exit: d.exit.clone(),
            reference_nm: d.reference_nm,
            rows,
            back_rows,
            per_material,
            total_nm,
            caution: super::caution_for(false, [d.name.as_str()], [], []).map(str::to_owned),
        })
    }

    /// Total physical thickness (nm) of the back coating.
    #[must_use]
    pub fn back_total_nm(&self) -> f64 {
        self.back_rows.last().map_or(0.0, |r| r.cumulative_nm)
    }

    fn media(&self) -> String {
        format!(
            "incident {}, substrate {}, exit {}",
            self.incident, self.substrate, self.exit
        )
    }

    /// CSV: `#` header lines, then `layer,material,nm,qwot,optical_nm,cumulative_nm,locked`,
    /// then a blank line and `material,layers,nm` totals ending with an `all` row; with a
    /// coated back face, a blank line and the back layers under
    /// `back_layer,material,nm,qwot,optical_nm,cumulative_nm,locked`. Numbers are written in
    /// full (round-trip) precision.
    #[must_use]
    pub fn to_csv(&self) -> String {
        render(|s| self.write_csv(s))
    }

    fn write_csv(&self, s: &mut String) -> fmt::Result {
        writeln!(s, "# design: {}", one_line(&self.name))?;
        writeln!(s, "# media: {}", one_line(&self.media()))?;
        writeln!(s, "# reference wavelength: {} nm", self.reference_nm)?;
        if let Some(c) = &self.caution {
            writeln!(s, "# caution: {c}")?;
        }
        s.push_str("layer,material,nm,qwot,optical_nm,cumulative_nm,locked\n");
        csv_rows(s, &self.rows)?;
        s.push_str("\nmaterial,layers,nm\n");
        for t in &self.per_material {
            writeln!(
                s,
                "{},{},{}",
                crate::export::csv::field(&t.material),
                t.count,
                t.nm
            )?;
        }
        writeln!(s, "all,{},{}", self.rows.len(), self.total_nm)?;
        if !self.back_rows.is_empty() {
            s.push_str("\nback_layer,material,nm,qwot,optical_nm,cumulative_nm,locked\n");
            csv_rows(s, &self.back_rows)?;
        }
        Ok(())
    }

    /// A Markdown document: title, header lines, the layer table and the totals table, then
    /// (with a coated back face) a "Back face" section with its layer table.
    /// Numbers are rounded for reading (nm to 0.01, QWOT to 0.0001).
    #[must_use]
    pub fn to_markdown(&self) -> String {
        render(|s| self.write_markdown(s))
    }

    fn write_markdown(&self, s: &mut String) -> fmt::Result {
        writeln!(s, "# Layer report: {}\n", md_cell(&self.name))?;
        writeln!(s, "- Media: {}", md_cell(&self.media()))?;
        writeln!(s, "- Reference wavelength: {} nm", self.reference_nm)?;
        writeln!(
            s,
            "- Layers: {}, total physical thickness {:.2} nm",
            self.rows.len(),
            self.total_nm
        )?;
        if let Some(c) = &self.caution {
            writeln!(s, "\n**Caution:** {}", md_cell(c))?;
        }
        md_table(s, "Layer", &self.rows)?;
        s.push_str("\n| Material | Layers | Thickness (nm) |\n|:---|---:|---:|\n");
        for t in &self.per_material {
            writeln!(
                s,
                "| {} | {} | {:.2} |",
                md_cell(&t.material),
                t.count,
                t.nm
            )?;
        }
        writeln!(
            s,
            "| **All** | **{}** | **{:.2}** |",
            self.rows.len(),
            self.total_nm
        )?;
        if !self.back_rows.is_empty() {
            writeln!(
                s,
                "\n## Back face\n\n- Back layers: {}, total physical thickness {:.2} nm",
                self.back_rows.len(),
                self.back_total_nm()
            )?;
            md_table(s, "Back layer", &self.back_rows)?;
        }
        Ok(())
    }

    /// A self-contained HTML page (no scripts, no outside files, all text escaped) with the
    /// same content as [`Self::to_markdown`].
    #[must_use]
    pub fn to_html(&self) -> String {
        render(|s| self.write_html(s))
    }

    fn write_html(&self, s: &mut String) -> fmt::Result {
        let title = format!("Layer report: {}", self.name);
        write!(
            s,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <title>{}</title>\n<style>\n\
             body {{ font-family: sans-serif; margin: 2em; color: #202020; }}\n\
             table {{ border-collapse: collapse; margin: 1em 0; }}\n\
             th, td {{ border: 1px solid #c8c8c8; padding: 0.25em 0.7em; }}\n\
             th {{ background: #eef3f8; }}\n\
             td.num {{ text-align: right; font-variant-numeric: tabular-nums; }}\n\
             tfoot td {{ font-weight: bold; }}\n\
             .caution {{ color: #962000; font-weight: bold; }}\n\
             </style>\n</head>\n<body>\n<h1>{}</h1>\n<p>Media: {}<br>\n\
             Reference wavelength: {} nm<br>\nLayers: {}, total physical thickness {:.2} nm</p>\n",
            html(&title),
            html(&title),
            html(&self.media()),
            self.reference_nm,
            self.rows.len(),
            self.total_nm
        )?;
        if let Some(c) = &self.caution {
            writeln!(s, "<p class=\"caution\">Caution: {}</p>", html(c))?;
        }
        html_table(s, "layers", "Layer", &self.rows)?;
        s.push_str(
            "<table class=\"totals\">\n<thead><tr><th>Material</th>\
             <th>Layers</th><th>Thickness (nm)</th></tr></thead>\n<tbody>\n",
        );
        for t in &self.per_material {
            writeln!(
                s,
                "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{:.2}</td></tr>",
                html(&t.material),
                t.count,
                t.nm
            )?;
        }
        write!(
            s,
            "</tbody>\n<tfoot><tr><td>All</td><td class=\"num\">{}</td>\
             <td class=\"num\">{:.2}</td></tr></tfoot>\n</table>\n",
            self.rows.len(),
            self.total_nm
        )?;
        if !self.back_rows.is_empty() {
            writeln!(
                s,
                "<h2>Back face</h2>\n<p>Back layers: {}, total physical thickness {:.2} nm</p>",
                self.back_rows.len(),
                self.back_total_nm()
            )?;
            html_table(s, "back-layers", "Back layer", &self.back_rows)?;
        }
        s.push_str("</body>\n</html>\n");
        Ok(())
    }
}

/// The rows of one face's layer table.
fn face_rows(d: &Design, face: Face) -> Result<Vec<LayerRow>, ExportError> {
    let catalog = Catalog::new(&d.materials);
    let mut cumulative_nm = 0.0;
    let mut rows = Vec::new();
    for (i, layer) in d.face_layers(face).iter().enumerate() {
        let no = i + 1;
        let place = format!("{} {no}", face.layer_word());
        let n = reference_index(&catalog, &layer.material, d.reference_nm, &place)?;
        let nm = layer.nm.get();
        cumulative_nm += nm;
        rows.push(LayerRow {
            no,
            material: layer.material.clone(),
            nm,
            qwot: 4.0 * n * nm / d.reference_nm,
            optical_nm: n * nm,
            cumulative_nm,
            locked: layer.locked,
        });
    }
    Ok(rows)
}

/// CSV lines of a layer table (without its header).
fn csv_rows(s: &mut String, rows: &[LayerRow]) -> fmt::Result {
    for r in rows {
        writeln!(
            s,
            "{},{},{},{},{},{},{}",
            r.no,
            crate::export::csv::field(&r.material),
            r.nm,
            r.qwot,
            r.optical_nm,
            r.cumulative_nm,
            r.locked
        )?;
    }
    Ok(())
}

/// A Markdown layer table whose first column is headed `first`.
fn md_table(s: &mut String, first: &str, rows: &[LayerRow]) -> fmt::Result {
    writeln!(
        s,
        "\n| {first} | Material | Thickness (nm) | QWOT | Optical thickness (nm) \
         | Cumulative (nm) | Locked |\n|---:|:---|---:|---:|---:|---:|:---:|"
    )?;
    for r in rows {
        writeln!(
            s,
            "| {} | {} | {:.2} | {:.4} | {:.2} | {:.2} | {} |",
            r.no,
            md_cell(&r.material),
            r.nm,
            r.qwot,
            r.optical_nm,
            r.cumulative_nm,
            if r.locked { "yes" } else { "" }
        )?;
    }
    Ok(())
}

/// An HTML layer table of class `class` whose first column is headed `first`.
fn html_table(s: &mut String, class: &str, first: &str, rows: &[LayerRow]) -> fmt::Result {
    writeln!(
        s,
        "<table class=\"{class}\">\n<thead><tr><th>{first}</th><th>Material</th>\
         <th>Thickness (nm)</th><th>QWOT</th><th>Optical thickness (nm)</th>\
         <th>Cumulative (nm)</th><th>Locked</th></tr></thead>\n<tbody>"
    )?;
    for r in rows {
        writeln!(
            s,
            "<tr><td class=\"num\">{}</td><td>{}</td><td class=\"num\">{:.2}</td>\
             <td class=\"num\">{:.4}</td><td class=\"num\">{:.2}</td>\
             <td class=\"num\">{:.2}</td><td>{}</td></tr>",
            r.no,
            html(&r.material),
            r.nm,
            r.qwot,
            r.optical_nm,
            r.cumulative_nm,
            if r.locked { "yes" } else { "" }
        )?;
    }
    s.push_str("</tbody>\n</table>\n");
    Ok(())
}

/// Line breaks turned into spaces, for `#` header lines.
fn one_line(s: &str) -> String {
    s.replace(['\r', '\n'], " ")
}

/// Text safe inside a Markdown table cell: one line, pipes and markup characters escaped.
fn md_cell(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in one_line(s).chars() {
        if matches!(
            c,
            '|' | '\\' | '*' | '_' | '`' | '[' | ']' | '<' | '>' | '#'
        ) {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// Text safe inside HTML elements and attribute values.
fn html(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// The text `write` produces (writing to a String cannot fail).
fn render(write: impl FnOnce(&mut String) -> fmt::Result) -> String {
    let mut s = String::new();
    write(&mut s).ok();
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn html_escapes_markup() {
        assert_eq!(html("<b>&\"'"), "&lt;b&gt;&amp;&quot;&#39;");
    }

    #[test]
    fn markdown_cells_cannot_break_the_table() {
        let c = md_cell("a|b\nc");
        assert_eq!(c, "a\\|b c");
    }

    #[test]
    fn csv_fields_with_commas_are_quoted() {
        assert_eq!(crate::export::csv::field("a,\"b\""), "\"a,\"\"b\"\"\"");
        assert_eq!(crate::export::csv::field("plain"), "plain");
    }
}
