//! The design file: RON text, versioned by its `format` number.
//!
//! Reading checks the text is UTF-8 and not empty, then reads `format` alone (so a file from a
//! newer version is refused with a clear message even when it has fields this version does
//! not know), then the whole design. Syntax and type errors carry the line and column.
//! Reading does not check the content (materials exist, thicknesses make sense): that is
//! [`Design::validate`], so a design with a fixable problem can still be opened.
//!
//! Writing is human-diffable: one layer per line, one target per line. Saving goes through
//! [`write_atomic`] (see [`super::output`]): a temporary file beside the file is written,
//! flushed to disk and renamed over it; a read-only file is refused.
//!
//! ```
//! use stackwise::design::{file, Design};
//! let d = Design::new_empty("Round trip");
//! let text = file::to_ron_string(&d)?;
//! assert_eq!(file::from_ron_str(&text)?, d);
//! # Ok::<(), file::DesignFileError>(())
//! ```

use std::fs;
use std::io;
use std::path::{Path, PathBuf};

use ron::ser::PrettyConfig;
use serde::Deserialize;

pub use super::output::write_atomic;
use super::{Design, FORMAT};
use crate::material::Model;

/// What can go wrong reading or writing a design file.
///
/// Each message is complete on its own (the underlying error's text is part of it), and ends
/// with the file's path when there is one.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DesignFileError {
    /// The file could not be read.
    #[error("cannot read the design file: {err}{}", in_path(.path.as_ref()))]
    Read {
        /// The operating system's error.
        err: io::Error,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The file could not be written (the previous file, if any, is untouched).
    #[error("cannot save the design: {err}; the previous file is unchanged{}", in_path(.path.as_ref()))]
    Write {
        /// The operating system's error.
        err: io::Error,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The bytes are not UTF-8 text.
    #[error(
        "line {line}, column {column} (byte {offset}): the file is not UTF-8 text; \
         save it as UTF-8{}",
        in_path(.path.as_ref())
    )]
    NotUtf8 {
        /// 0-based byte offset of the first bad byte.
        offset: usize,
        /// 1-based line of the first bad byte.
        line: usize,
        /// 1-based column (in characters) of the first bad byte.
        column: usize,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The file holds nothing but whitespace.
    #[error(
        "the design file is empty; a design starts with `(format: {FORMAT}, name: …`{}",
        in_path(.path.as_ref())
    )]
    Empty {
        /// The file.
        path: Option<PathBuf>,
    },
    /// The text is not a well-formed design: bad syntax, a wrong type, a missing or unknown
    /// field, or a rejected value such as a negative thickness.
    #[error("line {line}, column {column}: {message}{}", in_path(.path.as_ref()))]
    Syntax {
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What the reader found wrong.
        message: String,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The file's `format` is newer than this program understands.
    #[error(
        "this design was written by a newer version of Stackwise (file format {found}; this \
         version reads up to {FORMAT}); update Stackwise to open it{}",
        in_path(.path.as_ref())
    )]
    TooNew {
        /// The file's format number.
        found: u32,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The file's `format` is not a known format number.
    #[error(
        "format {found} is not a design-file format (formats start at 1; this version writes \
         {FORMAT}){}",
        in_path(.path.as_ref())
    )]
    BadFormat {
        /// The file's format number.
        found: u32,
        /// The file.
        path: Option<PathBuf>,
    },
    /// The design could not be turned into RON text.
    #[error("cannot write the design as RON: {message}{}", in_path(.path.as_ref()))]
    Serialize {
        /// The serialiser's message.
        message: String,
        /// The file.
        path: Option<PathBuf>,
    },
}

fn in_path(path: Option<&PathBuf>) -> String {
    path.map(|p| format!(" (in {})", p.display()))
        .unwrap_or_default()
}

impl DesignFileError {
    /// The same error, naming `file` as the file it concerns.
    #[must_use]
    pub fn in_file(mut self, file: &Path) -> Self {
        match &mut self {
            Self::Read { path, .. }
            | Self::Write { path, .. }
            | Self::NotUtf8 { path, .. }
            | Self::Empty { path }
            | Self::Syntax { path, .. }
            | Self::TooNew { path, .. }
            | Self::BadFormat { path, .. }
            | Self::Serialize { path, .. } => *path = Some(file.to_path_buf()),
        }
        self
    }

    /// The 1-based line the error points at, if it points at one.
    #[must_use]
    pub fn line(&self) -> Option<usize> {
        match self {
            Self::Syntax { line, .. } | Self::NotUtf8 { line, .. } => Some(*line),
            _ => None,
        }
    }
}

