//! The left panel: the stack's cross-section, the layer table, the media and the notation box.
//!
//! Reads the design, pushes [`Edit`]s; never mutates the design itself.

use std::collections::{BTreeMap, BTreeSet};

use egui::{Color32, DragValue, Pos2, Rect, RichText, Sense, Stroke, StrokeKind, Vec2};

use crate::design::notation::build_layers;
use crate::design::{Design, Layer, Nm, nm_from_qwot};
use crate::material::{Catalog, Material};

use super::document::Edit;
use super::theme;

/// Height of the cross-section strip and of the table's scroll area (points).
const STRIP_HEIGHT: f32 = 380.0;

/// Selection and the panel's own editing state (not part of the design).
#[derive(Clone, Debug)]
pub struct StackUi {
    /// Selected layers, 0-based indices.
    pub selected: BTreeSet<usize>,
    anchor: Option<usize>,
    /// The stack-notation text.
    pub notation: String,
    /// Which material each notation symbol stands for.
    pub bindings: BTreeMap<char, String>,
    /// The last notation error, shown under the box.
    pub notation_error: Option<String>,
    /// Factor for "Scale…".
    pub scale_factor: f64,
    /// Whether the scale row is open.
    pub scale_open: bool,
    filter: String,
}

impl Default for StackUi {
    fn default() -> Self {
        Self {
            selected: BTreeSet::new(),
            anchor: None,
            notation: "(HL)^2".into(),
            bindings: BTreeMap::from([
                ('H', "TiO2".to_owned()),
                ('L', "SiO2".to_owned()),
                ('M', "Al2O3".to_owned()),
            ]),
            notation_error: None,
            scale_factor: 1.0,
            scale_open: false,
            filter: String::new(),
        }
    }
}

impl StackUi {
    /// Drops selected indices that no longer exist.
    pub fn clamp_selection(&mut self, layers: usize) {
        self.selected.retain(|&i| i < layers);
        if self.anchor.is_some_and(|a| a >= layers) {
            self.anchor = None;
        }
    }
}

/// Model, valid range and source of a material, for hover text.
#[must_use]
pub fn material_info(m: &Material) -> String {
    let (lo, hi) = m.valid_range_nm();
    let range = if hi.is_finite() || lo > 0.0 {
        format!("{lo}–{hi} nm")
    } else {
        "no stated limit".to_owned()
    };
    let source = if m.source.is_empty() {
        "defined in this design"
    } else {
        m.source.as_str()
    };
    format!(
        "{}\nmodel: {}\nrange: {range}\nsource: {source}",
        m.name,
        m.model.kind_name()
    )
}

/// A combo box of every material the design can use, with a search field; returns the name
/// picked this frame.
fn material_combo(
    ui: &mut egui::Ui,
    id: impl std::hash::Hash + std::fmt::Debug,
    name: &str,
    a11y: &str,
    catalog: &Catalog<'_>,
    filter: &mut String,
) -> Option<String> {
    let mut picked = None;
    let response = egui::ComboBox::from_id_salt(id)
        .selected_text(name)
        .width(120.0)
        .show_ui(ui, |ui| {
            ui.add(
                egui::TextEdit::singleline(filter)
                    .hint_text("search")
                    .desired_width(140.0),
            );
            let needle = filter.to_lowercase();
            egui::ScrollArea::vertical()
                .max_height(260.0)
                .show(ui, |ui| {
                    for n in catalog.names() {
                        if !needle.is_empty() && !n.to_lowercase().contains(&needle) {
                            continue;
                        }
                        let mut r = ui.selectable_label(n == name, n);
                        if let Ok(m) = catalog.get(n) {
                            r = r.on_hover_text(material_info(m));
                        }
                        if r.clicked() {
                            picked = Some(n.to_owned());
                        }
                    }
                });
        });
    let r = response.response.accessible_name(a11y);
    match catalog.get(name) {
        Ok(m) => {
            r.on_hover_text(material_info(m));
        }
        Err(e) => {
            r.on_hover_text(e.to_string());
        }
    }
    if picked.is_some() {
        filter.clear();
    }
    picked
}

