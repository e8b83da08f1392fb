//! File actions: New, Open, Save, Save As and closing, the unsaved-changes question, and the
//! file choosers (the desktop's own dialog on a job, or the window's own when there is none).

use std::path::{Path, PathBuf};

use super::app::App;
use super::chooser::{self, Chooser, ChooserOutcome, FileRequest};
use super::designs::DesignId;
use super::document::Command;
use super::jobs::{Job, JobEnd};
use super::{export_window, measured, theme};

/// A file action that may have to wait for the unsaved-changes question.
#[derive(Clone, Debug, PartialEq)]
pub enum FileAction {
    /// Open another, empty design.
    New,
    /// Ask for a file and open it beside the designs already open.
    OpenDialog,
    /// Open this file beside the others (or switch to it if it is open already).
    Open(PathBuf),
    /// Save the active design (asks for a file if it has none).
    Save,
    /// Ask for a file and save the active design to it.
    SaveAsDialog,
    /// Close one design (asks first if it has unsaved changes).
    CloseDesign(DesignId),
    /// Quit: close the window (asks about every design with unsaved changes).
    Quit,
}

/// What a file being chosen is for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Purpose {
    /// Open it as a design.
    Open,
    /// Save this design to it.
    SaveAs(DesignId),
    /// Write the export window's choice to it.
    Export,
    /// Load it as the measured curve.
    Measured,
    /// Load it as an n, k table into the materials form.
    MaterialTable,
}

/// A file being chosen: by the desktop's dialog (a job) or by the window's own chooser.
pub(super) enum Choosing {
    /// The desktop's dialog is open on its job.
    Desktop {
        purpose: Purpose,
        request: FileRequest,
        job: Job<(), Option<PathBuf>, String>,
    },
    /// The window's own chooser is open.
    Own { purpose: Purpose, chooser: Chooser },
}

impl App {
    /// Starts a file action, asking about unsaved changes first where work could be lost.
    pub fn file_action(&mut self, ctx: &egui::Context, action: FileAction) {
        match action {
            FileAction::CloseDesign(id) => self.request_close_design(id),
            FileAction::Quit if !self.allow_close => {
                if let Some(id) = self.first_dirty() {
                    self.activate(id);
                    self.pending = Some(FileAction::Quit);
                } else {
                    self.do_file_action(ctx, FileAction::Quit);
                }
            }
            other => self.do_file_action(ctx, other),
        }
    }

