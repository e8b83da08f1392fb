//! Reading tabulated n, k data from CSV-like text into a [`Model::Table`] material.
//!
//! Accepted input: one row per line, `wavelength, n` or `wavelength, n, k`, separated by
//! commas, semicolons or tabs (or, failing those, spaces). Lines starting with `#` are
//! comments; text lines before the first row of numbers are a header and are skipped. A
//! semicolon- or tab-separated file may write decimals with a comma (`1,45`).
//!
//! The wavelength unit is nanometres or micrometres: chosen by the caller, or in
//! [`WavelengthUnit::Auto`] read from a header that names it, else guessed from the numbers.
//! Every decision the reader takes on its own is reported in [`NkImport::notes`].
//!
//! ```
//! use stackwise::material::import::{parse_nk_csv, WavelengthUnit};
//! let text = "wavelength (um), n, k\n0.4, 1.47, 0\n0.8, 1.45, 0\n";
//! let t = parse_nk_csv(text, WavelengthUnit::Auto).unwrap();
//! assert_eq!(t.unit_used, WavelengthUnit::Um);
//! assert_eq!(t.rows.len(), 2);
//! assert!((t.rows[1].0 - 800.0).abs() < 1e-9);
//! ```

use std::fmt;

use super::{Material, Model};

/// Wavelengths at or above this value are taken as nanometres when the unit is guessed; a
/// table whose wavelengths are all below it is taken as micrometres.
pub const GUESS_UM_BELOW: f64 = 50.0;

/// The unit of the wavelength column.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum WavelengthUnit {
    /// Read it from the header, else guess from the values.
    #[default]
    Auto,
    /// Nanometres.
    Nm,
    /// Micrometres.
    Um,
}

impl fmt::Display for WavelengthUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            WavelengthUnit::Auto => "auto",
            WavelengthUnit::Nm => "nm",
            WavelengthUnit::Um => "µm",
        })
    }
}

/// A successfully read table.
#[derive(Clone, Debug, PartialEq)]
pub struct NkImport {
    /// (wavelength nm, n, k), strictly increasing in wavelength.
    pub rows: Vec<(f64, f64, f64)>,
    /// The unit the wavelength column was read in ([`WavelengthUnit::Nm`] or
    /// [`WavelengthUnit::Um`], never `Auto`).
    pub unit_used: WavelengthUnit,
    /// True when the unit was inferred from the size of the numbers alone (no unit chosen by
    /// the caller and none named in the header), so the user should confirm it.
    pub unit_was_guessed: bool,
    /// What the reader decided on its own (separator, unit, skipped header, sorting, …), one
    /// sentence each, for showing to the user.
    pub notes: Vec<String>,
}

impl NkImport {
    /// A user material with these rows as a [`Model::Table`]; its valid range is the rows'
    /// span. The caller sets [`Material::source`] (e.g. "imported from silver.csv").
    #[must_use]
    pub fn into_material(self, name: &str) -> Material {
        Material::user(name, Model::Table { rows: self.rows })
    }

    /// The first and last wavelength (nm), if there are rows.
    #[must_use]
    pub fn span_nm(&self) -> Option<(f64, f64)> {
        Some((self.rows.first()?.0, self.rows.last()?.0))
    }
}