/// The index of `name` at the design's reference wavelength, as (n, k).
fn nk_at_reference(catalog: &Catalog<'_>, name: &str, reference_nm: f64) -> Option<(f64, f64)> {
    let m = catalog.get(name).ok()?;
    let n = m.index_at(reference_nm).ok()?;
    Some((n.re, n.im))
}

fn colour_of(catalog: &Catalog<'_>, name: &str, reference_nm: f64) -> Color32 {
    nk_at_reference(catalog, name, reference_nm)
        .map_or(theme::UNKNOWN, |(n, k)| theme::material_colour(n, k))
}

/// The whole left panel.
pub fn stack_ui(ui: &mut egui::Ui, design: &Design, state: &mut StackUi, out: &mut Vec<Edit>) {
    state.clamp_selection(design.layers.len());
    let catalog = Catalog::new(&design.materials);
    egui::ScrollArea::vertical().show(ui, |ui| {
        design_row_ui(ui, design, out);
        ui.separator();
        media_ui(ui, design, &catalog, state, out);
        ui.separator();
        ui.horizontal_top(|ui| {
            cross_section_ui(ui, design, &catalog, state);
            ui.vertical(|ui| layer_table_ui(ui, design, &catalog, state, out));
        });
        buttons_ui(ui, design, &catalog, state, out);
        ui.separator();
        notation_ui(ui, design, &catalog, state, out);
    });
}

fn design_row_ui(ui: &mut egui::Ui, design: &Design, out: &mut Vec<Edit>) {
    egui::Grid::new("design-row").num_columns(2).show(ui, |ui| {
        let l = ui.label("Name");
        let mut name = design.name.clone();
        if ui
            .add(egui::TextEdit::singleline(&mut name).desired_width(220.0))
            .labelled_by(l.id)
            .changed()
        {
            out.push(Edit::SetName(name));
        }
        ui.end_row();
        let l = ui.label("Reference wavelength (nm)");
        let mut r = design.reference_nm;
        if ui
            .add(DragValue::new(&mut r).range(1.0..=100_000.0).speed(1.0))
            .labelled_by(l.id)
            .changed()
        {
            out.push(Edit::SetReference(r));
        }
        ui.end_row();
    });
}

fn media_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    out: &mut Vec<Edit>,
) {
    egui::Grid::new("media").num_columns(2).show(ui, |ui| {
        ui.label("Incident medium");
        if let Some(n) = material_combo(
            ui,
            "incident",
            &design.incident,
            "Incident medium",
            catalog,
            &mut state.filter,
        ) {
            out.push(Edit::SetIncident(n));
        }
        ui.end_row();
        ui.label("Substrate");
        ui.horizontal(|ui| {
            if let Some(n) = material_combo(
                ui,
                "substrate",
                &design.substrate,
                "Substrate",
                catalog,
                &mut state.filter,
            ) {
                out.push(Edit::SetSubstrate(n));
            }
            let mut back = design.substrate_mm.is_some();
            if ui
                .checkbox(&mut back, "back surface")
                .on_hover_text(
                    "On: the substrate has a thickness and its back surface reflects too \
                     (added incoherently). Off: semi-infinite substrate.",
                )
                .changed()
            {
                out.push(Edit::SetSubstrateMm(back.then_some(1.0)));
            }
            if let Some(mut mm) = design.substrate_mm {
                let r = ui
                    .add(
                        DragValue::new(&mut mm)
                            .range(0.001..=1000.0)
                            .speed(0.01)
                            .suffix(" mm"),
                    )
                    .accessible_name("Substrate thickness (mm)");
                if r.changed() {
                    out.push(Edit::SetSubstrateMm(Some(mm)));
                }
            }
        });
        ui.end_row();
        ui.label("Exit medium");
        if let Some(n) = material_combo(
            ui,
            "exit",
            &design.exit,
            "Exit medium",
            catalog,
            &mut state.filter,
        ) {
            out.push(Edit::SetExit(n));
        }
        ui.end_row();
    });
}

