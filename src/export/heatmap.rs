//! Heat-map images (PNG or SVG) of a value over two axes — the wavelength × angle map — with a
//! labelled colour scale beside the plot. Same font, sizes and caution line as
//! [`super::plot`].
//!
//! ```
//! use stackwise::export::heatmap::{render_heatmap_svg, HeatMapSpec};
//! let spec = HeatMapSpec {
//!     title: "Demo".into(),
//!     x_label: "Wavelength (nm)".into(),
//!     y_label: "Angle of incidence (°)".into(),
//!     scale_label: "Reflectance R (%)".into(),
//!     x: vec![400.0, 500.0, 600.0],
//!     y: vec![0.0, 45.0],
//!     values: vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
//!     value_range: None,
//!     caution: None,
//! };
//! let svg = render_heatmap_svg(&spec, 640, 400)?;
//! assert!(svg.contains("Reflectance R (%)"));
//! # Ok::<(), stackwise::export::ExportError>(())
//! ```

use std::ops::Range;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::ExportError;
use super::plot::{CAUTION_TEXT, FONT, png_of, svg_of, wrap};
use crate::analysis::map::RtMap;
use crate::design::{Pol, Quantity};

/// Everything a heat map shows. `values` is row-major: row i (at `y[i]`), column j (at
/// `x[j]`) is `values[i * x.len() + j]`; non-finite values are left blank.
#[derive(Clone, Debug, PartialEq)]
pub struct HeatMapSpec {
    /// The title above the plot.
    pub title: String,
    /// The x-axis name with its unit.
    pub x_label: String,
    /// The y-axis name with its unit.
    pub y_label: String,
    /// The colour scale's name with its unit.
    pub scale_label: String,
    /// Column positions, increasing.
    pub x: Vec<f64>,
    /// Row positions, increasing.
    pub y: Vec<f64>,
    /// The values.
    pub values: Vec<f64>,
    /// Fixed colour-scale range, else the data's span.
    pub value_range: Option<(f64, f64)>,
    /// A line printed below the plot.
    pub caution: Option<String>,
}

/// Anchors of the colour ramp at 0, 1/8, …, 1: the "viridis" map of S. van der Walt and
/// N. Smith (matplotlib 2.0, 2015, CC0), perceptually uniform and readable in grey-scale and
/// by colour-blind readers. Hex values from memory of the published map.
const RAMP: [(u8, u8, u8); 9] = [
    (0x44, 0x01, 0x54),
    (0x47, 0x2c, 0x7a),
    (0x3b, 0x51, 0x8b),
    (0x2c, 0x71, 0x8e),
    (0x21, 0x90, 0x8d),
    (0x27, 0xad, 0x81),
    (0x5c, 0xc8, 0x63),
    (0xaa, 0xdc, 0x32),
    (0xfd, 0xe7, 0x25),
];

/// The ramp colour at `t` in 0–1 (clamped), linear between anchors.
///
/// ```
/// use stackwise::export::heatmap::ramp_colour;
/// assert_eq!(ramp_colour(0.0), (0x44, 0x01, 0x54));
/// assert_eq!(ramp_colour(1.0), (0xfd, 0xe7, 0x25));
/// ```
#[must_use]
pub fn ramp_colour(t: f64) -> (u8, u8, u8) {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let pos = t * (RAMP.len() - 1) as f64;
    let i = (pos.floor() as usize).min(RAMP.len() - 2);
    let f = pos - i as f64;
    let (a, b) = (RAMP[i], RAMP[i + 1]);
    let mix = |p: u8, q: u8| (f64::from(p) + f * (f64::from(q) - f64::from(p))).round() as u8;
    (mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Cell edges: midway between neighbours, the outer cells as wide as their neighbour.
fn edges(c: &[f64]) -> Vec<f64> {
    match c {
        [] => Vec::new(),
        [only] => vec![only - 0.5, only + 0.5],
        _ => {
            let mut e = Vec::with_capacity(c.len() + 1);
            e.push(c[0] - 0.5 * (c[1] - c[0]));
            e.extend(c.windows(2).map(|w| 0.5 * (w[0] + w[1])));
            let n = c.len();
            e.push(c[n - 1] + 0.5 * (c[n - 1] - c[n - 2]));
            e
        }
    }
}

impl HeatMapSpec {
    /// The value range of the colour scale: the fixed one, else the finite data's span.
    pub fn scale_range(&self) -> Result<Range<f64>, ExportError> {
        if self.x.is_empty()
            || self.y.is_empty()
            || self.values.len() != self.x.len() * self.y.len()
        {
            return Err(ExportError::NoData);
        }
        let (lo, hi) = self.value_range.unwrap_or_else(|| {
            self.values
                .iter()
                .filter(|v| v.is_finite())
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
                    (a.min(v), b.max(v))
                })
        });
        if !(lo.is_finite() && hi.is_finite()) {
            return Err(ExportError::NoData);
        }
        if lo < hi {
            Ok(lo..hi)
        } else if lo > hi {
            Err(ExportError::BadRange {
                axis: "colour scale",
                from: lo,
                to: hi,
            })
        } else {
            // One value everywhere: a unit-wide scale around it.
            Ok(lo - 0.5..hi + 0.5)
        }
    }
}