    fn do_file_action(&mut self, ctx: &egui::Context, action: FileAction) {
        match action {
            FileAction::New => {
                self.apply(Command::New);
            }
            FileAction::Open(p) => {
                self.apply(Command::Open(p));
            }
            FileAction::OpenDialog => self.choose_design_file(ctx, None),
            FileAction::Save => {
                if self.doc().path().is_some() {
                    self.apply(Command::Save);
                } else {
                    self.choose_design_file(ctx, Some(self.active));
                }
            }
            FileAction::SaveAsDialog => self.choose_design_file(ctx, Some(self.active)),
            FileAction::CloseDesign(id) => self.close_design(id),
            FileAction::Quit => {
                let ids: Vec<DesignId> = self.designs.iter().map(|d| d.id).collect();
                for id in ids {
                    self.remove_recovery(id);
                }
                self.allow_close = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
        }
    }

    /// Asks for a design file: where to save design `save` if given, else one to open.
    pub(super) fn choose_design_file(&mut self, ctx: &egui::Context, save: Option<DesignId>) {
        let doc = match save.and_then(|id| self.design(id)) {
            Some(d) => &d.doc,
            None => self.doc(),
        };
        let request = FileRequest {
            save: save.is_some(),
            filter_name: "Stackwise design (RON)".into(),
            extensions: vec!["ron".into()],
            directory: doc.path().and_then(Path::parent).map(Path::to_path_buf),
            file_name: save.map(|_| format!("{}.ron", doc.design().name)),
        };
        let purpose = save.map_or(Purpose::Open, Purpose::SaveAs);
        self.choose_file(ctx, request, purpose);
    }

    /// Asks for a file for `purpose`: with the desktop's dialog where there is one, else with
    /// the window's own chooser. One file is chosen at a time.
    pub(super) fn choose_file(
        &mut self,
        ctx: &egui::Context,
        request: FileRequest,
        purpose: Purpose,
    ) {
        if self.choosing.is_some() {
            return;
        }
        if !self.own_chooser && !chooser::desktop_dialog_possible() {
            self.no_desktop_dialog();
        }
        if self.own_chooser {
            let chooser = self.own_chooser_for(request);
            self.choosing = Some(Choosing::Own { purpose, chooser });
            return;
        }
        let c = ctx.clone();
        match chooser::desktop_dialog(&request, std::sync::Arc::new(move || c.request_repaint())) {
            Ok(job) => {
                self.choosing = Some(Choosing::Desktop {
                    purpose,
                    request,
                    job,
                });
            }
            Err(e) => {
                self.status = Some(format!("cannot start the file dialog: {e}"));
                self.no_desktop_dialog();
                let chooser = self.own_chooser_for(request);
                self.choosing = Some(Choosing::Own { purpose, chooser });
            }
        }
    }

    /// Switches to the window's own chooser for the rest of the session, saying why once.
    fn no_desktop_dialog(&mut self) {
        if !self.own_chooser {
            self.own_chooser = true;
            self.chooser_note = Some(chooser::NO_DESKTOP_DIALOG);
            self.status = Some(chooser::NO_DESKTOP_DIALOG.to_owned());
        }
    }

    /// The window's own chooser for `request`, saying why it is used when the desktop could
    /// not show its dialog.
    fn own_chooser_for(&self, request: FileRequest) -> Chooser {
        let c = Chooser::new(request);
        match self.chooser_note {
            Some(note) => c.with_note(note),
            None => c,
        }
    }

    /// Follows the file being chosen: takes the desktop dialog's answer, or draws the
    /// window's own chooser; acts on a file chosen.
    pub(super) fn choosing_ui(&mut self, ctx: &egui::Context) {
        let Some(choosing) = self.choosing.take() else {
            return;
        };
        match choosing {
            Choosing::Desktop {
                purpose,
                request,
                mut job,
            } => match job.poll() {
                None => {
                    self.choosing = Some(Choosing::Desktop {
                        purpose,
                        request,
                        job,
                    });
                }
                Some(JobEnd::Done(Some(p))) => self.chosen(ctx, purpose, p),
                Some(JobEnd::Done(None)) if job.elapsed() < chooser::TOO_FAST_TO_BE_A_PERSON => {
                    self.no_desktop_dialog();
                    let chooser = self.own_chooser_for(request);
                    self.choosing = Some(Choosing::Own { purpose, chooser });
                }
                Some(JobEnd::Done(None) | JobEnd::Cancelled) => {}
                Some(JobEnd::Failed(e)) => {
                    self.status = Some(format!("the file dialog failed: {e}"));
                    self.no_desktop_dialog();
                    let chooser = self.own_chooser_for(request);
                    self.choosing = Some(Choosing::Own { purpose, chooser });
                }
            },
            Choosing::Own {
                purpose,
                mut chooser,
            } => match chooser.show(ctx) {
                None => self.choosing = Some(Choosing::Own { purpose, chooser }),
                Some(ChooserOutcome::Chosen(p)) => self.chosen(ctx, purpose, p),
                Some(ChooserOutcome::Cancelled) => {}
            },
        }
    }

    /// Whether a file is being chosen (the unsaved-changes question waits meanwhile).
    #[must_use]
    pub fn is_choosing_file(&self) -> bool {
        self.choosing.is_some()
    }

    /// Acts on a file chosen for `purpose`.
    fn chosen(&mut self, ctx: &egui::Context, purpose: Purpose, p: PathBuf) {
        match purpose {
            Purpose::Open => {
                self.apply(Command::Open(p));
            }
            Purpose::SaveAs(id) => {
                let p = if p.extension().is_none() {
                    p.with_extension("ron")
                } else {
                    p
                };
                if self.apply_to(id, Command::SaveAs(p))
                    && let Some(next) = self.pending.take()
                {
                    self.file_action(ctx, next);
                }
            }
            Purpose::Export => {
                // The outcome shows in the export window.
                self.export_to(&p).ok();
            }
            Purpose::Measured => {
                // The outcome shows in the measured-curve window.
                self.load_measured(&p).ok();
            }
            Purpose::MaterialTable => self.browser.load_table_file(ctx, &p),
        }
    }

    /// Writes the export chosen in the export window to `path`, as the Save dialog's answer
    /// does; the outcome shows in the export window (and errors in the status line).
    pub fn export_to(&mut self, path: &Path) -> Result<PathBuf, String> {
        let active = &self.designs[self.active_index()];
        let doc = &active.doc;
        let inputs = export_window::ExportInputs {
            design: doc.design(),
            design_path: doc.path(),
            view: &self.view,
            colour_slot: theme::design_slot(active.colour),
        };
        let written = self.export.export_to(&inputs, path);
        if let Err(e) = &written {
            self.status = Some(format!("export: {e}"));
        }
        written
    }

    /// Loads the measured curve at `path` over the spectrum, as the Open dialog's answer does;
    /// errors show in the measured-curve window.
    pub fn load_measured(&mut self, path: &Path) -> Result<(), String> {
        self.measured.open = true;
        self.measured.load(path)
    }

    /// Opens the files dropped on the window.
    pub(super) fn open_dropped_files(&mut self, ctx: &egui::Context) {
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .collect()
        });
        for p in dropped {
            self.file_action(ctx, FileAction::Open(p));
        }
    }

    /// Asks about unsaved designs when the window is asked to close.
    pub(super) fn handle_close_request(&mut self, ctx: &egui::Context) {
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close {
            if let Some(id) = self.first_dirty() {
                ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
                self.activate(id);
                self.pending = Some(FileAction::Quit);
            } else {
                let ids: Vec<DesignId> = self.designs.iter().map(|d| d.id).collect();
                for id in ids {
                    self.remove_recovery(id);
                }
            }
        }
    }

    /// The design the unsaved-changes question is about, for a pending action.
    fn asked_about(&self, action: &FileAction) -> Option<DesignId> {
        match action {
            FileAction::CloseDesign(id) => {
                self.design(*id).filter(|d| d.doc.is_dirty()).map(|d| d.id)
            }
            FileAction::Quit => self.first_dirty(),
            _ => None,
        }
    }

    pub(super) fn unsaved_prompt_ui(&mut self, ctx: &egui::Context, action: &FileAction) {
        let Some(id) = self.asked_about(action) else {
            // Nothing unsaved any more (e.g. saved meanwhile): go ahead.
            self.pending = None;
            self.file_action(ctx, action.clone());
            return;
        };
        let name = self
            .design(id)
            .map(|d| d.doc.design().name.clone())
            .unwrap_or_default();
        let others = self
            .designs
            .iter()
            .filter(|d| d.id != id && d.doc.is_dirty())
            .count();
        egui::Window::new("Unsaved changes")
            .collapsible(false)
            .resizable(false)
            .anchor(egui::Align2::CENTER_CENTER, [0.0, 0.0])
            .show(ctx, |ui| {
                ui.label(format!("\"{name}\" has changes that are not saved."));
                if *action == FileAction::Quit && others > 0 {
                    ui.label(format!(
                        "{others} other open design(s) have unsaved changes too; you will be \
                         asked about each."
                    ));
                }
                ui.horizontal(|ui| {
                    if ui.button("Save").clicked() {
                        let has_path = self.design(id).is_some_and(|d| d.doc.path().is_some());
                        if has_path {
                            if self.apply_to(id, Command::Save) {
                                self.pending = None;
                                self.file_action(ctx, action.clone());
                            }
                        } else {
                            // Continues with `pending` once the Save As dialog answers.
                            self.choose_design_file(ctx, Some(id));
                        }
                    }
                    if ui.button("Discard changes").clicked() {
                        self.pending = None;
                        self.remove_recovery(id);
                        // Discarded on purpose: the next step must not ask again.
                        if let Some(d) = self.design_mut(id) {
                            d.doc.forget_unsaved_changes();
                        }
                        self.file_action(ctx, action.clone());
                    }
                    if ui.button("Cancel").clicked() {
                        self.pending = None;
                    }
                });
            });
    }

    /// The export and measured-curve windows; the files they write or read are chosen here.
    pub(super) fn export_and_measured_windows_ui(&mut self, ctx: &egui::Context) {
        let i = self.active_index();
        let doc = &self.designs[i].doc;
        let inputs = export_window::ExportInputs {
            design: doc.design(),
            design_path: doc.path(),
            view: &self.view,
            colour_slot: theme::design_slot(self.designs[i].colour),
        };
        let export = export_window::export_window(ctx, &mut self.export, &inputs);
        if let Some(export_window::ExportAction::ChooseFile(req)) = export {
            self.choose_file(ctx, req, Purpose::Export);
        }
        let active = &self.designs[i];
        let folder = active.doc.path().and_then(Path::parent);
        let measured = measured::measured_window(
            ctx,
            &mut self.measured,
            &active.spectrum,
            &self.view,
            folder,
        );
        if let Some(measured::MeasuredAction::ChooseFile(req)) = measured {
            self.choose_file(ctx, req, Purpose::Measured);
        }
    }
}
