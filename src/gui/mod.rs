//! The design window.
//!
//! Layout: a menu bar; a tab strip of the open designs ([`designs`]); the active design's
//! stack on the left ([`stack`]); in the centre either the spectrum and angle views
//! ([`plots`], with other designs overlaid on request) or the compare view ([`compare`]); a
//! status line at the bottom. Panels read state and push [`Command`]s (edits of the active
//! design) or [`WindowCommand`]s (which design is shown, overlaid, compared or closed);
//! [`App::apply`] and [`App::apply_window`] carry them out at the end of the frame. A finished
//! gesture (no drag, no text field being edited) becomes one undo step of the design edited.
//! Results are cached per design and view settings ([`compute`]); slow sweeps run on a worker.
//!
//! Each open design keeps its own file, undo history, unsaved mark, caches and colour. New and
//! Open add a design; closing one with unsaved changes asks first, and closing the window asks
//! about every unsaved design in turn. Autosave writes one recovery file per unsaved design
//! (`recovery-<session>-<n>.ron` in the recovery folder); all are offered at the next start.

pub mod compare;
pub mod compute;
pub mod designs;
pub mod document;
pub mod handoff;
pub mod history;
pub mod materials;
pub mod measured;
pub mod plots;
mod section;
pub mod stack;
pub mod theme;

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use anyhow::Result;
use egui::{Key, KeyboardShortcut, Modifiers, RichText};

use crate::design::{Design, Layer, Nm, file};

pub use compare::CompareSettings;
pub use compute::{Sweep, SweepCache, SweepResult};
pub use designs::{DesignId, OpenDesign, WindowCommand};
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

/// Opens the window with the designs at `paths` (each in its own tab), or a demo design.
pub fn run(paths: Vec<PathBuf>) -> Result<()> {
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
            let mut paths = paths.into_iter();
            let mut app = App::new(paths.next());
            for p in paths {
                app.apply(Command::Open(p));
            }
            app.recovery_dir = eframe::storage_dir("Stackwise").map(|d| d.join("recovery"));
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
    /// Close the window (asks about every design with unsaved changes).
    Close,
}

enum DialogReply {
    Open(PathBuf),
    SaveAs(DesignId, PathBuf),
    Export(PathBuf),
    Measured(PathBuf),
    Cancelled,
}

