//! Optimisation in the background: refinement or needle insertion as a job, its progress and
//! live preview, Cancel (which keeps the best design so far), and the result applied as one
//! undo step or opened as a new design. With "keep refining" on, every change of a target or
//! of a layer's lock starts a refinement whose result is applied when it ends.

use std::ops::ControlFlow;
use std::sync::Arc;

use egui::{DragValue, ProgressBar, RichText};

use crate::design::Design;
use crate::optimize::{self, OptimizeError, Options, Outcome, StopReason};

use super::designs::DesignId;
use super::jobs::{Job, JobEnd, Waker};

/// What the window shows of a run in progress.
#[derive(Clone, Debug)]
pub struct Snapshot {
    /// Refinement iterations so far.
    pub iteration: usize,
    /// Needle insertions accepted so far.
    pub insertions: usize,
    /// Best merit so far.
    pub merit: f64,
    /// The best design so far (drawn as a preview).
    pub best: Design,
}

/// A run going on.
pub struct Run {
    /// The design it optimises.
    pub design: DesignId,
    /// That design's revision when the run started.
    pub from_revision: u64,
    /// Needle insertion, else refinement only.
    pub needle: bool,
    /// Started by "keep refining" (its result is applied by itself).
    pub automatic: bool,
    job: Job<Snapshot, Outcome, OptimizeError>,
}

/// A finished run waiting for the user's choice.
pub struct Finished {
    /// The design it optimised.
    pub design: DesignId,
    /// That design's revision when the run started.
    pub from_revision: u64,
    /// What it found.
    pub outcome: Outcome,
}

/// The optimisation panel's state.
pub struct OptimizeState {
    /// No layer thinner than this (nm).
    pub min_nm: f64,
    /// Most layers needle insertion may reach.
    pub max_layers: usize,
    /// Materials needle insertion may use, comma-separated; empty = those in the design.
    pub needle_materials: String,
    /// Restart refinement after every change of a target or a lock.
    pub keep_refining: bool,
    /// The run going on.
    pub run: Option<Run>,
    /// The last finished run, until applied or dismissed.
    pub finished: Option<Finished>,
    /// The last message (an error, or what happened to a result).
    pub message: Option<String>,
    /// The targets and locks last seen per design, for "keep refining".
    pub(super) seen: Vec<(DesignId, Vec<crate::design::Target>, Vec<bool>)>,
}

impl Default for OptimizeState {
    fn default() -> Self {
        let o = Options::default();
        Self {
            min_nm: o.min_nm,
            max_layers: 40,
            needle_materials: String::new(),
            keep_refining: false,
            run: None,
            finished: None,
            message: None,
            seen: Vec::new(),
        }
    }
}

/// What started a run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Trigger {
    /// The user pressed a button; the result waits for the user's choice.
    User,
    /// "Keep refining" after a change; the result is applied when it ends.
    KeepRefining,
}

/// What the user asked for in the panel.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OptimizeAction {
    /// Start refining (or needle insertion when `needle`).
    Start {
        /// Insert new layers too.
        needle: bool,
    },
    /// Stop the run; its best design so far is offered.
    Cancel,
    /// Apply the finished run's design as one undo step.
    Apply,
    /// Open the finished run's design as a new design beside the old one.
    OpenAsNew,
    /// Forget the finished run.
    Dismiss,
}

impl OptimizeState {
    /// The options the panel's settings give.
    #[must_use]
    pub fn options(&self) -> Options {
        Options {
            min_nm: self.min_nm,
            max_layers: self.max_layers,
            materials: self
                .needle_materials
                .split(',')
                .map(str::trim)
                .filter(|s| !s.is_empty())
                .map(str::to_owned)
                .collect(),
            ..Options::default()
        }
    }

