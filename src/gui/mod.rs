//! The design window.
//!
//! Layout: a menu bar; the stack on the left ([`stack`]); the spectrum and angle views in the
//! centre ([`plots`]); a status line at the bottom. Panels read the [`Document`] and push
//! [`Command`]s, which [`App::show`] applies through [`Document::apply`] at the end of the
//! frame. A finished gesture (no drag, no text field being edited) becomes one undo step.
//! Results are cached per design and view settings ([`compute`]); slow sweeps run on a worker.

pub mod compute;
pub mod document;
pub mod handoff;
pub mod history;
pub mod materials;
pub mod measured;
pub mod plots;
pub mod stack;
pub mod theme;

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use anyhow::Result;
use egui::{Key, KeyboardShortcut, Modifiers, RichText};

use crate::design::{Design, Layer, Nm, file};

pub use compute::{Sweep, SweepCache, SweepResult};
pub use document::{Command, CommandError, Document};
pub use history::History;
pub use plots::ViewSettings;
pub use stack::StackUi;

/// Key under which window preferences (recent files) live in eframe storage.
pub const APP_KEY: &str = eframe::APP_KEY;

/// Unsaved work is written to the recovery file this long after the last edit.
pub const AUTOSAVE_DELAY: Duration = Duration::from_secs(3);

/// Most recent files remembered.
const MAX_RECENT: usize = 10;

/// Opens the window, with the design at `path` loaded if given (else a demo design).
pub fn run(path: Option<PathBuf>) -> Result<()> {
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_inner_size([1400.0, 900.0])
            .with_min_inner_size([800.0, 500.0])
            .with_title("Stackwise")
            .with_drag_and_drop(true),
        renderer: eframe::Renderer::Glow,
        ..Default::default()
    };
    eframe::run_native(
        "Stackwise",
        options,
        Box::new(move |cc| {
            let mut app = App::new(path);
            app.recovery_path = eframe::storage_dir("Stackwise").map(|d| d.join("recovery.ron"));
            app.check_recovery();
            if let Some(storage) = cc.storage
                && let Some(prefs) = eframe::get_value::<Prefs>(storage, APP_KEY)
            {
                app.recent = prefs.recent;
            }
            Ok(Box::new(app))
        }),
    )
    .map_err(|e| anyhow::anyhow!("cannot open the window: {e}"))
}

/// Window preferences kept in eframe storage (never designs).
#[derive(Clone, Debug, Default, serde::Serialize, serde::Deserialize)]
struct Prefs {
    recent: Vec<PathBuf>,
}

/// The example design shown when no file is given.
const DEMO_RON: &str = include_str!("../../designs/camera-window-ar.ron");

/// The demo design: the camera-window AR example, or (should that ever fail to read) a
/// four-layer TiO2/SiO2 anti-reflection coating on fused silica built here.
#[must_use]
pub fn demo_design() -> Design {
    match file::from_ron_str(DEMO_RON) {
        Ok(d) => d,
        Err(e) => {
            log::error!("the embedded demo design does not read: {e}");
            fallback_demo()
        }
    }
}

fn fallback_demo() -> Design {
    let mut d = Design::new_empty("Demo: visible AR on fused silica");
    d.reference_nm = 550.0;
    // Substrate side first: a thin high/low pair, then a thick high and a quarter-wave low.
    for (m, nm) in [
        ("TiO2", 12.0),
        ("SiO2", 36.0),
        ("TiO2", 112.0),
        ("SiO2", 92.0),
    ] {
        if let Ok(nm) = Nm::new(nm) {
            d.layers.push(Layer::new(m, nm));
        }
    }
    d
}

/// A file action that may have to wait for the unsaved-changes question.
#[derive(Clone, Debug, PartialEq)]
pub enum FileAction {
    /// Start an empty design.
    New,
    /// Ask for a file and open it.
    OpenDialog,
    /// Open this file.
    Open(PathBuf),
    /// Save (asks for a file if the design has none).
    Save,
    /// Ask for a file and save to it.
    SaveAsDialog,
    /// Close the window.
    Close,
}

enum DialogReply {
    Open(PathBuf),
    SaveAs(PathBuf),
    Export(PathBuf),
    Measured(PathBuf),
    Cancelled,
}

/// Side windows that can be open beside the main layout.
#[derive(Debug, Default)]
struct Windows {
    /// The materials browser.
    materials: bool,
    /// The cautions.
    cautions: bool,
}