/// What the centre of the window shows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum CentralView {
    /// The spectrum and angle views of the active design, with any overlays.
    #[default]
    Plots,
    /// The compare view.
    Compare,
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
    /// The open designs in tab order; never empty.
    pub designs: Vec<OpenDesign>,
    active: DesignId,
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
    session: String,
    recovery_offer: Vec<(PathBuf, Design)>,
    pending: Option<FileAction>,
    dialog_tx: mpsc::Sender<DialogReply>,
    dialog_rx: mpsc::Receiver<DialogReply>,
    dialog_open: bool,
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
    window_commands: Vec<WindowCommand>,
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
            pending: None,
            dialog_tx,
            dialog_rx,
            dialog_open: false,
            allow_close: false,
            windows: Windows::default(),
            handoff: handoff::HandoffState::default(),
            measured: measured::MeasuredState::default(),
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

    fn design_mut(&mut self, id: DesignId) -> Option<&mut OpenDesign> {
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
    fn add_design(&mut self, doc: Document) -> DesignId {
        self.next_id += 1;
        let id = DesignId(self.next_id);
        let taken: Vec<_> = self.designs.iter().map(|d| d.colour).collect();
        let mut d = OpenDesign::new(id, doc, theme::next_design_colour(&taken));
        d.set_inline(self.force_inline);
        if self.designs.is_empty() || !self.view_is_shared() {
            self.view = ViewSettings::for_design(&d.doc.design);
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

    fn activate(&mut self, id: DesignId) {
        if self.active != id {
            self.stack.selected.clear();
        }
        self.active = id;
    }

    /// Looks for autosaved work from earlier sessions (every `recovery*.ron` in the recovery
    /// folder) and offers it.
    pub fn check_recovery(&mut self) {
        let Some(dir) = &self.recovery_dir else {
            return;
        };
        let Ok(entries) = std::fs::read_dir(dir) else {
            return; // no folder yet: nothing was ever autosaved
        };
        let mut files: Vec<PathBuf> = entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| {
                p.extension().is_some_and(|x| x == "ron")
                    && p.file_name()
                        .and_then(|n| n.to_str())
                        .is_some_and(|n| n.starts_with("recovery"))
            })
            .collect();
        files.sort();
        for p in files {
            match file::load(&p) {
                Ok(d) => self.recovery_offer.push((p, d)),
                Err(e) => {
                    self.status = Some(format!("a recovery file could not be read: {e}"));
                }
            }
        }
    }

    /// Queues a command for the active design; it is applied at the end of the current (or
    /// next) frame.
    pub fn push(&mut self, cmd: Command) {
        self.commands.push(cmd);
    }

    /// Queues a window command; it is applied at the end of the current (or next) frame.
    pub fn push_window(&mut self, cmd: WindowCommand) {
        self.window_commands.push(cmd);
    }

    /// Applies `cmd` now, reporting a refusal in the status line. [`Command::New`],
    /// [`Command::Open`] and [`Command::Recover`] add a design (Open of a file already open
    /// shows it instead); every other command goes to the active design. Returns whether it
    /// was carried out.
    pub fn apply(&mut self, cmd: Command) -> bool {
        match cmd {
            Command::New => {
                self.add_design(Document::new(Design::new_empty("Untitled"), None));
                self.status = None;
                true
            }
            Command::Open(p) => {
                if let Some(id) = self.open_with_path(&p) {
                    self.activate(id);
                    self.remember(&p);
                    self.status = None;
                    return true;
                }
                let mut doc = Document::new(Design::new_empty(""), None);
                match doc.apply(Command::Open(p.clone())) {
                    Ok(()) => {
                        self.add_design(doc);
                        self.remember(&p);
                        self.status = None;
                        true
                    }
                    Err(e) => {
                        self.refused(&e.to_string(), true);
                        false
                    }
                }
            }
            Command::Recover(d) => {
                let mut doc = Document::new(Design::new_empty(""), None);
                match doc.apply(Command::Recover(d)) {
                    Ok(()) => {
                        let id = self.add_design(doc);
                        if let Some(o) = self.design_mut(id) {
                            o.last_edit = Some(Instant::now());
                        }
                        true
                    }
                    Err(e) => {
                        self.refused(&e.to_string(), true);
                        false
                    }
                }
            }
            cmd => self.apply_to(self.active, cmd),
        }
    }

    /// Applies a document command to the design `id`.
    fn apply_to(&mut self, id: DesignId, cmd: Command) -> bool {
        let is_file = matches!(cmd, Command::Save | Command::SaveAs(_));
        let Some(d) = self.design_mut(id) else {
            return false;
        };
        let saved_to = match &cmd {
            Command::SaveAs(p) => Some(p.clone()),
            Command::Save => d.doc.path.clone(),
            _ => None,
        };
        let before = d.doc.revision;
        match d.doc.apply(cmd) {
            Ok(()) => {
                if d.doc.revision != before {
                    d.last_edit = Some(Instant::now());
                }
                let clean = !d.doc.is_dirty();
                self.status = None;
                if let Some(p) = saved_to {
                    self.remember(&p);
                }
                if clean {
                    self.remove_recovery(id);
                }
                true
            }
            Err(e) => {
                self.refused(&e.to_string(), is_file);
                false
            }
        }
    }

    fn refused(&mut self, msg: &str, is_file: bool) {
        log::warn!("{msg}");
        if is_file {
            self.error_window = Some(msg.to_owned());
        }
        self.status = Some(msg.to_owned());
    }

    /// The open design whose file is `p` (compared as canonical paths where they exist).
    fn open_with_path(&self, p: &Path) -> Option<DesignId> {
        let canon = |x: &Path| std::fs::canonicalize(x).unwrap_or_else(|_| x.to_path_buf());
        let want = canon(p);
        self.designs
            .iter()
            .find(|d| d.doc.path.as_deref().is_some_and(|q| canon(q) == want))
            .map(|d| d.id)
    }

    /// Applies a window command now (closing a design with unsaved changes asks first).
    pub fn apply_window(&mut self, cmd: WindowCommand) {
        match cmd {
            WindowCommand::Activate(id) => {
                if self.design(id).is_some() {
                    self.activate(id);
                }
            }
            WindowCommand::Close(id) => self.request_close_design(id),
            WindowCommand::SetOverlay { id, on } => set_member(&mut self.overlays, id, on),
            WindowCommand::SetCompared { id, on } => {
                set_member(&mut self.compare.picked, id, on);
            }
        }
    }

    fn request_close_design(&mut self, id: DesignId) {
        let Some(d) = self.design(id) else { return };
        if d.doc.is_dirty() {
            self.activate(id);
            self.pending = Some(FileAction::CloseDesign(id));
        } else {
            self.close_design(id);
        }
    }

    /// Closes design `id` at once (the caller has asked about unsaved changes); the last
    /// design closed leaves an empty one.
    fn close_design(&mut self, id: DesignId) {
        let Some(i) = self.designs.iter().position(|d| d.id == id) else {
            return;
        };
        self.remove_recovery(id);
        self.designs.remove(i);
        self.overlays.retain(|&x| x != id);
        self.compare.picked.retain(|&x| x != id);
        if self.designs.is_empty() {
            self.add_design(Document::new(Design::new_empty("Untitled"), None));
        } else if self.active == id {
            let next = self.designs[i.min(self.designs.len() - 1)].id;
            self.activate(next);
        }
    }

    fn remember(&mut self, p: &Path) {
        self.recent.retain(|r| r != p);
        self.recent.insert(0, p.to_path_buf());
        self.recent.truncate(MAX_RECENT);
    }

    /// The first open design with unsaved changes.
    fn first_dirty(&self) -> Option<DesignId> {
        self.designs.iter().find(|d| d.doc.is_dirty()).map(|d| d.id)
    }

    /// Starts a file action, asking about unsaved changes first where work could be lost.
    pub fn file_action(&mut self, ctx: &egui::Context, action: FileAction) {
        match action {
            FileAction::CloseDesign(id) => self.request_close_design(id),
            FileAction::Close if !self.allow_close => {
                if let Some(id) = self.first_dirty() {
                    self.activate(id);
                    self.pending = Some(FileAction::Close);
                } else {
                    self.do_file_action(ctx, FileAction::Close);
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
            FileAction::OpenDialog => self.spawn_dialog(ctx, None),
            FileAction::Save => {
                if self.doc().path.is_some() {
                    self.apply(Command::Save);
                } else {
                    self.spawn_dialog(ctx, Some(self.active));
                }
            }
            FileAction::SaveAsDialog => self.spawn_dialog(ctx, Some(self.active)),
            FileAction::CloseDesign(id) => self.close_design(id),
            FileAction::Close => {
                let ids: Vec<DesignId> = self.designs.iter().map(|d| d.id).collect();
                for id in ids {
                    self.remove_recovery(id);
                }
                self.allow_close = true;
                ctx.send_viewport_cmd(egui::ViewportCommand::Close);
            }
        }
    }

    /// Opens a file dialog on a named thread: Save As for design `save` if given, else Open.
    fn spawn_dialog(&mut self, ctx: &egui::Context, save: Option<DesignId>) {
        let doc = match save.and_then(|id| self.design(id)) {
            Some(d) => &d.doc,
            None => self.doc(),
        };
        let request = handoff::FileRequest {
            save: save.is_some(),
            filter_name: "Stackwise design (RON)".into(),
            extensions: vec!["ron".into()],
            directory: doc
                .path
                .as_ref()
                .and_then(|p| p.parent().map(Path::to_path_buf)),
            file_name: save.map(|_| format!("{}.ron", doc.design.name)),
        };
        let reply: Box<dyn FnOnce(PathBuf) -> DialogReply + Send> = match save {
            Some(id) => Box::new(move |p| DialogReply::SaveAs(id, p)),
            None => Box::new(DialogReply::Open),
        };
        self.spawn_file_dialog(ctx, request, reply);
    }

    /// Shows `request` on the "file-dialog" thread; the answer arrives through `reply`.
    fn spawn_file_dialog(
        &mut self,
        ctx: &egui::Context,
        request: handoff::FileRequest,
        reply: Box<dyn FnOnce(PathBuf) -> DialogReply + Send>,
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
        let active = &self.designs[self.active_index()];
        let doc = &active.doc;
        let inputs = handoff::ExportInputs {
            design: &doc.design,
            design_path: doc.path.as_deref(),
            view: &self.view,
            colour_slot: theme::design_slot(active.colour),
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
                DialogReply::SaveAs(id, p) => {
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
        for p in dropped {
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
        if shortcut(Modifiers::COMMAND, Key::W) {
            self.push_window(WindowCommand::Close(self.active));
        }
        if ctx.input(|i| i.viewport().close_requested()) && !self.allow_close {
            if let Some(id) = self.first_dirty() {
                ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
                self.activate(id);
                self.pending = Some(FileAction::Close);
            } else {
                let ids: Vec<DesignId> = self.designs.iter().map(|d| d.id).collect();
                for id in ids {
                    self.remove_recovery(id);
                }
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
                stack::stack_ui(ui, &self.designs[i].doc.design, &mut self.stack, &mut out);
                self.commands.extend(out);
            });
        egui::CentralPanel::default().show(ui, |ui| self.central_ui(ui));
        self.dialogs_ui(&ctx);
        self.handoff_windows_ui(&ctx);

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

    fn central_ui(&mut self, ui: &mut egui::Ui) {
        ui.horizontal_wrapped(|ui| {
            ui.selectable_value(&mut self.central, CentralView::Plots, "Spectrum and angle");
            let to_compare = ui
                .selectable_value(&mut self.central, CentralView::Compare, "Compare designs")
                .clicked();
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
                    let text = RichText::new(&d.doc.design.name).color(d.colour);
                    if ui.checkbox(&mut on, text).changed() {
                        self.window_commands
                            .push(WindowCommand::SetOverlay { id: d.id, on });
                    }
                }
            }
        });
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
                            c.is_current(&d.doc.design, s).then_some(plots::Overlay {
                                name: &d.doc.design.name,
                                colour: d.colour,
                                sweeps: c,
                            })
                        })
                        .collect()
                };
                let (over_s, over_a) = (overlays(false), overlays(true));
                let active = &self.designs[i];
                let h = ui.available_height();
                ui.allocate_ui(egui::vec2(ui.available_width(), h * 0.58), |ui| {
                    plots::spectrum_ui(
                        ui,
                        &mut self.view,
                        &active.spectrum,
                        &over_s,
                        &mut self.spectrum_plot,
                        self.measured.overlay().as_slice(),
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
                        name: &d.doc.design.name,
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
        }
    }

    fn apply_queued(&mut self) {
        for cmd in std::mem::take(&mut self.commands) {
            self.apply(cmd);
        }
        for cmd in std::mem::take(&mut self.window_commands) {
            self.apply_window(cmd);
        }
    }

    /// Brings the caches in use up to date: the active design's views, the overlaid designs'
    /// views (same sweeps), and in the compare view the picked designs' spectra and bands.
    fn update_sweeps(&mut self, ctx: &egui::Context) {
        let wake = |c: &egui::Context| {
            let c = c.clone();
            move || c.request_repaint()
        };
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
                d.spectrum.update(&d.doc.design, &s, wake(ctx));
            }
            if shown {
                d.angles.update(&d.doc.design, &a, wake(ctx));
            }
            if compared {
                d.band.update(&d.doc.design, &band, wake(ctx));
            }
            busy |= d.spectrum.busy() || d.angles.busy() || d.band.busy();
        }
        if busy {
            ctx.request_repaint_after(Duration::from_millis(50));
        }
    }

    /// Writes each unsaved design to its own recovery file a while after its last edit.
    fn autosave(&mut self, ctx: &egui::Context) {
        let Some(dir) = self.recovery_dir.clone() else {
            return;
        };
        let mut problem = None;
        for d in &mut self.designs {
            if !d.doc.is_dirty() || d.autosaved_revision == Some(d.doc.revision) {
                continue;
            }
            let Some(t) = d.last_edit else { continue };
            let since = t.elapsed();
            if since < AUTOSAVE_DELAY {
                ctx.request_repaint_after(AUTOSAVE_DELAY.saturating_sub(since));
                continue;
            }
            // Marked as done even on failure: the error is shown once, not every frame.
            d.autosaved_revision = Some(d.doc.revision);
            if let Err(e) = std::fs::create_dir_all(&dir) {
                problem = Some(format!(
                    "autosave failed: cannot create {}: {e}",
                    dir.display()
                ));
                continue;
            }
            let path = d.recovery_file.get_or_insert_with(|| {
                dir.join(format!("recovery-{}-{}.ron", self.session, d.id.0))
            });
            if let Err(e) = file::save(path, &d.doc.design) {
                problem = Some(format!("autosave of \"{}\" failed: {e}", d.doc.design.name));
            }
        }
        if problem.is_some() {
            self.status = problem;
        }
    }

    /// Removes design `id`'s recovery file, if it has one.
    fn remove_recovery(&mut self, id: DesignId) {
        let Some(d) = self.design_mut(id) else { return };
        d.autosaved_revision = None;
        if let Some(p) = d.recovery_file.take()
            && p.exists()
            && let Err(e) = std::fs::remove_file(&p)
        {
            log::warn!("cannot remove the recovery file {}: {e}", p.display());
        }
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
                if ui.button("Close design (Ctrl+W)").clicked() {
                    self.file_action(&ctx, FileAction::CloseDesign(self.active));
                }
                ui.separator();
                if ui.button("Quit").clicked() {
                    self.file_action(&ctx, FileAction::Close);
                }
            });
            ui.menu_button("Edit", |ui| {
                let doc = self.doc();
                let can_undo = doc.history.can_undo(&doc.design);
                let can_redo = doc.history.can_redo(&doc.design);
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
                .doc()
                .path
                .as_ref()
                .map_or_else(|| "not saved yet".to_owned(), |p| p.display().to_string());
            ui.label(RichText::new(file).weak());
        });
    }

    fn status_ui(&self, ui: &mut egui::Ui) {
        let active = self.active();
        ui.horizontal_wrapped(|ui| {
            match active.spectrum.result() {
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
            if let Some(Ok(r)) = active.angles.result() {
                ui.label(format!(
                    "· angles: {} points in {:.1} ms",
                    r.x.len(),
                    r.elapsed.as_secs_f64() * 1000.0
                ));
            }
            if self
                .designs
                .iter()
                .any(|d| d.spectrum.busy() || d.angles.busy() || d.band.busy())
            {
                ui.spinner();
                ui.label("computing…");
            }
            let mut warnings: Vec<&String> = Vec::new();
            for c in [&active.spectrum, &active.angles] {
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

    /// The design the unsaved-changes question is about, for a pending action.
    fn asked_about(&self, action: &FileAction) -> Option<DesignId> {
        match action {
            FileAction::CloseDesign(id) => {
                self.design(*id).filter(|d| d.doc.is_dirty()).map(|d| d.id)
            }
            FileAction::Close => self.first_dirty(),
            _ => None,
        }
    }

    fn unsaved_prompt_ui(&mut self, ctx: &egui::Context, action: &FileAction) {
        let Some(id) = self.asked_about(action) else {
            // Nothing unsaved any more (e.g. saved meanwhile): go ahead.
            self.pending = None;
            self.file_action(ctx, action.clone());
            return;
        };
        let name = self
            .design(id)
            .map(|d| d.doc.design.name.clone())
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
                if *action == FileAction::Close && others > 0 {
                    ui.label(format!(
                        "{others} other open design(s) have unsaved changes too; you will be \
                         asked about each."
                    ));
                }
                ui.horizontal(|ui| {
                    if ui.button("Save").clicked() {
                        let has_path = self.design(id).is_some_and(|d| d.doc.path.is_some());
                        if has_path {
                            if self.apply_to(id, Command::Save) {
                                self.pending = None;
                                self.file_action(ctx, action.clone());
                            }
                        } else {
                            // Continues with `pending` once the Save As dialog answers.
                            self.spawn_dialog(ctx, Some(id));
                        }
                    }
                    if ui.button("Discard changes").clicked() {
                        self.pending = None;
                        self.remove_recovery(id);
                        // Discarded on purpose: the next step must not ask again.
                        if let Some(d) = self.design_mut(id) {
                            d.doc.saved = d.doc.design.clone();
                        }
                        self.file_action(ctx, action.clone());
                    }
                    if ui.button("Cancel").clicked() {
                        self.pending = None;
                    }
                });
            });
    }

    /// The export and measured-curve windows; their file dialogs go through the dialog thread.
    fn handoff_windows_ui(&mut self, ctx: &egui::Context) {
        let i = self.active_index();
        let doc = &self.designs[i].doc;
        let inputs = handoff::ExportInputs {
            design: &doc.design,
            design_path: doc.path.as_deref(),
            view: &self.view,
            colour_slot: theme::design_slot(self.designs[i].colour),
        };
        let export = handoff::handoff_window(ctx, &mut self.handoff, &inputs);
        if let Some(handoff::HandoffAction::ChooseFile(req)) = export {
            self.spawn_file_dialog(ctx, req, Box::new(DialogReply::Export));
        }
        let active = &self.designs[i];
        let folder = active.doc.path.as_deref().and_then(Path::parent);
        let measured = measured::measured_window(
            ctx,
            &mut self.measured,
            &active.spectrum,
            &self.view,
            folder,
        );
        if let Some(measured::MeasuredAction::ChooseFile(req)) = measured {
            self.spawn_file_dialog(ctx, req, Box::new(DialogReply::Measured));
        }
    }

    fn dialogs_ui(&mut self, ctx: &egui::Context) {
        if let Some(msg) = self.error_window.clone() {
            let mut open = true;
            egui::Window::new("Problem with a design file")
                .collapsible(false)
                .anchor(egui::Align2::CENTER_TOP, [0.0, 120.0])
                .default_width(520.0)
                .open(&mut open)
                .show(ctx, |ui| {
                    ui.label(&msg);
                    ui.label(RichText::new("The designs in the window are unchanged.").weak());
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
            self.unsaved_prompt_ui(ctx, &action);
        }
        if !self.recovery_offer.is_empty() {
            egui::Window::new("Recover unsaved work?")
                .collapsible(false)
                .anchor(egui::Align2::CENTER_CENTER, [0.0, 0.0])
                .show(ctx, |ui| {
                    ui.label("Stackwise found unsaved work from an earlier session:");
                    for (_, d) in &self.recovery_offer {
                        ui.label(format!("\"{}\", {} layers", d.name, d.layers.len()));
                    }
                    ui.horizontal(|ui| {
                        if ui.button("Recover").clicked() {
                            for (path, d) in std::mem::take(&mut self.recovery_offer) {
                                if self.apply(Command::Recover(Box::new(d))) {
                                    // The file stays until the work is saved or closed.
                                    let id = self.active;
                                    if let Some(o) = self.design_mut(id) {
                                        o.recovery_file = Some(path);
                                    }
                                }
                            }
                        }
                        if ui.button("Discard it").clicked() {
                            for (path, _) in std::mem::take(&mut self.recovery_offer) {
                                if let Err(e) = std::fs::remove_file(&path) {
                                    log::warn!(
                                        "cannot remove the recovery file {}: {e}",
                                        path.display()
                                    );
                                }
                            }
                        }
                    });
                });
        }
        self.cautions_ui(ctx);
        if self.windows.materials {
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
                            &self.designs[i].doc.design,
                        );
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

/// Adds `id` to `list` (once) or removes it.
fn set_member(list: &mut Vec<DesignId>, id: DesignId, on: bool) {
    if on {
        if !list.contains(&id) {
            list.push(id);
        }
    } else {
        list.retain(|&x| x != id);
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