/// Why a table could not be read. Line numbers count from 1 over the whole text.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ImportError {
    /// Nothing that looks like a row of numbers.
    #[error(
        "no rows of numbers found; give one row per line such as `550, 1.46, 0.001` \
         (wavelength, n, k) or `550, 1.46` (wavelength, n)"
    )]
    NoRows,
    /// A row with a single value.
    #[error(
        "line {line}: only one column ({text:?}); give the wavelength and n, optionally k, \
         separated by commas, semicolons or tabs"
    )]
    SingleColumn {
        /// Line number (1-based).
        line: usize,
        /// The line's text.
        text: String,
    },
    /// A row with more than three values.
    #[error(
        "line {line}: {count} columns; expected 2 (wavelength, n) or 3 (wavelength, n, k) — \
         remove the extra columns"
    )]
    TooManyColumns {
        /// Line number (1-based).
        line: usize,
        /// How many cells the line has.
        count: usize,
    },
    /// A row whose column count differs from the first row's.
    #[error(
        "line {line}: {found} columns but line {first_line} has {expected}; every row needs \
         the same columns"
    )]
    ColumnCountChanged {
        /// Line number (1-based).
        line: usize,
        /// Columns on this line.
        found: usize,
        /// Line number of the first row.
        first_line: usize,
        /// Columns on the first row.
        expected: usize,
    },
    /// A cell left empty.
    #[error("line {line}: the {column} cell is empty; fill it in or delete the row")]
    EmptyCell {
        /// Line number (1-based).
        line: usize,
        /// "wavelength", "n" or "k".
        column: &'static str,
    },
    /// A cell that is not a number.
    #[error(
        "line {line}: {column} {text:?} is not a number; write plain decimals such as 1.45 \
         or 1.2e-3"
    )]
    NotANumber {
        /// Line number (1-based).
        line: usize,
        /// "wavelength", "n" or "k".
        column: &'static str,
        /// The cell as written.
        text: String,
    },
    /// A NaN or infinite value.
    #[error("line {line}: {column} is {text:?}; every value must be a finite number")]
    NotFinite {
        /// Line number (1-based).
        line: usize,
        /// "wavelength", "n" or "k".
        column: &'static str,
        /// The cell as written.
        text: String,
    },
    /// A wavelength that is zero or negative.
    #[error("line {line}: wavelength {text} must be greater than 0")]
    BadWavelength {
        /// Line number (1-based).
        line: usize,
        /// The cell as written.
        text: String,
    },
    /// n zero or negative.
    #[error("line {line}: n = {text} must be greater than 0")]
    BadN {
        /// Line number (1-based).
        line: usize,
        /// The cell as written.
        text: String,
    },
    /// k negative.
    #[error(
        "line {line}: k = {text} is negative; k must be 0 or more (absorption is a positive k)"
    )]
    NegativeK {
        /// Line number (1-based).
        line: usize,
        /// The cell as written.
        text: String,
    },
    /// The same wavelength twice.
    #[error(
        "line {line}: wavelength {text} repeats line {first_line}; keep only one of the two rows"
    )]
    Duplicate {
        /// The earlier line (1-based).
        first_line: usize,
        /// The later line (1-based).
        line: usize,
        /// The wavelength as written on the later line.
        text: String,
    },
    /// Wavelengths that neither only rise nor only fall.
    #[error(
        "line {line}: wavelength {text} is out of order after line {prev_line} ({prev_text}); \
         the rows must be sorted by wavelength, rising or falling"
    )]
    NotMonotonic {
        /// The earlier line (1-based).
        prev_line: usize,
        /// The earlier wavelength as written.
        prev_text: String,
        /// The offending line (1-based).
        line: usize,
        /// The offending wavelength as written.
        text: String,
    },
    /// Fewer than two rows.
    #[error("only one row of data (line {line}); a table needs at least 2 rows")]
    TooFewRows {
        /// The line of the single row.
        line: usize,
    },
}

/// The column separator found in the data.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Sep {
    Comma,
    Semicolon,
    Tab,
    Space,
}

impl Sep {
    pub(crate) fn detect(line: &str) -> Self {
        if line.contains('\t') {
            Sep::Tab
        } else if line.contains(';') {
            Sep::Semicolon
        } else if line.contains(',') {
            Sep::Comma
        } else {
            Sep::Space
        }
    }