/// The whole window's state.
pub struct App {
    /// The open design.
    pub doc: Document,
    /// Left-panel state (selection, notation).
    pub stack: StackUi,
    /// View settings of the centre plots.
    pub view: ViewSettings,
    /// Cached spectrum.
    pub spectrum: SweepCache,
    /// Cached angle scan.
    pub angles: SweepCache,
    spectrum_plot: plots::PlotCache,
    angle_plot: plots::PlotCache,
    /// Last refusal or error, for the status line.
    pub status: Option<String>,
    /// A file error shown in its own window until dismissed.
    pub error_window: Option<String>,
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// Where unsaved work is autosaved; `None` disables autosave (tests).
    pub recovery_path: Option<PathBuf>,
    recovery_offer: Option<Design>,
    pending: Option<FileAction>,
    dialog_tx: mpsc::Sender<DialogReply>,
    dialog_rx: mpsc::Receiver<DialogReply>,
    dialog_open: bool,
    last_edit: Option<Instant>,
    autosaved_revision: Option<u64>,
    allow_close: bool,
    /// Which side windows are open.
    windows: Windows,
    /// The export window.
    pub handoff: handoff::HandoffState,
    /// The measured curve over the spectrum.
    pub measured: measured::MeasuredState,
    browser: materials::BrowserState,
    title_sent: String,
    commands: Vec<Command>,
}

impl App {
    /// The window's state with the design at `path`, or the demo design when `path` is `None`
    /// or cannot be opened (the error is then shown).
    #[must_use]
    pub fn new(path: Option<PathBuf>) -> Self {
        let (dialog_tx, dialog_rx) = mpsc::channel();
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
        let view = ViewSettings::for_design(&doc.design);
        let mut recent = Vec::new();
        if let Some(p) = &doc.path {
            recent.push(p.clone());
        }
        Self {
            doc,
            stack: StackUi::default(),
            view,
            spectrum: SweepCache::new("spectrum-sweep"),
            angles: SweepCache::new("angle-sweep"),
            spectrum_plot: plots::PlotCache::default(),
            angle_plot: plots::PlotCache::default(),
            status: error.clone(),
            error_window: error,
            recent,
            recovery_path: None,
            recovery_offer: None,
            pending: None,
            dialog_tx,
            dialog_rx,
            dialog_open: false,
            last_edit: None,
            autosaved_revision: None,
            allow_close: false,
            windows: Windows::default(),
            handoff: handoff::HandoffState::default(),
            measured: measured::MeasuredState::default(),
            browser: materials::BrowserState::default(),
            title_sent: String::new(),
            commands: Vec::new(),
        }
    }

    /// Looks for autosaved work from an earlier session and offers it.
    pub fn check_recovery(&mut self) {
        let Some(p) = &self.recovery_path else { return };
        if !p.exists() {
            return;
        }
        match file::load(p) {
            Ok(d) => self.recovery_offer = Some(d),
            Err(e) => {
                self.status = Some(format!("the recovery file could not be read: {e}"));
            }
        }
    }

    /// Queues a command; it is applied at the end of the current (or next) frame.
    pub fn push(&mut self, cmd: Command) {
        self.commands.push(cmd);
    }

    /// Applies `cmd` now, reporting a refusal in the status line. Returns whether it was
    /// carried out.
    pub fn apply(&mut self, cmd: Command) -> bool {
        let is_file = matches!(cmd, Command::Open(_) | Command::Save | Command::SaveAs(_));
        let opened = match &cmd {
            Command::Open(p) | Command::SaveAs(p) => Some(p.clone()),
            Command::Save => self.doc.path.clone(),
            _ => None,
        };
        let resets = matches!(cmd, Command::New | Command::Open(_) | Command::Recover(_));
        let before = self.doc.revision;
        match self.doc.apply(cmd) {
            Ok(()) => {
                self.status = None;
                if let Some(p) = opened {
                    self.remember(&p);
                }
                if resets {
                    self.view = ViewSettings::for_design(&self.doc.design);
                    self.stack.selected.clear();
                }
                if self.doc.revision != before {
                    self.last_edit = Some(Instant::now());
                }
                if !self.doc.is_dirty() {
                    self.remove_recovery();
                }
                true
            }
            Err(e) => {
                let msg = e.to_string();
                log::warn!("{msg}");
                if is_file {
                    self.error_window = Some(msg.clone());
                }
                self.status = Some(msg);
                false
            }
        }
    }

