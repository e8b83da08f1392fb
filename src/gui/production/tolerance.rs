//! The tolerance tab: the Monte Carlo envelope over wavelength (nominal curve and percentile
//! band) as a job with progress and Cancel, and the yield when the design has targets.

use egui::{DragValue, ProgressBar, RichText};
use egui_plot::{Legend, Line, LineStyle, Plot, PlotPoint, PlotPoints};

use super::{Active, stale_note};
use crate::analysis::tolerance::{
    DEFAULT_INDEX_PCT, DEFAULT_SYSTEMATIC_PCT, DEFAULT_THICKNESS_PCT, Envelope, ToleranceProgress,
    ToleranceSettings, ToleranceStop,
};
use crate::design::Quantity;
use crate::gui::designs::DesignId;
use crate::gui::jobs::{Job, JobEnd};
use crate::gui::plots::ViewSettings;
use crate::optimize::{YieldError, tolerance_with_yield};

/// Wavelengths of the envelope over the spectrum view's range.
pub const DEFAULT_POINTS: usize = 301;

/// A finished envelope and what it was computed for.
pub struct ToleranceResult {
    /// The design.
    pub design: DesignId,
    /// Its revision then.
    pub revision: u64,
    /// The quantity it spreads.
    pub quantity: Quantity,
    /// The envelope.
    pub envelope: Envelope,
}

/// The tolerance tab's settings, run and result.
pub struct ToleranceView {
    /// Monte Carlo runs (a signed number, so a bad entry can be shown as such).
    pub runs: i64,
    /// Seed of the draws.
    pub seed: u64,
    /// σ of each layer's random thickness error, %.
    pub thickness_pct: f64,
    /// σ of the thickness error shared by all layers, %.
    pub systematic_pct: f64,
    /// σ of each material's index error, %.
    pub index_pct: f64,
    /// R or T.
    pub quantity: Quantity,
    /// Wavelengths over the spectrum view's range.
    pub points: usize,
    job: Option<(
        DesignId,
        Quantity,
        Job<ToleranceProgress, Envelope, YieldError>,
    )>,
    /// The last envelope.
    pub result: Option<ToleranceResult>,
    /// Why the last run could not run.
    pub error: Option<String>,
}

impl Default for ToleranceView {
    fn default() -> Self {
        let s = ToleranceSettings::default();
        Self {
            runs: i64::try_from(s.runs).unwrap_or(1000),
            seed: s.seed,
            thickness_pct: DEFAULT_THICKNESS_PCT,
            systematic_pct: DEFAULT_SYSTEMATIC_PCT,
            index_pct: DEFAULT_INDEX_PCT,
            quantity: Quantity::R,
            points: DEFAULT_POINTS,
            job: None,
            result: None,
            error: None,
        }
    }
}

impl ToleranceView {
    /// Whether a run is going on.
    #[must_use]
    pub fn running(&self) -> bool {
        self.job.is_some()
    }

    /// Takes in the run's end, if it has come.
    pub fn poll(&mut self) {
        let Some((id, quantity, job)) = &mut self.job else {
            return;
        };
        let Some(end) = job.poll() else {
            return;
        };
        let (design, quantity, revision) = (*id, *quantity, job.tag());
        self.job = None;
        match end {
            JobEnd::Done(envelope) => {
                self.result = Some(ToleranceResult {
                    design,
                    revision,
                    quantity,
                    envelope,
                });
            }
            JobEnd::Cancelled => self.error = Some("cancelled".into()),
            JobEnd::Failed(e) => self.error = Some(e.to_string()),
        }
    }

    /// Starts a run for `active` over the view's wavelength range.
    pub fn start(
        &mut self,
        active: &Active<'_>,
        view: &ViewSettings,
        wake: crate::gui::jobs::Waker,
    ) {
        self.error = None;
        let Ok(runs) = usize::try_from(self.runs) else {
            self.error = Some(format!("{} runs: give at least 1", self.runs));
            return;
        };
        let settings = ToleranceSettings {
            runs,
            seed: self.seed,
            thickness_pct: self.thickness_pct,
            systematic_pct: self.systematic_pct,
            index_pct: self.index_pct,
            quantity: self.quantity,
            aoi_deg: view.aoi_deg,
            ..ToleranceSettings::default()
        };
        let n = self.points.max(2);
        let (from, to) = (view.from_nm, view.to_nm);
        let wl: Vec<f64> = (0..n)
            .map(|i| from + (to - from) * i as f64 / (n - 1) as f64)
            .collect();
        let design = active.design.clone();
        let work = move |r: &mut crate::gui::jobs::Reporter<ToleranceProgress>| {
            tolerance_with_yield(&design, &wl, &settings, |p| r.progress(*p))
        };
        match Job::spawn("tolerance", active.revision, wake, work) {
            Ok(job) => self.job = Some((active.id, self.quantity, job)),
            Err(e) => self.error = Some(format!("cannot start the tolerance run: {e}")),
        }
    }

