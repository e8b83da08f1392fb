//! The wavelength × angle map of R, T or A (s, p or mean) as a heat map
//! ([`crate::analysis::map::rt_map`]), with a labelled colour scale and a readout of the
//! value under the pointer. The wavelengths follow the spectrum view's range; a map whose
//! estimate is large runs as a job with progress and Cancel (the rows finished are kept).

use egui::{Color32, ColorImage, RichText, TextureHandle, TextureOptions};
use egui_plot::{Plot, PlotImage, PlotPoint};

use crate::analysis::map::{MapProgress, MapStop, RtMap, SECONDS_PER_LAYER_POINT, rt_map};
use crate::analysis::{angles_deg, wavelengths_nm};
use crate::design::{Design, Pol, Quantity};
use crate::export::heatmap::ramp_colour;
use crate::gui::plots::{ViewSettings, number_ui};

use super::cache::{INLINE_LIMIT, Progress, ViewCache};
use super::{Runner, Stamp, Subject, busy_ui, shown, warnings_ui};

/// The map's settings besides the wavelength range (which is the spectrum view's).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapSettings {
    /// R, T or A.
    pub quantity: Quantity,
    /// s, p or mean.
    pub pol: Pol,
    /// Number of wavelength columns over the range.
    pub columns: usize,
    /// First angle, degrees.
    pub from_deg: f64,
    /// Last angle, degrees.
    pub to_deg: f64,
    /// Angle step, degrees.
    pub step_deg: f64,
    /// Colour scale over the map's own lowest to highest value, not 0–100 %.
    pub fit_scale: bool,
}

impl Default for MapSettings {
    fn default() -> Self {
        Self {
            quantity: Quantity::R,
            pol: Pol::Mean,
            columns: 201,
            from_deg: 0.0,
            to_deg: 80.0,
            step_deg: 1.0,
            fit_scale: false,
        }
    }
}

impl MapSettings {
    /// The wavelength step over `from_nm`–`to_nm` that gives [`MapSettings::columns`].
    #[must_use]
    pub fn step_nm(&self, from_nm: f64, to_nm: f64) -> f64 {
        (to_nm - from_nm) / (self.columns.max(2) - 1) as f64
    }
}

/// Computes the map of `design` over `from_nm`–`to_nm` with `s`, reporting each row to
/// `progress` (which may stop it).
///
/// # Errors
/// The design's or the library's message.
pub fn compute(
    design: &Design,
    (from_nm, to_nm): (f64, f64),
    s: &MapSettings,
    progress: Progress<'_, MapProgress>,
) -> Result<RtMap, String> {
    let r = design.resolve().map_err(|e| e.to_string())?;
    let wl = wavelengths_nm(from_nm, to_nm, s.step_nm(from_nm, to_nm))
        .map_err(|e| format!("wavelength range: {e}"))?;
    let angles =
        angles_deg(s.from_deg, s.to_deg, s.step_deg).map_err(|e| format!("angles: {e}"))?;
    rt_map(&r, &wl, &angles, s.quantity, s.pol, progress).map_err(|e| e.to_string())
}

/// Tick values of a colour scale from `lo` to `hi`: round steps of 1, 2, 2.5 or 5 × 10ⁿ,
/// at most `max_ticks` of them, all inside the range.
#[must_use]
pub fn scale_ticks(lo: f64, hi: f64, max_ticks: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite() && hi > lo) || max_ticks < 2 {
        return Vec::new();
    }
    let raw = (hi - lo) / (max_ticks - 1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .into_iter()
        .map(|m| m * mag)
        .find(|&s| s >= raw * (1.0 - 1e-9))
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil();
    let last = (hi / step).floor();
    let mut out = Vec::new();
    let mut k = first;
    while k <= last + 1e-9 {
        // Multiples of the step, rounded to its decimals: 0.6, not 0.6000000000000001.
        let scale = 10f64.powi(i32::from(decimals(step)));
        out.push((k * step * scale).round() / scale + 0.0);
        k += 1.0;
    }
    out
}