fn syntax(e: &ron::error::SpannedError, text: &str) -> DesignFileError {
    let (line, column) = (e.span.start.line, e.span.start.col);
    let mut message = e.code.to_string();
    // House style: messages start in lower case (ron's start with a capital).
    if let Some(first) = message.chars().next()
        && message.chars().nth(1).is_some_and(char::is_lowercase)
    {
        message.replace_range(..first.len_utf8(), &first.to_lowercase().to_string());
    }
    if matches!(e.code, ron::Error::ExpectedOption) {
        message.push_str("; write Some(value) for a value, or None");
    }
    // An error past the last non-blank character: the file stops early.
    let body = text.trim_end();
    let end_line = body.matches('\n').count() + 1;
    let end_col = body.rsplit('\n').next().map_or(0, |l| l.chars().count());
    if (line, column) > (end_line, end_col) {
        message = format!("the file ends too soon (cut off?): {message}");
    }
    DesignFileError::Syntax {
        line,
        column,
        message,
        path: None,
    }
}

/// Only the `format` field; everything else is ignored, so files of any version parse.
#[derive(Deserialize)]
struct Head {
    format: u32,
}

fn check_format(found: u32) -> Result<(), DesignFileError> {
    if found > FORMAT {
        Err(DesignFileError::TooNew { found, path: None })
    } else if found == 0 {
        Err(DesignFileError::BadFormat { found, path: None })
    } else {
        Ok(())
    }
}

/// Reads a design from RON text (see the module doc for the checks made).
pub fn from_ron_str(text: &str) -> Result<Design, DesignFileError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(DesignFileError::Empty { path: None });
    }
    // If even `format` cannot be read, the full read below reports the precise problem.
    if let Ok(head) = ron::from_str::<Head>(text) {
        check_format(head.format)?;
    }
    let design: Design = ron::from_str(text).map_err(|e| syntax(&e, text))?;
    check_format(design.format)?;
    Ok(design)
}

/// Reads a design file. Errors name the file.
pub fn load(path: &Path) -> Result<Design, DesignFileError> {
    let bytes = fs::read(path).map_err(|err| DesignFileError::Read {
        err,
        path: Some(path.into()),
    })?;
    let text = match std::str::from_utf8(&bytes) {
        Ok(text) => text,
        Err(e) => {
            let offset = e.valid_up_to();
            // The prefix up to the bad byte is valid by definition of `valid_up_to`.
            let good = std::str::from_utf8(&bytes[..offset]).unwrap_or_default();
            let line = good.matches('\n').count() + 1;
            let column = good.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
            return Err(DesignFileError::NotUtf8 {
                offset,
                line,
                column,
                path: Some(path.into()),
            });
        }
    };
    from_ron_str(text).map_err(|e| e.in_file(path))
}

/// The design as RON text in this version's format: pretty-printed, one layer per line and one
/// target per line, so that changes show up as small diffs.
pub fn to_ron_string(design: &Design) -> Result<String, DesignFileError> {
    let ser = |message: ron::Error| DesignFileError::Serialize {
        message: message.to_string(),
        path: None,
    };
    let mut body = design.clone();
    body.format = FORMAT;
    let layers = std::mem::take(&mut body.layers);
    // Left out of the body (an empty list is not written), and put back after `layers`.
    let back_layers = std::mem::take(&mut body.back_layers);
    let materials = std::mem::take(&mut body.materials);
    let targets = std::mem::take(&mut body.targets);
    let pretty = PrettyConfig::new().indentor("    ").new_line("\n");
    let one_line = pretty.clone().compact_structs(true).compact_arrays(true);
    let mut text = ron::ser::to_string_pretty(&body, pretty.clone()).map_err(ser)?;
    let list = |name: &str, items: Vec<String>| {
        if items.is_empty() {
            format!("    {name}: [],")
        } else {
            let mut s = format!("    {name}: [\n");
            for item in items {
                s.push_str("        ");
                s.push_str(&item);
                s.push_str(",\n");
            }
            s.push_str("    ],");
            s
        }
    };
    let layers = layers
        .iter()
        .map(|l| ron::ser::to_string_pretty(l, one_line.clone()))
        .collect::<Result<Vec<_>, _>>()
        .map_err(ser)?;
    let back_layers = back_layers
        .iter()
        .map(|l| ron::ser::to_string_pretty(l, one_line.clone()))
        .collect::<Result<Vec<_>, _>>()
        .map_err(ser)?;
    let targets = targets
        .iter()
        .map(|t| ron::ser::to_string_pretty(t, one_line.clone()))
        .collect::<Result<Vec<_>, _>>()
        .map_err(ser)?;
    let materials = materials
        .iter()
        .map(|m| {
            // Short materials on one line; long ones (tables) one row per line.
            let line = ron::ser::to_string_pretty(m, one_line.clone())?;
            let tabulated = matches!(m.model, Model::Table { .. } | Model::WithK { .. });
            if line.len() <= 88 && !tabulated {
                return Ok(line);
            }
            let block = ron::ser::to_string_pretty(m, pretty.clone())?;
            Ok(block.replace('\n', "\n        "))
        })
        .collect::<Result<Vec<_>, ron::Error>>()
        .map_err(ser)?;
    // Strings in the body are escaped, so these lines can only be the fields themselves.
    let mut faces = list("layers", layers);
    if !back_layers.is_empty() {
        faces.push('\n');
        faces.push_str(&list("back_layers", back_layers));
    }
    text = replace_line(&text, "    layers: [],", &faces);
    text = replace_line(&text, "    materials: [],", &list("materials", materials));
    text = replace_line(&text, "    targets: [],", &list("targets", targets));
    text.push('\n');
    Ok(text)
}