    pub(crate) fn split(self, line: &str) -> Vec<&str> {
        let mut cells: Vec<&str> = match self {
            Sep::Comma => line.split(',').map(str::trim).collect(),
            Sep::Semicolon => line.split(';').map(str::trim).collect(),
            Sep::Tab => line.split('\t').map(str::trim).collect(),
            Sep::Space => line.split_whitespace().collect(),
        };
        // A trailing separator ("550;1.46;") leaves an empty last cell; ignore it.
        while cells.len() > 1 && cells.last().is_some_and(|c| c.is_empty()) {
            cells.pop();
        }
        cells
    }

    pub(crate) fn words(self) -> &'static str {
        match self {
            Sep::Comma => "commas",
            Sep::Semicolon => "semicolons",
            Sep::Tab => "tabs",
            Sep::Space => "spaces",
        }
    }
}

const COLUMNS: [&str; 3] = ["wavelength", "n", "k"];

/// A parsed row before unit conversion: values and how they were written.
struct RawRow<'a> {
    line: usize,
    values: [f64; 3],
    wl_text: &'a str,
}

/// Whether a line starts with a number, i.e. is a data row rather than a header.
pub(crate) fn starts_with_number(line: &str) -> bool {
    line.split([',', ';', '\t', ' '])
        .next()
        .is_some_and(|first| first.trim().parse::<f64>().is_ok())
}

/// The part of a line before any `#` comment, trimmed.
pub(crate) fn strip_comment(line: &str) -> &str {
    line.split('#').next().unwrap_or_default().trim()
}

/// The unit a header or comment names, if it names exactly one.
pub(crate) fn unit_in_header(text: &str) -> Option<WavelengthUnit> {
    let lower = text.to_lowercase();
    let mut nm = false;
    let mut um = false;
    for word in lower.split(|c: char| !c.is_alphanumeric()) {
        match word {
            "nm" | "nanometer" | "nanometers" | "nanometre" | "nanometres" => nm = true,
            "um" | "µm" | "μm" | "micron" | "microns" | "micrometer" | "micrometers"
            | "micrometre" | "micrometres" => um = true,
            _ => {}
        }
    }
    match (nm, um) {
        (true, false) => Some(WavelengthUnit::Nm),
        (false, true) => Some(WavelengthUnit::Um),
        _ => None,
    }
}

/// Parses one cell; `decimal_comma` allows a single comma as the decimal mark.
fn parse_cell(
    cell: &str,
    line: usize,
    col: usize,
    decimal_comma: bool,
    used_comma: &mut bool,
) -> Result<f64, ImportError> {
    let column = COLUMNS[col];
    if cell.is_empty() {
        return Err(ImportError::EmptyCell { line, column });
    }
    let value = if let Ok(v) = cell.parse::<f64>() {
        v
    } else {
        let fixed = (decimal_comma && cell.matches(',').count() == 1 && !cell.contains('.'))
            .then(|| cell.replace(',', "."))
            .and_then(|s| s.parse::<f64>().ok());
        let Some(v) = fixed else {
            return Err(ImportError::NotANumber {
                line,
                column,
                text: cell.to_owned(),
            });
        };
        *used_comma = true;
        v
    };
    if !value.is_finite() {
        return Err(ImportError::NotFinite {
            line,
            column,
            text: cell.to_owned(),
        });
    }
    Ok(value)
}

/// What a pass over the lines found.
struct Scan<'a> {
    rows: Vec<RawRow<'a>>,
    sep: Sep,
    first_line: usize,
    columns: usize,
    header_text: String,
    header_lines: usize,
    used_comma: bool,
}