    /// Starts a run on `design` (revision `revision`); a run already going is cancelled.
    pub fn start(
        &mut self,
        id: DesignId,
        design: &Design,
        revision: u64,
        needle: bool,
        trigger: Trigger,
        wake: Waker,
    ) {
        let automatic = trigger == Trigger::KeepRefining;
        if let Some(r) = self.run.take() {
            r.job.cancel();
        }
        self.finished = None;
        self.message = None;
        let d = design.clone();
        let options = self.options();
        let work = move |reporter: &mut super::jobs::Reporter<Snapshot>| {
            let on_progress = |p: &optimize::Progress<'_>| -> ControlFlow<()> {
                reporter.progress(Snapshot {
                    iteration: p.iteration,
                    insertions: p.insertions,
                    merit: p.merit,
                    best: p.best.clone(),
                })
            };
            if needle {
                optimize::needle(&d, &options, on_progress)
            } else {
                optimize::refine(&d, &options, on_progress)
            }
        };
        let name = if needle { "needle" } else { "refine" };
        match Job::spawn(name, revision, wake, work) {
            Ok(job) => {
                self.run = Some(Run {
                    design: id,
                    from_revision: revision,
                    needle,
                    automatic,
                    job,
                });
            }
            Err(e) => self.message = Some(format!("cannot start the optimisation: {e}")),
        }
    }

    /// The best design of the run going on, for the preview.
    #[must_use]
    pub fn preview(&self) -> Option<(DesignId, &Design)> {
        let run = self.run.as_ref()?;
        run.job.latest().map(|s| (run.design, &s.best))
    }

    /// Takes the run's end, if it has come: a finished run waits for the user's choice (or,
    /// when started by "keep refining", is returned to be applied at once).
    pub fn poll(&mut self) -> Option<Finished> {
        let run = self.run.as_mut()?;
        let end = run.job.poll()?;
        let run = self.run.take()?;
        match end {
            JobEnd::Done(outcome) => {
                let f = Finished {
                    design: run.design,
                    from_revision: run.from_revision,
                    outcome,
                };
                if run.automatic {
                    return Some(f);
                }
                self.finished = Some(f);
            }
            JobEnd::Cancelled => self.message = Some("cancelled".into()),
            JobEnd::Failed(e) => self.message = Some(format!("not optimised: {e}")),
        }
        None
    }
}

/// The optimisation controls; returns what the user asked for.
pub fn optimize_ui(ui: &mut egui::Ui, state: &mut OptimizeState) -> Option<OptimizeAction> {
    let mut action = None;
    ui.horizontal_wrapped(|ui| {
        let l = ui.label("minimum layer");
        ui.add(
            DragValue::new(&mut state.min_nm)
                .range(0.0..=1000.0)
                .speed(0.1)
                .suffix(" nm"),
        )
        .labelled_by(l.id);
        let l = ui.label("most layers");
        ui.add(DragValue::new(&mut state.max_layers).range(1..=500))
            .labelled_by(l.id);
    });
    ui.horizontal(|ui| {
        let l = ui.label("needle materials");
        ui.add(
            egui::TextEdit::singleline(&mut state.needle_materials)
                .hint_text("those in the design")
                .desired_width(180.0),
        )
        .labelled_by(l.id);
    });
    ui.checkbox(&mut state.keep_refining, "Keep refining")
        .on_hover_text("refine again after every change of a target or a layer's lock");
    let running = state.run.is_some();
    ui.horizontal(|ui| {
        if ui
            .add_enabled(!running, egui::Button::new("Refine"))
            .clicked()
        {
            action = Some(OptimizeAction::Start { needle: false });
        }
        if ui
            .add_enabled(!running, egui::Button::new("Refine with needles"))
            .on_hover_text("insert thin layers where they lower the merit most, then refine")
            .clicked()
        {
            action = Some(OptimizeAction::Start { needle: true });
        }
        if running && ui.button("Cancel").clicked() {
            action = Some(OptimizeAction::Cancel);
        }
    });
    if let Some(run) = &state.run {
        let what = if run.needle { "needle" } else { "refining" };
        match run.job.latest() {
            Some(s) => {
                ui.add(ProgressBar::new(0.0).animate(true).text(format!(
                    "{what}: iteration {}, merit {:.4} %, {} layers{}",
                    s.iteration,
                    s.merit * 100.0,
                    s.best.layers.len(),
                    if run.needle {
                        format!(", {} inserted", s.insertions)
                    } else {
                        String::new()
                    }
                )));
            }
            None => {
                ui.add(
                    ProgressBar::new(0.0)
                        .animate(true)
                        .text(format!("{what}: starting")),
                );
            }
        }
    }
    if let Some(f) = &state.finished {
        let o = &f.outcome;
        let stopped = if o.reason == StopReason::Cancelled {
            "cancelled; best so far"
        } else {
            "done"
        };
        ui.label(format!(
            "{stopped}: merit {:.4} % to {:.4} %, {} layers ({})",
            o.start_merit * 100.0,
            o.merit * 100.0,
            o.design.layers.len(),
            o.reason
        ));
        ui.horizontal(|ui| {
            if ui.button("Apply").on_hover_text("one undo step").clicked() {
                action = Some(OptimizeAction::Apply);
            }
            if ui.button("Open as new design").clicked() {
                action = Some(OptimizeAction::OpenAsNew);
            }
            if ui.button("Dismiss").clicked() {
                action = Some(OptimizeAction::Dismiss);
            }
        });
    }
    if let Some(m) = &state.message {
        ui.label(RichText::new(m).weak());
    }
    action
}

