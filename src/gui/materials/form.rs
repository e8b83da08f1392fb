//! The model of the "New material" form (also used to edit a design material): the text the
//! user typed, checked and turned into a [`Material`]; no widgets, so it is testable without
//! egui.

use std::path::Path;

use crate::material::import::{ImportError, NkImport, WavelengthUnit, parse_nk_csv};
use crate::material::{Material, Model};

use super::NkCurves;
use crate::gui::jobs::Job;

/// Largest table file the panel reads.
const MAX_FILE_BYTES: u64 = 20 * 1024 * 1024;

/// The model kinds the form can define.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub(super) enum FormKind {
    #[default]
    Constant,
    Cauchy,
    Sellmeier,
    Table,
}

/// The "New material" form, also used to edit a design material.
#[derive(Default)]
pub(super) struct Form {
    /// `Some(old name)` while editing a design material.
    pub(super) editing: Option<String>,
    pub(super) name: String,
    pub(super) kind: FormKind,
    pub(super) n: String,
    pub(super) k: String,
    pub(super) cauchy: [String; 3],
    pub(super) sellmeier_a: String,
    /// (B_i, C_i µm²) pairs.
    pub(super) terms: Vec<(String, String)>,
    pub(super) range_from: String,
    pub(super) range_to: String,
    pub(super) csv: String,
    pub(super) unit: WavelengthUnit,
    /// The last parse of `csv` with `unit`, kept until either changes.
    pub(super) parsed: Option<ParsedCsv>,
    /// Citation carried over from an edited or copied material.
    pub(super) source: String,
    /// The file a table was loaded from and the text it gave, to cite it while that text
    /// stands.
    pub(super) loaded: Option<(String, String)>,
    /// The table file being read.
    pub(super) loading: Option<Job<(), Loaded, String>>,
    pub(super) load_message: Option<String>,
    /// Set by "Load file…": the window is to ask for a table file.
    pub(super) wants_file: bool,
    pub(super) preview: Option<NkCurves>,
}

pub(super) struct ParsedCsv {
    pub(super) text: String,
    pub(super) unit: WavelengthUnit,
    pub(super) result: Result<NkImport, ImportError>,
}

/// A table file's text, as read.
pub(super) struct Loaded {
    /// The file's name, to cite it.
    pub(super) file_name: String,
    /// Its text.
    pub(super) text: String,
    /// Whether it was not UTF-8 and unreadable characters were replaced.
    pub(super) lossy: bool,
}

impl Form {
    /// Empties the form (a file still being read keeps its answer coming).
    pub(super) fn clear(&mut self) {
        let loading = self.loading.take();
        *self = Form {
            loading,
            ..Form::default()
        };
    }

    /// Fills the form from an existing material; false if its model kind has no form.
    pub(super) fn load_material(&mut self, m: &Material, editing: Option<String>) -> bool {
        let fmt = |x: &f64| format!("{x}");
        let kind = match &m.model {
            Model::Constant { n, k } => {
                self.n = fmt(n);
                self.k = fmt(k);
                FormKind::Constant
            }
            Model::Cauchy { a, b, c } => {
                self.cauchy = [fmt(a), fmt(b), fmt(c)];
                FormKind::Cauchy
            }
            Model::Sellmeier { a, b, c } => {
                self.sellmeier_a = if *a == 0.0 { String::new() } else { fmt(a) };
                self.terms = b.iter().zip(c).map(|(b, c)| (fmt(b), fmt(c))).collect();
                FormKind::Sellmeier
            }
            Model::Table { rows } => {
                self.csv = std::iter::once("wavelength (nm), n, k\n".to_owned())
                    .chain(rows.iter().map(|(w, n, k)| format!("{w}, {n}, {k}\n")))
                    .collect();
                self.unit = WavelengthUnit::Auto;
                FormKind::Table
            }
            _ => return false,
        };
        self.kind = kind;
        self.name.clone_from(&m.name);
        self.editing = editing;
        self.source.clone_from(&m.source);
        self.loaded = None;
        let (from, to) = m
            .range_nm
            .map_or((String::new(), String::new()), |(a, b)| (fmt(&a), fmt(&b)));
        self.range_from = from;
        self.range_to = to;
        self.parsed = None;
        self.load_message = None;
        true
    }

    /// Parses the CSV box again if its text or the unit changed since the last parse.
    pub(super) fn refresh_parse(&mut self) {
        let stale = self
            .parsed
            .as_ref()
            .is_none_or(|p| p.text != self.csv || p.unit != self.unit);
        if stale {
            self.parsed = Some(ParsedCsv {
                text: self.csv.clone(),
                unit: self.unit,
                result: parse_nk_csv(&self.csv, self.unit),
            });
        }
    }