/// Splits and checks one data line.
fn read_row<'a>(
    content: &'a str,
    line: usize,
    sep: Sep,
    first_row: &mut Option<(usize, usize)>,
    used_comma: &mut bool,
) -> Result<RawRow<'a>, ImportError> {
    let cells = sep.split(content);
    match (cells.len(), *first_row) {
        (0 | 1, _) => {
            return Err(ImportError::SingleColumn {
                line,
                text: content.to_owned(),
            });
        }
        (count @ 4.., _) => return Err(ImportError::TooManyColumns { line, count }),
        (count, None) => *first_row = Some((line, count)),
        (count, Some((first_line, expected))) if count != expected => {
            return Err(ImportError::ColumnCountChanged {
                line,
                found: count,
                first_line,
                expected,
            });
        }
        _ => {}
    }
    let decimal_comma = sep != Sep::Comma;
    let mut values = [0.0; 3];
    for (col, cell) in cells.iter().enumerate() {
        values[col] = parse_cell(cell, line, col, decimal_comma, used_comma)?;
    }
    let [wl, n, k] = values;
    if wl <= 0.0 {
        return Err(ImportError::BadWavelength {
            line,
            text: cells[0].to_owned(),
        });
    }
    if n <= 0.0 {
        return Err(ImportError::BadN {
            line,
            text: cells[1].to_owned(),
        });
    }
    if k < 0.0 {
        return Err(ImportError::NegativeK {
            line,
            text: cells.get(2).copied().unwrap_or_default().to_owned(),
        });
    }
    Ok(RawRow {
        line,
        values,
        wl_text: cells[0],
    })
}

/// The lines of a small numeric table, sorted out: header text (`#` comments and non-numeric
/// lines before the first data line), the separator found on the first data line, and each
/// data line with its 1-based number. Shared by the n,k and the measured-curve importers.
pub(crate) struct TextTable<'a> {
    /// Header text, one line per header or comment line.
    pub header: String,
    /// How many non-comment header lines came before the data.
    pub header_lines: usize,
    /// The separator of the first data line (`None` when there is no data line).
    pub sep: Option<Sep>,
    /// (line number, content without trailing comment) of each data line.
    pub data: Vec<(usize, &'a str)>,
}

/// Sorts the lines of `text` into header and data (see [`TextTable`]).
pub(crate) fn text_table(text: &str) -> TextTable<'_> {
    let mut t = TextTable {
        header: String::new(),
        header_lines: 0,
        sep: None,
        data: Vec::new(),
    };
    for (idx, raw_line) in text.lines().enumerate() {
        let trimmed = raw_line.trim();
        if let Some(comment) = trimmed.strip_prefix('#') {
            if t.data.is_empty() {
                t.header.push_str(comment);
                t.header.push('\n');
            }
            continue;
        }
        let content = strip_comment(trimmed);
        if content.is_empty() {
            continue;
        }
        if t.data.is_empty() && !starts_with_number(content) {
            t.header.push_str(content);
            t.header.push('\n');
            t.header_lines += 1;
            continue;
        }
        t.sep.get_or_insert_with(|| Sep::detect(content));
        t.data.push((idx + 1, content));
    }
    t
}

/// One pass over the lines: header, separator, rows.
fn scan(text: &str) -> Result<Scan<'_>, ImportError> {
    let table = text_table(text);
    let mut first_row: Option<(usize, usize)> = None; // (line, columns)
    let mut used_comma = false;
    let mut rows: Vec<RawRow<'_>> = Vec::with_capacity(table.data.len());
    let sep = table.sep;
    for &(line, content) in &table.data {
        let s = sep.unwrap_or(Sep::Comma);
        rows.push(read_row(content, line, s, &mut first_row, &mut used_comma)?);
    }
    let (header_text, header_lines) = (table.header, table.header_lines);
    let (Some(sep), Some((first_line, columns))) = (sep, first_row) else {
        return Err(ImportError::NoRows);
    };
    Ok(Scan {
        rows,
        sep,
        first_line,
        columns,
        header_text,
        header_lines,
        used_comma,
    })
}