/// A waker for jobs from an egui context.
#[must_use]
pub fn waker(ctx: &egui::Context) -> Waker {
    let c = ctx.clone();
    Arc::new(move || c.request_repaint())
}

/// A curve or mark drawn over the spectrum: (legend name, colour, wavelengths nm, fractions,
/// is transmittance, drawn as points).
pub type OverLine = (String, egui::Color32, Vec<f64>, Vec<f64>, bool, bool);

/// Lines to draw over the spectrum, as the spectrum view takes them.
#[must_use]
pub fn as_overlays(lines: &[OverLine]) -> Vec<super::plots::MeasuredOverlay<'_>> {
    lines
        .iter()
        .map(
            |(name, colour, x, y, t, points)| super::plots::MeasuredOverlay {
                name,
                colour: *colour,
                wavelength_nm: x,
                value: y,
                transmittance: *t,
                as_points: *points,
            },
        )
        .collect()
}

/// The targets of `design` as marks over the spectrum: a line at the goal over each target's
/// span (a point for a single wavelength), green when met and red when not; only the targets
/// at the view's angle of incidence, since the curve is for that angle. GDD and colour targets
/// are not R/T/A values and get no mark (the targets panel shows whether they pass).
#[must_use]
pub fn target_marks(
    design: &Design,
    evaluation: Option<&Result<optimize::Evaluation, String>>,
    aoi_deg: f64,
) -> Vec<OverLine> {
    design
        .targets
        .iter()
        .enumerate()
        .filter(|(_, t)| t.measure.is_spectral() && (t.aoi_deg - aoi_deg).abs() < 1e-9)
        .map(|(i, t)| {
            let pass = match evaluation {
                Some(Ok(e)) => e.targets.get(i).map(|r| r.pass),
                _ => None,
            };
            let colour = match pass {
                Some(true) => super::theme::PASS,
                Some(false) => super::theme::FAIL,
                None => super::theme::TARGET,
            };
            let single = t.to_nm <= t.from_nm;
            let (x, y) = if single {
                (vec![t.from_nm], vec![t.goal])
            } else {
                (vec![t.from_nm, t.to_nm], vec![t.goal, t.goal])
            };
            let name = format!("target {}: {}", i + 1, super::targets::describe(t));
            (
                name,
                colour,
                x,
                y,
                t.quantity == crate::design::Quantity::T,
                single,
            )
        })
        .collect()
}

impl super::App {
    /// Follows the optimisation: its end, "keep refining", the targets' evaluation.
    pub(super) fn poll_optimisation(&mut self, ctx: &egui::Context) {
        if let Some(f) = self.optimize.poll() {
            // A "keep refining" result: applied at once, if the design is still the same.
            self.adopt(f);
        }
        // Evaluate the active design's targets once per revision.
        let i = self.active_index();
        let d = &mut self.designs[i];
        let rev = d.doc.revision();
        if d.doc.design().targets.is_empty() {
            d.targets = None;
        } else if d.targets.as_ref().is_none_or(|(r, _)| *r != rev) {
            let e = optimize::evaluate_targets(d.doc.design()).map_err(|e| e.to_string());
            d.targets = Some((rev, e));
        }
        // Keep refining: a changed target or lock starts a refinement.
        let (id, design) = (d.id, d.doc.design().clone());
        let locks: Vec<bool> = design.layers.iter().map(|l| l.locked).collect();
        let seen = self.optimize.seen.iter().position(|s| s.0 == id);
        let changed = match seen {
            Some(k) => {
                self.optimize.seen[k].1 != design.targets || self.optimize.seen[k].2 != locks
            }
            None => false,
        };
        match seen {
            Some(k) => {
                self.optimize.seen[k].1.clone_from(&design.targets);
                self.optimize.seen[k].2 = locks;
            }
            None => self.optimize.seen.push((id, design.targets.clone(), locks)),
        }
        if changed && self.optimize.keep_refining && !design.targets.is_empty() {
            self.optimize
                .start(id, &design, rev, false, Trigger::KeepRefining, waker(ctx));
        }
    }

