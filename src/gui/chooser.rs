//! Choosing a file: the request, the desktop's own dialog run as a job, and the window's own
//! chooser for desktops that cannot show one.
//!
//! On Linux the desktop dialog needs a file-dialog portal (through the session bus) or the
//! `zenity` program; without either it cannot open, and the dialog library answers as if the
//! user had cancelled. So the window uses its own chooser when neither is there, and also when
//! a desktop dialog "cancels" faster than a person could ([`TOO_FAST_TO_BE_A_PERSON`]).

use std::path::{Path, PathBuf};
use std::time::Duration;

use egui::{Key, RichText};

use super::jobs::{Job, Waker};

/// A desktop dialog that answers "cancelled" sooner than this never showed.
pub const TOO_FAST_TO_BE_A_PERSON: Duration = Duration::from_millis(400);

/// What the window says once when it falls back to its own chooser.
pub const NO_DESKTOP_DIALOG: &str = "The desktop's file dialog could not be shown (it needs \
a file-dialog portal or zenity); Stackwise uses its own file chooser instead.";

/// A file to ask the user for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FileRequest {
    /// Ask for a file to write (else pick an existing one).
    pub save: bool,
    /// The kind of file, e.g. "CSV table".
    pub filter_name: String,
    /// The extensions offered, without dots (the first is added to a name typed without one).
    pub extensions: Vec<String>,
    /// The folder to start in.
    pub directory: Option<PathBuf>,
    /// The suggested file name (save dialogs).
    pub file_name: Option<String>,
}

/// Whether this desktop may be able to show its own file dialog.
#[must_use]
pub fn desktop_dialog_possible() -> bool {
    if !cfg!(target_os = "linux") {
        return true;
    }
    let bus = std::env::var_os("DBUS_SESSION_BUS_ADDRESS").is_some_and(|v| !v.is_empty());
    bus || on_path("zenity")
}

fn on_path(program: &str) -> bool {
    std::env::var_os("PATH")
        .is_some_and(|paths| std::env::split_paths(&paths).any(|d| d.join(program).is_file()))
}

/// Shows the desktop's dialog for `request` on a job named "file-dialog"; it ends with the
/// path chosen, or `None` when the user cancelled (or the dialog could not show).
pub fn desktop_dialog(
    request: &FileRequest,
    wake: Waker,
) -> std::io::Result<Job<(), Option<PathBuf>, String>> {
    let request = request.clone();
    Job::spawn("file-dialog", 0, wake, move |_| {
        let exts: Vec<&str> = request.extensions.iter().map(String::as_str).collect();
        let mut dialog = rfd::FileDialog::new().add_filter(&request.filter_name, &exts);
        if let Some(d) = &request.directory {
            dialog = dialog.set_directory(d);
        }
        if let Some(name) = &request.file_name {
            dialog = dialog.set_file_name(name);
        }
        Ok(if request.save {
            dialog.save_file()
        } else {
            dialog.pick_file()
        })
    })
}

/// One line of the chooser's listing.
#[derive(Clone, Debug, PartialEq, Eq)]
struct Entry {
    name: String,
    is_dir: bool,
}

/// The window's own file chooser: the folder's subfolders and matching files, and a name
/// field (with the keyboard focus) that takes a name or a whole path.
#[derive(Clone, Debug)]
pub struct Chooser {
    request: FileRequest,
    folder: PathBuf,
    name: String,
    entries: Vec<Entry>,
    problem: Option<String>,
    focus_pending: bool,
    note: Option<&'static str>,
}

/// What the user did in the chooser.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ChooserOutcome {
    /// A file was chosen.
    Chosen(PathBuf),
    /// The chooser was closed without a choice.
    Cancelled,
}

/// The id of the chooser's name field.
#[must_use]
pub fn name_field_id() -> egui::Id {
    egui::Id::unique("stackwise-chooser-name")
}

impl Chooser {
    /// A chooser for `request`, in its folder (else the working folder).
    #[must_use]
    pub fn new(request: FileRequest) -> Self {
        let folder = request
            .directory
            .clone()
            .filter(|d| d.is_dir())
            .or_else(|| std::env::current_dir().ok())
            .unwrap_or_else(|| PathBuf::from("."));
        let name = request.file_name.clone().unwrap_or_default();
        let mut c = Self {
            request,
            folder,
            name,
            entries: Vec::new(),
            problem: None,
            focus_pending: true,
            note: None,
        };
        c.read_folder();
        c
    }

