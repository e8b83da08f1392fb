//! The window's state and its frame: the open designs, the view settings, the side windows,
//! and the order in which one frame draws, applies commands and computes.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use egui::RichText;

use crate::design::{Design, file};

use super::compare::{self, CompareSettings};
use super::designs::{self, DesignId, OpenDesign, WindowCommand};
use super::document::{Command, Document, Edit};
use super::files::{Choosing, FileAction, Purpose};
use super::jobs::Waker;
use super::plots::{self, ViewSettings};
use super::stack::{self, StackUi};
use super::{APP_KEY, Prefs, demo_design, export_window, materials, measured, theme};

/// What the centre of the window shows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum CentralView {
    /// The spectrum and angle views of the active design, with any overlays.
    #[default]
    Plots,
    /// The compare view.
    Compare,
    /// The analysis views (phase, field, admittance, colour, map) of the active design.
    Analysis,
}

/// Side windows that can be open beside the main layout.
#[derive(Debug, Default)]
pub(super) struct Windows {
    /// The targets and optimisation panel on the right.
    pub(super) targets: bool,
    /// The materials browser.
    pub(super) materials: bool,
    /// The cautions.
    pub(super) cautions: bool,
}

/// The whole window's state.
pub struct App {
    /// The open designs in tab order; never empty.
    pub designs: Vec<OpenDesign>,
    pub(super) active: DesignId,
    next_id: u64,
    /// Left-panel state (selection, notation) of the active design.
    pub stack: StackUi,
    /// View settings of the centre plots (shared by all designs, so overlays line up).
    pub view: ViewSettings,
    /// What the centre shows.
    pub central: CentralView,
    /// Designs overlaid on the active design's views (the active one itself is skipped).
    pub overlays: Vec<DesignId>,
    /// Settings of the compare view.
    pub compare: CompareSettings,
    /// The analysis views' settings and results.
    pub analysis: super::views::AnalysisState,
    /// Compute every sweep inline (tests and screenshots that must show a result at once).
    pub force_inline: bool,
    spectrum_plot: plots::PlotCache,
    angle_plot: plots::PlotCache,
    compare_plot: compare::CompareCache,
    /// Last refusal or error, for the status line.
    pub status: Option<String>,
    /// A file error shown in its own window until dismissed.
    pub error_window: Option<String>,
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// Folder of the recovery files; `None` disables autosave (tests).
    pub recovery_dir: Option<PathBuf>,
    /// Use the window's own file chooser, not the desktop's dialog (set by itself when the
    /// desktop cannot show one).
    pub own_chooser: bool,
    /// Why the window's own chooser is used, when the desktop could not show its dialog.
    pub(super) chooser_note: Option<&'static str>,
    pub(super) session: String,
    pub(super) recovery_offer: Vec<(PathBuf, Design)>,
    pub(super) pending: Option<FileAction>,
    pub(super) choosing: Option<Choosing>,
    pub(super) allow_close: bool,
    /// Which side windows are open.
    pub(super) windows: Windows,
    /// The export window.
    pub export: export_window::ExportState,
    /// The measured curve over the spectrum.
    pub measured: measured::MeasuredState,
    /// Optimisation settings, the run going on and its result.
    pub optimize: super::optimize::OptimizeState,
    /// The production window (tolerances, sensitivity, monitoring, fit).
    pub production: super::production::ProductionState,
    pub(super) browser: materials::BrowserState,
    title_sent: String,
    pub(super) commands: Vec<Command>,
    pub(super) window_commands: Vec<WindowCommand>,
}

