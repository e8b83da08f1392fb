//! Measured curves: reading a measured R or T over wavelength from CSV-like text, and how far
//! a computed spectrum lies from it.
//!
//! Accepted input: one row per line, `wavelength, value`, separated by commas, semicolons or
//! tabs (or, failing those, spaces); `#` starts a comment; text lines before the first row of
//! numbers are a header. Semicolon- or tab-separated files may use a decimal comma. The
//! wavelength unit (nm or µm) and the value scale (percent or fraction) are read from the
//! header when it names them, else detected from the numbers; every such decision is reported
//! in [`MeasuredCurve::notes`]. Infinite values, and values below 0 % or above 100 % by more
//! than [`NOISE_ALLOWANCE`], are refused with their line. The text is read by the program's
//! one table reader, [`crate::table::read_text_table`].
//!
//! ```
//! use stackwise::analysis::measured::{parse_measured_csv, ValueScale};
//! use stackwise::material::import::WavelengthUnit;
//! let m = parse_measured_csv("0.5;45,0\n0.6;50,5\n", WavelengthUnit::Auto, ValueScale::Auto)?;
//! assert_eq!(m.wavelength_nm, vec![500.0, 600.0]);
//! assert_eq!(m.scale_used, ValueScale::Percent);
//! assert!((m.value[1] - 0.505).abs() < 1e-12);
//! # Ok::<(), stackwise::analysis::measured::MeasuredError>(())
//! ```

use std::fmt;

use super::Spectrum;
use crate::design::{Pol, Quantity};
use crate::table::interp::within;
use crate::table::{
    Layout, Row, TableError, TextTable, WavelengthUnit, choose_unit, read_text_table,
};

/// Values above this (in any row) mean the column is in percent when the scale is detected.
pub const PERCENT_ABOVE: f64 = 1.5;

/// How far (as a fraction, 0.02 = 2 percentage points) a measured R or T may lie below 0 or
/// above 1 before it is refused as impossible rather than read as noise. Common practice for
/// spectrophotometer baselines, no single published source.
pub const NOISE_ALLOWANCE: f64 = 0.02;

/// How the value column is written.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum ValueScale {
    /// From the header ("%", "percent", "fraction"), else percent if any value is above
    /// [`PERCENT_ABOVE`].
    #[default]
    Auto,
    /// Fractions 0..1.
    Fraction,
    /// Percent 0..100.
    Percent,
}

impl fmt::Display for ValueScale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ValueScale::Auto => "auto",
            ValueScale::Fraction => "fraction",
            ValueScale::Percent => "percent",
        })
    }
}

/// A measured curve, wavelengths rising, values as fractions.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MeasuredCurve {
    /// Wavelengths (nm), strictly rising.
    pub wavelength_nm: Vec<f64>,
    /// The measured values as fractions: 0..1, or beyond by at most [`NOISE_ALLOWANCE`].
    pub value: Vec<f64>,
    /// The wavelength unit the file was read in (never `Auto`).
    pub unit_used: WavelengthUnit,
    /// The value scale the file was read in (never `Auto`).
    pub scale_used: ValueScale,
    /// What the reader decided on its own, one sentence each, for the user.
    pub notes: Vec<String>,
}

/// Why a measured curve could not be read. Line numbers count from 1 over the whole text.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MeasuredError {
    /// Nothing that looks like a row of numbers.
    #[error(
        "no rows of numbers found; give one row per line such as `550, 4.2` \
         (wavelength, measured value)"
    )]
    NoRows,
    /// A row with a single value.
    #[error(
        "line {line}: only one column ({text:?}); give the wavelength and the measured value \
         separated by a comma, semicolon or tab"
    )]
    SingleColumn {
        /// Line number (1-based).
        line: usize,
        /// The line's text.
        text: String,
    },
    /// A row with more than two values.
    #[error(
        "line {line}: {count} columns; expected 2 (wavelength, measured value) — keep only \
         the wavelength and the one curve to compare"
    )]
    TooManyColumns {
        /// Line number (1-based).
        line: usize,
        /// How many cells the line has.
        count: usize,
    },
    /// A cell that is empty, not a number, NaN or infinite.
    #[error(
        "line {line}: {column} {text:?} is not a finite number; write plain decimals such as 45.2 or 0.452"
    )]
    NotANumber {
        /// Line number (1-based).
        line: usize,
        /// "wavelength" or "value".
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
    /// Wavelengths that repeat or neither only rise nor only fall.
    #[error(
        "line {line}: wavelength {text} is out of order after line {prev_line} ({prev_text}); \
         the rows must be sorted by wavelength, rising or falling, without repeats"
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
    /// An infinite value (or NaN).
    #[error(
        "line {line}: {column} is {text:?}; every value must be a finite number — remove the \
         row or replace the value by the measured reading"
    )]
    NotFinite {
        /// Line number (1-based).
        line: usize,
        /// "wavelength" or "value".
        column: &'static str,
        /// The cell as written.
        text: String,
    },
    /// A value below 0 % or above 100 % by more than [`NOISE_ALLOWANCE`].
    #[error(
        "line {line}: value {text} is {percent} %, {side} by more than the {allow} percentage \
         points allowed for measurement noise; an R or T lies between 0 and 100 % — check the \
         value, and the scale (read as {scale})"
    )]
    OutOfRange {
        /// Line number (1-based).
        line: usize,
        /// The cell as written.
        text: String,
        /// The value in percent as read with `scale`.
        percent: f64,
        /// "below 0 %" or "above 100 %".
        side: &'static str,
        /// The allowance in percentage points.
        allow: f64,
        /// The value scale the file was read in.
        scale: ValueScale,
    },
    /// Fewer than two rows.
    #[error("only one row of data (line {line}); a measured curve needs at least 2 rows")]
    TooFewRows {
        /// The line of the single row.
        line: usize,
    },
}