    /// The chooser with a line of explanation at its top.
    #[must_use]
    pub fn with_note(mut self, note: &'static str) -> Self {
        self.note = Some(note);
        self
    }

    /// The folder on show.
    #[must_use]
    pub fn folder(&self) -> &Path {
        &self.folder
    }

    /// The request it answers.
    #[must_use]
    pub fn request(&self) -> &FileRequest {
        &self.request
    }

    fn matches(&self, name: &str) -> bool {
        let lower = name.to_ascii_lowercase();
        self.request
            .extensions
            .iter()
            .any(|e| lower.ends_with(&format!(".{}", e.to_ascii_lowercase())))
    }

    fn read_folder(&mut self) {
        self.entries.clear();
        match std::fs::read_dir(&self.folder) {
            Ok(list) => {
                for e in list.flatten() {
                    let name = e.file_name().to_string_lossy().into_owned();
                    if name.starts_with('.') {
                        continue;
                    }
                    let is_dir = e.path().is_dir();
                    if is_dir || self.matches(&name) {
                        self.entries.push(Entry { name, is_dir });
                    }
                }
                self.entries
                    .sort_by(|a, b| b.is_dir.cmp(&a.is_dir).then(a.name.cmp(&b.name)));
            }
            Err(e) => {
                self.problem = Some(format!("cannot list {}: {e}", self.folder.display()));
            }
        }
    }

    fn go_to(&mut self, folder: PathBuf) {
        self.folder = folder;
        self.problem = None;
        self.read_folder();
    }

    /// What the name field means: a folder to open, a file chosen, or a problem to show.
    /// A relative name is taken in the folder on show; a save without an extension gets the
    /// first one offered.
    pub fn submit(&mut self) -> Option<PathBuf> {
        let typed = self.name.trim();
        if typed.is_empty() {
            self.problem = Some("type a file name, or a whole path".into());
            return None;
        }
        let path = self.folder.join(typed);
        if path.is_dir() {
            self.name.clear();
            self.go_to(path);
            return None;
        }
        if self.request.save {
            let path = match (path.extension(), self.request.extensions.first()) {
                (None, Some(ext)) => path.with_extension(ext),
                _ => path,
            };
            match path.parent() {
                Some(p) if p.as_os_str().is_empty() || p.is_dir() => Some(path),
                Some(p) => {
                    self.problem = Some(format!("there is no folder {}", p.display()));
                    None
                }
                None => Some(path),
            }
        } else if path.is_file() {
            Some(path)
        } else {
            self.problem = Some(format!("there is no file {}", path.display()));
            None
        }
    }

    /// Draws the chooser window; returns what the user did, once.
    pub fn show(&mut self, ctx: &egui::Context) -> Option<ChooserOutcome> {
        let title = if self.request.save {
            "Save to file"
        } else {
            "Open file"
        };
        let mut open = true;
        let mut outcome = None;
        egui::Window::new(title)
            .collapsible(false)
            .default_width(520.0)
            .anchor(egui::Align2::CENTER_CENTER, [0.0, 0.0])
            .open(&mut open)
            .show(ctx, |ui| outcome = self.contents_ui(ui));
        if !open {
            outcome = Some(ChooserOutcome::Cancelled);
        }
        outcome
    }

    /// The folder's listing; true when a file was double-clicked (chosen).
    fn listing_ui(&mut self, ui: &mut egui::Ui) -> bool {
        let mut chosen = false;
        let mut go = None;
        egui::ScrollArea::vertical()
            .max_height(260.0)
            .show(ui, |ui| {
                if self.entries.is_empty() {
                    ui.label(RichText::new("no matching files here").weak());
                }
                for e in &self.entries {
                    let text = if e.is_dir {
                        format!("{}/", e.name)
                    } else {
                        e.name.clone()
                    };
                    let r = ui.selectable_label(!e.is_dir && self.name == e.name, text);
                    if r.clicked() {
                        go = Some(e.clone());
                    }
                    if r.double_clicked() && !e.is_dir {
                        chosen = true;
                    }
                }
            });
        if let Some(e) = go {
            if e.is_dir {
                self.go_to(self.folder.join(&e.name));
            } else {
                self.name = e.name;
            }
        }
        chosen
    }

