//! The materials panel: browse the built-in and the design's own materials, see n and k over
//! wavelength, and define, edit or remove the design's materials.
//!
//! The panel never changes the design itself: [`materials_ui`] returns a [`BrowserAction`]
//! for the caller to apply (and, e.g., to refuse removing a material that layers still use).
//! Its parts: the list and details here, the n,k plot (`nk_plot.rs`), the form's model,
//! testable without egui (`form.rs`), and the form's widgets (`form_ui.rs`).

mod form;
mod form_ui;
mod nk_plot;

use std::path::Path;
use std::sync::Arc;

use eframe::egui;

use crate::design::Design;
use crate::material::{Material, builtin};

use super::chooser::FileRequest;
use super::jobs::Job;
use form::Form;
use form_ui::warn;
use nk_plot::NkCurves;

/// What the caller should do to the design.
#[derive(Clone, Debug, PartialEq)]
pub enum BrowserAction {
    /// Add this material to the design's own materials.
    AddMaterial(Material),
    /// Replace the design material called `old_name` with `material` (which may be renamed).
    ReplaceMaterial {
        /// Name of the design material to replace.
        old_name: String,
        /// The new definition.
        material: Material,
    },
    /// Remove the design material of this name. The caller decides whether layers using it
    /// allow that.
    RemoveMaterial(String),
    /// Ask the user for an n, k table file; the answer goes to
    /// [`BrowserState::load_table_file`].
    ChooseTable(FileRequest),
}

/// The panel's own state between frames.
#[derive(Default)]
pub struct BrowserState {
    search: String,
    selected: Option<Selection>,
    detail_plot: Option<NkCurves>,
    form: Form,
}

/// A material in the list: its name and whether it is one of the design's own.
#[derive(Clone, Debug, PartialEq)]
struct Selection {
    name: String,
    in_design: bool,
}

impl BrowserState {
    /// Reads the n, k table file at `path` on a job named "material-import"; the form shows
    /// it when read.
    pub fn load_table_file(&mut self, ctx: &egui::Context, path: &Path) {
        let path = path.to_path_buf();
        let c = ctx.clone();
        match Job::spawn(
            "material-import",
            0,
            Arc::new(move || c.request_repaint()),
            move |_| form::read_table_file(&path),
        ) {
            Ok(job) => {
                self.form.loading = Some(job);
                self.form.load_message = None;
            }
            Err(e) => self.form.load_message = Some(format!("cannot read the file: {e}")),
        }
    }
}

/// The file request for an n, k table.
fn table_file_request() -> FileRequest {
    FileRequest {
        save: false,
        filter_name: "Tables (csv, txt, tsv, dat)".into(),
        extensions: ["csv", "txt", "tsv", "dat"].map(str::to_owned).to_vec(),
        directory: None,
        file_name: None,
    }
}

/// Draws the materials panel and returns what the user asked to do to the design, if anything.
pub fn materials_ui(
    ui: &mut egui::Ui,
    state: &mut BrowserState,
    design: &Design,
) -> Option<BrowserAction> {
    let mut action = None;
    ui.heading("Materials");
    list_ui(ui, state, design);
    ui.separator();
    if let Some(a) = details_ui(ui, state, design) {
        action = Some(a);
    }
    ui.separator();
    egui::CollapsingHeader::new(if state.form.editing.is_some() {
        "Edit material"
    } else {
        "New material"
    })
    .id_salt("material-form")
    .default_open(true)
    .show(ui, |ui| {
        if let Some(a) = form_ui::form_ui(ui, state, design) {
            action = Some(a);
        }
    });
    if std::mem::take(&mut state.form.wants_file) {
        action = Some(BrowserAction::ChooseTable(table_file_request()));
    }
    action
}