    fn remember(&mut self, p: &Path) {
        self.recent.retain(|r| r != p);
        self.recent.insert(0, p.to_path_buf());
        self.recent.truncate(MAX_RECENT);
    }

    /// Starts a file action, asking about unsaved changes first where work could be lost.
    pub fn file_action(&mut self, ctx: &egui::Context, action: FileAction) {
        let discards = matches!(
            action,
            FileAction::New | FileAction::OpenDialog | FileAction::Open(_) | FileAction::Close
        );
        if discards && self.doc.is_dirty() && !self.allow_close {
            self.pending = Some(action);
            return;
        }
        self.do_file_action(ctx, action);
    }

    fn do_file_action(&mut self, ctx: &egui::Context, action: FileAction) {
        match action {
            FileAction::New => {
                self.apply(Command::New);
            }
            FileAction::Open(p) => {
                self.apply(Command::Open(p));
            }
            FileAction::OpenDialog => self.spawn_dialog(ctx, false),
            FileAction::Save => {
                if self.doc.path.is_some() {
                    self.apply(Command::Save);
                } else {
                    self.spawn_dialog(ctx, true);
                }
            }
            FileAction::SaveAsDialog => self.spawn_dialog(ctx, true),
            FileAction::Close => {
                self.remove_recovery();
                self.allow_close = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
        }
    }

    fn spawn_dialog(&mut self, ctx: &egui::Context, save: bool) {
        let request = handoff::FileRequest {
            save,
            filter_name: "Stackwise design (RON)".into(),
            extensions: vec!["ron".into()],
            directory: self
                .doc
                .path
                .as_ref()
                .and_then(|p| p.parent().map(Path::to_path_buf)),
            file_name: save.then(|| format!("{}.ron", self.doc.design.name)),
        };
        let reply = if save {
            DialogReply::SaveAs
        } else {
            DialogReply::Open
        };
        self.spawn_file_dialog(ctx, request, reply);
    }

    /// Shows `request` on the "file-dialog" thread; the answer arrives through `reply`.
    fn spawn_file_dialog(
        &mut self,
        ctx: &egui::Context,
        request: handoff::FileRequest,
        reply: fn(PathBuf) -> DialogReply,
    ) {
        if self.dialog_open {
            return;
        }
        let tx = self.dialog_tx.clone();
        let ctx = ctx.clone();
        let spawned = std::thread::Builder::new()
            .name("file-dialog".into())
            .spawn(move || {
                let mut dialog = rfd::AsyncFileDialog::new()
                    .add_filter(&request.filter_name, &request.extensions);
                if let Some(d) = request.directory {
                    dialog = dialog.set_directory(d);
                }
                if let Some(name) = request.file_name {
                    dialog = dialog.set_file_name(name);
                }
                let picked = if request.save {
                    pollster::block_on(dialog.save_file())
                } else {
                    pollster::block_on(dialog.pick_file())
                };
                let answer = picked.map_or(DialogReply::Cancelled, |h| reply(h.path().into()));
                // The window may have closed meanwhile; then nobody needs the answer.
                tx.send(answer).ok();
                ctx.request_repaint();
            });
        match spawned {
            Ok(_) => self.dialog_open = true,
            Err(e) => self.status = Some(format!("cannot open a file dialog: {e}")),
        }
    }

    /// Writes the export chosen in the export window to `path`, as the Save dialog's answer
    /// does; the outcome shows in the export window (and errors in the status line).
    pub fn export_to(&mut self, path: &Path) -> Result<PathBuf, String> {
        let inputs = handoff::ExportInputs {
            design: &self.doc.design,
            design_path: self.doc.path.as_deref(),
            view: &self.view,
        };
        let written = self.handoff.export_to(&inputs, path);
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

    fn handle_input(&mut self, ctx: &egui::Context) {
        while let Ok(reply) = self.dialog_rx.try_recv() {
            self.dialog_open = false;
            match reply {
                DialogReply::Open(p) => {
                    self.apply(Command::Open(p));
                }
                DialogReply::SaveAs(p) => {
                    let p = if p.extension().is_none() {
                        p.with_extension("ron")
                    } else {
                        p
                    };
                    if self.apply(Command::SaveAs(p))
                        && let Some(next) = self.pending.take()
                    {
                        self.do_file_action(ctx, next);
                    }
                }
                DialogReply::Export(p) => {
                    // The outcome shows in the export window.
                    self.export_to(&p).ok();
                }
                DialogReply::Measured(p) => {
                    // The outcome shows in the measured-curve window.
                    self.load_measured(&p).ok();
                }
                DialogReply::Cancelled => {}
            }
        }
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .collect()
        });
        if let Some(p) = dropped.into_iter().next() {
            self.file_action(ctx, FileAction::Open(p));
        }
        let shortcut = |m: Modifiers, k: Key| {
            ctx.input_mut(|i| i.consume_shortcut(&KeyboardShortcut::new(m, k)))
        };
        let cmd_shift = Modifiers::COMMAND | Modifiers::SHIFT;
        if shortcut(cmd_shift, Key::Z) || shortcut(Modifiers::COMMAND, Key::Y) {
            self.push(Command::Redo);
        } else if shortcut(Modifiers::COMMAND, Key::Z) {
            self.push(Command::Undo);
        }
        if shortcut(cmd_shift, Key::S) {
            self.file_action(ctx, FileAction::SaveAsDialog);
        } else if shortcut(Modifiers::COMMAND, Key::S) {
            self.file_action(ctx, FileAction::Save);
        }
        if shortcut(Modifiers::COMMAND, Key::O) {
            self.file_action(ctx, FileAction::OpenDialog);
        }
        if shortcut(Modifiers::COMMAND, Key::N) {
            self.file_action(ctx, FileAction::New);
        }
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close {
            if self.doc.is_dirty() {
                ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
                self.pending = Some(FileAction::Close);
            } else {
                self.remove_recovery();
            }
        }
    }

