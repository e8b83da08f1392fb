//! Plot images of curves: one description ([`PlotSpec`]) drawn as PNG ([`render_png`]) or
//! SVG ([`render_svg`]).
//!
//! The style is ours: white background, light grey grid, a colour-blind-safe palette
//! ([`PALETTE`]) with dashed lines for every series after the first so curves stay apart in
//! grey-scale print too, the legend in the upper right, and an optional caution line at the
//! bottom. Text uses one embedded font (the window's own Ubuntu Light), so exports look the same
//! on every machine and need no system fonts.
//!
//! ```
//! use stackwise::export::plot::{render_svg, LineStyle, PlotSpec, Series};
//! let spec = PlotSpec {
//!     title: "Demo".into(),
//!     x_label: "Wavelength (nm)".into(),
//!     y_label: "Reflectance R (%)".into(),
//!     series: vec![Series {
//!         name: "Design A".into(),
//!         points: vec![(400.0, 4.0), (700.0, 0.5)],
//!         style: LineStyle::Solid,
//!         colour: 0,
//!     }],
//!     x_range: None,
//!     y_range: None,
//!     caution: None,
//! };
//! let svg = render_svg(&spec, 640, 400)?;
//! assert!(svg.contains("Design A"));
//! # Ok::<(), stackwise::export::ExportError>(())
//! ```

use std::fmt::Write as _;
use std::io::Cursor;
use std::ops::Range;
use std::sync::OnceLock;

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::FontStyle;

use super::ExportError;
use crate::analysis::Spectrum;
use crate::analysis::compare::curve;
use crate::design::{Pol, Quantity};

/// Smallest width or height an image may have (px).
pub const MIN_SIDE_PX: u32 = 100;
/// Largest width or height an image may have (px).
pub const MAX_SIDE_PX: u32 = 8000;
/// Most pixels a PNG may have (width × height); larger images would need hundreds of MB.
pub const MAX_PIXELS: u64 = 32_000_000;

/// Series colours, in order of use, as (red, green, blue): the window's design colours
/// ([`super::palette::DESIGN_COLOURS`]), so series k of a comparison has design k's colour.
pub const PALETTE: [(u8, u8, u8); 7] = super::palette::DESIGN_COLOURS;

/// The font family name the embedded font is registered under.
pub(super) const FONT: &str = "sans-serif";

const GRID_FINE: RGBColor = RGBColor(236, 236, 236);
const GRID_MAIN: RGBColor = RGBColor(205, 205, 205);
pub(super) const CAUTION_TEXT: RGBColor = RGBColor(150, 30, 0);

/// How a series' line is drawn.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LineStyle {
    /// A continuous line.
    #[default]
    Solid,
    /// A dashed line.
    Dashed,
}

/// One named curve.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// The legend text (usually the design's name).
    pub name: String,
    /// (x, y) points in drawing order; a non-finite point breaks the line.
    pub points: Vec<(f64, f64)>,
    /// Solid or dashed.
    pub style: LineStyle,
    /// Index into [`PALETTE`] (wraps around).
    pub colour: usize,
}

/// Everything a plot image shows.
#[derive(Clone, Debug, PartialEq)]
pub struct PlotSpec {
    /// The title above the plot.
    pub title: String,
    /// The x-axis name with its unit, e.g. "Wavelength (nm)".
    pub x_label: String,
    /// The y-axis name with its unit, e.g. "Reflectance R (%)".
    pub y_label: String,
    /// The curves.
    pub series: Vec<Series>,
    /// Fixed x range, else the data's span.
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range, else the data's span with a small margin.
    pub y_range: Option<(f64, f64)>,
    /// A line printed below the plot (e.g. [`super::SAFETY_CAUTION`]).
    pub caution: Option<String>,
}

impl PlotSpec {
    /// The x and y ranges the plot will use: the fixed ones if given, else from the data.
    pub fn ranges(&self) -> Result<(Range<f64>, Range<f64>), ExportError> {
        let finite = || {
            self.series
                .iter()
                .flat_map(|s| s.points.iter())
                .filter(|(x, y)| x.is_finite() && y.is_finite())
        };
        if finite().next().is_none() {
            return Err(ExportError::NoData);
        }
        let span = |vals: &mut dyn Iterator<Item = f64>| {
            vals.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                (lo.min(v), hi.max(v))
            })
        };
        let x = match self.x_range {
            Some(r) => checked("x", r)?,
            None => checked("x", widen(span(&mut finite().map(|p| p.0)), 0.0))?,
        };
        let y = match self.y_range {
            Some(r) => checked("y", r)?,
            None => checked("y", widen(span(&mut finite().map(|p| p.1)), 0.04))?,
        };
        Ok((x, y))
    }
}