/// A heat map of a wavelength × angle map, in percent on a fixed 0–100 % scale.
#[must_use]
pub fn map_heatmap(design_name: &str, m: &RtMap) -> HeatMapSpec {
    let q = match m.quantity {
        Quantity::R => "Reflectance R",
        Quantity::T => "Transmittance T",
        Quantity::A => "Absorptance A",
    };
    let p = match m.pol {
        Pol::S => "s-polarised",
        Pol::P => "p-polarised",
        Pol::Mean => "mean of s and p",
    };
    HeatMapSpec {
        title: format!("{design_name}: {q}, {p}"),
        x_label: "Wavelength (nm)".into(),
        y_label: "Angle of incidence (°)".into(),
        scale_label: format!("{q} (%)"),
        x: m.wavelength_nm.clone(),
        y: m.aoi_deg.clone(),
        values: m.values.iter().map(|v| 100.0 * v).collect(),
        // Fractions are bounded, so the whole 0–100 % scale keeps maps comparable.
        value_range: Some((0.0, 100.0)),
        caution: None,
    }
}

fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    spec: &HeatMapSpec,
    (width, height): (u32, u32),
) -> Result<(), ExportError> {
    let fail = |e: DrawingAreaErrorKind<DB::ErrorType>| ExportError::Draw(e.to_string());
    let scale = spec.scale_range()?;
    root.fill(&WHITE).map_err(fail)?;
    let base = (f64::from(width.min(height)) / 38.0).clamp(8.0, 64.0);
    let area = match spec.caution.as_deref().filter(|c| !c.is_empty()) {
        Some(caution) => {
            let pad = (base * 0.6) as u32;
            let size = base * 0.8;
            let lines = wrap(root, caution, size, width.saturating_sub(2 * pad).max(1));
            let line_h = size * 1.3;
            let block = ((lines.len() as f64) * line_h) as u32 + pad;
            let (top, bottom) = root.split_vertically(height.saturating_sub(block));
            let style = TextStyle::from((FONT, size)).color(&CAUTION_TEXT);
            for (i, l) in lines.iter().enumerate() {
                bottom
                    .draw_text(l, &style, ((base * 0.6) as i32, (i as f64 * line_h) as i32))
                    .map_err(fail)?;
            }
            top
        }
        None => root.clone(),
    };
    let bar_w = (base * 9.0) as u32;
    let (main, bar) = area.split_horizontally(width.saturating_sub(bar_w));
    let (xe, ye) = (edges(&spec.x), edges(&spec.y));
    let (x0, x1) = (xe[0], xe[xe.len() - 1]);
    let (y0, y1) = (ye[0], ye[ye.len() - 1]);
    let mut chart = ChartBuilder::on(&main)
        .caption(&spec.title, (FONT, base * 1.2))
        .margin((base * 0.9) as u32)
        .x_label_area_size((base * 2.8) as u32)
        .y_label_area_size((base * 4.2) as u32)
        .build_cartesian_2d(x0..x1, y0..y1)
        .map_err(fail)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(&spec.x_label)
        .y_desc(&spec.y_label)
        .label_style((FONT, base * 0.9))
        .axis_desc_style((FONT, base))
        .axis_style(BLACK)
        .draw()
        .map_err(fail)?;
    let span = scale.end - scale.start;
    let nx = spec.x.len();
    let cells = spec.values.iter().enumerate().filter_map(|(k, &v)| {
        let (i, j) = (k / nx, k % nx);
        v.is_finite().then(|| {
            let (r, g, b) = ramp_colour((v - scale.start) / span);
            Rectangle::new(
                [(xe[j], ye[i]), (xe[j + 1], ye[i + 1])],
                RGBColor(r, g, b).filled(),
            )
        })
    });
    chart.draw_series(cells).map_err(fail)?;

    // The colour scale: a column of the ramp with its value axis and name.
    let mut legend = ChartBuilder::on(&bar)
        .margin_top((base * 3.3) as u32)
        .margin_bottom((base * 3.7) as u32)
        .margin_right((base * 0.9) as u32)
        .y_label_area_size((base * 5.5) as u32)
        .build_cartesian_2d(0.0..1.0, scale.clone())
        .map_err(fail)?;
    legend
        .configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc(&spec.scale_label)
        .label_style((FONT, base * 0.9))
        .axis_desc_style((FONT, base))
        .axis_style(BLACK)
        .draw()
        .map_err(fail)?;
    let steps = 128_u32;
    legend
        .draw_series((0..steps).map(|s| {
            let (a, b) = (
                f64::from(s) / f64::from(steps),
                f64::from(s + 1) / f64::from(steps),
            );
            let (r, g, bl) = ramp_colour(0.5 * (a + b));
            Rectangle::new(
                [(0.0, scale.start + a * span), (1.0, scale.start + b * span)],
                RGBColor(r, g, bl).filled(),
            )
        }))
        .map_err(fail)?;
    root.present().map_err(fail)
}

