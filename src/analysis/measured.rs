//! Measured curves: reading a measured R or T over wavelength from CSV-like text, and how far
//! a computed spectrum lies from it.
//!
//! Accepted input: one row per line, `wavelength, value`, separated by commas, semicolons or
//! tabs (or, failing those, spaces); `#` starts a comment; text lines before the first row of
//! numbers are a header. Semicolon- or tab-separated files may use a decimal comma. The
//! wavelength unit (nm or µm) and the value scale (percent or fraction) are read from the
//! header when it names them, else detected from the numbers; every such decision is reported
//! in [`MeasuredCurve::notes`].
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

use std::cmp::Ordering;
use std::fmt;

use super::Spectrum;
use crate::design::{Pol, Quantity};
use crate::material::import::{GUESS_UM_BELOW, Sep, WavelengthUnit, text_table, unit_in_header};

/// Values above this (in any row) mean the column is in percent when the scale is detected.
pub const PERCENT_ABOVE: f64 = 1.5;

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
    /// The measured values as fractions (0..1 for a physical R or T; noise may go beyond).
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
    /// Fewer than two rows.
    #[error("only one row of data (line {line}); a measured curve needs at least 2 rows")]
    TooFewRows {
        /// The line of the single row.
        line: usize,
    },
}

/// One data row as read.
struct Row<'a> {
    line: usize,
    wl: f64,
    value: f64,
    wl_text: &'a str,
}

fn cell(
    text: &str,
    line: usize,
    column: &'static str,
    decimal_comma: bool,
) -> Result<(f64, bool), MeasuredError> {
    let bad = || MeasuredError::NotANumber {
        line,
        column,
        text: text.to_owned(),
    };
    let (v, used_comma) = match text.parse::<f64>() {
        Ok(v) => (v, false),
        Err(_) if decimal_comma && text.matches(',').count() == 1 && !text.contains('.') => (
            text.replace(',', ".").parse::<f64>().map_err(|_| bad())?,
            true,
        ),
        Err(_) => return Err(bad()),
    };
    if v.is_finite() {
        Ok((v, used_comma))
    } else {
        Err(bad())
    }
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

/// What one pass over the lines found.
struct Scan<'a> {
    rows: Vec<Row<'a>>,
    sep: Sep,
    header: String,
    header_lines: usize,
    used_comma: bool,
}

/// One pass over the lines: header, separator, rows.
fn scan(text: &str) -> Result<Scan<'_>, MeasuredError> {
    let table = text_table(text);
    let (header, header_lines, sep) = (table.header, table.header_lines, table.sep);
    let mut used_comma = false;
    let mut rows: Vec<Row<'_>> = Vec::with_capacity(table.data.len());
    for &(line, content) in &table.data {
        let s = sep.unwrap_or(Sep::Comma);
        let cells = s.split(content);
        match cells.len() {
            0 | 1 => {
                return Err(MeasuredError::SingleColumn {
                    line,
                    text: content.to_owned(),
                });
            }
            2 => {}
            count => return Err(MeasuredError::TooManyColumns { line, count }),
        }
        let decimal_comma = s != Sep::Comma;
        let (wl, c1) = cell(cells[0], line, "wavelength", decimal_comma)?;
        let (value, c2) = cell(cells[1], line, "value", decimal_comma)?;
        used_comma |= c1 || c2;
        if wl <= 0.0 {
            return Err(MeasuredError::BadWavelength {
                line,
                text: cells[0].to_owned(),
            });
        }
        rows.push(Row {
            line,
            wl,
            value,
            wl_text: cells[0],
        });
    }
    let Some(sep) = sep else {
        return Err(MeasuredError::NoRows);
    };
    Ok(Scan {
        rows,
        sep,
        header,
        header_lines,
        used_comma,
    })
}

/// Reads a measured curve (wavelength, value) from CSV-like text.
///
/// `unit` and `scale` fix the wavelength unit and value scale, or are `Auto` to read them from
/// the header, else detect them: all wavelengths below [`GUESS_UM_BELOW`] → µm; any value
/// above [`PERCENT_ABOVE`] → percent. Rows in falling wavelength order are reversed. The result
/// is in nm and fractions.
pub fn parse_measured_csv(
    text: &str,
    unit: WavelengthUnit,
    scale: ValueScale,
) -> Result<MeasuredCurve, MeasuredError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let Scan {
        rows,
        sep,
        header,
        header_lines,
        used_comma,
    } = scan(text)?;
    match rows.as_slice() {
        [] => return Err(MeasuredError::NoRows),
        [only] => return Err(MeasuredError::TooFewRows { line: only.line }),
        _ => {}
    }
    let descending = check_order(&rows)?;

    let mut notes = Vec::new();
    if header_lines > 0 {
        notes.push(format!(
            "skipped {header_lines} header line{}",
            if header_lines == 1 { "" } else { "s" }
        ));
    }
    notes.push(format!(
        "{} rows, columns separated by {}",
        rows.len(),
        sep.words()
    ));
    if used_comma {
        notes.push("decimal commas read as decimal points (e.g. 45,2 = 45.2)".into());
    }
    let unit_used = pick_unit(unit, &header, &rows, &mut notes);
    let scale_used = pick_scale(scale, &header, &rows, &mut notes);
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
    let (mut wavelength_nm, mut value): (Vec<f64>, Vec<f64>) = rows
        .iter()
        .map(|r| (r.wl * wl_scale, r.value * v_scale))
        .unzip();
    if descending {
        wavelength_nm.reverse();
        value.reverse();
        notes.push("rows were in falling wavelength order; sorted rising".into());
    }
    Ok(MeasuredCurve {
        wavelength_nm,
        value,
        unit_used,
        scale_used,
        notes,
    })
}