    fn contents_ui(&mut self, ui: &mut egui::Ui) -> Option<ChooserOutcome> {
        let mut outcome = None;
        if let Some(note) = self.note {
            ui.label(RichText::new(note).weak());
        }
        ui.horizontal(|ui| {
            let up = self.folder.parent().map(Path::to_path_buf);
            if ui
                .add_enabled(up.is_some(), egui::Button::new("Up one folder"))
                .on_hover_text("the folder above")
                .clicked()
                && let Some(up) = up
            {
                self.go_to(up);
            }
            ui.label(RichText::new(self.folder.display().to_string()).monospace());
        });
        ui.label(
            RichText::new(format!(
                "{} ({})",
                self.request.filter_name,
                self.request
                    .extensions
                    .iter()
                    .map(|e| format!("*.{e}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ))
            .weak(),
        );
        if self.listing_ui(ui) {
            outcome = Some(());
        }
        let mut submit = outcome.is_some();
        ui.horizontal(|ui| {
            let label = ui.label("File name or path");
            let field = ui
                .add(
                    egui::TextEdit::singleline(&mut self.name)
                        .id(name_field_id())
                        .desired_width(320.0),
                )
                .labelled_by(label.id);
            if self.focus_pending {
                // Focused with the suggestion selected, so typing a path replaces it.
                field.request_focus();
                if let Some(mut state) = egui::TextEdit::load_state(ui.ctx(), name_field_id()) {
                    let all = egui::text::CCursorRange::two(
                        egui::text::CCursor::new(0),
                        egui::text::CCursor::new(self.name.chars().count()),
                    );
                    state.cursor.set_char_range(Some(all));
                    state.store(ui.ctx(), name_field_id());
                }
                self.focus_pending = false;
            }
            if field.lost_focus() && ui.input(|i| i.key_pressed(Key::Enter)) {
                submit = true;
            }
        });
        if let Some(p) = &self.problem {
            ui.colored_label(ui.visuals().error_fg_color, p);
        }
        let mut result = None;
        ui.horizontal(|ui| {
            let label = if self.request.save { "Save" } else { "Open" };
            if ui.button(label).clicked() {
                submit = true;
            }
            if ui.button("Cancel").clicked() {
                result = Some(ChooserOutcome::Cancelled);
            }
        });
        if submit && let Some(p) = self.submit() {
            result = Some(ChooserOutcome::Chosen(p));
        } else if submit {
            // Back to the field for another try.
            self.focus_pending = true;
        }
        result
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn request(save: bool, dir: &Path) -> FileRequest {
        FileRequest {
            save,
            filter_name: "Stackwise design".into(),
            extensions: vec!["ron".into()],
            directory: Some(dir.to_path_buf()),
            file_name: None,
        }
    }

    #[test]
    fn the_listing_shows_folders_first_and_only_matching_files() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::create_dir(dir.path().join("sub")).unwrap();
        std::fs::write(dir.path().join("b.ron"), "").unwrap();
        std::fs::write(dir.path().join("a.RON"), "").unwrap();
        std::fs::write(dir.path().join("notes.txt"), "").unwrap();
        let c = Chooser::new(request(false, dir.path()));
        let names: Vec<&str> = c.entries.iter().map(|e| e.name.as_str()).collect();
        assert_eq!(
            names,
            ["sub", "a.RON", "b.ron"],
            "folders first, then matches"
        );
    }

    #[test]
    fn a_typed_name_or_path_is_resolved_with_the_extension_added() {
        let dir = tempfile::tempdir().unwrap();
        let mut c = Chooser::new(request(true, dir.path()));
        c.name = "mirror".into();
        assert_eq!(c.submit(), Some(dir.path().join("mirror.ron")), "relative");
        let other = tempfile::tempdir().unwrap();
        c.name = other.path().join("x.ron").display().to_string();
        assert_eq!(c.submit(), Some(other.path().join("x.ron")), "a whole path");
        c.name = dir.path().join("nowhere/x.ron").display().to_string();
        assert_eq!(c.submit(), None, "no such folder");
        assert!(
            c.problem.as_deref().unwrap().contains("no folder"),
            "{:?}",
            c.problem
        );
    }

    #[test]
    fn open_needs_an_existing_file_and_a_folder_name_enters_it() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::create_dir(dir.path().join("sub")).unwrap();
        std::fs::write(dir.path().join("sub/d.ron"), "").unwrap();
        let mut c = Chooser::new(request(false, dir.path()));
        c.name = "missing.ron".into();
        assert_eq!(c.submit(), None, "missing");
        c.name = "sub".into();
        assert_eq!(c.submit(), None, "a folder is entered, not chosen");
        assert_eq!(c.folder(), dir.path().join("sub"), "entered");
        c.name = "d.ron".into();
        assert_eq!(c.submit(), Some(dir.path().join("sub/d.ron")), "chosen");
    }
}
