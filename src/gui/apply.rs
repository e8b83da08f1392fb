//! Carrying out commands: edits and file-lifecycle requests for a design, and window-level
//! changes (which design is shown, overlaid, compared or closed).

use std::path::Path;
use std::time::Instant;

use crate::design::Design;

use super::app::App;
use super::designs::{DesignId, WindowCommand};
use super::document::{Command, Document};
use super::files::FileAction;

/// Most recent files remembered.
const MAX_RECENT: usize = 10;

impl App {
    /// Queues a command for the active design; it is applied at the end of the current (or
    /// next) frame.
    pub fn push(&mut self, cmd: impl Into<Command>) {
        self.commands.push(cmd.into());
    }

    /// Queues a window command; it is applied at the end of the current (or next) frame.
    pub fn push_window(&mut self, cmd: WindowCommand) {
        self.window_commands.push(cmd);
    }

    /// Applies `cmd` now, reporting a refusal in the status line. [`Command::New`],
    /// [`Command::Open`] and [`Command::Recover`] add a design (Open of a file already open
    /// shows it instead); every other command goes to the active design. Returns whether it
    /// was carried out.
    pub fn apply(&mut self, cmd: impl Into<Command>) -> bool {
        match cmd.into() {
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
    pub(super) fn apply_to(&mut self, id: DesignId, cmd: Command) -> bool {
        let is_file = matches!(cmd, Command::Save | Command::SaveAs(_));
        let Some(d) = self.design_mut(id) else {
            return false;
        };
        let saved_to = match &cmd {
            Command::SaveAs(p) => Some(p.clone()),
            Command::Save => d.doc.path().map(Path::to_path_buf),
            _ => None,
        };
        let before = d.doc.revision();
        match d.doc.apply(cmd) {
            Ok(()) => {
                if d.doc.revision() != before {
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

    pub(super) fn refused(&mut self, msg: &str, is_file: bool) {
        log::warn!("{msg}");
        if is_file {
            self.error_window = Some(msg.to_owned());
        }
        self.status = Some(msg.to_owned());
    }

    /// The open design whose file is `p` (compared as canonical paths where they exist).
    pub(super) fn open_with_path(&self, p: &Path) -> Option<DesignId> {
        let canon = |x: &Path| std::fs::canonicalize(x).unwrap_or_else(|_| x.to_path_buf());
        let want = canon(p);
        self.designs
            .iter()
            .find(|d| d.doc.path().is_some_and(|q| canon(q) == want))
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

    pub(super) fn request_close_design(&mut self, id: DesignId) {
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
    pub(super) fn close_design(&mut self, id: DesignId) {
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

    pub(super) fn remember(&mut self, p: &Path) {
        self.recent.retain(|r| r != p);
        self.recent.insert(0, p.to_path_buf());
        self.recent.truncate(MAX_RECENT);
    }

    /// The first open design with unsaved changes.
    pub(super) fn first_dirty(&self) -> Option<DesignId> {
        self.designs.iter().find(|d| d.doc.is_dirty()).map(|d| d.id)
    }

    pub(super) fn apply_queued(&mut self) {
        for cmd in std::mem::take(&mut self.commands) {
            self.apply(cmd);
        }
        for cmd in std::mem::take(&mut self.window_commands) {
            self.apply_window(cmd);
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