/// How many decimals write a multiple of `step` exactly (at most 9).
fn decimals(step: f64) -> u8 {
    (0u8..10)
        .find(|&d| {
            let x = step * 10f64.powi(i32::from(d));
            (x - x.round()).abs() < 1e-6 * x.abs().max(1.0)
        })
        .unwrap_or(9)
}

/// A tick's text with as many decimals as the step needs.
#[must_use]
pub fn tick_text(v: f64, step: f64) -> String {
    let decimals = usize::from(decimals(step));
    format!("{v:.decimals$}")
}

type Key = (Stamp, [u64; 2], MapSettingsKey);

/// [`MapSettings`] with its numbers as bits, for comparing keys exactly.
type MapSettingsKey = (Quantity, Pol, usize, [u64; 3]);

fn settings_key(s: &MapSettings) -> MapSettingsKey {
    (
        s.quantity,
        s.pol,
        s.columns,
        [
            s.from_deg.to_bits(),
            s.to_deg.to_bits(),
            s.step_deg.to_bits(),
        ],
    )
}

/// The map view: its settings, its cached map and the picture of it.
pub struct MapView {
    /// The settings.
    pub settings: MapSettings,
    cache: ViewCache<Key, RtMap, MapProgress>,
    texture: Option<((u64, bool), TextureHandle)>,
    /// The readout under the pointer at the last frame: (λ nm, angle °, value %).
    pub readout: Option<(f64, f64, f64)>,
}

impl Default for MapView {
    fn default() -> Self {
        Self {
            settings: MapSettings::default(),
            cache: ViewCache::new("map-view"),
            texture: None,
            readout: None,
        }
    }
}

/// The value of `m` nearest (`wavelength_nm`, `aoi_deg`), if the point lies on the map:
/// (λ, angle, value as a fraction).
#[must_use]
pub fn value_near(m: &RtMap, wavelength_nm: f64, aoi_deg: f64) -> Option<(f64, f64, f64)> {
    let nearest = |v: &[f64], x: f64| -> Option<usize> {
        let half = match v {
            [a, b, ..] => 0.5 * (b - a).abs(),
            _ => 0.5,
        };
        let (i, d) = v
            .iter()
            .enumerate()
            .map(|(i, &c)| (i, (c - x).abs()))
            .min_by(|a, b| a.1.total_cmp(&b.1))?;
        (d <= half * (1.0 + 1e-9)).then_some(i)
    };
    let c = nearest(&m.wavelength_nm, wavelength_nm)?;
    let r = nearest(&m.aoi_deg, aoi_deg)?;
    Some((m.wavelength_nm[c], m.aoi_deg[r], m.value(r, c)?))
}

/// Cell edges of a grid: (first edge, last edge).
fn extent(c: &[f64]) -> (f64, f64) {
    match c {
        [] => (0.0, 1.0),
        [only] => (only - 0.5, only + 0.5),
        [a, b, ..] => {
            let (y, z) = (c[c.len() - 2], c[c.len() - 1]);
            (a - 0.5 * (b - a), z + 0.5 * (z - y))
        }
    }
}

/// The colour scale's span in percent: 0–100, or the finite values' own span.
#[must_use]
pub fn scale_span(m: &RtMap, fit: bool) -> (f64, f64) {
    if !fit {
        return (0.0, 100.0);
    }
    let (lo, hi) = m
        .values
        .iter()
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(100.0 * v), b.max(100.0 * v))
        });
    if lo.is_finite() && hi > lo {
        (lo, hi)
    } else if lo.is_finite() {
        (lo - 0.5, lo + 0.5)
    } else {
        (0.0, 100.0)
    }
}

