//! The monitoring tab: the signal the operator sees against deposited thickness, layer
//! boundaries and turning points marked, and the per-layer table (start, end, turning
//! points).

use egui::{DragValue, RichText};
use egui_plot::{Legend, Line, LineStyle, Plot, PlotPoint, PlotPoints, Points, VLine};

use super::Active;
use crate::analysis::monitor::{MonitorCurve, MonitorSettings, monitor};
use crate::design::{Pol, Quantity};
use crate::gui::designs::DesignId;

type Key = (DesignId, u64, u64, u64, Quantity);

/// The monitoring tab's settings and cached curve.
pub struct MonitorView {
    /// Monitor wavelength (nm); `None` until set from the design's reference wavelength.
    pub wavelength_nm: Option<f64>,
    /// Row spacing (nm).
    pub step_nm: f64,
    /// T or R.
    pub quantity: Quantity,
    cached: Option<(Key, Result<MonitorCurve, String>)>,
}

impl Default for MonitorView {
    fn default() -> Self {
        Self {
            wavelength_nm: None,
            step_nm: MonitorSettings::default().step_nm,
            quantity: Quantity::T,
            cached: None,
        }
    }
}

impl MonitorView {
    /// The curve for `active` (computed once per design revision and settings).
    pub fn curve(&mut self, active: &Active<'_>) -> &Result<MonitorCurve, String> {
        let wl = *self.wavelength_nm.get_or_insert(active.design.reference_nm);
        let key = (
            active.id,
            active.revision,
            wl.to_bits(),
            self.step_nm.to_bits(),
            self.quantity,
        );
        if self.cached.as_ref().is_some_and(|(k, _)| *k != key) {
            self.cached = None;
        }
        let settings = MonitorSettings {
            wavelength_nm: wl,
            quantity: self.quantity,
            pol: Pol::Mean,
            step_nm: self.step_nm,
            ..MonitorSettings::default()
        };
        &self
            .cached
            .get_or_insert_with(|| {
                let r = active
                    .design
                    .resolve()
                    .map_err(|e| e.to_string())
                    .and_then(|d| monitor(&d, &settings).map_err(|e| e.to_string()));
                (key, r)
            })
            .1
    }

    /// The tab's contents.
    pub fn ui(&mut self, ui: &mut egui::Ui, active: &Active<'_>) {
        let reference = active.design.reference_nm;
        let wl = self.wavelength_nm.get_or_insert(reference);
        ui.horizontal_wrapped(|ui| {
            let l = ui.label("monitor wavelength");
            ui.add(DragValue::new(wl).speed(1.0).suffix(" nm"))
                .labelled_by(l.id);
            let l = ui.label("row step");
            ui.add(DragValue::new(&mut self.step_nm).speed(0.1).suffix(" nm"))
                .labelled_by(l.id);
            ui.separator();
            ui.radio_value(&mut self.quantity, Quantity::T, "T");
            ui.radio_value(&mut self.quantity, Quantity::R, "R");
        });
        let curve = match self.curve(active) {
            Ok(c) => c.clone(),
            Err(e) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
                return;
            }
        };
        ui.label(
            RichText::new(format!(
                "{} (mean of s and p) at {} nm, normal incidence, as each layer grows from the \
                 substrate; dashed lines are layer ends, dots turning points",
                curve.settings.quantity.describe(),
                curve.settings.wavelength_nm
            ))
            .weak(),
        );
        monitor_plot(ui, &curve);
        egui::Grid::new("monitor table")
            .striped(true)
            .num_columns(6)
            .show(ui, |ui| {
                for h in [
                    "layer",
                    "start nm",
                    "end nm",
                    "start %",
                    "end %",
                    "turning points nm",
                ] {
                    ui.strong(h);
                }
                ui.end_row();
                for l in &curve.layers {
                    ui.label(format!("{} {}", l.layer, l.material));
                    ui.label(format!("{:.2}", l.start_nm));
                    ui.label(format!("{:.2}", l.end_nm));
                    ui.label(format!("{:.3}", 100.0 * l.start_signal));
                    ui.label(format!("{:.3}", 100.0 * l.end_signal));
                    let tp: Vec<String> = l
                        .turning_points_nm
                        .iter()
                        .map(|t| format!("{t:.2}"))
                        .collect();
                    ui.label(if tp.is_empty() {
                        "none".to_owned()
                    } else {
                        tp.join(", ")
                    });
                    ui.end_row();
                }
            });
    }
}

fn monitor_plot(ui: &mut egui::Ui, c: &MonitorCurve) {
    let line: Vec<PlotPoint> = c
        .deposited_nm
        .iter()
        .zip(&c.signal)
        .map(|(&x, &y)| PlotPoint::new(x, 100.0 * y))
        .collect();
    let turning: Vec<PlotPoint> = c
        .layers
        .iter()
        .flat_map(|l| l.turning_points_nm.iter())
        .map(|&t| {
            let i = c
                .deposited_nm
                .partition_point(|&x| x < t)
                .min(c.signal.len().saturating_sub(1));
            PlotPoint::new(t, 100.0 * c.signal.get(i).copied().unwrap_or(f64::NAN))
        })
        .collect();
    let colour = if c.settings.quantity == Quantity::R {
        crate::gui::theme::R
    } else {
        crate::gui::theme::T
    };
    Plot::new("monitor curve")
        .legend(Legend::default())
        .height(300.0)
        .x_axis_label("deposited thickness (nm)")
        .y_axis_label(format!("{} (%)", c.settings.quantity.symbol()))
        .show(ui, |plot| {
            for l in &c.layers {
                plot.vline(
                    VLine::new("layer ends", l.end_nm)
                        .color(crate::gui::theme::TARGET)
                        .style(LineStyle::dashed_loose()),
                );
            }
            plot.line(
                Line::new("signal", PlotPoints::Borrowed(&line))
                    .color(colour)
                    .width(1.5),
            );
            plot.points(
                Points::new("turning points", PlotPoints::Borrowed(&turning))
                    .color(crate::gui::theme::FAIL)
                    .radius(3.0),
            );
        });
}