    /// Carries out an action of the optimisation panel.
    pub(super) fn optimize_action(&mut self, ctx: &egui::Context, action: OptimizeAction) {
        match action {
            OptimizeAction::Start { needle } => {
                let d = self.active();
                let (id, rev, design) = (d.id, d.doc.revision(), d.doc.design().clone());
                self.optimize
                    .start(id, &design, rev, needle, Trigger::User, waker(ctx));
            }
            OptimizeAction::Cancel => {
                if let Some(r) = &self.optimize.run {
                    r.job.cancel();
                }
            }
            OptimizeAction::Apply => {
                if let Some(f) = self.optimize.finished.take() {
                    self.adopt(f);
                }
            }
            OptimizeAction::OpenAsNew => {
                if let Some(f) = self.optimize.finished.take() {
                    let mut d = f.outcome.design;
                    d.name = format!("{} (optimised)", d.name);
                    self.apply(super::Command::Recover(Box::new(d)));
                }
            }
            OptimizeAction::Dismiss => self.optimize.finished = None,
        }
    }

    /// Applies a finished run's design to its design as one undo step; refused (and said so)
    /// when that design changed meanwhile or was closed.
    fn adopt(&mut self, f: Finished) {
        let Some(d) = self.design_mut(f.design) else {
            self.optimize.message = Some("the design was closed; the result was dropped".into());
            return;
        };
        let edit = super::Edit::Adopt {
            from_revision: f.from_revision,
            design: Box::new(f.outcome.design.clone()),
        };
        match d.doc.apply(edit) {
            Ok(()) => {
                d.doc.commit();
                d.last_edit = Some(std::time::Instant::now());
                self.optimize.message = Some(format!(
                    "applied: merit {:.4} % ({})",
                    f.outcome.merit * 100.0,
                    f.outcome.reason
                ));
            }
            Err(e) => {
                self.optimize.message = Some(format!("{e}; open it as a new design instead"));
                self.optimize.finished = Some(f);
            }
        }
    }

    /// The right panel: targets, then the optimisation controls.
    pub(super) fn targets_panel_ui(&mut self, ui: &mut egui::Ui) {
        egui::ScrollArea::vertical().show(ui, |ui| {
            ui.heading("Targets");
            let i = self.active_index();
            let d = &self.designs[i];
            let span = (self.view.from_nm, self.view.to_nm);
            let eval = d.targets.as_ref().map(|(_, e)| e);
            if let Some(edit) = super::targets::targets_ui(ui, d.doc.design(), eval, span) {
                self.push(edit);
            }
            ui.separator();
            ui.heading("Optimisation");
            if let Some(a) = optimize_ui(ui, &mut self.optimize) {
                self.optimize_action(ui.ctx(), a);
            }
        });
    }

    /// The marks and the live preview drawn over the active design's spectrum.
    pub(super) fn spectrum_extras(&self) -> Vec<OverLine> {
        let d = self.active();
        let mut lines = target_marks(
            d.doc.design(),
            d.targets.as_ref().map(|(_, e)| e),
            self.view.aoi_deg,
        );
        if let Some((id, best)) = self.optimize.preview()
            && id == d.id
            && let Ok(r) = super::compute::run_sweep(best, &self.view.spectrum_sweep())
        {
            lines.push((
                "best so far".into(),
                super::theme::PREVIEW,
                r.x,
                r.curves.r,
                false,
                false,
            ));
        }
        lines
    }
}