/// To-scale cross-section: incident medium on top with the light's direction, layers with
/// heights proportional to thickness, the substrate at the bottom.
fn cross_section_ui(ui: &mut egui::Ui, design: &Design, catalog: &Catalog<'_>, state: &StackUi) {
    let (rect, response) = ui.allocate_exact_size(Vec2::new(64.0, STRIP_HEIGHT), Sense::hover());
    let painter = ui.painter_at(rect);
    let medium_h = 44.0;
    let top = Rect::from_min_size(rect.min, Vec2::new(rect.width(), medium_h));
    let bottom = Rect::from_min_max(Pos2::new(rect.min.x, rect.max.y - medium_h), rect.max);
    let r = design.reference_nm;
    let incident_c = colour_of(catalog, &design.incident, r);
    painter.rect_filled(top, 0.0, incident_c.gamma_multiply(0.5));
    // The light arrives from the incident medium, travelling down into the coating.
    let x = top.center().x;
    let arrow = Stroke::new(2.0, theme::text_on(incident_c.gamma_multiply(0.5)));
    painter.arrow(
        Pos2::new(x, top.min.y + 6.0),
        Vec2::new(0.0, medium_h - 12.0),
        arrow,
    );
    let sub_c = colour_of(catalog, &design.substrate, r);
    painter.rect_filled(bottom, 0.0, sub_c);
    painter.text(
        bottom.center(),
        egui::Align2::CENTER_CENTER,
        "substrate",
        egui::FontId::proportional(10.0),
        theme::text_on(sub_c),
    );
    let stack = Rect::from_min_max(
        Pos2::new(rect.min.x, top.max.y),
        Pos2::new(rect.max.x, bottom.min.y),
    );
    let total = design.total_nm();
    let n = design.layers.len();
    let mut hovered = None;
    let mut y = stack.max.y;
    for (i, layer) in design.layers.iter().enumerate() {
        let share = if total > 0.0 {
            (layer.nm.get() / total) as f32
        } else {
            1.0 / n as f32
        };
        let h = stack.height() * share;
        let band = Rect::from_min_max(Pos2::new(stack.min.x, y - h), Pos2::new(stack.max.x, y));
        painter.rect_filled(band, 0.0, colour_of(catalog, &layer.material, r));
        if state.selected.contains(&i) {
            painter.rect_stroke(
                band,
                0.0,
                Stroke::new(2.0, Color32::WHITE),
                StrokeKind::Inside,
            );
        }
        if let Some(p) = response.hover_pos()
            && band.contains(p)
        {
            hovered = Some(i);
        }
        y -= h;
    }
    painter.rect_stroke(
        rect,
        0.0,
        Stroke::new(1.0, Color32::GRAY),
        StrokeKind::Inside,
    );
    if let Some(i) = hovered {
        let l = &design.layers[i];
        let nk = nk_at_reference(catalog, &l.material, r).map_or_else(String::new, |(n, k)| {
            format!("\nn = {n:.4}, k = {k:.4} at {r} nm")
        });
        response.on_hover_text(format!(
            "layer {}: {} {:.2} nm{nk}",
            i + 1,
            l.material,
            l.nm.get()
        ));
    } else {
        response.on_hover_text(format!(
            "light from {} (top) onto the coating, {} layers, {:.1} nm in total, on {}",
            design.incident, n, total, design.substrate
        ));
    }
}

fn layer_table_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    out: &mut Vec<Edit>,
) {
    ui.label(
        RichText::new(format!(
            "{} layers, outermost first; drag a number to move a layer",
            design.layers.len()
        ))
        .weak(),
    );
    egui::ScrollArea::vertical()
        .id_salt("layer-table")
        .max_height(STRIP_HEIGHT - 20.0)
        .show(ui, |ui| {
            egui::Grid::new("layers")
                .num_columns(5)
                .striped(true)
                .show(ui, |ui| {
                    ui.strong("#");
                    ui.strong("Material");
                    ui.strong("nm");
                    ui.strong("QWOT");
                    ui.strong("Lock");
                    ui.end_row();
                    for i in (0..design.layers.len()).rev() {
                        layer_row_ui(ui, design, catalog, state, out, i);
                        ui.end_row();
                    }
                });
        });
}