impl App {
    /// The window's state with the design at `path`, or the demo design when `path` is `None`
    /// or cannot be opened (the error is then shown).
    #[must_use]
    pub fn new(path: Option<PathBuf>) -> Self {
        let mut error = None;
        let doc = match path {
            None => Document::new(demo_design(), None),
            Some(p) => match file::load(&p) {
                Ok(d) => Document::new(d, Some(p)),
                Err(e) => {
                    error = Some(format!("{e}\n\nShowing the demo design instead."));
                    Document::new(demo_design(), None)
                }
            },
        };
        let view = ViewSettings::for_design(doc.design());
        let analysis = super::views::AnalysisState::new(view.angle_wavelength_nm);
        let recent: Vec<PathBuf> = doc.path().map(Path::to_path_buf).into_iter().collect();
        let session = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_millis());
        let mut app = Self {
            designs: Vec::new(),
            active: DesignId(0),
            next_id: 0,
            stack: StackUi::default(),
            view,
            central: CentralView::default(),
            overlays: Vec::new(),
            compare: CompareSettings::default(),
            analysis,
            force_inline: false,
            spectrum_plot: plots::PlotCache::default(),
            angle_plot: plots::PlotCache::default(),
            compare_plot: compare::CompareCache::default(),
            status: error.clone(),
            error_window: error,
            recent,
            recovery_dir: None,
            session: format!("{session}-{}", std::process::id()),
            recovery_offer: Vec::new(),
            own_chooser: false,
            chooser_note: None,
            pending: None,
            choosing: None,
            allow_close: false,
            windows: Windows {
                targets: true,
                ..Windows::default()
            },
            export: export_window::ExportState::default(),
            measured: measured::MeasuredState::default(),
            optimize: super::optimize::OptimizeState::default(),
            production: super::production::ProductionState::default(),
            browser: materials::BrowserState::default(),
            title_sent: String::new(),
            commands: Vec::new(),
            window_commands: Vec::new(),
        };
        app.add_design(doc);
        app.compare.band_from_nm = (0.9 * app.view.angle_wavelength_nm).round();
        app.compare.band_to_nm = (1.1 * app.view.angle_wavelength_nm).round();
        app
    }

    /// The design shown in the stack panel and views.
    #[must_use]
    pub fn active(&self) -> &OpenDesign {
        let i = self.active_index();
        &self.designs[i]
    }

    /// The design shown, for changing it.
    pub fn active_mut(&mut self) -> &mut OpenDesign {
        let i = self.active_index();
        &mut self.designs[i]
    }

    /// The active design's document.
    #[must_use]
    pub fn doc(&self) -> &Document {
        &self.active().doc
    }

    /// The position of the active design in [`App::designs`].
    #[must_use]
    pub fn active_index(&self) -> usize {
        self.designs
            .iter()
            .position(|d| d.id == self.active)
            .unwrap_or(0)
    }

    /// The open design with this id, if it is still open.
    #[must_use]
    pub fn design(&self, id: DesignId) -> Option<&OpenDesign> {
        self.designs.iter().find(|d| d.id == id)
    }

    pub(super) fn design_mut(&mut self, id: DesignId) -> Option<&mut OpenDesign> {
        self.designs.iter_mut().find(|d| d.id == id)
    }

    /// The figures of the compare table: one row per design picked, in the order picked.
    #[must_use]
    pub fn compare_figures(
        &self,
    ) -> Vec<(DesignId, Result<crate::analysis::compare::Figures, String>)> {
        self.compare
            .picked
            .iter()
            .filter_map(|&id| self.design(id))
            .map(|d| (d.id, compare::figures_for(&d.band, &self.compare)))
            .collect()
    }

    /// Adds `doc` as a new open design in the next free colour and shows it.
    pub(super) fn add_design(&mut self, doc: Document) -> DesignId {
        self.next_id += 1;
        let id = DesignId(self.next_id);
        let taken: Vec<_> = self.designs.iter().map(|d| d.colour).collect();
        let mut d = OpenDesign::new(id, doc, theme::next_design_colour(&taken));
        d.set_inline(self.force_inline);
        if self.designs.is_empty() || !self.view_is_shared() {
            self.view = ViewSettings::for_design(d.doc.design());
        }
        self.designs.push(d);
        self.activate(id);
        id
    }

    /// Whether the view settings are in use to compare designs (then a newly opened design
    /// keeps them, so its curves line up with the others).
    fn view_is_shared(&self) -> bool {
        !self.overlays.is_empty() || self.central == CentralView::Compare
    }

    pub(super) fn activate(&mut self, id: DesignId) {
        if self.active != id {
            self.stack.selected.clear();
        }
        self.active = id;
    }

    /// The whole window's contents for one frame; `App` as an `eframe::App` calls this, and
    /// tests call it directly.
    pub fn show(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        self.open_dropped_files(&ctx);
        self.handle_shortcuts(&ctx);
        self.handle_close_request(&ctx);
        self.apply_queued();
        self.poll_optimisation(&ctx);
        self.update_sweeps(&ctx);

        egui::Panel::top("menu").show(ui, |ui| self.menu_ui(ui));
        egui::Panel::top("designs").show(ui, |ui| {
            let mut out = Vec::new();
            designs::tabs_ui(ui, &self.designs, self.active, &mut out);
            self.window_commands.extend(out);
        });
        egui::Panel::bottom("status").show(ui, |ui| self.status_ui(ui));
        egui::Panel::left("stack")
            .resizable(true)
            .default_size(560.0)
            .show(ui, |ui| {
                let mut out = Vec::new();
                let i = self.active_index();
                let d = &self.designs[i];
                let bars = self.stack.show_sensitivity.then(|| {
                    let active = super::production::Active {
                        id: d.id,
                        revision: d.doc.revision(),
                        design: d.doc.design(),
                    };
                    let settled = !ui.ctx().egui_is_using_pointer();
                    self.production
                        .sensitivity
                        .bars(&active, &self.view, settled)
                });
                let bars = bars.flatten();
                stack::stack_ui(ui, d.doc.design(), &mut self.stack, bars.as_ref(), &mut out);
                self.commands.extend(out.into_iter().map(Command::from));
            });
        if self.windows.targets {
            egui::Panel::right("targets")
                .resizable(true)
                .default_size(400.0)
                .show(ui, |ui| self.targets_panel_ui(ui));
        }
        egui::CentralPanel::default().show(ui, |ui| self.central_ui(ui));
        self.error_window_ui(&ctx);
        if let Some(action) = self.pending.clone()
            && self.choosing.is_none()
        {
            self.unsaved_prompt_ui(&ctx, &action);
        }
        self.recovery_offer_ui(&ctx);
        self.cautions_ui(&ctx);
        self.materials_window_ui(&ctx);
        self.export_and_measured_windows_ui(&ctx);
        self.production_window_ui(&ctx);
        self.choosing_ui(&ctx);

        if !self.commands.is_empty() || !self.window_commands.is_empty() {
            self.apply_queued();
            ctx.request_repaint();
        }
        let busy = ctx.egui_is_using_pointer() || ctx.memory(|m| m.focused().is_some());
        if !busy {
            // Only the active design is edited, but a design switched away from mid-gesture
            // still gets its last step recorded.
            for d in &mut self.designs {
                d.doc.commit();
            }
        }
        self.autosave(&ctx);
        let title = self.doc().title();
        if title != self.title_sent {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.title_sent = title;
        }
    }

    /// The row above the views: which view, and which designs to overlay.
    fn central_choice_ui(&mut self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            ui.selectable_value(&mut self.central, CentralView::Plots, "Spectrum and angle");
            let to_compare = ui
                .selectable_value(&mut self.central, CentralView::Compare, "Compare designs")
                .clicked();
            ui.selectable_value(&mut self.central, CentralView::Analysis, "Analysis")
                .on_hover_text("phase and GDD, field |E|², admittance locus, colour, map");
            // The first time, compare every open design; the ticks are the user's after that.
            if to_compare && self.compare.picked.is_empty() {
                for d in &self.designs {
                    let on = true;
                    self.window_commands
                        .push(WindowCommand::SetCompared { id: d.id, on });
                }
            }
            if self.central == CentralView::Plots {
                ui.separator();
                ui.label("overlay:");
                if self.designs.len() < 2 {
                    ui.label(RichText::new("open another design to overlay it").weak());
                }
                for d in &self.designs {
                    if d.id == self.active {
                        continue;
                    }
                    let mut on = self.overlays.contains(&d.id);
                    let text = RichText::new(&d.doc.design().name).color(d.colour);
                    if ui.checkbox(&mut on, text).changed() {
                        self.window_commands
                            .push(WindowCommand::SetOverlay { id: d.id, on });
                    }
                }
            }
        });
    }

    fn central_ui(&mut self, ui: &mut egui::Ui) {
        self.central_choice_ui(ui);
        ui.separator();
        let i = self.active_index();
        match self.central {
            CentralView::Plots => {
                let (spectrum, angle) = (self.view.spectrum_sweep(), self.view.angle_sweep());
                let overlays = |angles: bool| -> Vec<plots::Overlay<'_>> {
                    self.designs
                        .iter()
                        .filter(|d| d.id != self.active && self.overlays.contains(&d.id))
                        .filter_map(|d| {
                            let (c, s) = if angles {
                                (&d.angles, &angle)
                            } else {
                                (&d.spectrum, &spectrum)
                            };
                            // Only a result for the same sweep lines up with the active one.
                            c.is_current(d.doc.revision(), s).then_some(plots::Overlay {
                                name: &d.doc.design().name,
                                colour: d.colour,
                                sweeps: c,
                            })
                        })
                        .collect()
                };
                let (over_s, over_a) = (overlays(false), overlays(true));
                let extras = self.spectrum_extras();
                let mut over_lines = super::optimize::as_overlays(&extras);
                over_lines.extend(self.measured.overlay());
                let active = &self.designs[i];
                let h = ui.available_height();
                ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.58), |ui| {
                    plots::spectrum_ui(
                        ui,
                        &mut self.view,
                        &active.spectrum,
                        &over_s,
                        &mut self.spectrum_plot,
                        &over_lines,
                    );
                });
                ui.separator();
                plots::angle_ui(
                    ui,
                    &mut self.view,
                    &active.angles,
                    &over_a,
                    &mut self.angle_plot,
                );
            }
            CentralView::Compare => {
                let entries: Vec<compare::Entry<'_>> = self
                    .designs
                    .iter()
                    .map(|d| compare::Entry {
                        id: d.id,
                        name: &d.doc.design().name,
                        colour: d.colour,
                        spectrum: &d.spectrum,
                        band: &d.band,
                    })
                    .collect();
                let mut out = Vec::new();
                compare::compare_ui(
                    ui,
                    &mut self.compare,
                    &entries,
                    &mut self.compare_plot,
                    &mut out,
                );
                self.window_commands.extend(out);
            }
            CentralView::Analysis => {
                let d = &self.designs[i];
                let subject = super::views::Subject {
                    id: d.id,
                    design: d.doc.design(),
                    revision: d.doc.revision(),
                };
                self.analysis.ui(ui, subject, &self.view, self.force_inline);
            }
        }
    }

    /// Brings the caches in use up to date: the active design's views, the overlaid designs'
    /// views (same sweeps), and in the compare view the picked designs' spectra and bands.
    fn update_sweeps(&mut self, ctx: &egui::Context) {
        let c = ctx.clone();
        let wake: Waker = Arc::new(move || c.request_repaint());
        let s = self.view.spectrum_sweep();
        let a = self.view.angle_sweep();
        let band = self.compare.band_sweep();
        let comparing = self.central == CentralView::Compare;
        let mut busy = false;
        for d in &mut self.designs {
            d.set_inline(self.force_inline);
            let shown = d.id == self.active || self.overlays.contains(&d.id);
            let compared = comparing && self.compare.picked.contains(&d.id);
            if shown || compared {
                d.spectrum
                    .update(d.doc.design(), d.doc.revision(), &s, &wake);
            }
            if shown {
                d.angles.update(d.doc.design(), d.doc.revision(), &a, &wake);
            }
            if compared {
                d.band
                    .update(d.doc.design(), d.doc.revision(), &band, &wake);
            }
            busy |= d.spectrum.busy() || d.angles.busy() || d.band.busy();
        }
        if busy {
            ctx.request_repaint_after(Duration::from_millis(50));
        }
    }

    /// The materials browser window, when open.
    fn materials_window_ui(&mut self, ctx: &egui::Context) {
        if !self.windows.materials {
            return;
        }
        let mut open = true;
        let mut action = None;
        let i = self.active_index();
        egui::Window::new("Materials")
            .open(&mut open)
            .default_size([640.0, 560.0])
            .show(ctx, |ui| {
                egui::ScrollArea::vertical().show(ui, |ui| {
                    action = materials::materials_ui(
                        ui,
                        &mut self.browser,
                        self.designs[i].doc.design(),
                    );
                });
            });
        self.windows.materials = open;
        match action {
            None => {}
            Some(materials::BrowserAction::AddMaterial(m)) => self.push(Edit::AddMaterial(m)),
            Some(materials::BrowserAction::ReplaceMaterial { old_name, material }) => {
                self.push(Edit::ReplaceMaterial { old_name, material });
            }
            Some(materials::BrowserAction::RemoveMaterial(n)) => {
                self.push(Edit::RemoveMaterial(n));
            }
            Some(materials::BrowserAction::ChooseTable(request)) => {
                self.choose_file(ctx, request, Purpose::MaterialTable);
            }
        }
    }
}

impl eframe::App for App {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        eframe::set_value(
            storage,
            APP_KEY,
            &Prefs {
                recent: self.recent.clone(),
            },
        );
    }
}
