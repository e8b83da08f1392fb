//! Reading small numeric tables from CSV-like text.
//!
//! Accepted input: one row per line, separated by commas, semicolons or tabs (or, failing
//! those, spaces), found on the first row of numbers. Lines starting with `#` are comments; a
//! `#` later on a line starts a comment too. Text lines before the first row of numbers are a
//! header. A semicolon-, tab- or space-separated file may write decimals with a comma
//! (`1,45`). A leading byte-order mark is ignored. The first column is the key (a
//! wavelength): it must strictly rise or strictly fall, and falling rows are turned round.
//!
//! Each importer checks its own values through the `check` callback and turns the reader's
//! [`TableError`] into its own error type, so every message speaks the importer's language.
//!
//! ```
//! use stackwise::table::{Layout, TableError, read_text_table};
//! let layout = Layout { columns: &["wavelength", "n", "k"], min_columns: 2 };
//! let t = read_text_table("λ (nm);n\n500;1,46\n400;1,47\n", &layout, |_| Ok::<_, TableError>(()))?;
//! assert_eq!(t.rows[0].values, vec![400.0, 1.47]);
//! assert!(t.falling && t.decimal_comma);
//! # Ok::<(), TableError>(())
//! ```

use std::cmp::Ordering;

/// The column separator found in the data.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Separator {
    /// `,` (decimals must use a point).
    Comma,
    /// `;`.
    Semicolon,
    /// A tab.
    Tab,
    /// One or more spaces.
    Space,
}

impl Separator {
    /// The separator a data line uses: tab, else semicolon, else comma, else spaces.
    #[must_use]
    pub fn detect(line: &str) -> Self {
        if line.contains('\t') {
            Separator::Tab
        } else if line.contains(';') {
            Separator::Semicolon
        } else if line.contains(',') {
            Separator::Comma
        } else {
            Separator::Space
        }
    }

    /// The trimmed cells of a line; a trailing separator adds no empty last cell.
    #[must_use]
    pub fn split(self, line: &str) -> Vec<&str> {
        let mut cells: Vec<&str> = match self {
            Separator::Comma => line.split(',').map(str::trim).collect(),
            Separator::Semicolon => line.split(';').map(str::trim).collect(),
            Separator::Tab => line.split('\t').map(str::trim).collect(),
            Separator::Space => line.split_whitespace().collect(),
        };
        while cells.len() > 1 && cells.last().is_some_and(|c| c.is_empty()) {
            cells.pop();
        }
        cells
    }

    /// The separator in words, plural ("commas").
    #[must_use]
    pub fn words(self) -> &'static str {
        match self {
            Separator::Comma => "commas",
            Separator::Semicolon => "semicolons",
            Separator::Tab => "tabs",
            Separator::Space => "spaces",
        }
    }
}

/// What columns a table has: their names (for messages), at most `columns.len()` of them and
/// at least `min_columns`.
#[derive(Clone, Copy, Debug)]
pub struct Layout {
    /// Column names in order, the key (wavelength) first.
    pub columns: &'static [&'static str],
    /// Fewest columns a row may have (at least 2).
    pub min_columns: usize,
}