/// The unit to use, whether it was guessed from magnitudes, and a note on how it was chosen.
fn choose_unit(
    unit: WavelengthUnit,
    header_text: &str,
    rows: &[RawRow<'_>],
    notes: &mut Vec<String>,
) -> (WavelengthUnit, bool) {
    let all_small = rows.iter().all(|r| r.values[0] < GUESS_UM_BELOW);
    let magnitude_guess = if all_small {
        WavelengthUnit::Um
    } else {
        WavelengthUnit::Nm
    };
    if unit != WavelengthUnit::Auto {
        notes.push(format!("wavelengths in {unit}, as chosen"));
        if unit != magnitude_guess {
            notes.push(format!(
                "the wavelength values look like {magnitude_guess} rather than {unit}; \
                 check the unit"
            ));
        }
        return (unit, false);
    }
    if let Some(u) = unit_in_header(header_text) {
        notes.push(format!("wavelengths in {u}, as the header says"));
        return (u, false);
    }
    notes.push(if all_small {
        format!(
            "wavelengths read as µm because all are below {GUESS_UM_BELOW}; \
             choose nm if that is wrong"
        )
    } else {
        format!(
            "wavelengths read as nm because some are {GUESS_UM_BELOW} or more; \
             choose µm if that is wrong"
        )
    });
    (magnitude_guess, true)
}

/// Reads a table of wavelength, n and (optionally) k from CSV-like text.
///
/// `unit` is the wavelength column's unit, or [`WavelengthUnit::Auto`] to take it from a header
/// that names "nm" or "µm" (also "um", "micron"), else to read all-below-50 values as µm and
/// anything else as nm. Rows given in falling wavelength order are reversed. The result's
/// wavelengths are in nm.
pub fn parse_nk_csv(text: &str, unit: WavelengthUnit) -> Result<NkImport, ImportError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let scan = scan(text)?;
    let rows = &scan.rows;
    if rows.len() < 2 {
        return Err(ImportError::TooFewRows {
            line: scan.first_line,
        });
    }
    let descending = check_order(rows)?;

    let mut notes = Vec::new();
    if scan.header_lines > 0 {
        notes.push(format!(
            "skipped {} header line{}",
            scan.header_lines,
            if scan.header_lines == 1 { "" } else { "s" }
        ));
    }
    notes.push(format!(
        "{} rows, columns separated by {}",
        rows.len(),
        scan.sep.words()
    ));
    if scan.used_comma {
        notes.push("decimal commas read as decimal points (e.g. 1,45 = 1.45)".into());
    }
    if scan.columns == 2 {
        notes.push("no k column: k = 0 (no absorption)".into());
    }
    let (unit_used, unit_was_guessed) = choose_unit(unit, &scan.header_text, rows, &mut notes);
    let scale = if unit_used == WavelengthUnit::Um {
        1000.0
    } else {
        1.0
    };
    let mut out: Vec<(f64, f64, f64)> = rows
        .iter()
        .map(|r| (r.values[0] * scale, r.values[1], r.values[2]))
        .collect();
    if descending {
        out.reverse();
        notes.push("rows were in falling wavelength order; sorted rising".into());
    }
    Ok(NkImport {
        rows: out,
        unit_used,
        unit_was_guessed,
        notes,
    })
}

