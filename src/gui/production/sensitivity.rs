//! The sensitivity tab: one bar per layer, most sensitive first — the layers the operator must
//! hit most precisely. Of the merit when the design has targets (and that is chosen), else
//! the spectrum's RMS change over the spectrum view's range.

use egui::{ProgressBar, RichText};

use super::Active;
use crate::analysis::sensitivity::{LayerSensitivity, rank, sensitivity};
use crate::design::{Pol, Quantity};
use crate::gui::designs::DesignId;
use crate::gui::plots::ViewSettings;
use crate::gui::stack::LayerBars;
use crate::optimize::merit_sensitivity;

/// Wavelengths of the spectrum's RMS over the view's range.
const POINTS: usize = 301;

type Key = (DesignId, u64, u64, u64, u64, Quantity, bool);

/// The sensitivity tab's settings and cached result.
pub struct SensitivityView {
    /// R or T (for the spectrum's sensitivity).
    pub quantity: Quantity,
    /// When the design has targets: show the merit's sensitivity (else the spectrum's).
    pub of_merit: bool,
    cached: Option<(Key, Result<Shown, String>)>,
}

/// What the tab shows.
#[derive(Clone, Debug, PartialEq)]
pub struct Shown {
    /// What the numbers are, in words.
    pub what: String,
    /// Per layer, layer order.
    pub layers: Vec<LayerSensitivity>,
}

impl Default for SensitivityView {
    fn default() -> Self {
        Self {
            quantity: Quantity::R,
            of_merit: true,
            cached: None,
        }
    }
}

impl SensitivityView {
    /// The sensitivities for `active` (computed once per design revision and settings).
    pub fn shown(&mut self, active: &Active<'_>, view: &ViewSettings) -> &Result<Shown, String> {
        let merit = self.of_merit && !active.design.targets.is_empty();
        let key = (
            active.id,
            active.revision,
            view.from_nm.to_bits(),
            view.to_nm.to_bits(),
            view.aoi_deg.to_bits(),
            self.quantity,
            merit,
        );
        if self.cached.as_ref().is_some_and(|(k, _)| *k != key) {
            self.cached = None;
        }
        let quantity = self.quantity;
        &self
            .cached
            .get_or_insert_with(|| (key, compute(active, view, quantity, merit)))
            .1
    }

    /// The figures for the bar column beside the layer table: the tab's own (same settings,
    /// same cache). While `recompute` is false (a thickness is being dragged) the last figures
    /// for this design stay up, marked stale, rather than recomputing on every frame.
    pub fn bars(
        &mut self,
        active: &Active<'_>,
        view: &ViewSettings,
        recompute: bool,
    ) -> Option<Result<LayerBars, String>> {
        let bars = |shown: &Result<Shown, String>, stale: bool| {
            shown.as_ref().map_err(Clone::clone).map(|s| LayerBars {
                values: s.layers.iter().map(|l| l.sensitivity).collect(),
                what: s.what.clone(),
                stale,
            })
        };
        if !recompute {
            let (key, shown) = self.cached.as_ref()?;
            let current = key.0 == active.id && key.1 == active.revision;
            return (key.0 == active.id).then(|| bars(shown, !current));
        }
        Some(bars(self.shown(active, view), false))
    }

    /// The tab's contents.
    pub fn ui(&mut self, ui: &mut egui::Ui, active: &Active<'_>, view: &ViewSettings) {
        let has_targets = !active.design.targets.is_empty();
        ui.horizontal_wrapped(|ui| {
            if has_targets {
                ui.radio_value(&mut self.of_merit, true, "of the merit");
                ui.radio_value(&mut self.of_merit, false, "of the spectrum");
                ui.separator();
            }
            if !(has_targets && self.of_merit) {
                ui.radio_value(&mut self.quantity, Quantity::R, "R");
                ui.radio_value(&mut self.quantity, Quantity::T, "T");
            }
        });
        let shown = match self.shown(active, view) {
            Ok(s) => s.clone(),
            Err(e) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
                return;
            }
        };
        ui.label(RichText::new(&shown.what).weak());
        let ranked = rank(&shown.layers);
        let top = ranked.first().map_or(0.0, |l| l.sensitivity);
        egui::Grid::new("sensitivity bars")
            .striped(true)
            .num_columns(4)
            .show(ui, |ui| {
                ui.strong("layer");
                ui.strong("material, nm");
                ui.strong("change per 1 %");
                ui.strong("");
                ui.end_row();
                for l in ranked {
                    ui.label(format!("layer {}", l.layer));
                    ui.label(format!("{} {:.2} nm", l.material, l.nm));
                    ui.label(format!("{:.4} %", 100.0 * l.sensitivity));
                    let share = if top > 0.0 { l.sensitivity / top } else { 0.0 };
                    ui.add(ProgressBar::new(share as f32).desired_width(220.0));
                    ui.end_row();
                }
            });
    }
}

fn compute(
    active: &Active<'_>,
    view: &ViewSettings,
    quantity: Quantity,
    merit: bool,
) -> Result<Shown, String> {
    if merit {
        let s = merit_sensitivity(active.design).map_err(|e| e.to_string())?;
        return Ok(Shown {
            what: format!(
                "sensitivity of the merit (now {:.4} %): the larger change of merit, in \
                 percentage points, when one layer is 1 % thinner or thicker",
                100.0 * s.merit
            ),
            layers: s.layers,
        });
    }
    let (from, to) = (view.from_nm, view.to_nm);
    let wl: Vec<f64> = (0..POINTS)
        .map(|i| from + (to - from) * i as f64 / (POINTS - 1) as f64)
        .collect();
    let resolved = active.design.resolve().map_err(|e| e.to_string())?;
    let s = sensitivity(&resolved, &wl, view.aoi_deg, quantity, Pol::Mean)
        .map_err(|e| e.to_string())?;
    Ok(Shown {
        what: format!(
            "sensitivity of the spectrum: RMS change of {} (mean of s and p) over {from}–{to} nm \
             at {}°, in percentage points, per 1 % change of one layer's thickness",
            quantity.describe(),
            view.aoi_deg
        ),
        layers: s.layers,
    })
}