    /// The whole window's contents for one frame; `App` as an `eframe::App` calls this, and
    /// tests call it directly.
    pub fn show(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        self.handle_input(&ctx);
        self.apply_queued();
        self.update_sweeps(&ctx);

        egui::Panel::top("menu").show(ui, |ui| self.menu_ui(ui));
        egui::Panel::bottom("status").show(ui, |ui| self.status_ui(ui));
        egui::Panel::left("stack")
            .resizable(true)
            .default_size(560.0)
            .show(ui, |ui| {
                let mut out = Vec::new();
                stack::stack_ui(ui, &self.doc.design, &mut self.stack, &mut out);
                self.commands.extend(out);
            });
        egui::CentralPanel::default().show(ui, |ui| {
            let h = ui.available_height();
            ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.58), |ui| {
                plots::spectrum_ui(
                    ui,
                    &mut self.view,
                    &self.spectrum,
                    &mut self.spectrum_plot,
                    self.measured.overlay().as_slice(),
                );
            });
            ui.separator();
            plots::angle_ui(ui, &mut self.view, &self.angles, &mut self.angle_plot);
        });
        self.dialogs_ui(&ctx);
        self.handoff_windows_ui(&ctx);

        if !self.commands.is_empty() {
            self.apply_queued();
            ctx.request_repaint();
        }
        let busy = ctx.egui_is_using_pointer() || ctx.memory(|m| m.focused().is_some());
        if !busy {
            self.doc.commit();
        }
        self.autosave(&ctx);
        let title = self.doc.title();
        if title != self.title_sent {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.title_sent = title;
        }
    }

    fn apply_queued(&mut self) {
        for cmd in std::mem::take(&mut self.commands) {
            self.apply(cmd);
        }
    }

    fn update_sweeps(&mut self, ctx: &egui::Context) {
        let wake = |c: &egui::Context| {
            let c = c.clone();
            move || c.request_repaint()
        };
        let s = self.view.spectrum_sweep();
        self.spectrum.update(&self.doc.design, &s, wake(ctx));
        let a = self.view.angle_sweep();
        self.angles.update(&self.doc.design, &a, wake(ctx));
        if self.spectrum.busy() || self.angles.busy() {
            ctx.request_repaint_after(Duration::from_millis(50));
        }
    }

    fn autosave(&mut self, ctx: &egui::Context) {
        let Some(path) = self.recovery_path.clone() else {
            return;
        };
        if !self.doc.is_dirty() || self.autosaved_revision == Some(self.doc.revision) {
            return;
        }
        let Some(t) = self.last_edit else { return };
        let since = t.elapsed();
        if since < AUTOSAVE_DELAY {
            ctx.request_repaint_after(AUTOSAVE_DELAY.saturating_sub(since));
            return;
        }
        if let Some(dir) = path.parent()
            && let Err(e) = std::fs::create_dir_all(dir)
        {
            self.status = Some(format!(
                "autosave failed: cannot create {}: {e}",
                dir.display()
            ));
            self.autosaved_revision = Some(self.doc.revision);
            return;
        }
        match file::save(&path, &self.doc.design) {
            Ok(()) => self.autosaved_revision = Some(self.doc.revision),
            Err(e) => {
                self.status = Some(format!("autosave failed: {e}"));
                self.autosaved_revision = Some(self.doc.revision);
            }
        }
    }

    fn remove_recovery(&mut self) {
        if let Some(p) = &self.recovery_path
            && p.exists()
            && let Err(e) = std::fs::remove_file(p)
        {
            log::warn!("cannot remove the recovery file {}: {e}", p.display());
        }
        self.autosaved_revision = None;
    }

    fn menu_ui(&mut self, ui: &mut egui::Ui) {
        let ctx = ui.ctx().clone();
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui.button("New (Ctrl+N)").clicked() {
                    self.file_action(&ctx, FileAction::New);
                }
                if ui.button("Open… (Ctrl+O)").clicked() {
                    self.file_action(&ctx, FileAction::OpenDialog);
                }
                ui.menu_button("Open recent", |ui| {
                    if self.recent.is_empty() {
                        ui.label("no recent files");
                    }
                    for p in self.recent.clone() {
                        if ui.button(p.display().to_string()).clicked() {
                            self.file_action(&ctx, FileAction::Open(p));
                        }
                    }
                });
                if ui.button("Save (Ctrl+S)").clicked() {
                    self.file_action(&ctx, FileAction::Save);
                }
                if ui.button("Save as… (Ctrl+Shift+S)").clicked() {
                    self.file_action(&ctx, FileAction::SaveAsDialog);
                }
                ui.separator();
                if ui.button("Quit").clicked() {
                    self.file_action(&ctx, FileAction::Close);
                }
            });
            ui.menu_button("Edit", |ui| {
                let can_undo = self.doc.history.can_undo(&self.doc.design);
                let can_redo = self.doc.history.can_redo(&self.doc.design);
                if ui
                    .add_enabled(can_undo, egui::Button::new("Undo (Ctrl+Z)"))
                    .clicked()
                {
                    self.push(Command::Undo);
                }
                if ui
                    .add_enabled(can_redo, egui::Button::new("Redo (Ctrl+Shift+Z)"))
                    .clicked()
                {
                    self.push(Command::Redo);
                }
            });
            if ui.button("Materials…").clicked() {
                self.windows.materials = !self.windows.materials;
            }
            if ui.button("Cautions").clicked() {
                self.windows.cautions = !self.windows.cautions;
            }
            if ui.button("Export…").clicked() {
                self.handoff.open = !self.handoff.open;
            }
            if ui.button("Measured curve…").clicked() {
                self.measured.open = !self.measured.open;
            }
            ui.separator();
            let file = self
                .doc
                .path
                .as_ref()
                .map_or_else(|| "not saved yet".to_owned(), |p| p.display().to_string());
            ui.label(RichText::new(file).weak());
        });
    }

    fn status_ui(&self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            match self.spectrum.result() {
                Some(Ok(r)) => {
                    ui.label(format!(
                        "spectrum: {} points in {:.1} ms",
                        r.x.len(),
                        r.elapsed.as_secs_f64() * 1000.0
                    ));
                }
                Some(Err(_)) => {
                    ui.colored_label(ui.visuals().error_fg_color, "spectrum: not computed");
                }
                None => {
                    ui.label("spectrum: —");
                }
            }
            if let Some(Ok(r)) = self.angles.result() {
                ui.label(format!(
                    "· angles: {} points in {:.1} ms",
                    r.x.len(),
                    r.elapsed.as_secs_f64() * 1000.0
                ));
            }
            if self.spectrum.busy() || self.angles.busy() {
                ui.spinner();
                ui.label("computing…");
            }
            let mut warnings: Vec<&String> = Vec::new();
            for c in [&self.spectrum, &self.angles] {
                if let Some(Ok(r)) = c.result() {
                    for w in &r.warnings {
                        if !warnings.contains(&w) {
                            warnings.push(w);
                        }
                    }
                }
            }
            for w in warnings {
                ui.colored_label(ui.visuals().warn_fg_color, format!("warning: {w}"));
            }
            if let Some(s) = &self.status {
                ui.colored_label(ui.visuals().error_fg_color, s);
            }
        });
    }

    fn cautions_ui(&mut self, ctx: &egui::Context) {
        if !self.windows.cautions {
            return;
        }
        let mut open = true;
        egui::Window::new("Cautions")
            .open(&mut open)
            .default_width(520.0)
            .show(ctx, |ui| {
                for c in crate::cautions::ALL {
                    ui.label(c);
                    ui.add_space(6.0);
                }
            });
        self.windows.cautions = open;
    }

    /// The export and measured-curve windows; their file dialogs go through the dialog thread.
    fn handoff_windows_ui(&mut self, ctx: &egui::Context) {
        let inputs = handoff::ExportInputs {
            design: &self.doc.design,
            design_path: self.doc.path.as_deref(),
            view: &self.view,
        };
        let export = handoff::handoff_window(ctx, &mut self.handoff, &inputs);
        if let Some(handoff::HandoffAction::ChooseFile(req)) = export {
            self.spawn_file_dialog(ctx, req, DialogReply::Export);
        }
        let folder = self.doc.path.as_deref().and_then(Path::parent);
        let measured =
            measured::measured_window(ctx, &mut self.measured, &self.spectrum, &self.view, folder);
        if let Some(measured::MeasuredAction::ChooseFile(req)) = measured {
            self.spawn_file_dialog(ctx, req, DialogReply::Measured);
        }
    }

    fn dialogs_ui(&mut self, ctx: &egui::Context) {
        if let Some(msg) = self.error_window.clone() {
            let mut open = true;
            egui::Window::new("Problem with a design file")
                .collapsible(false)
                .open(&mut open)
                .show(ctx, |ui| {
                    ui.label(&msg);
                    ui.label(RichText::new("The design in the window is unchanged.").weak());
                    if ui.button("OK").clicked() {
                        self.error_window = None;
                    }
                });
            if !open {
                self.error_window = None;
            }
        }
        if let Some(action) = self.pending.clone()
            && !self.dialog_open
        {
            egui::Window::new("Unsaved changes")
                .collapsible(false)
                .resizable(false)
                .anchor(egui::Align2::CENTER_CENTER, [0.0, 0.0])
                .show(ctx, |ui| {
                    ui.label(format!(
                        "\"{}\" has changes that are not saved.",
                        self.doc.design.name
                    ));
                    ui.horizontal(|ui| {
                        if ui.button("Save").clicked() {
                            if self.doc.path.is_some() {
                                if self.apply(Command::Save) {
                                    self.pending = None;
                                    self.do_file_action(ctx, action.clone());
                                }
                            } else {
                                // Continues with `pending` once the Save As dialog answers.
                                self.spawn_dialog(ctx, true);
                            }
                        }
                        if ui.button("Discard changes").clicked() {
                            self.pending = None;
                            self.remove_recovery();
                            // Discarded on purpose: the next action must not ask again.
                            self.doc.saved = self.doc.design.clone();
                            self.do_file_action(ctx, action.clone());
                        }
                        if ui.button("Cancel").clicked() {
                            self.pending = None;
                        }
                    });
                });
        }
        if let Some(d) = self.recovery_offer.clone() {
            egui::Window::new("Recover unsaved work?")
                .collapsible(false)
                .anchor(egui::Align2::CENTER_CENTER, [0.0, 0.0])
                .show(ctx, |ui| {
                    ui.label(format!(
                        "Stackwise found unsaved work from an earlier session: \"{}\", {} layers.",
                        d.name,
                        d.layers.len()
                    ));
                    ui.horizontal(|ui| {
                        if ui.button("Recover").clicked() {
                            self.recovery_offer = None;
                            self.apply(Command::Recover(Box::new(d.clone())));
                        }
                        if ui.button("Discard it").clicked() {
                            self.recovery_offer = None;
                            self.remove_recovery();
                        }
                    });
                });
        }
        self.cautions_ui(ctx);
        if self.windows.materials {
            let mut open = true;
            let mut action = None;
            egui::Window::new("Materials")
                .open(&mut open)
                .default_size([640.0, 560.0])
                .show(ctx, |ui| {
                    egui::ScrollArea::vertical().show(ui, |ui| {
                        action = materials::materials_ui(ui, &mut self.browser, &self.doc.design);
                    });
                });
            self.windows.materials = open;
            if let Some(a) = action {
                self.push(match a {
                    materials::BrowserAction::AddMaterial(m) => Command::AddMaterial(m),
                    materials::BrowserAction::ReplaceMaterial { old_name, material } => {
                        Command::ReplaceMaterial { old_name, material }
                    }
                    materials::BrowserAction::RemoveMaterial(n) => Command::RemoveMaterial(n),
                });
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