fn replace_line(text: &str, line: &str, with: &str) -> String {
    text.split('\n')
        .map(|l| if l == line { with } else { l })
        .collect::<Vec<_>>()
        .join("\n")
}

/// Saves a design atomically through [`write_atomic`]: a temporary file in the same folder is
/// written, flushed to disk and renamed over `path`; a read-only file is refused. On any
/// failure the previous file is left as it was.
pub fn save(path: &Path, design: &Design) -> Result<(), DesignFileError> {
    let text = to_ron_string(design).map_err(|e| e.in_file(path))?;
    write_atomic(path, text.as_bytes()).map_err(|err| DesignFileError::Write {
        err,
        path: Some(path.into()),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Layer, Nm, Pol, Quantity, Target, TargetKind};
    use crate::material::Material;

    fn sample() -> Design {
        let mut d = Design::new_empty("Sample \"quoted\"\n    layers: [],");
        d.substrate_mm = Some(1.5);
        d.materials = vec![
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user(
                "M",
                Model::Table {
                    rows: vec![(400.0, 0.05, 2.1), (700.0, 0.04, 4.8)],
                },
            ),
        ];
        d.layers = vec![
            Layer::new("H", Nm::new(13.2).unwrap()),
            Layer {
                material: "M".into(),
                nm: Nm::new(0.1 + 0.2).unwrap(),
                locked: true,
            },
        ];
        d.targets = vec![Target {
            quantity: Quantity::A,
            pol: Pol::P,
            aoi_deg: 12.5,
            from_nm: 400.0,
            to_nm: 400.0,
            step_nm: 0.0,
            kind: TargetKind::Equal,
            goal: 0.25,
            tolerance: 0.01,
            weight: 1.0,
            measure: crate::design::Measure::Spectral,
        }];
        d
    }

    #[test]
    fn round_trip_is_exact_and_layers_are_one_per_line() {
        let d = sample();
        let text = to_ron_string(&d).unwrap();
        assert_eq!(from_ron_str(&text).unwrap(), d, "round trip:\n{text}");
        let layer_lines: Vec<_> = text.lines().filter(|l| l.contains("material:")).collect();
        assert_eq!(layer_lines.len(), 2, "one line per layer:\n{text}");
        assert!(layer_lines[1].contains("locked: true"), "{text}");
        assert_eq!(
            text.lines().filter(|l| l.contains("quantity:")).count(),
            1,
            "{text}"
        );
        assert!(
            text.contains("        (name: \"H\", model: Constant(n: 2.35, k: 0.0)),\n"),
            "{text}"
        );
        assert!(
            text.contains("\n                    (700.0, 0.04, 4.8),\n"),
            "one row per line:\n{text}"
        );
    }

    #[test]
    fn empty_lists_round_trip() {
        let d = Design::new_empty("Empty");
        let text = to_ron_string(&d).unwrap();
        assert!(text.contains("layers: [],"), "{text}");
        assert_eq!(from_ron_str(&text).unwrap(), d, "round trip");
    }

    #[test]
    fn newer_format_with_unknown_fields_is_refused_as_newer() {
        let e = from_ron_str("(format: 7, name: \"x\", hologram: Some((a: 1)), layers: [])")
            .unwrap_err()
            .to_string();
        assert!(e.contains("newer version") && e.contains('7'), "{e}");
    }

    #[test]
    fn byte_order_mark_is_accepted() {
        let text = format!("\u{feff}{}", to_ron_string(&sample()).unwrap());
        assert_eq!(from_ron_str(&text).unwrap(), sample(), "BOM skipped");
    }

    proptest::proptest! {
        #[test]
        fn cut_or_garbled_files_are_errors_not_panics(cut in 0usize..2000, junk in "[(),:\\[\\]a-z0-9\" .-]{0,8}") {
            let text = to_ron_string(&sample()).unwrap();
            let cut = text.char_indices().map(|(i, _)| i).nth(cut).unwrap_or(text.len());
            let garbled = format!("{}{junk}{}", &text[..cut], &text[cut..]);
            // Either outcome is fine; what matters is that neither panics.
            from_ron_str(&text[..cut]).map(|d| d.validate()).ok();
            from_ron_str(&garbled).map(|d| d.validate()).ok();
        }
    }
}