/// Why a table could not be read. Line numbers count from 1 over the whole text.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum TableError {
    /// Nothing that looks like a row of numbers.
    #[error("no rows of numbers found")]
    NoRows,
    /// A row with a single value.
    #[error("line {line}: only one column ({text:?})")]
    SingleColumn {
        /// Line number (1-based).
        line: usize,
        /// The line's text.
        text: String,
    },
    /// A row with fewer columns than the layout needs.
    #[error("line {line}: {count} columns; expected at least {min}")]
    TooFewColumns {
        /// Line number (1-based).
        line: usize,
        /// How many cells the line has.
        count: usize,
        /// How many it needs.
        min: usize,
    },
    /// A row with more columns than the layout has.
    #[error("line {line}: {count} columns; expected at most {max}")]
    TooManyColumns {
        /// Line number (1-based).
        line: usize,
        /// How many cells the line has.
        count: usize,
        /// How many the layout has.
        max: usize,
    },
    /// A row whose column count differs from the first row's.
    #[error("line {line}: {found} columns but line {first_line} has {expected}")]
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
    #[error("line {line}: the {column} cell is empty")]
    EmptyCell {
        /// Line number (1-based).
        line: usize,
        /// The column's name.
        column: &'static str,
    },
    /// A cell that is not a number.
    #[error("line {line}: {column} {text:?} is not a number")]
    NotANumber {
        /// Line number (1-based).
        line: usize,
        /// The column's name.
        column: &'static str,
        /// The cell as written.
        text: String,
    },
    /// A NaN or infinite value.
    #[error("line {line}: {column} is {text:?}; every value must be a finite number")]
    NotFinite {
        /// Line number (1-based).
        line: usize,
        /// The column's name.
        column: &'static str,
        /// The cell as written.
        text: String,
    },
    /// The same key twice in a row.
    #[error("line {line}: {text} repeats line {first_line}")]
    Duplicate {
        /// The earlier line (1-based).
        first_line: usize,
        /// The later line (1-based).
        line: usize,
        /// The key as written on the later line.
        text: String,
    },
    /// Keys that neither only rise nor only fall.
    #[error("line {line}: {text} is out of order after line {prev_line} ({prev_text})")]
    NotMonotonic {
        /// The earlier line (1-based).
        prev_line: usize,
        /// The earlier key as written.
        prev_text: String,
        /// The offending line (1-based).
        line: usize,
        /// The offending key as written.
        text: String,
    },
    /// Fewer than two rows.
    #[error("only one row of data (line {line}); a table needs at least 2 rows")]
    TooFewRows {
        /// The line of the single row.
        line: usize,
    },
}

/// One data row as read.
#[derive(Clone, Debug, PartialEq)]
pub struct Row<'a> {
    /// Line number (1-based).
    pub line: usize,
    /// The values, one per cell (finite numbers).
    pub values: Vec<f64>,
    /// The cells as written.
    pub cells: Vec<&'a str>,
}

/// A table read from text, rows in rising order of the first column.
#[derive(Clone, Debug, PartialEq)]
pub struct TextTable<'a> {
    /// The rows, the first column strictly rising.
    pub rows: Vec<Row<'a>>,
    /// Header and leading comment text, one line each (for units and scales it names).
    pub header: String,
    /// How many non-comment header lines came before the data.
    pub header_lines: usize,
    /// The separator of the first data line.
    pub separator: Separator,
    /// How many columns every row has.
    pub columns: usize,
    /// Whether some cell used a decimal comma.
    pub decimal_comma: bool,
    /// Whether the rows were given in falling order (and have been turned round).
    pub falling: bool,
}

impl TextTable<'_> {
    /// What the reader decided on its own, one sentence each: skipped header lines, the row
    /// count and separator, decimal commas.
    #[must_use]
    pub fn notes(&self) -> Vec<String> {
        let mut notes = Vec::new();
        if self.header_lines > 0 {
            notes.push(format!(
                "skipped {} header line{}",
                self.header_lines,
                if self.header_lines == 1 { "" } else { "s" }
            ));
        }
        notes.push(format!(
            "{} rows, columns separated by {}",
            self.rows.len(),
            self.separator.words()
        ));
        if self.decimal_comma {
            notes.push("decimal commas read as decimal points (e.g. 1,45 = 1.45)".into());
        }
        notes
    }

    /// The note to add when [`TextTable::falling`] is set.
    #[must_use]
    pub fn falling_note(&self) -> Option<String> {
        self.falling
            .then(|| "rows were in falling wavelength order; sorted rising".to_owned())
    }

    /// The first column's values.
    pub fn keys(&self) -> impl Iterator<Item = f64> + '_ {
        self.rows.iter().map(|r| r.values[0])
    }
}

