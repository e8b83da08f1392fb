//! The widgets of the "New material" form.

use std::path::Path;

use eframe::egui;

use crate::design::Design;
use crate::material::import::WavelengthUnit;
use crate::material::{Material, Model};

use super::form::{Form, FormKind, Loaded};
use super::{BrowserAction, BrowserState, NkCurves};
use crate::gui::jobs::JobEnd;

/// Takes the table file's text once it is read.
fn poll_loading(form: &mut Form) {
    let Some(job) = &mut form.loading else { return };
    let Some(end) = job.poll() else { return };
    form.loading = None;
    match end {
        JobEnd::Done(Loaded {
            file_name,
            text,
            lossy,
        }) => {
            form.csv.clone_from(&text);
            form.loaded = Some((file_name.clone(), text));
            if form.name.trim().is_empty() {
                form.name = Path::new(&file_name)
                    .file_stem()
                    .map_or(file_name.clone(), |s| s.to_string_lossy().into_owned());
            }
            form.load_message = Some(if lossy {
                format!(
                    "loaded {file_name}; it is not UTF-8 text, so unreadable characters were \
                     replaced — save it as UTF-8 if labels look wrong"
                )
            } else {
                format!("loaded {file_name}")
            });
        }
        JobEnd::Cancelled => {}
        JobEnd::Failed(e) => form.load_message = Some(e.to_string()),
    }
}

/// A text field with a label linked to it, so it can be found by that label.
fn labelled_field(ui: &mut egui::Ui, label: &str, text: &mut String, hint: &str) {
    ui.horizontal(|ui| {
        let l = ui.label(label);
        ui.add(
            egui::TextEdit::singleline(text)
                .hint_text(hint)
                .desired_width(120.0),
        )
        .labelled_by(l.id);
    });
}

pub(super) fn warn(ui: &mut egui::Ui, text: impl Into<String>) {
    ui.colored_label(ui.visuals().warn_fg_color, text.into());
}

pub(super) fn error(ui: &mut egui::Ui, text: impl Into<String>) {
    ui.colored_label(ui.visuals().error_fg_color, text.into());
}

pub(super) fn form_ui(
    ui: &mut egui::Ui,
    state: &mut BrowserState,
    design: &Design,
) -> Option<BrowserAction> {
    let form = &mut state.form;
    poll_loading(form);
    labelled_field(ui, "Name", &mut form.name, "e.g. my TiO2");
    ui.horizontal(|ui| {
        ui.label("Model");
        ui.radio_value(&mut form.kind, FormKind::Constant, "Constant");
        ui.radio_value(&mut form.kind, FormKind::Cauchy, "Cauchy");
        ui.radio_value(&mut form.kind, FormKind::Sellmeier, "Sellmeier");
        ui.radio_value(&mut form.kind, FormKind::Table, "Table from CSV");
    });
    match form.kind {
        FormKind::Constant => {
            labelled_field(ui, "Index n", &mut form.n, "e.g. 1.46");
            labelled_field(ui, "Extinction k", &mut form.k, "0");
        }
        FormKind::Cauchy => {
            ui.weak("n = A + B/λ² + C/λ⁴, λ in µm");
            labelled_field(ui, "A", &mut form.cauchy[0], "e.g. 1.45");
            labelled_field(ui, "B (µm²)", &mut form.cauchy[1], "0");
            labelled_field(ui, "C (µm⁴)", &mut form.cauchy[2], "0");
        }
        FormKind::Sellmeier => sellmeier_ui(ui, form),
        FormKind::Table => table_ui(ui, form),
    }
    if form.kind != FormKind::Table {
        ui.horizontal(|ui| {
            let l = ui.label("Valid from (nm)");
            ui.add(egui::TextEdit::singleline(&mut form.range_from).desired_width(70.0))
                .labelled_by(l.id);
            let l = ui.label("to (nm)");
            ui.add(egui::TextEdit::singleline(&mut form.range_to).desired_width(70.0))
                .labelled_by(l.id);
            ui.weak("(optional)");
        });
    }
    if let Some(msg) = &form.load_message {
        ui.label(msg.as_str());
    }

    if form.kind != FormKind::Table
        && let Ok(m) = form.build_model()
    {
        ui.label("Preview");
        NkCurves::for_material(&mut form.preview, &m).show(ui, "material-form-plot");
    }
    let built = form.build();
    if let Err(e) = &built {
        error(ui, e.as_str());
    }
    let action = submit_ui(ui, form, design, built.as_ref().ok());
    let label = if form.editing.is_some() {
        "Cancel edit"
    } else {
        "Clear form"
    };
    if ui.button(label).clicked() {
        form.clear();
    }
    if action.is_some() {
        if let Some(
            BrowserAction::AddMaterial(m) | BrowserAction::ReplaceMaterial { material: m, .. },
        ) = &action
        {
            state.selected = Some(super::Selection {
                name: m.name.clone(),
                in_design: true,
            });
        }
        state.form.clear();
    }
    action
}