/// The map's picture: one pixel per value, the highest angle on top, coloured over `span`
/// (percent).
fn image(m: &RtMap, (lo, hi): (f64, f64)) -> ColorImage {
    let (w, h) = (m.wavelength_nm.len(), m.aoi_deg.len());
    let mut pixels = Vec::with_capacity(w * h);
    for row in (0..h).rev() {
        for &v in m.row(row) {
            let (r, g, b) = ramp_colour((100.0 * v - lo) / (hi - lo));
            pixels.push(Color32::from_rgb(r, g, b));
        }
    }
    ColorImage::new([w, h], pixels)
}

impl MapView {
    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.cache.busy()
    }

    /// The result on show.
    #[must_use]
    pub fn result(&self) -> Option<&Result<RtMap, String>> {
        self.cache.result()
    }

    fn controls_ui(&mut self, ui: &mut egui::Ui) {
        let s = &mut self.settings;
        ui.horizontal_wrapped(|ui| {
            for q in [Quantity::R, Quantity::T, Quantity::A] {
                ui.selectable_value(&mut s.quantity, q, q.symbol());
            }
            ui.separator();
            ui.selectable_value(&mut s.pol, Pol::S, "s");
            ui.selectable_value(&mut s.pol, Pol::P, "p");
            ui.selectable_value(&mut s.pol, Pol::Mean, "mean");
            ui.separator();
            let l = ui.label("wavelength columns");
            ui.add(egui::DragValue::new(&mut s.columns).range(2..=5001))
                .labelled_by(l.id);
            ui.separator();
            number_ui(ui, "angles from", &mut s.from_deg, 0.0..=89.9, 0.5, "°");
            number_ui(ui, "to", &mut s.to_deg, 0.0..=89.9, 0.5, "°");
            number_ui(ui, "step", &mut s.step_deg, 0.01..=45.0, 0.05, "°");
            ui.separator();
            ui.checkbox(&mut s.fit_scale, "scale to the data")
                .on_hover_text("colour scale from the map's lowest to its highest value");
        });
    }

    pub(super) fn ui(
        &mut self,
        ui: &mut egui::Ui,
        subject: Subject<'_>,
        view: &ViewSettings,
        run: &Runner,
    ) {
        self.controls_ui(ui);
        let s = self.settings;
        let range = (view.from_nm, view.to_nm);
        ui.label(
            RichText::new(format!(
                "light from the front, wavelengths over the spectrum view's range ({} to {} nm)",
                range.0, range.1
            ))
            .weak(),
        );
        let key = (
            subject.stamp(),
            [range.0.to_bits(), range.1.to_bits()],
            settings_key(&s),
        );
        // Estimated single-core time; a map above a frame's budget runs as a job.
        let rows = ((s.to_deg - s.from_deg) / s.step_deg).abs().floor() + 1.0;
        let layers = subject.design.layers.len().max(1) as f64;
        let seconds = rows * s.columns as f64 * layers * SECONDS_PER_LAYER_POINT;
        let heavy = !seconds.is_finite() || seconds > INLINE_LIMIT.as_secs_f64();
        let design = subject.design;
        self.cache.update(&key, heavy, run, || {
            let d = design.clone();
            move |p: Progress<'_, MapProgress>| compute(&d, range, &s, p)
        });
        if self.cache.busy() {
            ui.horizontal(|ui| {
                let (done, total) = self.cache.progress().map_or((0, 0), |p| (p.done, p.total));
                let frac = if total > 0 {
                    done as f32 / total as f32
                } else {
                    0.0
                };
                ui.add(
                    egui::ProgressBar::new(frac)
                        .desired_width(240.0)
                        .text(format!("computing the map: {done} of {total} angles")),
                );
                if ui.button("Cancel").clicked() {
                    self.cache.cancel();
                }
            });
        } else {
            busy_ui(ui, false);
        }
        let Some(m) = shown(ui, self.cache.result()) else {
            return;
        };
        warnings_ui(ui, &m.warnings);
        let mut again = false;
        if m.stop == MapStop::Cancelled {
            ui.horizontal(|ui| {
                ui.colored_label(
                    ui.visuals().warn_fg_color,
                    format!(
                        "stopped: {} of the angles computed (up to {}°)",
                        m.aoi_deg.len(),
                        m.aoi_deg.last().copied().unwrap_or(f64::NAN)
                    ),
                );
                again = ui.button("Compute again").clicked();
            });
        }
        let span = scale_span(m, s.fit_scale);
        let picture = (self.cache.generation(), s.fit_scale);
        if self.texture.as_ref().is_none_or(|(g, _)| *g != picture) {
            let t = ui
                .ctx()
                .load_texture("rt-map", image(m, span), TextureOptions::NEAREST);
            self.texture = Some((picture, t));
        }
        let readout = self.readout.map_or_else(
            || "point at the map to read a value".to_owned(),
            |(wl, a, v)| {
                format!(
                    "λ {wl:.2} nm, angle {a:.2}°, {}_{} {v:.3} %",
                    m.quantity.symbol(),
                    pol_word(m.pol)
                )
            },
        );
        ui.label(RichText::new(readout).monospace());
        let tex = self.texture.as_ref().map(|(_, t)| t.id());
        let mut hovered = None;
        let h = ui.available_height().max(160.0);
        ui.horizontal(|ui| {
            let w = (ui.available_width() - 96.0).max(120.0);
            ui.allocate_ui(egui::vec2(w, h), |ui| {
                hovered = plot_ui(ui, m, tex);
            });
            scale_ui(ui, m.quantity, span, h);
        });
        self.readout = hovered.map(|(wl, a, v)| (wl, a, 100.0 * v));
        if again {
            self.cache.invalidate();
            ui.ctx().request_repaint();
        }
    }
}