/// Draws the heat map as a PNG image and returns the file's bytes.
pub fn render_heatmap_png(
    spec: &HeatMapSpec,
    width_px: u32,
    height_px: u32,
) -> Result<Vec<u8>, ExportError> {
    png_of(width_px, height_px, |root| {
        spec.scale_range()?;
        draw(root, spec, (width_px, height_px))
    })
}

/// Draws the heat map as an SVG document.
pub fn render_heatmap_svg(
    spec: &HeatMapSpec,
    width_px: u32,
    height_px: u32,
) -> Result<String, ExportError> {
    svg_of(width_px, height_px, |root| {
        spec.scale_range()?;
        draw(root, spec, (width_px, height_px))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_centred_on_their_positions() {
        assert_eq!(edges(&[0.0, 10.0, 20.0]), vec![-5.0, 5.0, 15.0, 25.0]);
        assert_eq!(edges(&[3.0]), vec![2.5, 3.5]);
    }

    #[test]
    fn ramp_is_monotonic_in_lightness() {
        // Viridis grows lighter from end to end; check with the Rec. 709 luma weights.
        let luma = |(r, g, b): (u8, u8, u8)| {
            0.2126 * f64::from(r) + 0.7152 * f64::from(g) + 0.0722 * f64::from(b)
        };
        let l: Vec<f64> = (0..=20)
            .map(|i| luma(ramp_colour(f64::from(i) / 20.0)))
            .collect();
        assert!(l.windows(2).all(|w| w[1] > w[0]), "{l:?}");
    }

    #[test]
    fn png_shows_the_ramp_ends_in_the_cells() {
        let spec = HeatMapSpec {
            title: "t".into(),
            x_label: "x".into(),
            y_label: "y".into(),
            scale_label: "v".into(),
            x: vec![0.0, 1.0],
            y: vec![0.0, 1.0],
            values: vec![0.0, 0.0, 1.0, 1.0],
            value_range: None,
            caution: Some("caution".into()),
        };
        let png = render_heatmap_png(&spec, 400, 300).unwrap();
        let img = image::load_from_memory(&png).unwrap().to_rgb8();
        let has = |c: (u8, u8, u8)| img.pixels().any(|p| p.0 == [c.0, c.1, c.2]);
        assert!(has(RAMP[0]) && has(RAMP[8]), "both ends of the scale drawn");
    }
}
