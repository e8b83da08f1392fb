//! The fit tab: the design fitted to the measured curve loaded in the Measured-curve window,
//! as a job; measured, designed and fitted curves, RMS before and after, each layer's change,
//! and "Open fitted design as new design" (the design shown is never changed).

use egui::{DragValue, ProgressBar, RichText};
use egui_plot::{Legend, Line, Plot, PlotPoint, PlotPoints, Points};

use super::{Active, ProductionAction, stale_note};
use crate::design::Quantity;
use crate::gui::designs::DesignId;
use crate::gui::jobs::{Job, JobEnd};
use crate::gui::measured::{MEASURED_COLOUR, MeasuredState};
use crate::optimize::fit::{FitError, FitOutcome, FitProgress, FitSettings, FitStop, fit};

/// A finished fit and what it was computed for.
pub struct FitResult {
    /// The design.
    pub design: DesignId,
    /// Its revision then.
    pub revision: u64,
    /// The measured file's legend name.
    pub measured: String,
    /// The quantity fitted.
    pub quantity: Quantity,
    /// The result.
    pub outcome: FitOutcome,
}

/// A fit going on: for which design, which measured file and quantity.
struct Running {
    design: DesignId,
    measured: String,
    quantity: Quantity,
    job: Job<FitProgress, FitOutcome, FitError>,
}

/// The fit tab's settings, run and result.
#[derive(Default)]
pub struct FitView {
    /// Also fit a scale on each material's n.
    pub index_scale: bool,
    /// Angle of incidence of the measurement (degrees).
    pub aoi_deg: f64,
    job: Option<Running>,
    /// The last fit.
    pub result: Option<FitResult>,
    /// Why the last fit could not run.
    pub error: Option<String>,
}

impl FitView {
    /// Whether a fit is going on.
    #[must_use]
    pub fn running(&self) -> bool {
        self.job.is_some()
    }

    /// Takes in the fit's end, if it has come.
    pub fn poll(&mut self) {
        let Some(run) = &mut self.job else {
            return;
        };
        let Some(end) = run.job.poll() else {
            return;
        };
        let revision = run.job.tag();
        let Some(Running {
            design,
            measured,
            quantity,
            ..
        }) = self.job.take()
        else {
            return;
        };
        match end {
            JobEnd::Done(outcome) => {
                self.result = Some(FitResult {
                    design,
                    revision,
                    measured,
                    quantity,
                    outcome,
                });
            }
            JobEnd::Cancelled => self.error = Some("cancelled".into()),
            JobEnd::Failed(e) => self.error = Some(e.to_string()),
        }
    }

    fn start(
        &mut self,
        active: &Active<'_>,
        measured: &MeasuredState,
        wake: crate::gui::jobs::Waker,
    ) {
        self.error = None;
        let Some(loaded) = measured.loaded() else {
            self.error = Some("no measured curve: load one in the Measured curve window".into());
            return;
        };
        let settings = FitSettings {
            quantity: measured.quantity,
            aoi_deg: self.aoi_deg,
            index_scale: self.index_scale,
            ..FitSettings::default()
        };
        let (design, curve) = (active.design.clone(), loaded.curve.clone());
        let work = move |r: &mut crate::gui::jobs::Reporter<FitProgress>| {
            fit(&design, &curve, &settings, |p| r.progress(*p))
        };
        match Job::spawn("fit", active.revision, wake, work) {
            Ok(job) => {
                self.job = Some(Running {
                    design: active.id,
                    measured: loaded.label.clone(),
                    quantity: measured.quantity,
                    job,
                });
            }
            Err(e) => self.error = Some(format!("cannot start the fit: {e}")),
        }
    }