fn layer_row_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    out: &mut Vec<Edit>,
    i: usize,
) {
    let layer = &design.layers[i];
    let no = i + 1;
    let sel = state.selected.contains(&i);
    // The number cell selects the layer, and dragging it onto another row moves the layer there.
    let r = ui
        .selectable_label(sel, format!("{no}"))
        .interact(egui::Sense::click_and_drag())
        .accessible_name(format!("Select layer {no}"));
    r.dnd_set_drag_payload(i);
    if let Some(from) = r.dnd_release_payload::<usize>()
        && *from != i
    {
        out.push(Edit::MoveLayer { from: *from, to: i });
    }
    if r.dnd_hover_payload::<usize>()
        .is_some_and(|from| *from != i)
    {
        let stroke = egui::Stroke::new(2.0, ui.visuals().selection.stroke.color);
        ui.painter().hline(r.rect.x_range(), r.rect.top(), stroke);
    }
    if r.clicked() {
        let m = ui.input(|inp| inp.modifiers);
        if m.command {
            if !state.selected.remove(&i) {
                state.selected.insert(i);
            }
            state.anchor = Some(i);
        } else if m.shift
            && let Some(a) = state.anchor
        {
            state.selected = (a.min(i)..=a.max(i)).collect();
        } else {
            state.selected = BTreeSet::from([i]);
            state.anchor = Some(i);
        }
    }
    if let Some(n) = material_combo(
        ui,
        ("layer-material", i),
        &layer.material,
        &format!("Layer {no} material"),
        catalog,
        &mut state.filter,
    ) {
        out.push(Edit::SetMaterial { layer: i, name: n });
    }
    let mut nm = layer.nm.get();
    if ui
        .add(
            DragValue::new(&mut nm)
                .range(0.0..=1.0e7)
                .speed(0.1)
                .max_decimals(3),
        )
        .accessible_name(format!("Layer {no} nm"))
        .changed()
    {
        out.push(Edit::SetThickness { layer: i, nm });
    }
    match design.layer_qwot(no) {
        Ok(q) => {
            let mut q2 = q;
            if ui
                .add(
                    DragValue::new(&mut q2)
                        .range(0.0..=1.0e5)
                        .speed(0.005)
                        .max_decimals(4),
                )
                .accessible_name(format!("Layer {no} QWOT"))
                .changed()
            {
                out.push(Edit::SetQwot { layer: i, qwot: q2 });
            }
        }
        Err(e) => {
            ui.colored_label(ui.visuals().error_fg_color, "—")
                .on_hover_text(e.to_string());
        }
    }
    let mut locked = layer.locked;
    if ui
        .checkbox(&mut locked, "")
        .accessible_name(format!("Lock layer {no}"))
        .on_hover_text("locked layers are left alone by optimisation")
        .changed()
    {
        out.push(Edit::ToggleLock(i));
    }
}

/// A new layer for Add/Insert: the material that alternates with its neighbour, one QWOT.
fn new_layer(design: &Design, catalog: &Catalog<'_>, below: Option<usize>) -> Layer {
    let material = below
        .and_then(|b| {
            // Alternate: repeat the material two below the new one, else take SiO2 / TiO2.
            b.checked_sub(1)
                .and_then(|bb| design.layers.get(bb))
                .map(|l| l.material.clone())
                .or_else(|| {
                    design
                        .layers
                        .get(b)
                        .map(|l| if l.material == "SiO2" { "TiO2" } else { "SiO2" }.to_owned())
                })
        })
        .unwrap_or_else(|| "SiO2".to_owned());
    let nm = nm_from_qwot(&material, 1.0, catalog, design.reference_nm).unwrap_or(Nm::ZERO);
    Layer::new(&material, nm)
}