/// The Sellmeier coefficients: an optional constant and a list of (B, C) terms.
fn sellmeier_ui(ui: &mut egui::Ui, form: &mut Form) {
    ui.weak("n² = 1 + a + Σ B·λ²/(λ² − C) over the terms, λ in µm, C in µm²");
    labelled_field(ui, "Extra constant a", &mut form.sellmeier_a, "0");
    if form.terms.is_empty() {
        form.terms.push((String::new(), String::new()));
    }
    let mut remove = None;
    for (i, (b, c)) in form.terms.iter_mut().enumerate() {
        ui.horizontal(|ui| {
            let l = ui.label(format!("B{}", i + 1));
            ui.add(egui::TextEdit::singleline(b).desired_width(90.0))
                .labelled_by(l.id);
            let l = ui.label(format!("C{} (µm²)", i + 1));
            ui.add(egui::TextEdit::singleline(c).desired_width(90.0))
                .labelled_by(l.id);
            if ui
                .small_button("Remove")
                .on_hover_text("remove this term")
                .clicked()
            {
                remove = Some(i);
            }
        });
    }
    if let Some(i) = remove {
        form.terms.remove(i);
    }
    if ui.button("Add term").clicked() {
        form.terms.push((String::new(), String::new()));
    }
}

/// The CSV box, file button, unit choice and the parsed table's preview.
pub(super) fn table_ui(ui: &mut egui::Ui, form: &mut Form) {
    ui.weak("one row per line: wavelength, n[, k] — separated by commas, semicolons or tabs");
    let l = ui.label("CSV table");
    // A long table scrolls inside the box instead of pushing the rest of the form away.
    egui::ScrollArea::vertical()
        .id_salt("material-csv-box")
        .max_height(160.0)
        .show(ui, |ui| {
            ui.add(
                egui::TextEdit::multiline(&mut form.csv)
                    .code_editor()
                    .desired_rows(6)
                    .desired_width(f32::INFINITY)
                    .hint_text("wavelength (nm), n, k\n400, 2.1, 0.01\n500, 2.0, 0.005"),
            )
            .labelled_by(l.id);
        });
    ui.horizontal(|ui| {
        let loading = form.loading.is_some();
        if ui
            .add_enabled(!loading, egui::Button::new("Load file…"))
            .clicked()
        {
            form.wants_file = true;
        }
        if loading {
            ui.spinner();
        }
        ui.separator();
        ui.label("Wavelength unit");
        ui.radio_value(&mut form.unit, WavelengthUnit::Auto, "Auto");
        ui.radio_value(&mut form.unit, WavelengthUnit::Nm, "nm");
        ui.radio_value(&mut form.unit, WavelengthUnit::Um, "µm");
    });
    if form.csv.trim().is_empty() {
        form.parsed = None;
        return;
    }
    form.refresh_parse();
    let Some(parsed) = &form.parsed else { return };
    // An error is shown under the form (it names the line); here only a good table.
    if let Ok(t) = &parsed.result {
        let (lo, hi) = t.span_nm().unwrap_or_default();
        ui.label(format!(
            "{} rows, {lo}–{hi} nm, wavelengths read in {}",
            t.rows.len(),
            t.unit_used
        ));
        if t.unit_was_guessed {
            warn(
                ui,
                "the unit was guessed from the values; choose nm or µm above if it is wrong",
            );
        }
        for note in &t.notes {
            ui.weak(format!("• {note}"));
        }
        let m = Material::user(
            "preview",
            Model::Table {
                rows: t.rows.clone(),
            },
        );
        NkCurves::for_material(&mut form.preview, &m).show(ui, "material-form-plot");
    }
}

/// Name-clash checks and the Add / Replace / Save buttons.
fn submit_ui(
    ui: &mut egui::Ui,
    form: &Form,
    design: &Design,
    built: Option<&Material>,
) -> Option<BrowserAction> {
    let name = form.name.trim();
    let clash = design
        .materials
        .iter()
        .any(|m| m.name == name && form.editing.as_deref() != Some(name));
    if !name.is_empty() && crate::material::find_builtin(name).is_some() {
        warn(
            ui,
            format!(
                "a built-in material is also called {name:?}; in this design, the design's own \
                 material takes precedence"
            ),
        );
    }
    let mut action = None;
    ui.horizontal(|ui| {
        if let Some(old_name) = &form.editing {
            if clash {
                error(
                    ui,
                    format!("the design already has another material called {name:?}"),
                );
            } else if ui
                .add_enabled(built.is_some(), egui::Button::new("Save changes"))
                .clicked()
            {
                action = built
                    .cloned()
                    .map(|material| BrowserAction::ReplaceMaterial {
                        old_name: old_name.clone(),
                        material,
                    });
            }
        } else if clash {
            warn(
                ui,
                format!("the design already has a material called {name:?}"),
            );
            if ui
                .add_enabled(built.is_some(), egui::Button::new("Replace it"))
                .clicked()
            {
                action = built
                    .cloned()
                    .map(|material| BrowserAction::ReplaceMaterial {
                        old_name: name.to_owned(),
                        material,
                    });
            }
        } else if ui
            .add_enabled(built.is_some(), egui::Button::new("Add to design"))
            .clicked()
        {
            action = built.cloned().map(BrowserAction::AddMaterial);
        }
    });
    action
}