/// Whether a line starts with a number, i.e. is a data row rather than a header.
fn starts_with_number(line: &str) -> bool {
    line.split([',', ';', '\t', ' '])
        .next()
        .is_some_and(|first| first.trim().parse::<f64>().is_ok())
}

/// The part of a line before any `#` comment, trimmed.
fn strip_comment(line: &str) -> &str {
    line.split('#').next().unwrap_or_default().trim()
}

/// Parses one cell; `decimal_comma` allows a single comma as the decimal mark. Returns the
/// value and whether a decimal comma was read.
fn parse_cell(
    cell: &str,
    line: usize,
    column: &'static str,
    decimal_comma: bool,
) -> Result<(f64, bool), TableError> {
    if cell.is_empty() {
        return Err(TableError::EmptyCell { line, column });
    }
    let (value, used_comma) = if let Ok(v) = cell.parse::<f64>() {
        (v, false)
    } else {
        let fixed = (decimal_comma && cell.matches(',').count() == 1 && !cell.contains('.'))
            .then(|| cell.replace(',', "."))
            .and_then(|s| s.parse::<f64>().ok());
        let Some(v) = fixed else {
            return Err(TableError::NotANumber {
                line,
                column,
                text: cell.to_owned(),
            });
        };
        (v, true)
    };
    if !value.is_finite() {
        return Err(TableError::NotFinite {
            line,
            column,
            text: cell.to_owned(),
        });
    }
    Ok((value, used_comma))
}

/// Reads a numeric table from text (see the module documentation for what is accepted).
///
/// Every data row, once split and parsed, is passed to `check` in file order, so an
/// importer's own value checks (a positive wavelength, n > 0, …) report the first bad line.
/// After all rows, the first column must strictly rise or strictly fall; falling rows are
/// reversed and [`TextTable::falling`] is set. At least two rows are needed.
pub fn read_text_table<'a, E: From<TableError>>(
    text: &'a str,
    layout: &Layout,
    mut check: impl FnMut(&Row<'a>) -> Result<(), E>,
) -> Result<TextTable<'a>, E> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let max = layout.columns.len();
    let mut header = String::new();
    let mut header_lines = 0;
    let mut separator: Option<Separator> = None;
    let mut first_row: Option<(usize, usize)> = None; // (line, columns)
    let mut decimal_comma = false;
    let mut rows: Vec<Row<'a>> = Vec::new();
    for (idx, raw_line) in text.lines().enumerate() {
        let line = idx + 1;
        let trimmed = raw_line.trim();
        if let Some(comment) = trimmed.strip_prefix('#') {
            if rows.is_empty() {
                header.push_str(comment);
                header.push('\n');
            }
            continue;
        }
        let content = strip_comment(trimmed);
        if content.is_empty() {
            continue;
        }
        if rows.is_empty() && !starts_with_number(content) {
            header.push_str(content);
            header.push('\n');
            header_lines += 1;
            continue;
        }
        let sep = *separator.get_or_insert_with(|| Separator::detect(content));
        let cells = sep.split(content);
        let count = cells.len();
        if count <= 1 {
            return Err(TableError::SingleColumn {
                line,
                text: content.to_owned(),
            }
            .into());
        }
        if count > max {
            return Err(TableError::TooManyColumns { line, count, max }.into());
        }
        if count < layout.min_columns {
            let min = layout.min_columns;
            return Err(TableError::TooFewColumns { line, count, min }.into());
        }
        match first_row {
            None => first_row = Some((line, count)),
            Some((first_line, expected)) if count != expected => {
                return Err(TableError::ColumnCountChanged {
                    line,
                    found: count,
                    first_line,
                    expected,
                }
                .into());
            }
            Some(_) => {}
        }
        let mut values = Vec::with_capacity(count);
        for (cell, &column) in cells.iter().zip(layout.columns) {
            let (v, comma) = parse_cell(cell, line, column, sep != Separator::Comma)?;
            decimal_comma |= comma;
            values.push(v);
        }
        let row = Row {
            line,
            values,
            cells,
        };
        check(&row)?;
        rows.push(row);
    }
    let (Some(separator), Some((first_line, columns))) = (separator, first_row) else {
        return Err(TableError::NoRows.into());
    };
    if rows.len() < 2 {
        return Err(TableError::TooFewRows { line: first_line }.into());
    }
    let falling = check_order(&rows)?;
    if falling {
        rows.reverse();
    }
    Ok(TextTable {
        rows,
        header,
        header_lines,
        separator,
        columns,
        decimal_comma,
        falling,
    })
}