    /// The tab's contents.
    pub fn ui(&mut self, ui: &mut egui::Ui, active: &Active<'_>, view: &ViewSettings) {
        ui.horizontal_wrapped(|ui| {
            let l = ui.label("runs");
            ui.add(DragValue::new(&mut self.runs).speed(10.0))
                .labelled_by(l.id);
            let l = ui.label("seed");
            ui.add(DragValue::new(&mut self.seed)).labelled_by(l.id);
            ui.separator();
            ui.radio_value(&mut self.quantity, Quantity::R, "R");
            ui.radio_value(&mut self.quantity, Quantity::T, "T");
        });
        ui.horizontal_wrapped(|ui| {
            for (label, value, default) in [
                (
                    "σ thickness %",
                    &mut self.thickness_pct,
                    DEFAULT_THICKNESS_PCT,
                ),
                (
                    "σ systematic %",
                    &mut self.systematic_pct,
                    DEFAULT_SYSTEMATIC_PCT,
                ),
                ("σ index %", &mut self.index_pct, DEFAULT_INDEX_PCT),
            ] {
                let l = ui.label(label);
                ui.add(DragValue::new(value).speed(0.05).max_decimals(3))
                    .labelled_by(l.id)
                    .on_hover_text(format!("default {default} %"));
            }
        });
        ui.label(
            RichText::new(format!(
                "{} wavelengths over {}–{} nm at {}° (the spectrum view's range and angle); \
                 defaults: 1000 runs, σ thickness {DEFAULT_THICKNESS_PCT} %, systematic \
                 {DEFAULT_SYSTEMATIC_PCT} %, index {DEFAULT_INDEX_PCT} %",
                self.points, view.from_nm, view.to_nm, view.aoi_deg
            ))
            .weak(),
        );
        ui.horizontal(|ui| {
            if ui
                .add_enabled(!self.running(), egui::Button::new("Run tolerances"))
                .clicked()
            {
                self.start(active, view, crate::gui::optimize::waker(ui.ctx()));
            }
            if let Some((_, _, job)) = &self.job {
                if ui.button("Cancel").clicked() {
                    job.cancel();
                }
                let (done, total) = job.latest().map_or((0, self.runs.max(1)), |p| {
                    (p.runs_done, i64::try_from(p.runs).unwrap_or(i64::MAX))
                });
                ui.add(
                    ProgressBar::new(done as f32 / total.max(1) as f32)
                        .text(format!("{done} of {total} runs")),
                );
            }
        });
        if let Some(e) = &self.error {
            ui.colored_label(ui.visuals().error_fg_color, e);
        }
        let Some(r) = &self.result else {
            ui.label(RichText::new("No envelope yet: press Run tolerances.").weak());
            return;
        };
        stale_note(ui, r.design, r.revision, active);
        let e = &r.envelope;
        let cancelled = if e.stop == ToleranceStop::Cancelled {
            " (cancelled: the runs done so far)"
        } else {
            ""
        };
        ui.label(format!("{} runs{cancelled}", e.runs_done));
        match (e.passed, e.yield_fraction()) {
            (Some(passed), Some(y)) => {
                ui.strong(format!(
                    "yield {:.1} %: {passed} of {} runs meet every target (merit 0)",
                    100.0 * y,
                    e.runs_done
                ));
            }
            _ => {
                ui.label(RichText::new("no targets: no yield").weak());
            }
        }
        for w in &e.warnings {
            ui.colored_label(ui.visuals().warn_fg_color, format!("warning: {w}"));
        }
        envelope_plot(ui, e, r.quantity);
    }
}

/// Nominal curve and the percentile lines, in percent.
fn envelope_plot(ui: &mut egui::Ui, e: &Envelope, quantity: Quantity) {
    let pts = |ys: &[f64]| -> Vec<PlotPoint> {
        e.wavelength_nm
            .iter()
            .zip(ys)
            .map(|(&x, &y)| PlotPoint::new(x, 100.0 * y))
            .collect()
    };
    let nominal = pts(&e.nominal);
    let bands: Vec<(String, Vec<PlotPoint>)> = e
        .percentiles
        .iter()
        .zip(&e.bands)
        .map(|(p, b)| (format!("{p} % of runs below"), pts(b)))
        .collect();
    Plot::new("tolerance envelope")
        .legend(Legend::default())
        .height(340.0)
        .x_axis_label("wavelength (nm)")
        .y_axis_label(format!("{} (%)", quantity.symbol()))
        .show(ui, |plot| {
            for (i, (name, b)) in bands.iter().enumerate() {
                let style = if i == 0 || i + 1 == bands.len() {
                    LineStyle::dashed_loose()
                } else {
                    LineStyle::dotted_dense()
                };
                plot.line(
                    Line::new(name.clone(), PlotPoints::Borrowed(b))
                        .color(crate::gui::theme::TARGET)
                        .style(style),
                );
            }
            plot.line(
                Line::new("nominal", PlotPoints::Borrowed(&nominal))
                    .color(if quantity == Quantity::T {
                        crate::gui::theme::T
                    } else {
                        crate::gui::theme::R
                    })
                    .width(2.0),
            );
        });
}
