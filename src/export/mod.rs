//! Handing results over: CSV files of spectra, angle scans and optical constants, plot images
//! (PNG and SVG) and the layer report (CSV, Markdown, HTML).

pub mod csv;
pub mod heatmap;
pub mod palette;
pub mod plot;
pub mod report;

pub use crate::design::output::{refuse_input, same_file, write_atomic};

/// One line that goes on every exported image or report of blocking (optical density) data or
/// of a laser mirror.
pub const SAFETY_CAUTION: &str = crate::cautions::SHORT;

/// Whether exports of a design should carry [`SAFETY_CAUTION`]: its name speaks of a laser or
/// of optical density / blocking.
///
/// ```
/// assert!(stackwise::export::needs_caution("Turning mirror for a Laser line"));
/// assert!(stackwise::export::needs_caution("OD 4 notch"));
/// assert!(!stackwise::export::needs_caution("Camera window AR"));
/// ```
#[must_use]
pub fn needs_caution(design_name: &str) -> bool {
    let lower = design_name.to_lowercase();
    lower.contains("laser")
        || lower.contains("blocking")
        || lower.contains("optical density")
        || lower
            .split(|c: char| !c.is_alphanumeric())
            .any(|w| w == "od")
}

/// R at or above this anywhere marks a spectrum as a (laser-grade) mirror for [`shows_blocking`].
pub const MIRROR_R_FROM: f64 = 0.99;
/// T at or below this anywhere (optical density 2 or more) marks a spectrum as blocking.
pub const BLOCKING_T_UPTO: f64 = 0.01;

/// Whether a spectrum shows mirror-grade reflection or blocking (R ≥ [`MIRROR_R_FROM`] or
/// T ≤ [`BLOCKING_T_UPTO`] at some wavelength), so its exports should carry
/// [`SAFETY_CAUTION`].
///
/// ```
/// let mut s = stackwise::analysis::Spectrum::default();
/// s.curves.r = vec![0.2, 0.995];
/// s.curves.t = vec![0.8, 0.005];
/// assert!(stackwise::export::shows_blocking(&s));
/// s.curves.r = vec![0.2, 0.5];
/// s.curves.t = vec![0.8, 0.5];
/// assert!(!stackwise::export::shows_blocking(&s));
/// ```
#[must_use]
pub fn shows_blocking(s: &crate::analysis::Spectrum) -> bool {
    caution_for(
        false,
        [],
        s.curves.r.iter().copied(),
        s.curves.t.iter().copied(),
    )
    .is_some()
}

/// The one rule for when an image or report carries [`SAFETY_CAUTION`]: when asked for, when a
/// design's name calls for it ([`needs_caution`]), or when what it shows reaches mirror-grade
/// reflection or blocking (R ≥ [`MIRROR_R_FROM`], T ≤ [`BLOCKING_T_UPTO`]).
///
/// `r` and `t` are every reflectance and transmittance the output shows (fractions).
///
/// ```
/// use stackwise::export::{SAFETY_CAUTION, caution_for};
/// assert_eq!(caution_for(false, ["Camera window AR"], [0.01], [0.99]), None);
/// assert_eq!(caution_for(false, ["Camera window AR"], [0.995], []), Some(SAFETY_CAUTION));
/// assert_eq!(caution_for(false, ["Laser turning mirror"], [], []), Some(SAFETY_CAUTION));
/// assert_eq!(caution_for(true, [""], [], []), Some(SAFETY_CAUTION));
/// ```
#[must_use]
pub fn caution_for<'a>(
    asked: bool,
    names: impl IntoIterator<Item = &'a str>,
    r: impl IntoIterator<Item = f64>,
    t: impl IntoIterator<Item = f64>,
) -> Option<&'static str> {
    let shows = asked
        || names.into_iter().any(needs_caution)
        || r.into_iter().any(|r| r >= MIRROR_R_FROM)
        || t.into_iter().any(|t| t <= BLOCKING_T_UPTO);
    shows.then_some(SAFETY_CAUTION)
}

/// Why an image or report could not be made.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ExportError {
    /// A requested image size outside the allowed range.
    #[error("image {what} {value} px is outside {min}–{max} px; choose a size in that range")]
    BadSize {
        /// "width" or "height".
        what: &'static str,
        /// The size asked for.
        value: u32,
        /// Smallest allowed.
        min: u32,
        /// Largest allowed.
        max: u32,
    },
    /// Width × height too large to hold in memory comfortably.
    #[error(
        "a PNG of {width} × {height} px has more than {max} pixels; make it smaller or use SVG"
    )]
    TooManyPixels {
        /// Width asked for.
        width: u32,
        /// Height asked for.
        height: u32,
        /// Most pixels allowed.
        max: u64,
    },
    /// No series has a single finite point.
    #[error("nothing to plot: no series has a finite point; compute a spectrum first")]
    NoData,
    /// An axis range that is empty, inverted or not finite.
    #[error("{axis} range {from} to {to} is empty, inverted or not finite; give from < to")]
    BadRange {
        /// "x" or "y".
        axis: &'static str,
        /// Start.
        from: f64,
        /// End.
        to: f64,
    },
    /// The embedded font could not be loaded.
    #[error("the embedded plot font could not be loaded; the program's build is damaged")]
    Font,
    /// The drawing library failed.
    #[error("drawing the plot failed: {0}")]
    Draw(String),
    /// PNG encoding failed.
    #[error("encoding the PNG failed: {0}")]
    Png(String),
    /// A layer's QWOT or optical thickness could not be computed.
    #[error("layer report: {0}")]
    Design(#[from] crate::design::DesignError),
    /// An image file name whose extension names no image format.
    #[error("cannot tell the image format of {path}: name the file .png or .svg")]
    UnknownImageFormat {
        /// The file name given.
        path: String,
    },
}
