//! The open designs: each keeps its own document (file, history, unsaved mark), its own
//! cached sweeps and its own colour; the tab strip switches between them.

use std::path::PathBuf;
use std::time::Instant;

use egui::{Color32, RichText};

use super::compute::SweepCache;
use super::document::Document;

/// Identifies an open design for as long as it is open (indices shift when one closes).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct DesignId(pub u64);

/// One open design and everything the window keeps for it.
pub struct OpenDesign {
    /// Which design.
    pub id: DesignId,
    /// Its document: design, file, undo history, unsaved mark.
    pub doc: Document,
    /// Its colour in overlays, the compare view and the tab strip.
    pub colour: Color32,
    /// Cached spectrum over the spectrum view's sweep.
    pub spectrum: SweepCache,
    /// Cached angle scan over the angle view's sweep.
    pub angles: SweepCache,
    /// Cached spectrum over the compare table's band.
    pub band: SweepCache,
    /// When it was last edited (for the autosave delay).
    pub last_edit: Option<Instant>,
    /// The revision last written to its recovery file.
    pub autosaved_revision: Option<u64>,
    /// Its recovery file, once autosave has written one (or the file it was recovered from).
    pub recovery_file: Option<PathBuf>,
}

impl OpenDesign {
    /// A newly opened design with empty caches.
    #[must_use]
    pub fn new(id: DesignId, doc: Document, colour: Color32) -> Self {
        Self {
            id,
            doc,
            colour,
            spectrum: SweepCache::new("spectrum-sweep"),
            angles: SweepCache::new("angle-sweep"),
            band: SweepCache::new("band-sweep"),
            last_edit: None,
            autosaved_revision: None,
            recovery_file: None,
        }
    }

    /// The tab text: the design's name, with ` •` while it has unsaved changes.
    #[must_use]
    pub fn label(&self) -> String {
        let mark = if self.doc.is_dirty() { " •" } else { "" };
        format!("{}{mark}", self.doc.design().name)
    }

    /// Makes every cache compute inline (tests, screenshots) or not.
    pub fn set_inline(&mut self, inline: bool) {
        for c in [&mut self.spectrum, &mut self.angles, &mut self.band] {
            c.force_inline = inline;
        }
    }
}

/// A window-level change: which design is shown, overlaid or compared, or closed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WindowCommand {
    /// Show this design in the stack panel and views.
    Activate(DesignId),
    /// Close this design (asks first when it has unsaved changes).
    Close(DesignId),
    /// Overlay this design's curves on the active design's views, or stop.
    SetOverlay {
        /// Which design.
        id: DesignId,
        /// Overlaid or not.
        on: bool,
    },
    /// Include this design in the compare view, or leave it out.
    SetCompared {
        /// Which design.
        id: DesignId,
        /// Compared or not.
        on: bool,
    },
}

/// The tab strip: one tab per open design, in its colour, and a button to close the active one.
pub fn tabs_ui(
    ui: &mut egui::Ui,
    designs: &[OpenDesign],
    active: DesignId,
    out: &mut Vec<WindowCommand>,
) {
    ui.horizontal_wrapped(|ui| {
        for d in designs {
            let (rect, _) = ui.allocate_exact_size(egui::vec2(10.0, 10.0), egui::Sense::hover());
            ui.painter().rect_filled(rect, 2.0, d.colour);
            let text = RichText::new(d.label());
            let tab = ui.selectable_label(d.id == active, text);
            let tab = match d.doc.path() {
                Some(p) => tab.on_hover_text(p.display().to_string()),
                None => tab.on_hover_text("not saved yet"),
            };
            if tab.clicked() && d.id != active {
                out.push(WindowCommand::Activate(d.id));
            }
        }
        ui.separator();
        if ui
            .button("Close design")
            .on_hover_text("Close the design shown (Ctrl+W)")
            .clicked()
        {
            out.push(WindowCommand::Close(active));
        }
    });
}