/// The scale a header names, if it names exactly one.
fn scale_in_header(header: &str) -> Option<ValueScale> {
    let lower = header.to_lowercase();
    let percent = lower.contains('%') || lower.contains("percent");
    let fraction = lower.contains("fraction");
    match (percent, fraction) {
        (true, false) => Some(ValueScale::Percent),
        (false, true) => Some(ValueScale::Fraction),
        _ => None,
    }
}

const LAYOUT: Layout = Layout {
    columns: &["wavelength", "value"],
    min_columns: 2,
};

impl From<TableError> for MeasuredError {
    fn from(e: TableError) -> Self {
        match e {
            TableError::NoRows => MeasuredError::NoRows,
            TableError::SingleColumn { line, text } => MeasuredError::SingleColumn { line, text },
            TableError::TooManyColumns { line, count, .. }
            | TableError::TooFewColumns { line, count, .. }
            | TableError::ColumnCountChanged {
                line, found: count, ..
            } => MeasuredError::TooManyColumns { line, count },
            TableError::EmptyCell { line, column } => MeasuredError::NotANumber {
                line,
                column,
                text: String::new(),
            },
            TableError::NotANumber { line, column, text } => {
                MeasuredError::NotANumber { line, column, text }
            }
            TableError::NotFinite { line, column, text } => {
                // NaN is "not a number" in words as well; infinities get their own message.
                if text.to_lowercase().contains("nan") {
                    MeasuredError::NotANumber { line, column, text }
                } else {
                    MeasuredError::NotFinite { line, column, text }
                }
            }
            TableError::Duplicate {
                first_line: prev_line,
                line,
                text,
            } => MeasuredError::NotMonotonic {
                prev_line,
                prev_text: text.clone(),
                line,
                text,
            },
            TableError::NotMonotonic {
                prev_line,
                prev_text,
                line,
                text,
            } => MeasuredError::NotMonotonic {
                prev_line,
                prev_text,
                line,
                text,
            },
            TableError::TooFewRows { line } => MeasuredError::TooFewRows { line },
        }
    }
}

/// A positive wavelength on every row.
fn check_row(row: &Row<'_>) -> Result<(), MeasuredError> {
    if row.values[0] <= 0.0 {
        return Err(MeasuredError::BadWavelength {
            line: row.line,
            text: row.cells[0].to_owned(),
        });
    }
    Ok(())
}

/// Reads a measured curve (wavelength, value) from CSV-like text.
///
/// `unit` and `scale` fix the wavelength unit and value scale, or are `Auto` to read them from
/// the header, else detect them: all wavelengths below [`crate::table::GUESS_UM_BELOW`] → µm; any value
/// above [`PERCENT_ABOVE`] → percent. Rows in falling wavelength order are reversed. The result
/// is in nm and fractions. A value below 0 or above 1 (100 %) by more than
/// [`NOISE_ALLOWANCE`] is refused with its line: no reflectance or transmittance can be there.
pub fn parse_measured_csv(
    text: &str,
    unit: WavelengthUnit,
    scale: ValueScale,
) -> Result<MeasuredCurve, MeasuredError> {
    let table = read_text_table(text, &LAYOUT, check_row)?;
    let mut notes = table.notes();
    let (unit_used, _) = choose_unit(unit, &table.header, table.keys(), &mut notes);
    let scale_used = pick_scale(scale, &table, &mut notes);
    let wl_scale = if unit_used == WavelengthUnit::Um {
        1000.0
    } else {
        1.0
    };
    let v_scale = if scale_used == ValueScale::Percent {
        0.01
    } else {
        1.0
    };
    let mut wavelength_nm = Vec::with_capacity(table.rows.len());
    let mut value = Vec::with_capacity(table.rows.len());
    for r in &table.rows {
        let v = r.values[1] * v_scale;
        let side = if v < -NOISE_ALLOWANCE {
            "below 0 %"
        } else if v > 1.0 + NOISE_ALLOWANCE {
            "above 100 %"
        } else {
            wavelength_nm.push(r.values[0] * wl_scale);
            value.push(v);
            continue;
        };
        return Err(MeasuredError::OutOfRange {
            line: r.line,
            text: r.cells[1].to_owned(),
            percent: 100.0 * v,
            side,
            allow: 100.0 * NOISE_ALLOWANCE,
            scale: scale_used,
        });
    }
    notes.extend(table.falling_note());
    Ok(MeasuredCurve {
        wavelength_nm,
        value,
        unit_used,
        scale_used,
        notes,
    })
}