fn pick_unit(
    unit: WavelengthUnit,
    header: &str,
    rows: &[Row<'_>],
    notes: &mut Vec<String>,
) -> WavelengthUnit {
    if unit != WavelengthUnit::Auto {
        notes.push(format!("wavelengths in {unit}, as chosen"));
        return unit;
    }
    if let Some(u) = unit_in_header(header) {
        notes.push(format!("wavelengths in {u}, as the header says"));
        return u;
    }
    if rows.iter().all(|r| r.wl < GUESS_UM_BELOW) {
        notes.push(format!(
            "wavelengths read as µm because all are below {GUESS_UM_BELOW}; choose nm if that is wrong"
        ));
        WavelengthUnit::Um
    } else {
        notes.push(format!(
            "wavelengths read as nm because some are {GUESS_UM_BELOW} or more; choose µm if that is wrong"
        ));
        WavelengthUnit::Nm
    }
}

fn pick_scale(
    scale: ValueScale,
    header: &str,
    rows: &[Row<'_>],
    notes: &mut Vec<String>,
) -> ValueScale {
    if scale != ValueScale::Auto {
        notes.push(format!("values in {scale}, as chosen"));
        return scale;
    }
    if let Some(s) = scale_in_header(header) {
        notes.push(format!("values in {s}, as the header says"));
        return s;
    }
    if let Some(r) = rows.iter().find(|r| r.value > PERCENT_ABOVE) {
        notes.push(format!(
            "values read as percent because line {} has {} (above {PERCENT_ABOVE}); \
             choose fraction if that is wrong",
            r.line, r.value
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

/// Checks that wavelengths strictly rise or strictly fall; returns true if they fall.
fn check_order(rows: &[Row<'_>]) -> Result<bool, MeasuredError> {
    let mut direction: Option<Ordering> = None;
    for pair in rows.windows(2) {
        let (a, b) = (&pair[0], &pair[1]);
        let step = b.wl.total_cmp(&a.wl);
        if step == Ordering::Equal || *direction.get_or_insert(step) != step {
            return Err(MeasuredError::NotMonotonic {
                prev_line: a.line,
                prev_text: a.wl_text.to_owned(),
                line: b.line,
                text: b.wl_text.to_owned(),
            });
        }
    }
    Ok(direction == Some(Ordering::Less))
}

/// The value of the curve `ys` over rising `xs` at `x` by straight-line interpolation, or
/// `None` outside `xs[0]..=xs[last]`. A point of `xs` gives its own `ys` value exactly.
///
/// ```
/// use stackwise::analysis::measured::interpolate;
/// assert_eq!(interpolate(&[1.0, 3.0], &[10.0, 30.0], 2.0), Some(20.0));
/// assert_eq!(interpolate(&[1.0, 3.0], &[10.0, 30.0], 3.5), None);
/// ```
#[must_use]
pub fn interpolate(xs: &[f64], ys: &[f64], x: f64) -> Option<f64> {
    let n = xs.len().min(ys.len());
    let (xs, ys) = (&xs[..n], &ys[..n]);
    let (&first, &last) = (xs.first()?, xs.last()?);
    if !(first..=last).contains(&x) {
        return None;
    }
    let i = xs.partition_point(|&v| v < x);
    if xs.get(i) == Some(&x) {
        return ys.get(i).copied();
    }
    // 0 < i < n here: x lies strictly between xs[i-1] and xs[i].
    let (x0, x1, y0, y1) = (xs[i - 1], xs[i], ys[i - 1], ys[i]);
    Some(y0 + (y1 - y0) * (x - x0) / (x1 - x0))
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
        .filter_map(|(&wl, &m)| interpolate(&computed.wavelength_nm, ys, wl).map(|c| c - m))
        .fold((0.0, 0_usize), |(s, n), d| (s + d * d, n + 1));
    (count > 0).then(|| ((sum / count as f64).sqrt(), count))
}