/// Checks that the first column strictly rises or strictly falls (the first two rows set
/// which); returns true if it falls.
fn check_order(rows: &[Row<'_>]) -> Result<bool, TableError> {
    let mut direction: Option<Ordering> = None;
    for pair in rows.windows(2) {
        let (a, b) = (&pair[0], &pair[1]);
        let step = b.values[0].total_cmp(&a.values[0]);
        if step == Ordering::Equal {
            return Err(TableError::Duplicate {
                first_line: a.line,
                line: b.line,
                text: b.cells[0].to_owned(),
            });
        }
        if *direction.get_or_insert(step) != step {
            return Err(TableError::NotMonotonic {
                prev_line: a.line,
                prev_text: a.cells[0].to_owned(),
                line: b.line,
                text: b.cells[0].to_owned(),
            });
        }
    }
    Ok(direction == Some(Ordering::Less))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::{WavelengthUnit, unit_in_header};

    const NK: Layout = Layout {
        columns: &["wavelength", "n", "k"],
        min_columns: 2,
    };

    fn read(text: &str) -> Result<TextTable<'_>, TableError> {
        read_text_table(text, &NK, |_| Ok::<_, TableError>(()))
    }

    #[test]
    fn header_comments_and_separators() {
        let t = read("# by hand, nm\nwl;n;k\n\n400;1,5;0;\n500;1,4;0 # end\n").unwrap();
        assert_eq!(t.separator, Separator::Semicolon);
        assert_eq!((t.header_lines, t.columns), (1, 3));
        assert!(t.decimal_comma, "1,5 is a decimal comma");
        assert_eq!(unit_in_header(&t.header), Some(WavelengthUnit::Nm));
        assert_eq!(t.rows[1].values, vec![500.0, 1.4, 0.0]);
        assert_eq!(t.rows[1].line, 5, "line numbers count every line");
        let notes = t.notes();
        assert!(notes.iter().any(|n| n.contains("semicolons")), "{notes:?}");
        assert_eq!(t.falling_note(), None, "rising rows");
    }

    #[test]
    fn a_comma_is_a_separator_not_a_decimal_mark_in_comma_files() {
        let e = read("400,1.5,0\n500,1,4,0\n").unwrap_err();
        assert!(
            matches!(
                e,
                TableError::TooManyColumns {
                    line: 2,
                    count: 4,
                    max: 3
                }
            ),
            "{e:?}"
        );
    }

    #[test]
    fn check_sees_rows_in_file_order_before_the_order_check() {
        let mut seen = Vec::new();
        let r = read_text_table("500,1\n400,2\n400,3\n", &NK, |row| {
            seen.push(row.line);
            Ok::<_, TableError>(())
        });
        assert_eq!(seen, vec![1, 2, 3], "every row checked");
        assert!(
            matches!(
                r,
                Err(TableError::Duplicate {
                    first_line: 2,
                    line: 3,
                    ..
                })
            ),
            "{r:?}"
        );
    }

    #[test]
    fn too_few_columns_for_the_layout() {
        let exact = Layout {
            columns: &["wavelength", "n", "k"],
            min_columns: 3,
        };
        let r = read_text_table("400,1\n500,1\n", &exact, |_| Ok::<_, TableError>(()));
        assert!(
            matches!(
                r,
                Err(TableError::TooFewColumns {
                    line: 1,
                    count: 2,
                    min: 3
                })
            ),
            "{r:?}"
        );
    }
}