fn pol_word(p: Pol) -> &'static str {
    match p {
        Pol::S => "s",
        Pol::P => "p",
        Pol::Mean => "mean",
    }
}

/// The heat map; returns the value under the pointer.
fn plot_ui(ui: &mut egui::Ui, m: &RtMap, tex: Option<egui::TextureId>) -> Option<(f64, f64, f64)> {
    let (x0, x1) = extent(&m.wavelength_nm);
    let (y0, y1) = extent(&m.aoi_deg);
    Plot::new("map-plot")
        .x_axis_label("wavelength (nm)")
        .y_axis_label("angle of incidence (°)")
        .include_x(x0)
        .include_x(x1)
        .include_y(y0)
        .include_y(y1)
        .show_grid(false)
        .label_formatter(|_| None)
        .show(ui, |plot_ui| {
            if let Some(t) = tex {
                plot_ui.image(PlotImage::new(
                    "map",
                    t,
                    PlotPoint::new(0.5 * (x0 + x1), 0.5 * (y0 + y1)),
                    egui::vec2((x1 - x0) as f32, (y1 - y0) as f32),
                ));
            }
            plot_ui
                .pointer_coordinate()
                .and_then(|p| value_near(m, p.x, p.y))
        })
        .inner
}

/// The colour scale beside the map: the ramp from `span`'s low end (bottom) to its high end
/// (top), in percent, labelled.
fn scale_ui(ui: &mut egui::Ui, q: Quantity, (lo, hi): (f64, f64), height: f32) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(88.0, height), egui::Sense::hover());
    let painter = ui.painter_at(rect);
    let bar = egui::Rect::from_min_max(
        egui::pos2(rect.min.x + 6.0, rect.min.y + 24.0),
        egui::pos2(rect.min.x + 24.0, rect.max.y - 40.0),
    );
    let steps = 64;
    for i in 0..steps {
        let t0 = i as f32 / steps as f32;
        let t1 = (i + 1) as f32 / steps as f32;
        let (r, g, b) = ramp_colour(f64::from(t0 + 0.5 / steps as f32));
        let y_top = bar.max.y - t1 * bar.height();
        let y_bottom = bar.max.y - t0 * bar.height();
        painter.rect_filled(
            egui::Rect::from_min_max(
                egui::pos2(bar.min.x, y_top),
                egui::pos2(bar.max.x, y_bottom),
            ),
            0.0,
            Color32::from_rgb(r, g, b),
        );
    }
    let text = ui.visuals().text_color();
    let font = egui::FontId::proportional(11.0);
    painter.text(
        egui::pos2(rect.min.x + 4.0, rect.min.y + 4.0),
        egui::Align2::LEFT_TOP,
        format!("{} (%)", q.symbol()),
        font.clone(),
        text,
    );
    let ticks = scale_ticks(lo, hi, 6);
    let step = match ticks.as_slice() {
        [a, b, ..] => b - a,
        _ => 1.0,
    };
    for v in ticks {
        let y = bar.max.y - ((v - lo) / (hi - lo)) as f32 * bar.height();
        painter.line_segment(
            [egui::pos2(bar.max.x, y), egui::pos2(bar.max.x + 4.0, y)],
            egui::Stroke::new(1.0, text),
        );
        painter.text(
            egui::pos2(bar.max.x + 7.0, y),
            egui::Align2::LEFT_CENTER,
            tick_text(v, step),
            font.clone(),
            text,
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scale_ticks_are_round_and_inside_the_range() {
        assert_eq!(
            scale_ticks(0.0, 100.0, 6),
            vec![0.0, 20.0, 40.0, 60.0, 80.0, 100.0]
        );
        assert_eq!(scale_ticks(0.0, 1.0, 5), vec![0.0, 0.25, 0.5, 0.75, 1.0]);
        let t = scale_ticks(0.13, 0.91, 5);
        assert_eq!(t, vec![0.2, 0.4, 0.6, 0.8], "{t:?}");
        assert!(scale_ticks(1.0, 1.0, 5).is_empty(), "no span, no ticks");
        assert!(scale_ticks(f64::NAN, 1.0, 5).is_empty(), "NaN is safe");
        let many = scale_ticks(-3.7, 1234.5, 8);
        assert!(many.len() <= 8 && many.len() >= 4, "{many:?}");
        assert!(many.iter().all(|v| (-3.7..=1234.5).contains(v)), "{many:?}");
    }

    #[test]
    fn tick_texts_carry_the_decimals_the_step_needs() {
        assert_eq!(tick_text(40.0, 20.0), "40");
        assert_eq!(tick_text(0.4, 0.2), "0.4");
        assert_eq!(tick_text(0.75, 0.25), "0.75");
        assert_eq!(tick_text(0.05, 0.05), "0.05");
    }

    #[test]
    fn the_readout_picks_the_nearest_cell_and_nothing_off_the_map() {
        let m = RtMap {
            wavelength_nm: vec![500.0, 510.0, 520.0],
            aoi_deg: vec![0.0, 10.0],
            quantity: Quantity::R,
            pol: Pol::Mean,
            values: vec![0.1, 0.2, 0.3, 0.4, 0.5, 0.6],
            stop: MapStop::Done,
            warnings: Vec::new(),
        };
        assert_eq!(value_near(&m, 511.0, 8.0), Some((510.0, 10.0, 0.5)));
        assert_eq!(value_near(&m, 496.0, -4.0), Some((500.0, 0.0, 0.1)));
        assert_eq!(value_near(&m, 530.0, 0.0), None, "right of the map");
        assert_eq!(value_near(&m, 500.0, 20.0), None, "above the map");
        assert_eq!(scale_span(&m, false), (0.0, 100.0), "fixed 0–100 %");
        let (lo, hi) = scale_span(&m, true);
        assert!(
            (lo - 10.0).abs() < 1e-12 && (hi - 60.0).abs() < 1e-12,
            "{lo} {hi}"
        );
        let flat = RtMap {
            values: vec![0.04; 6],
            ..m
        };
        let (lo, hi) = scale_span(&flat, true);
        assert!(
            hi > lo && lo < 4.0 && hi > 4.0,
            "a flat map still has a span: {lo} {hi}"
        );
    }
}
