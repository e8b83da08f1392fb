//! The production window: from design to chamber. Four tabs — the tolerance envelope (Monte
//! Carlo, with the yield against the targets), each layer's sensitivity, the optical
//! monitoring curve, and fitting the design to a measured run.
//!
//! Everything computed here is a library call (`analysis::tolerance`, `analysis::sensitivity`,
//! `analysis::monitor`, `optimize::tolerance_with_yield`, `optimize::merit_sensitivity`,
//! `optimize::fit`); the tolerance run and the fit run as [`super::jobs::Job`]s with progress
//! and Cancel. A fitted design is only ever opened as a new design.

mod fit;
mod monitor;
mod sensitivity;
mod tolerance;

pub use fit::FitView;
pub use monitor::MonitorView;
pub use sensitivity::SensitivityView;
pub use tolerance::ToleranceView;

use super::App;
use super::designs::DesignId;

/// Which tab the production window shows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Tab {
    /// The Monte Carlo envelope.
    #[default]
    Tolerances,
    /// Per-layer sensitivity.
    Sensitivity,
    /// The optical monitoring curve.
    Monitoring,
    /// Fitting to a measured run.
    Fit,
}

/// The production window's state.
#[derive(Default)]
pub struct ProductionState {
    /// Whether the window is open.
    pub open: bool,
    /// The tab shown.
    pub tab: Tab,
    /// The tolerance tab.
    pub tolerance: ToleranceView,
    /// The sensitivity tab.
    pub sensitivity: SensitivityView,
    /// The monitoring tab.
    pub monitor: MonitorView,
    /// The fit tab.
    pub fit: FitView,
}

/// What a design looks like to the production tabs: which one, which revision, the design.
#[derive(Clone, Copy)]
pub struct Active<'a> {
    /// The open design.
    pub id: DesignId,
    /// Its revision now.
    pub revision: u64,
    /// The design.
    pub design: &'a crate::design::Design,
}

/// What the production window asks the rest of the window to do.
pub enum ProductionAction {
    /// Open this design as a new design (tab).
    OpenAsNew(Box<crate::design::Design>),
    /// Open the measured-curve window (to load a curve for the fit).
    ShowMeasured,
}

/// A note when a result was computed for another design or an earlier revision.
fn stale_note(ui: &mut egui::Ui, for_id: DesignId, for_revision: u64, active: &Active<'_>) {
    if for_id != active.id {
        ui.colored_label(
            ui.visuals().warn_fg_color,
            "computed for another open design; run again for this one",
        );
    } else if for_revision != active.revision {
        ui.colored_label(
            ui.visuals().warn_fg_color,
            "computed for an earlier version of this design; run again to update",
        );
    }
}

impl App {
    /// The production window, when open; called once per frame.
    pub(super) fn production_window_ui(&mut self, ctx: &egui::Context) {
        self.production.tolerance.poll();
        self.production.fit.poll();
        let busy = self.production.tolerance.running() || self.production.fit.running();
        if busy {
            ctx.request_repaint_after(std::time::Duration::from_millis(100));
        }
        if !self.production.open {
            return;
        }
        let mut open = true;
        let mut action = None;
        let i = self.active_index();
        let d = &self.designs[i];
        let active = Active {
            id: d.id,
            revision: d.doc.revision(),
            design: d.doc.design(),
        };
        let p = &mut self.production;
        let (view, measured) = (&self.view, &self.measured);
        egui::Window::new("Production")
            .open(&mut open)
            .default_pos([520.0, 70.0])
            .default_size([760.0, 620.0])
            .show(ctx, |ui| {
                ui.horizontal(|ui| {
                    ui.selectable_value(&mut p.tab, Tab::Tolerances, "Tolerances");
                    ui.selectable_value(&mut p.tab, Tab::Sensitivity, "Sensitivity");
                    ui.selectable_value(&mut p.tab, Tab::Monitoring, "Monitoring");
                    ui.selectable_value(&mut p.tab, Tab::Fit, "Fit to measured run");
                });
                ui.separator();
                ui.label(egui::RichText::new(format!("design: {}", active.design.name)).weak());
                egui::ScrollArea::vertical().show(ui, |ui| match p.tab {
                    Tab::Tolerances => p.tolerance.ui(ui, &active, view),
                    Tab::Sensitivity => p.sensitivity.ui(ui, &active, view),
                    Tab::Monitoring => p.monitor.ui(ui, &active),
                    Tab::Fit => action = p.fit.ui(ui, &active, measured),
                });
            });
        self.production.open = open;
        match action {
            None => {}
            Some(ProductionAction::OpenAsNew(d)) => {
                self.apply(super::Command::Recover(d));
            }
            Some(ProductionAction::ShowMeasured) => self.measured.open = true,
        }
    }
}