fn buttons_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    out: &mut Vec<Edit>,
) {
    let n = design.layers.len();
    let sel: Vec<usize> = state.selected.iter().copied().collect();
    let any = !sel.is_empty();
    ui.horizontal_wrapped(|ui| {
        if ui
            .button("Add")
            .on_hover_text("add a quarter-wave layer on the outside")
            .clicked()
        {
            let layer = new_layer(design, catalog, n.checked_sub(1));
            out.push(Edit::InsertLayer { at: n, layer });
            state.selected = BTreeSet::from([n]);
            state.anchor = Some(n);
        }
        if ui
            .add_enabled(any, egui::Button::new("Insert"))
            .on_hover_text("insert a layer below the selected one (towards the substrate)")
            .clicked()
            && let Some(&at) = sel.first()
        {
            let layer = new_layer(design, catalog, at.checked_sub(1));
            out.push(Edit::InsertLayer { at, layer });
            state.selected = BTreeSet::from([at]);
            state.anchor = Some(at);
        }
        if ui
            .add_enabled(any, egui::Button::new("Duplicate"))
            .clicked()
        {
            for &i in sel.iter().rev() {
                out.push(Edit::DuplicateLayer(i));
            }
        }
        if ui.add_enabled(any, egui::Button::new("Delete")).clicked() {
            out.push(Edit::RemoveLayers(sel.clone()));
            state.selected.clear();
            state.anchor = None;
        }
        let can_up = sel.last().is_some_and(|&i| i + 1 < n);
        if ui
            .add_enabled(can_up, egui::Button::new("Up"))
            .on_hover_text("move the selection one place towards the incident medium")
            .clicked()
        {
            for &i in sel.iter().rev() {
                out.push(Edit::MoveLayer { from: i, to: i + 1 });
            }
            state.selected = sel.iter().map(|i| i + 1).collect();
        }
        let can_down = sel.first().is_some_and(|&i| i > 0);
        if ui
            .add_enabled(can_down, egui::Button::new("Down"))
            .on_hover_text("move the selection one place towards the substrate")
            .clicked()
        {
            for &i in &sel {
                out.push(Edit::MoveLayer { from: i, to: i - 1 });
            }
            state.selected = sel.iter().map(|i| i - 1).collect();
        }
        if ui.add_enabled(any, egui::Button::new("Scale…")).clicked() {
            state.scale_open = !state.scale_open;
        }
    });
    if state.scale_open && any {
        ui.horizontal(|ui| {
            let l = ui.label("Scale factor");
            ui.add(
                DragValue::new(&mut state.scale_factor)
                    .range(0.001..=1000.0)
                    .speed(0.01),
            )
            .labelled_by(l.id);
            if ui.button("Apply scale").clicked() {
                out.push(Edit::ScaleLayers {
                    layers: sel.clone(),
                    factor: state.scale_factor,
                });
                state.scale_open = false;
            }
            if ui.button("Cancel").clicked() {
                state.scale_open = false;
            }
        });
    }
}

fn notation_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    out: &mut Vec<Edit>,
) {
    ui.strong("Stack notation");
    ui.label(RichText::new("substrate side first; e.g. (HL)^4 H, 2L, L:85nm").weak());
    ui.horizontal(|ui| {
        let l = ui.label("Notation");
        let r = ui
            .add(egui::TextEdit::singleline(&mut state.notation).desired_width(200.0))
            .labelled_by(l.id);
        if r.changed() {
            state.notation_error = None;
        }
        if ui.button("Build").clicked() {
            match build_layers(
                &state.notation,
                &state.bindings,
                catalog,
                design.reference_nm,
            ) {
                Ok(layers) => {
                    state.notation_error = None;
                    state.selected.clear();
                    out.push(Edit::ReplaceLayers(layers));
                }
                Err(e) => state.notation_error = Some(e.to_string()),
            }
        }
    });
    ui.horizontal(|ui| {
        let keys: Vec<char> = state.bindings.keys().copied().collect();
        for key in keys {
            ui.label(format!("{key} ="));
            let current = state.bindings.get(&key).cloned().unwrap_or_default();
            if let Some(n) = material_combo(
                ui,
                ("binding", key),
                &current,
                &format!("Symbol {key} material"),
                catalog,
                &mut state.filter,
            ) {
                state.bindings.insert(key, n);
                state.notation_error = None;
            }
        }
    });
    if let Some(e) = &state.notation_error {
        ui.colored_label(ui.visuals().error_fg_color, e);
    }
}