    /// The tab's contents.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        active: &Active<'_>,
        measured: &MeasuredState,
    ) -> Option<ProductionAction> {
        let mut action = None;
        match measured.loaded() {
            Some(l) => {
                let q = if measured.quantity == Quantity::R {
                    "R"
                } else {
                    "T"
                };
                ui.label(format!(
                    "{} ({} points, read as {q}; change that in the Measured curve window)",
                    l.label,
                    l.curve.wavelength_nm.len()
                ));
            }
            None => {
                ui.horizontal(|ui| {
                    ui.label("No measured curve loaded.");
                    if ui.button("Measured curve…").clicked() {
                        action = Some(ProductionAction::ShowMeasured);
                    }
                });
            }
        }
        ui.horizontal_wrapped(|ui| {
            ui.label("fit the unlocked thicknesses");
            ui.checkbox(
                &mut self.index_scale,
                "and a scale on each material's index",
            );
            ui.separator();
            let l = ui.label("angle of the measurement");
            ui.add(DragValue::new(&mut self.aoi_deg).speed(0.5).suffix("°"))
                .labelled_by(l.id);
        });
        ui.horizontal(|ui| {
            if ui
                .add_enabled(!self.running(), egui::Button::new("Fit"))
                .clicked()
            {
                self.start(active, measured, crate::gui::optimize::waker(ui.ctx()));
            }
            if let Some(run) = &self.job {
                if ui.button("Cancel").clicked() {
                    run.job.cancel();
                }
                let text = run.job.latest().map_or_else(
                    || "fitting: starting".to_owned(),
                    |p| {
                        format!(
                            "fitting: iteration {}, RMS {:.4} %",
                            p.iteration,
                            100.0 * p.rms
                        )
                    },
                );
                ui.add(ProgressBar::new(0.0).animate(true).text(text));
            }
        });
        if let Some(e) = &self.error {
            ui.colored_label(ui.visuals().error_fg_color, e);
        }
        if let Some(r) = &self.result
            && let Some(a) = result_ui(ui, r, active)
        {
            action = Some(a);
        }
        action
    }
}

/// The last fit: figures, curves, per-layer changes, and the button to open it.
fn result_ui(ui: &mut egui::Ui, r: &FitResult, active: &Active<'_>) -> Option<ProductionAction> {
    {
        stale_note(ui, r.design, r.revision, active);
        let o = &r.outcome;
        let cancelled = if o.stop == FitStop::Cancelled {
            " (cancelled: best so far)"
        } else {
            ""
        };
        ui.strong(format!(
            "RMS difference {:.4} % before, {:.4} % after{cancelled}",
            100.0 * o.rms_before,
            100.0 * o.rms_after
        ));
        ui.label(
            RichText::new(format!(
                "{} points used{}; {}, {} iterations",
                o.points_used,
                if o.points_skipped > 0 {
                    format!(", {} outside the materials' data skipped", o.points_skipped)
                } else {
                    String::new()
                },
                o.stop,
                o.iterations
            ))
            .weak(),
        );
        fit_plot(ui, r);
        egui::Grid::new("fit table")
            .striped(true)
            .num_columns(5)
            .show(ui, |ui| {
                for h in ["layer", "designed nm", "fitted nm", "change nm", "change %"] {
                    ui.strong(h);
                }
                ui.end_row();
                for l in &o.layers {
                    let lock = if l.locked { " (locked)" } else { "" };
                    ui.label(format!("{} {}{lock}", l.layer, l.material));
                    ui.label(format!("{:.2}", l.designed_nm));
                    ui.label(format!("{:.2}", l.fitted_nm));
                    ui.label(format!("{:+.2}", l.change_nm()));
                    ui.label(format!("{:+.2}", l.change_pct()));
                    ui.end_row();
                }
            });
        for s in &o.scales {
            ui.label(format!("index scale of {}: {:.4}", s.material, s.scale));
        }
        if ui
            .button("Open fitted design as new design")
            .on_hover_text("the design shown stays as it is")
            .clicked()
        {
            let mut d = o.design.clone();
            d.name = format!("{} (fitted)", d.name);
            return Some(ProductionAction::OpenAsNew(Box::new(d)));
        }
        None
    }
}

fn fit_plot(ui: &mut egui::Ui, r: &FitResult) {
    let o = &r.outcome;
    let pts = |ys: &[f64]| -> Vec<PlotPoint> {
        o.wavelength_nm
            .iter()
            .zip(ys)
            .map(|(&x, &y)| PlotPoint::new(x, 100.0 * y))
            .collect()
    };
    let (measured, designed, fitted) = (pts(&o.measured), pts(&o.designed), pts(&o.fitted));
    let colour = if r.quantity == Quantity::R {
        crate::gui::theme::R
    } else {
        crate::gui::theme::T
    };
    Plot::new("fit curves")
        .legend(Legend::default())
        .height(300.0)
        .x_axis_label("wavelength (nm)")
        .y_axis_label(format!("{} (%)", r.quantity.symbol()))
        .show(ui, |plot| {
            plot.points(
                Points::new(r.measured.clone(), PlotPoints::Borrowed(&measured))
                    .color(MEASURED_COLOUR)
                    .radius(2.0),
            );
            plot.line(
                Line::new("designed", PlotPoints::Borrowed(&designed))
                    .color(crate::gui::theme::TARGET)
                    .width(1.5),
            );
            plot.line(
                Line::new("fitted", PlotPoints::Borrowed(&fitted))
                    .color(colour)
                    .width(1.5),
            );
        });
}