/// Adds `margin` of the span on both sides; a zero span becomes a small window around it.
fn widen((lo, hi): (f64, f64), margin: f64) -> (f64, f64) {
    let d = hi - lo;
    if d > 0.0 {
        (lo - margin * d, hi + margin * d)
    } else {
        let pad = if lo.abs() > 0.0 { lo.abs() * 0.05 } else { 1.0 };
        (lo - pad, hi + pad)
    }
}

fn checked(axis: &'static str, (from, to): (f64, f64)) -> Result<Range<f64>, ExportError> {
    if from.is_finite() && to.is_finite() && from < to && (to - from).is_finite() {
        Ok(from..to)
    } else {
        Err(ExportError::BadRange { axis, from, to })
    }
}

/// An image format the plots can be written in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ImageFormat {
    /// A PNG bitmap: its size is capped by [`MAX_PIXELS`] as well.
    Png,
    /// An SVG drawing: only each side is capped.
    Svg,
}

impl ImageFormat {
    /// The file name extension, without the dot.
    #[must_use]
    pub fn extension(self) -> &'static str {
        match self {
            Self::Png => "png",
            Self::Svg => "svg",
        }
    }

    /// The format of the image file `path`, or an error that says how to name it.
    pub fn for_path(path: &std::path::Path) -> Result<Self, ExportError> {
        Self::from_path(path).ok_or_else(|| ExportError::UnknownImageFormat {
            path: path.display().to_string(),
        })
    }

    /// The format named by a file's extension (`.png` or `.svg`, any case).
    ///
    /// ```
    /// use stackwise::export::plot::ImageFormat;
    /// assert_eq!(ImageFormat::from_path("a/b.SVG".as_ref()), Some(ImageFormat::Svg));
    /// assert_eq!(ImageFormat::from_path("plot.pdf".as_ref()), None);
    /// ```
    #[must_use]
    pub fn from_path(path: &std::path::Path) -> Option<Self> {
        let ext = path.extension()?.to_str()?.to_ascii_lowercase();
        match ext.as_str() {
            "png" => Some(Self::Png),
            "svg" => Some(Self::Svg),
            _ => None,
        }
    }
}

/// Checks an image size before anything is computed: each side within [`MIN_SIDE_PX`] to
/// [`MAX_SIDE_PX`], and for PNG at most [`MAX_PIXELS`] in all (an SVG's size costs no memory).
///
/// ```
/// use stackwise::export::plot::{ImageFormat, check_size};
/// assert!(check_size(ImageFormat::Svg, 8000, 8000).is_ok());
/// let e = check_size(ImageFormat::Png, 8000, 8000).unwrap_err().to_string();
/// assert!(e.contains("use SVG"), "{e}");
/// assert!(check_size(ImageFormat::Svg, 9000, 800).is_err());
/// ```
pub fn check_size(format: ImageFormat, width_px: u32, height_px: u32) -> Result<(), ExportError> {
    for (what, value) in [("width", width_px), ("height", height_px)] {
        if !(MIN_SIDE_PX..=MAX_SIDE_PX).contains(&value) {
            return Err(ExportError::BadSize {
                what,
                value,
                min: MIN_SIDE_PX,
                max: MAX_SIDE_PX,
            });
        }
    }
    if format == ImageFormat::Png && u64::from(width_px) * u64::from(height_px) > MAX_PIXELS {
        return Err(ExportError::TooManyPixels {
            width: width_px,
            height: height_px,
            max: MAX_PIXELS,
        });
    }
    Ok(())
}

/// Registers the embedded font once per process.
pub(super) fn font_ready() -> Result<(), ExportError> {
    static READY: OnceLock<bool> = OnceLock::new();
    let ok = *READY.get_or_init(|| {
        plotters::style::register_font(FONT, FontStyle::Normal, epaint_default_fonts::UBUNTU_LIGHT)
            .is_ok()
    });
    if ok { Ok(()) } else { Err(ExportError::Font) }
}

/// The colour of palette entry `index` (wrapping around).
#[must_use]
pub fn palette_colour(index: usize) -> (u8, u8, u8) {
    super::palette::design_colour(index)
}

/// The series' finite points, split into runs at non-finite points.
fn finite_runs(points: &[(f64, f64)]) -> Vec<Vec<(f64, f64)>> {
    let mut runs = Vec::new();
    let mut run = Vec::new();
    for &(x, y) in points {
        if x.is_finite() && y.is_finite() {
            run.push((x, y));
        } else if !run.is_empty() {
            runs.push(std::mem::take(&mut run));
        }
    }
    if !run.is_empty() {
        runs.push(run);
    }
    runs
}