/// Checks that wavelengths strictly rise or strictly fall (the first two rows set which);
/// returns true if they fall.
fn check_order(rows: &[RawRow<'_>]) -> Result<bool, ImportError> {
    use std::cmp::Ordering;
    let mut direction: Option<Ordering> = None;
    for pair in rows.windows(2) {
        let (a, b) = (&pair[0], &pair[1]);
        // Values are finite (checked when read), so the comparison always succeeds.
        let step = b.values[0]
            .partial_cmp(&a.values[0])
            .unwrap_or(Ordering::Equal);
        if step == Ordering::Equal {
            return Err(ImportError::Duplicate {
                first_line: a.line,
                line: b.line,
                text: b.wl_text.to_owned(),
            });
        }
        if *direction.get_or_insert(step) != step {
            return Err(ImportError::NotMonotonic {
                prev_line: a.line,
                prev_text: a.wl_text.to_owned(),
                line: b.line,
                text: b.wl_text.to_owned(),
            });
        }
    }
    Ok(direction == Some(Ordering::Less))
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn ok(text: &str, unit: WavelengthUnit) -> NkImport {
        match parse_nk_csv(text, unit) {
            Ok(t) => t,
            Err(e) => panic!("expected the table to be read, got: {e}"),
        }
    }

    fn err(text: &str) -> String {
        match parse_nk_csv(text, WavelengthUnit::Auto) {
            Ok(t) => panic!("expected an error, got {:?}", t.rows),
            Err(e) => e.to_string(),
        }
    }

    fn assert_rows(got: &[(f64, f64, f64)], want: &[(f64, f64, f64)]) {
        assert_eq!(got.len(), want.len(), "row count: {got:?}");
        for (g, w) in got.iter().zip(want) {
            assert_relative_eq!(g.0, w.0, max_relative = 1e-12);
            assert_relative_eq!(g.1, w.1, max_relative = 1e-12);
            assert_relative_eq!(g.2, w.2, max_relative = 1e-12);
        }
    }

    fn has_note(t: &NkImport, fragment: &str) -> bool {
        t.notes.iter().any(|n| n.contains(fragment))
    }

    #[test]
    fn comma_nm_three_columns_with_header() {
        let t = ok(
            "Wavelength (nm),n,k\n400,2.1,0.01\n500,2.0,0.005\n600,1.9,0\n",
            WavelengthUnit::Auto,
        );
        assert_rows(
            &t.rows,
            &[(400.0, 2.1, 0.01), (500.0, 2.0, 0.005), (600.0, 1.9, 0.0)],
        );
        assert_eq!(t.unit_used, WavelengthUnit::Nm);
        assert!(!t.unit_was_guessed, "the header names the unit");
        assert!(has_note(&t, "header says"), "{:?}", t.notes);
        assert!(has_note(&t, "commas"), "{:?}", t.notes);
        assert!(has_note(&t, "skipped 1 header line"), "{:?}", t.notes);
    }

    #[test]
    fn two_columns_give_zero_k() {
        let t = ok("400\t1.47\n800\t1.45\n", WavelengthUnit::Auto);
        assert_rows(&t.rows, &[(400.0, 1.47, 0.0), (800.0, 1.45, 0.0)]);
        assert!(has_note(&t, "k = 0"), "{:?}", t.notes);
        assert!(has_note(&t, "tabs"), "{:?}", t.notes);
        assert!(t.unit_was_guessed, "no header, no chosen unit");
        assert_eq!(t.unit_used, WavelengthUnit::Nm);
    }

    #[test]
    fn small_values_are_guessed_as_micrometres() {
        let t = ok("0.4;1.47;0\n1.2;1.45;0\n", WavelengthUnit::Auto);
        assert_eq!(t.unit_used, WavelengthUnit::Um);
        assert!(t.unit_was_guessed, "no header, no chosen unit");
        assert_rows(&t.rows, &[(400.0, 1.47, 0.0), (1200.0, 1.45, 0.0)]);
        assert!(has_note(&t, "semicolons"), "{:?}", t.notes);
        assert!(has_note(&t, "below 50"), "{:?}", t.notes);
    }

    #[test]
    fn header_unit_wins_over_the_values() {
        // Values below 50 would be guessed as µm, but the header says nm.
        let t = ok("lambda_nm, n\n10, 1.1\n20, 1.2\n", WavelengthUnit::Auto);
        assert_eq!(t.unit_used, WavelengthUnit::Nm);
        assert_rows(&t.rows, &[(10.0, 1.1, 0.0), (20.0, 1.2, 0.0)]);
        // And a micrometre header with a micro sign, in a comment line.
        let t = ok(
            "# wavelength in µm\n0.5,1.5\n0.6,1.4\n",
            WavelengthUnit::Auto,
        );
        assert_eq!(t.unit_used, WavelengthUnit::Um);
        assert!(!t.unit_was_guessed, "the comment names the unit");
        let t = ok(
            "microns\tn\tk\n2\t3.4\t0\n3\t3.3\t0\n",
            WavelengthUnit::Auto,
        );
        assert_eq!(t.unit_used, WavelengthUnit::Um);
    }

    #[test]
    fn words_containing_um_or_nm_are_not_units() {
        // "spectrum" ends in "um", "environment" contains "nm": neither names a unit.
        let u = unit_in_header("spectrum of the environment");
        assert_eq!(u, None, "substrings are not unit names");
        let t = ok("spectrum\n300,1.5\n400,1.4\n", WavelengthUnit::Auto);
        assert!(t.unit_was_guessed, "no unit named in the header");
    }

    #[test]
    fn chosen_unit_is_used_and_a_mismatch_noted() {
        let t = ok("0.5,1.5\n0.6,1.4\n", WavelengthUnit::Nm);
        assert_eq!(t.unit_used, WavelengthUnit::Nm);
        assert!(!t.unit_was_guessed, "the caller chose");
        assert_rows(&t.rows, &[(0.5, 1.5, 0.0), (0.6, 1.4, 0.0)]);
        assert!(has_note(&t, "check the unit"), "{:?}", t.notes);
        let t = ok("500,1.5\n600,1.4\n", WavelengthUnit::Um);
        assert_relative_eq!(t.rows[1].0, 600_000.0, max_relative = 1e-12);
    }

    #[test]
    fn descending_rows_are_sorted_and_noted() {
        let t = ok(
            "800,1.45,0\n600,1.46,0.1\n400,1.47,0.2\n",
            WavelengthUnit::Auto,
        );
        assert_rows(
            &t.rows,
            &[(400.0, 1.47, 0.2), (600.0, 1.46, 0.1), (800.0, 1.45, 0.0)],
        );
        assert!(has_note(&t, "falling"), "{:?}", t.notes);
    }

    #[test]
    fn decimal_commas_with_semicolons_and_tabs() {
        let t = ok(
            "λ (nm);n;k\n400;1,47;0,001\n500;1,46;0\n",
            WavelengthUnit::Auto,
        );
        assert_rows(&t.rows, &[(400.0, 1.47, 0.001), (500.0, 1.46, 0.0)]);
        assert!(has_note(&t, "decimal commas"), "{:?}", t.notes);
        let t = ok("0,4\t1,47\n0,5\t1,46\n", WavelengthUnit::Auto);
        assert_eq!(t.unit_used, WavelengthUnit::Um);
        assert_rows(&t.rows, &[(400.0, 1.47, 0.0), (500.0, 1.46, 0.0)]);
    }

    #[test]
    fn blank_lines_crlf_bom_comments_and_trailing_separators() {
        let text =
            "\u{feff}# made by hand\r\nwl;n;k\r\n\r\n400;1.5;0;\r\n# a note\r\n500;1.4;0 # end\r\n";
        let t = ok(text, WavelengthUnit::Nm);
        assert_rows(&t.rows, &[(400.0, 1.5, 0.0), (500.0, 1.4, 0.0)]);
    }

    #[test]
    fn space_separated_values_are_read() {
        let t = ok("400 1.5 0.1\n500   1.4 0\n", WavelengthUnit::Auto);
        assert_rows(&t.rows, &[(400.0, 1.5, 0.1), (500.0, 1.4, 0.0)]);
    }

    #[test]
    fn into_material_makes_a_valid_table() {
        let t = ok("400,1.5,0.1\n500,1.4,0\n", WavelengthUnit::Auto);
        let m = t.into_material("Mine");
        assert_eq!(m.name, "Mine");
        assert!(m.validate().is_ok(), "{:?}", m.validate());
        assert_relative_eq!(m.index_at(450.0).map_or(f64::NAN, |n| n.re), 1.45);
        assert_eq!(m.valid_range_nm(), (400.0, 500.0));
    }

    // ---- broken input: each error names the line and the culprit ----

    #[test]
    fn no_rows() {
        let e = err("wavelength,n,k\n# nothing\n\n");
        assert!(e.contains("no rows of numbers"), "{e}");
        let e = err("");
        assert!(e.contains("no rows of numbers"), "{e}");
    }

    #[test]
    fn single_column() {
        let e = err("wl\n400\n500\n");
        assert!(e.contains("line 2") && e.contains("only one column"), "{e}");
    }

    #[test]
    fn four_columns() {
        let e = err("400,1.5,0,9\n500,1.4,0,9\n");
        assert!(e.contains("line 1") && e.contains("4 columns"), "{e}");
    }

    #[test]
    fn column_count_changes() {
        let e = err("400,1.5,0\n500,1.4\n");
        assert!(
            e.contains("line 2: 2 columns but line 1 has 3"),
            "message names both lines: {e}"
        );
    }

    #[test]
    fn non_number_cell_is_quoted() {
        let e = err("wl,n,k\n400,1.5,0\n500,abc,0\n");
        assert!(e.contains("line 3") && e.contains("\"abc\""), "{e}");
        assert!(e.contains("n \"abc\" is not a number"), "{e}");
        // Text after the data starts is not a header.
        let e = err("400,1.5\n500,1.4\nend\n");
        assert!(e.contains("line 3") && e.contains("\"end\""), "{e}");
    }

    #[test]
    fn empty_cell() {
        let e = err("400,,0\n500,1.4,0\n");
        assert!(e.contains("line 1") && e.contains("n cell is empty"), "{e}");
    }

    #[test]
    fn n_not_positive() {
        let e = err("400,1.5\n500,0\n");
        assert!(e.contains("line 2") && e.contains("n = 0"), "{e}");
        let e = err("400,-1.5\n500,1\n");
        assert!(e.contains("line 1") && e.contains("n = -1.5"), "{e}");
    }

    #[test]
    fn k_negative() {
        let e = err("h\n400,1.5,0\n500,1.4,-0.01\n");
        assert!(
            e.contains("line 3") && e.contains("k = -0.01 is negative"),
            "{e}"
        );
    }

    #[test]
    fn nan_and_infinity() {
        let e = err("400,NaN,0\n500,1.4,0\n");
        assert!(e.contains("line 1") && e.contains("NaN"), "{e}");
        let e = err("400,1.5,0\n500,1.4,inf\n");
        assert!(e.contains("line 2") && e.contains("\"inf\""), "{e}");
        assert!(e.contains("finite"), "{e}");
    }

    #[test]
    fn wavelength_not_positive() {
        let e = err("0,1.5\n500,1.4\n");
        assert!(e.contains("line 1") && e.contains("wavelength 0"), "{e}");
    }

    #[test]
    fn too_few_rows() {
        let e = err("wl,n\n400,1.5\n");
        assert!(e.contains("line 2") && e.contains("at least 2"), "{e}");
    }

    #[test]
    fn duplicate_names_both_lines() {
        let e = err("400,1.5\n500,1.4\n500,1.3\n");
        assert!(
            e.contains("line 3") && e.contains("repeats line 2"),
            "message names both lines: {e}"
        );
    }

    #[test]
    fn non_monotonic_names_both_lines() {
        let e = err("400,1.5\n\n600,1.4\n500,1.3\n");
        assert!(
            e.contains("line 4") && e.contains("after line 3") && e.contains("(600)"),
            "message names both lines: {e}"
        );
    }

    #[test]
    fn never_panics_on_odd_input() {
        for text in [
            ",",
            ";",
            "\t",
            "#",
            "1",
            "1,",
            ",1",
            "1;;",
            "1e999,1",
            "-0,1\n1,1",
            "\u{feff}",
            "1,2,3,\n",
            "µm\n",
            "1 ,  2\n3 , 4",
        ] {
            let _ = parse_nk_csv(text, WavelengthUnit::Auto);
        }
    }
}