    /// The citation for the material: a loaded file for a table (marked if the text was
    /// changed since), else what the edited or copied material had.
    pub(super) fn source_for_kind(&self) -> String {
        match &self.loaded {
            Some((file, text)) if self.kind == FormKind::Table => {
                if *text == self.csv {
                    format!("imported from {file}")
                } else {
                    format!("imported from {file}, edited")
                }
            }
            _ => self.source.clone(),
        }
    }

    /// The material the form describes, or what is missing or wrong.
    pub(super) fn build(&self) -> Result<Material, String> {
        let m = self.build_model()?;
        if self.name.trim().is_empty() {
            return Err("give the material a name".into());
        }
        Ok(m)
    }

    /// The material without the name check, so a preview can show before it is named.
    pub(super) fn build_model(&self) -> Result<Material, String> {
        let name = match self.name.trim() {
            "" => "new material",
            n => n,
        };
        let model = match self.kind {
            FormKind::Constant => Model::Constant {
                n: number("n", &self.n, None)?,
                k: number("k", &self.k, Some(0.0))?,
            },
            FormKind::Cauchy => Model::Cauchy {
                a: number("A", &self.cauchy[0], None)?,
                b: number("B", &self.cauchy[1], Some(0.0))?,
                c: number("C", &self.cauchy[2], Some(0.0))?,
            },
            FormKind::Sellmeier => {
                let mut b = Vec::new();
                let mut c = Vec::new();
                for (i, (bi, ci)) in self.terms.iter().enumerate() {
                    if bi.trim().is_empty() && ci.trim().is_empty() {
                        continue;
                    }
                    b.push(number(&format!("B{}", i + 1), bi, None)?);
                    c.push(number(&format!("C{}", i + 1), ci, None)?);
                }
                if b.is_empty() {
                    return Err("give at least one Sellmeier term (B and C)".into());
                }
                Model::Sellmeier {
                    a: number("extra constant", &self.sellmeier_a, Some(0.0))?,
                    b,
                    c,
                }
            }
            FormKind::Table => match self.parsed.as_ref().map(|p| &p.result) {
                Some(Ok(t)) => Model::Table {
                    rows: t.rows.clone(),
                },
                Some(Err(e)) => return Err(format!("table: {e}")),
                None => return Err("paste a table or load a file".into()),
            },
        };
        let range_nm = if self.kind == FormKind::Table {
            None
        } else {
            match (self.range_from.trim(), self.range_to.trim()) {
                ("", "") => None,
                ("", _) | (_, "") => {
                    return Err("give both ends of the valid range, or leave both empty".into());
                }
                (a, b) => Some((number("valid from", a, None)?, number("valid to", b, None)?)),
            }
        };
        let material = Material {
            name: name.to_owned(),
            model,
            range_nm,
            source: self.source_for_kind(),
        };
        material.validate().map_err(|e| e.to_string())?;
        Ok(material)
    }
}

/// Reads a number typed in the form; an empty field gives `empty` if that is allowed.
pub(super) fn number(what: &str, text: &str, empty: Option<f64>) -> Result<f64, String> {
    let t = text.trim();
    if t.is_empty() {
        return empty.ok_or_else(|| format!("{what}: enter a number"));
    }
    let v = t
        .parse::<f64>()
        .or_else(|_| t.replace(',', ".").parse::<f64>())
        .map_err(|_| format!("{what}: {t:?} is not a number; write e.g. 1.45"))?;
    if v.is_finite() {
        Ok(v)
    } else {
        Err(format!("{what}: {t:?} must be a finite number"))
    }
}

/// Reads a table file picked by the user; the error names the file.
pub(super) fn read_table_file(path: &Path) -> Result<Loaded, String> {
    let file_name = path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    let fail = |what: String| format!("{}: {what}", path.display());
    let meta = std::fs::metadata(path).map_err(|e| fail(format!("cannot read it ({e})")))?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(fail(format!(
            "the file is {} MB; tables larger than {} MB are not read",
            meta.len() / (1024 * 1024),
            MAX_FILE_BYTES / (1024 * 1024)
        )));
    }
    let bytes = std::fs::read(path).map_err(|e| fail(format!("cannot read it ({e})")))?;
    Ok(match String::from_utf8(bytes) {
        Ok(text) => Loaded {
            file_name,
            text,
            lossy: false,
        },
        Err(e) => Loaded {
            file_name,
            text: String::from_utf8_lossy(e.as_bytes()).into_owned(),
            lossy: true,
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn form_numbers_accept_decimal_commas_and_name_the_field() {
        assert_eq!(number("n", " 1,45 ", None), Ok(1.45));
        assert_eq!(number("k", "", Some(0.0)), Ok(0.0));
        let e = number("n", "abc", None).unwrap_err();
        assert!(e.contains("n:") && e.contains("\"abc\""), "{e}");
        let e = number("n", "", None).unwrap_err();
        assert!(e.contains("enter a number"), "{e}");
        let e = number("n", "inf", None).unwrap_err();
        assert!(e.contains("finite"), "{e}");
    }
}
