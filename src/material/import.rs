//! Reading tabulated n, k data from CSV-like text into a [`Model::Table`] material.
//!
//! Accepted input: one row per line, `wavelength, n` or `wavelength, n, k`, separated by
//! commas, semicolons or tabs (or, failing those, spaces). Lines starting with `#` are
//! comments; text lines before the first row of numbers are a header and are skipped. A
//! semicolon- or tab-separated file may write decimals with a comma (`1,45`).
//!
//! The wavelength unit is nanometres or micrometres: chosen by the caller, or in
//! [`WavelengthUnit::Auto`] read from a header that names it, else guessed from the numbers.
//! Every decision the reader takes on its own is reported in [`NkImport::notes`]. The text is
//! read by the program's one table reader, [`crate::table::read_text_table`].
//!
//! ```
//! use stackwise::material::import::{parse_nk_csv, WavelengthUnit};
//! let text = "wavelength (um), n, k\n0.4, 1.47, 0\n0.8, 1.45, 0\n";
//! let t = parse_nk_csv(text, WavelengthUnit::Auto).unwrap();
//! assert_eq!(t.unit_used, WavelengthUnit::Um);
//! assert_eq!(t.rows.len(), 2);
//! assert!((t.rows[1].0 - 800.0).abs() < 1e-9);
//! ```

use super::{Material, Model};
use crate::table::{Layout, Row, TableError, choose_unit, read_text_table};

pub use crate::table::{GUESS_UM_BELOW, WavelengthUnit};

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

const LAYOUT: Layout = Layout {
    columns: &["wavelength", "n", "k"],
    min_columns: 2,
};

impl From<TableError> for ImportError {
    fn from(e: TableError) -> Self {
        match e {
            TableError::SingleColumn { line, text } => ImportError::SingleColumn { line, text },
            TableError::TooManyColumns { line, count, .. } => {
                ImportError::TooManyColumns { line, count }
            }
            // With two columns at least, a short row is a single column (reported above).
            TableError::TooFewColumns { line, .. } => ImportError::SingleColumn {
                line,
                text: String::new(),
            },
            TableError::NoRows => ImportError::NoRows,
            TableError::ColumnCountChanged {
                line,
                found,
                first_line,
                expected,
            } => ImportError::ColumnCountChanged {
                line,
                found,
                first_line,
                expected,
            },
            TableError::EmptyCell { line, column } => ImportError::EmptyCell { line, column },
            TableError::NotANumber { line, column, text } => {
                ImportError::NotANumber { line, column, text }
            }
            TableError::NotFinite { line, column, text } => {
                ImportError::NotFinite { line, column, text }
            }
            TableError::Duplicate {
                first_line,
                line,
                text,
            } => ImportError::Duplicate {
                first_line,
                line,
                text,
            },
            TableError::NotMonotonic {
                prev_line,
                prev_text,
                line,
                text,
            } => ImportError::NotMonotonic {
                prev_line,
                prev_text,
                line,
                text,
            },
            TableError::TooFewRows { line } => ImportError::TooFewRows { line },
        }
    }
}

/// The checks of one row's values: wavelength and n positive, k not negative.
fn check_row(row: &Row<'_>) -> Result<(), ImportError> {
    let line = row.line;
    let text = |col: usize| row.cells.get(col).copied().unwrap_or_default().to_owned();
    let value = |col: usize| row.values.get(col).copied().unwrap_or(0.0);
    if value(0) <= 0.0 {
        return Err(ImportError::BadWavelength {
            line,
            text: text(0),
        });
    }
    if value(1) <= 0.0 {
        return Err(ImportError::BadN {
            line,
            text: text(1),
        });
    }
    if value(2) < 0.0 {
        return Err(ImportError::NegativeK {
            line,
            text: text(2),
        });
    }
    Ok(())
}

/// Reads a table of wavelength, n and (optionally) k from CSV-like text.
///
/// `unit` is the wavelength column's unit, or [`WavelengthUnit::Auto`] to take it from a header
/// that names "nm" or "µm" (also "um", "micron"), else to read all-below-50 values as µm and
/// anything else as nm. Rows given in falling wavelength order are reversed. The result's
/// wavelengths are in nm.
pub fn parse_nk_csv(text: &str, unit: WavelengthUnit) -> Result<NkImport, ImportError> {
    let table = read_text_table(text, &LAYOUT, check_row)?;
    let mut notes = table.notes();
    if table.columns == 2 {
        notes.push("no k column: k = 0 (no absorption)".into());
    }
    let (unit_used, unit_was_guessed) = choose_unit(unit, &table.header, table.keys(), &mut notes);
    let scale = if unit_used == WavelengthUnit::Um {
        1000.0
    } else {
        1.0
    };
    let rows = table
        .rows
        .iter()
        .map(|r| {
            let v = |col: usize| r.values.get(col).copied().unwrap_or(0.0);
            (v(0) * scale, v(1), v(2))
        })
        .collect();
    notes.extend(table.falling_note());
    Ok(NkImport {
        rows,
        unit_used,
        unit_was_guessed,
        notes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::unit_in_header;
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
        ] {
            assert!(
                parse_nk_csv(text, WavelengthUnit::Auto).is_err(),
                "{text:?} is no table"
            );
        }
        // Spaces around the separators are allowed (and values below 50 read as µm).
        let t = ok("1 ,  2\n3 , 4", WavelengthUnit::Auto);
        assert_rows(&t.rows, &[(1000.0, 2.0, 0.0), (3000.0, 4.0, 0.0)]);
    }
}