/// The searchable list of design and built-in materials.
fn list_ui(ui: &mut egui::Ui, state: &mut BrowserState, design: &Design) {
    ui.horizontal(|ui| {
        let l = ui.label("Search");
        ui.add(
            egui::TextEdit::singleline(&mut state.search)
                .hint_text("name or source")
                .desired_width(200.0),
        )
        .labelled_by(l.id);
    });
    let needle = state.search.trim().to_lowercase();
    // Name matches first, then materials found only through their citation; the design's own
    // before the built-ins within each group.
    let all = design
        .materials
        .iter()
        .map(|m| (m, true))
        .chain(builtin().iter().map(|m| (m, false)));
    let mut listed: Vec<(&Material, bool, bool)> = all
        .filter_map(|(m, in_design)| {
            if needle.is_empty() || m.name.to_lowercase().contains(&needle) {
                Some((m, in_design, true))
            } else if m.source.to_lowercase().contains(&needle) {
                Some((m, in_design, false))
            } else {
                None
            }
        })
        .collect();
    listed.sort_by_key(|&(_, _, by_name)| !by_name); // stable: keeps the order within groups
    egui::ScrollArea::vertical()
        .id_salt("material-list")
        .max_height(200.0)
        .auto_shrink([false, true])
        .show(ui, |ui| {
            for &(m, in_design, _) in &listed {
                let sel = Selection {
                    name: m.name.clone(),
                    in_design,
                };
                let kind = m.model.kind_name();
                let text = if in_design {
                    format!("{} — {kind} (in this design)", m.name)
                } else if design.materials.iter().any(|d| d.name == m.name) {
                    format!(
                        "{} — {kind} (built-in; this design's own takes precedence)",
                        m.name
                    )
                } else {
                    format!("{} — {kind}", m.name)
                };
                if ui
                    .selectable_label(state.selected.as_ref() == Some(&sel), text)
                    .clicked()
                {
                    state.selected = Some(sel);
                }
            }
            if listed.is_empty() {
                ui.weak("no material matches the search");
            }
        });
}

/// The selected material's plot and facts, with edit/remove for the design's own.
fn details_ui(
    ui: &mut egui::Ui,
    state: &mut BrowserState,
    design: &Design,
) -> Option<BrowserAction> {
    let Some(sel) = state.selected.clone() else {
        ui.weak("select a material to see its n and k");
        return None;
    };
    let found = if sel.in_design {
        design.materials.iter().find(|m| m.name == sel.name)
    } else {
        builtin().iter().find(|m| m.name == sel.name)
    };
    let Some(material) = found else {
        // Removed or renamed since it was selected.
        state.selected = None;
        state.detail_plot = None;
        return None;
    };
    ui.strong(&material.name);
    egui::Grid::new("material-facts")
        .num_columns(2)
        .show(ui, |ui| {
            ui.label("Model");
            ui.label(material.model.kind_name());
            ui.end_row();
            ui.label("Valid range");
            let (lo, hi) = material.valid_range_nm();
            if lo > 0.0 || hi.is_finite() {
                let hi = if hi.is_finite() {
                    format!("{hi}")
                } else {
                    "∞".into()
                };
                ui.label(format!("{lo}–{hi} nm"));
            } else {
                ui.label("no stated limit (plotted over 300–1100 nm)");
            }
            ui.end_row();
            ui.label("Source");
            if material.source.is_empty() {
                ui.weak("none given");
            } else {
                ui.label(&material.source);
            }
            ui.end_row();
        });
    NkCurves::for_material(&mut state.detail_plot, material).show(ui, "material-detail-plot");

    if !sel.in_design {
        if ui
            .button("Copy to form")
            .on_hover_text("start a design material from this one")
            .clicked()
        {
            let mut m = material.clone();
            m.source = if m.source.is_empty() {
                format!("based on the built-in {}", m.name)
            } else {
                format!("based on the built-in {} ({})", m.name, m.source)
            };
            if !state.form.load_material(&m, None) {
                state.form.load_message = Some(format!(
                    "the {} model has no form here; define it in the design file",
                    m.model.kind_name()
                ));
            }
        }
        return None;
    }
    let users: Vec<String> = design
        .layers
        .iter()
        .enumerate()
        .filter(|(_, l)| l.material == material.name)
        .map(|(i, _)| (i + 1).to_string())
        .collect();
    let mut action = None;
    ui.horizontal(|ui| {
        if ui.button("Edit").clicked() {
            let m = material.clone();
            if !state.form.load_material(&m, Some(m.name.clone())) {
                state.form.load_message = Some(format!(
                    "the {} model has no form here; edit it in the design file",
                    m.model.kind_name()
                ));
            }
        }
        if ui.button("Remove from design").clicked() {
            action = Some(BrowserAction::RemoveMaterial(material.name.clone()));
        }
    });
    if !users.is_empty() {
        warn(
            ui,
            format!(
                "used by layer{} {}; give those layers another material before removing it",
                if users.len() == 1 { "" } else { "s" },
                users.join(", ")
            ),
        );
    }
    action
}