/// Greedy word wrap of `text` into lines no wider than `max_px` at `size` px.
pub(super) fn wrap<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    text: &str,
    size: f64,
    max_px: u32,
) -> Vec<String> {
    let style = TextStyle::from((FONT, size));
    let fits = |s: &str| {
        area.estimate_text_size(s, &style)
            .is_ok_and(|(w, _)| w <= max_px)
    };
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let candidate = if line.is_empty() {
            word.to_owned()
        } else {
            format!("{line} {word}")
        };
        if line.is_empty() || fits(&candidate) {
            line = candidate;
        } else {
            lines.push(std::mem::replace(&mut line, word.to_owned()));
        }
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    spec: &PlotSpec,
    (width, height): (u32, u32),
) -> Result<(), ExportError> {
    let fail = |e: DrawingAreaErrorKind<DB::ErrorType>| ExportError::Draw(e.to_string());
    let (x_range, y_range) = spec.ranges()?;
    root.fill(&WHITE).map_err(fail)?;
    let base = (f64::from(width.min(height)) / 38.0).clamp(8.0, 64.0);

    // The caution line(s) at the bottom: wrapped to the width, shrunk until they take at
    // most a third of the height.
    let plot_area = if let Some(caution) = spec.caution.as_deref().filter(|c| !c.is_empty()) {
        let pad = (base * 0.6) as u32;
        let avail = width.saturating_sub(2 * pad).max(1);
        let mut size = base * 0.9;
        let mut lines = wrap(root, caution, size, avail);
        while size > 5.0 && (lines.len() as f64) * size * 1.3 > f64::from(height) / 3.0 {
            size *= 0.85;
            lines = wrap(root, caution, size, avail);
        }
        let line_h = size * 1.3;
        let block = ((lines.len() as f64) * line_h) as u32 + pad;
        let (top, bottom) = root.split_vertically(height.saturating_sub(block));
        let style = TextStyle::from((FONT, size)).color(&CAUTION_TEXT);
        for (i, l) in lines.iter().enumerate() {
            let y = (i as f64 * line_h) as i32;
            bottom
                .draw_text(l, &style, ((base * 0.6) as i32, y))
                .map_err(fail)?;
        }
        top
    } else {
        root.clone()
    };

    let mut chart = ChartBuilder::on(&plot_area)
        .caption(&spec.title, (FONT, base * 1.35))
        .margin((base * 0.9) as u32)
        .x_label_area_size((base * 2.8) as u32)
        .y_label_area_size((base * 4.2) as u32)
        .build_cartesian_2d(x_range, y_range)
        .map_err(fail)?;
    chart
        .configure_mesh()
        .x_desc(&spec.x_label)
        .y_desc(&spec.y_label)
        .label_style((FONT, base * 0.9))
        .axis_desc_style((FONT, base))
        .light_line_style(GRID_FINE)
        .bold_line_style(GRID_MAIN)
        .axis_style(BLACK)
        .draw()
        .map_err(fail)?;

    let line_w = ((base / 7.0).round() as u32).max(1);
    let dash = (base * 0.7).max(3.0) as i32;
    for s in &spec.series {
        let (r, g, b) = palette_colour(s.colour);
        let style = RGBColor(r, g, b).stroke_width(line_w);
        let mut labelled = false;
        for run in finite_runs(&s.points) {
            let anno = match s.style {
                LineStyle::Solid => chart.draw_series(LineSeries::new(run, style)),
                LineStyle::Dashed => {
                    chart.draw_series(DashedLineSeries::new(run, dash, dash / 2, style))
                }
            }
            .map_err(fail)?;
            if !labelled {
                labelled = true;
                let kind = s.style;
                let seg = 2 * dash;
                // Two segments from the legend anchor: touching for solid, apart for dashed.
                let gap_from = seg * 2 / 5;
                let gap_to = if kind == LineStyle::Dashed {
                    seg * 3 / 5
                } else {
                    gap_from
                };
                anno.label(s.name.as_str()).legend(move |(x, y)| {
                    EmptyElement::at((x, y))
                        + PathElement::new(vec![(0, 0), (gap_from, 0)], style)
                        + PathElement::new(vec![(gap_to, 0), (seg, 0)], style)
                });
            }
        }
    }
    if spec.series.iter().any(|s| !s.name.is_empty()) {
        chart
            .configure_series_labels()
            .label_font((FONT, base * 0.9))
            .background_style(WHITE.mix(0.9))
            .border_style(GRID_MAIN)
            .position(SeriesLabelPosition::UpperRight)
            .draw()
            .map_err(fail)?;
    }
    root.present().map_err(fail)
}

