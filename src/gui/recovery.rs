//! Autosave and recovery: each unsaved design is written to its own recovery file a while
//! after its last edit, and every recovery file found at the start is offered back.

use std::path::PathBuf;

use crate::design::file;

use super::AUTOSAVE_DELAY;
use super::app::App;
use super::designs::DesignId;
use super::document::Command;

impl App {
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

    /// Writes each unsaved design to its own recovery file a while after its last edit.
    pub(super) fn autosave(&mut self, ctx: &egui::Context) {
        let Some(dir) = self.recovery_dir.clone() else {
            return;
        };
        let mut problem = None;
        for d in &mut self.designs {
            if !d.doc.is_dirty() || d.autosaved_revision == Some(d.doc.revision()) {
                continue;
            }
            let Some(t) = d.last_edit else { continue };
            let since = t.elapsed();
            if since < AUTOSAVE_DELAY {
                ctx.request_repaint_after(AUTOSAVE_DELAY.saturating_sub(since));
                continue;
            }
            // Marked as done even on failure: the error is shown once, not every frame.
            d.autosaved_revision = Some(d.doc.revision());
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
            if let Err(e) = file::save(path, d.doc.design()) {
                problem = Some(format!(
                    "autosave of \"{}\" failed: {e}",
                    d.doc.design().name
                ));
            }
        }
        if problem.is_some() {
            self.status = problem;
        }
    }

    /// Removes design `id`'s recovery file, if it has one.
    pub(super) fn remove_recovery(&mut self, id: DesignId) {
        let Some(d) = self.design_mut(id) else { return };
        d.autosaved_revision = None;
        if let Some(p) = d.recovery_file.take()
            && p.exists()
            && let Err(e) = std::fs::remove_file(&p)
        {
            log::warn!("cannot remove the recovery file {}: {e}", p.display());
        }
    }

    /// Offers the work found in recovery files, once, at the start.
    pub(super) fn recovery_offer_ui(&mut self, ctx: &egui::Context) {
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
    }
}