fn pick_scale(scale: ValueScale, table: &TextTable<'_>, notes: &mut Vec<String>) -> ValueScale {
    if scale != ValueScale::Auto {
        notes.push(format!("values in {scale}, as chosen"));
        return scale;
    }
    if let Some(s) = scale_in_header(&table.header) {
        notes.push(format!("values in {s}, as the header says"));
        return s;
    }
    // Rows are in rising wavelength order here; report the first such line of the file.
    let above = table
        .rows
        .iter()
        .filter(|r| r.values[1] > PERCENT_ABOVE)
        .min_by_key(|r| r.line);
    if let Some(r) = above {
        notes.push(format!(
            "values read as percent because line {} has {} (above {PERCENT_ABOVE}); \
             choose fraction if that is wrong",
            r.line, r.values[1]
        ));
        ValueScale::Percent
    } else {
        notes.push(format!(
            "values read as fractions (0 to 1) because none is above {PERCENT_ABOVE}; \
             choose percent if that is wrong"
        ));
        ValueScale::Fraction
    }
}

/// Root-mean-square difference (fractions) between the measured values and the computed
/// `quantity` (mean of s and p) interpolated linearly at the measured wavelengths, over the
/// wavelengths both cover; with the number of points used. `None` if they do not overlap.
#[must_use]
pub fn rms_difference(
    measured: &MeasuredCurve,
    computed: &Spectrum,
    quantity: Quantity,
) -> Option<(f64, usize)> {
    let ys = super::compare::curve(computed, quantity, Pol::Mean);
    let (sum, count) = measured
        .wavelength_nm
        .iter()
        .zip(&measured.value)
        .filter_map(|(&wl, &m)| within(&computed.wavelength_nm, ys, wl).map(|c| c - m))
        .fold((0.0, 0_usize), |(s, n), d| (s + d * d, n + 1));
    (count > 0).then(|| ((sum / count as f64).sqrt(), count))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Result<MeasuredCurve, MeasuredError> {
        parse_measured_csv(text, WavelengthUnit::Auto, ValueScale::Auto)
    }

    #[test]
    fn infinite_values_are_refused_with_the_line() {
        let e = read("400,0.1\n500,inf\n600,0.2\n").unwrap_err();
        assert!(
            matches!(
                &e,
                MeasuredError::NotFinite {
                    line: 2,
                    column: "value",
                    ..
                }
            ),
            "{e:?}"
        );
        assert!(
            e.to_string().contains("line 2") && e.to_string().contains("finite"),
            "{e}"
        );
        let e = read("400,0.1\n-1e999,0.2\n").unwrap_err();
        assert!(
            matches!(
                &e,
                MeasuredError::NotFinite {
                    line: 2,
                    column: "wavelength",
                    ..
                }
            ),
            "an overflowing number is infinite: {e:?}"
        );
    }

    #[test]
    fn values_below_zero_beyond_the_noise_are_refused() {
        // −2.5 % is 0.5 points past the 2-point allowance.
        let e = read("R (%)\n400,1.0\n500,-2.5\n").unwrap_err();
        assert!(
            matches!(
                &e,
                MeasuredError::OutOfRange {
                    line: 3,
                    side: "below 0 %",
                    ..
                }
            ),
            "{e:?}"
        );
        let msg = e.to_string();
        assert!(msg.contains("line 3") && msg.contains("-2.5 %"), "{msg}");
        assert!(
            msg.contains("2 percentage points"),
            "names the allowance: {msg}"
        );
    }

    #[test]
    fn values_above_one_hundred_beyond_the_noise_are_refused() {
        let e = read("T (%)\n400,99\n500,103\n600,98\n").unwrap_err();
        assert!(
            matches!(
                &e,
                MeasuredError::OutOfRange {
                    line: 3,
                    side: "above 100 %",
                    ..
                }
            ),
            "{e:?}"
        );
        // A fraction of 1.2 is 120 %: refused too, with the scale named.
        let e = parse_measured_csv(
            "400,0.9\n500,1.2\n",
            WavelengthUnit::Nm,
            ValueScale::Fraction,
        )
        .unwrap_err();
        assert!(e.to_string().contains("fraction"), "{e}");
        assert!(
            matches!(e, MeasuredError::OutOfRange { line: 2, .. }),
            "{e:?}"
        );
    }

    #[test]
    fn noise_within_the_allowance_is_kept() {
        let m = read("T (%)\n400,-1.9\n500,101.9\n").expect("within 2 points of 0 and 100 %");
        assert_eq!(m.value.len(), 2, "both rows kept");
        assert!((m.value[0] + 0.019).abs() < 1e-15, "{:?}", m.value);
        assert!((m.value[1] - 1.019).abs() < 1e-15, "{:?}", m.value);
    }
}