/// Draws the plot as a PNG image of `width_px` × `height_px` and returns the file's bytes.
pub fn render_png(spec: &PlotSpec, width_px: u32, height_px: u32) -> Result<Vec<u8>, ExportError> {
    png_of(width_px, height_px, |root| {
        spec.ranges()?;
        draw(root, spec, (width_px, height_px))
    })
}

/// Draws the plot as an SVG document of `width_px` × `height_px`.
pub fn render_svg(spec: &PlotSpec, width_px: u32, height_px: u32) -> Result<String, ExportError> {
    svg_of(width_px, height_px, |root| {
        spec.ranges()?;
        draw(root, spec, (width_px, height_px))
    })
}

/// A PNG file of `width_px` × `height_px` that `paint` draws on (a white canvas); the size
/// and the font are checked first. Shared by every image the program writes.
pub(super) fn png_of(
    width_px: u32,
    height_px: u32,
    paint: impl FnOnce(&DrawingArea<BitMapBackend<'_>, Shift>) -> Result<(), ExportError>,
) -> Result<Vec<u8>, ExportError> {
    check_size(ImageFormat::Png, width_px, height_px)?;
    font_ready()?;
    let mut buf = vec![255_u8; width_px as usize * height_px as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut buf, (width_px, height_px)).into_drawing_area();
        paint(&root)?;
    }
    let img = image::RgbImage::from_raw(width_px, height_px, buf)
        .ok_or_else(|| ExportError::Png("pixel buffer has the wrong size".into()))?;
    let mut out = Cursor::new(Vec::new());
    img.write_to(&mut out, image::ImageFormat::Png)
        .map_err(|e| ExportError::Png(e.to_string()))?;
    Ok(out.into_inner())
}

/// An SVG document of `width_px` × `height_px` that `paint` draws on; the size and the font
/// are checked first.
pub(super) fn svg_of(
    width_px: u32,
    height_px: u32,
    paint: impl FnOnce(&DrawingArea<SVGBackend<'_>, Shift>) -> Result<(), ExportError>,
) -> Result<String, ExportError> {
    check_size(ImageFormat::Svg, width_px, height_px)?;
    font_ready()?;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width_px, height_px)).into_drawing_area();
        paint(&root)?;
    }
    Ok(svg)
}

/// `text` with its first letter in upper case.
fn capitalised(text: &str) -> String {
    let mut c = text.chars();
    c.next()
        .map(|first| first.to_uppercase().chain(c).collect())
        .unwrap_or_default()
}

/// A plot of one quantity over wavelength, in percent, for one or more designs: the first
/// solid, the others dashed, each its own colour. When the spectra were computed at different
/// angles, each legend entry names its angle; otherwise the title does.
///
/// ```
/// use stackwise::analysis::Spectrum;
/// use stackwise::design::{Pol, Quantity};
/// let s = Spectrum { wavelength_nm: vec![500.0], ..Spectrum::default() };
/// let mut s = s;
/// s.curves.r = vec![0.25];
/// let p = stackwise::export::plot::spectrum_plot(&[("A", &s)], Quantity::R, Pol::Mean);
/// assert_eq!(p.series[0].points, vec![(500.0, 25.0)]);
/// assert_eq!(p.y_label, "Reflectance R (%)");
/// ```
#[must_use]
pub fn spectrum_plot(designs: &[(&str, &Spectrum)], quantity: Quantity, pol: Pol) -> PlotSpec {
    let first_aoi = designs.first().map_or(0.0, |(_, s)| s.aoi_deg);
    let same_aoi = designs
        .iter()
        .all(|(_, s)| s.aoi_deg.total_cmp(&first_aoi).is_eq());
    let series = designs
        .iter()
        .enumerate()
        .map(|(i, (name, s))| Series {
            name: if same_aoi {
                (*name).to_owned()
            } else {
                format!("{name} ({}°)", s.aoi_deg)
            },
            points: s
                .wavelength_nm
                .iter()
                .zip(curve(s, quantity, pol))
                .map(|(&wl, &v)| (wl, 100.0 * v))
                .collect(),
            style: if i == 0 {
                LineStyle::Solid
            } else {
                LineStyle::Dashed
            },
            colour: i,
        })
        .collect();
    let mut title = format!("{}, {}", capitalised(quantity.describe()), pol.describe());
    if same_aoi {
        // Writing to a String cannot fail.
        write!(title, ", {first_aoi}° incidence").ok();
    }
    if let [(name, _)] = designs {
        title = format!("{name}: {title}");
    }
    PlotSpec {
        title,
        x_label: "Wavelength (nm)".into(),
        y_label: format!("{} (%)", capitalised(quantity.describe())),
        series,
        x_range: None,
        y_range: None,
        caution: None,
    }
}
