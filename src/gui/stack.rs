//! The left panel: the stack's cross-section, the layer table, the media and the notation box.
//!
//! Reads the design, pushes [`Edit`]s; never mutates the design itself. The layer table,
//! its buttons and the notation box edit one face of the substrate at a time (the front
//! coating, or a thick substrate's back face); the cross-section shows both.

use std::borrow::Cow;
use std::collections::{BTreeMap, BTreeSet};

use egui::{Color32, DragValue, RichText};

use crate::design::notation::build_layers;
use crate::design::{Design, Face, Layer, Nm, nm_from_qwot};
use crate::material::{Catalog, Material};

use super::document::Edit;
use super::{section, theme};

/// Height of the cross-section strip and of the table's scroll area (points).
pub(super) const STRIP_HEIGHT: f32 = 380.0;

/// Selection and the panel's own editing state (not part of the design).
#[derive(Clone, Debug)]
pub struct StackUi {
    /// The face whose layers the table, buttons and notation box edit.
    pub face: Face,
    /// Selected layers of that face, 0-based indices.
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
    /// Whether the sensitivity column shows beside the layer table.
    pub show_sensitivity: bool,
    filter: String,
}

/// Each front layer's sensitivity to its thickness, for the bar column beside the layer table.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LayerBars {
    /// Per layer, layer 1 (on the substrate) first: the change per 1 % thickness change
    /// (a fraction: of R or T, or of the merit).
    pub values: Vec<f64>,
    /// What the values are, in words (the column's hover text).
    pub what: String,
    /// Computed for an earlier version of the design (shown faded until recomputed).
    pub stale: bool,
}

impl Default for StackUi {
    fn default() -> Self {
        Self {
            face: Face::Front,
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
            show_sensitivity: false,
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
pub(super) fn nk_at_reference(
    catalog: &Catalog<'_>,
    name: &str,
    reference_nm: f64,
) -> Option<(f64, f64)> {
    let m = catalog.get(name).ok()?;
    let n = m.index_at(reference_nm).ok()?;
    Some((n.re, n.im))
}

/// The cross-section colour of material `name`.
pub(super) fn colour_of(catalog: &Catalog<'_>, name: &str, reference_nm: f64) -> Color32 {
    nk_at_reference(catalog, name, reference_nm)
        .map_or(theme::UNKNOWN, |(n, k)| theme::material_colour(n, k))
}

/// The whole left panel. `bars` are the front layers' sensitivities, when
/// [`StackUi::show_sensitivity`] is on (or why they could not be computed).
pub fn stack_ui(
    ui: &mut egui::Ui,
    design: &Design,
    state: &mut StackUi,
    bars: Option<&Result<LayerBars, String>>,
    out: &mut Vec<Edit>,
) {
    if design.substrate_mm.is_none() && state.face == Face::Back {
        state.face = Face::Front;
        state.selected.clear();
    }
    let face = state.face;
    // The table, buttons and notation box see the chosen face's layers as `layers`; their
    // commands are then aimed at that face.
    let shown = face_view(design, face);
    state.clamp_selection(shown.layers.len());
    let catalog = Catalog::new(&design.materials);
    let mut edits = Vec::new();
    egui::ScrollArea::vertical().show(ui, |ui| {
        design_row_ui(ui, design, out);
        ui.separator();
        media_ui(ui, design, &catalog, state, out);
        ui.separator();
        face_switch_ui(ui, design, state);
        ui.horizontal_top(|ui| {
            section::cross_section_ui(ui, design, &catalog, &state.selected, face);
            // The back face's layers have no sensitivity column: the figures are the front's.
            let bars = bars.filter(|_| face == Face::Front);
            ui.vertical(|ui| layer_table_ui(ui, &shown, face, &catalog, state, bars, &mut edits));
        });
        buttons_ui(ui, &shown, &catalog, state, &mut edits);
        ui.separator();
        notation_ui(ui, &shown, &catalog, state, &mut edits);
    });
    out.extend(edits.into_iter().map(|c| Edit::on_face(face, c)));
}

/// The design with `face`'s layers in `layers` (the back face's layers count from the
/// substrate outward, as the front's do).
fn face_view(design: &Design, face: Face) -> Cow<'_, Design> {
    match face {
        Face::Front => Cow::Borrowed(design),
        Face::Back => {
            let mut d = design.clone();
            std::mem::swap(&mut d.layers, &mut d.back_layers);
            Cow::Owned(d)
        }
    }
}

/// The switch between the two faces; the back face only with a thick substrate.
fn face_switch_ui(ui: &mut egui::Ui, design: &Design, state: &mut StackUi) {
    let before = state.face;
    ui.horizontal(|ui| {
        ui.label("Coating on");
        ui.selectable_value(&mut state.face, Face::Front, "Front face")
            .on_hover_text("the coating towards the incident medium");
        ui.add_enabled_ui(design.substrate_mm.is_some(), |ui| {
            ui.selectable_value(&mut state.face, Face::Back, "Back face")
                .on_hover_text(format!(
                    "the coating on the substrate's back face, towards the exit medium \
                     ({} layers); light from the back meets it first",
                    design.back_layers.len()
                ))
                .on_disabled_hover_text(
                    "turn on \"back surface\" to give the substrate a thickness: only then \
                     has it a back face to coat",
                );
        });
    });
    if state.face != before {
        state.selected.clear();
        state.anchor = None;
    }
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

fn layer_table_ui(
    ui: &mut egui::Ui,
    design: &Design,
    face: Face,
    catalog: &Catalog<'_>,
    state: &mut StackUi,
    bars: Option<&Result<LayerBars, String>>,
    out: &mut Vec<Edit>,
) {
    let what = match face {
        Face::Front => "layers, outermost first",
        Face::Back => "back-face layers, outermost (exit side) first",
    };
    ui.horizontal_wrapped(|ui| {
        ui.label(
            RichText::new(format!(
                "{} {what}; drag a number to move a layer",
                design.layers.len()
            ))
            .weak(),
        );
        if face == Face::Front {
            ui.checkbox(&mut state.show_sensitivity, "Sensitivity bars")
                .on_hover_text(
                    "a bar per layer: how much the result changes when that layer is 1 % \
                     thicker or thinner — the longest bars are the layers the chamber must \
                     hit most precisely",
                );
        }
    });
    let bars = match bars {
        Some(Err(e)) => {
            ui.colored_label(ui.visuals().error_fg_color, format!("sensitivity: {e}"));
            None
        }
        Some(Ok(b)) if b.values.len() == design.layers.len() => Some(b),
        _ => None,
    };
    let top = bars.map_or(0.0, |b| b.values.iter().copied().fold(0.0, f64::max));
    egui::ScrollArea::vertical()
        .id_salt("layer-table")
        .max_height(STRIP_HEIGHT - 20.0)
        .show(ui, |ui| {
            egui::Grid::new("layers")
                .num_columns(if bars.is_some() { 6 } else { 5 })
                .striped(true)
                .show(ui, |ui| {
                    ui.strong("#");
                    ui.strong("Material");
                    ui.strong("nm");
                    ui.strong("QWOT");
                    ui.strong("Lock");
                    if let Some(b) = bars {
                        ui.strong("per 1 %").on_hover_text(&b.what);
                    }
                    ui.end_row();
                    for i in (0..design.layers.len()).rev() {
                        layer_row_ui(ui, design, catalog, state, out, i);
                        if let Some(b) = bars {
                            sensitivity_bar_ui(ui, b, top, i);
                        }
                        ui.end_row();
                    }
                });
        });
}

/// Width of a full sensitivity bar (points).
const BAR_WIDTH: f32 = 60.0;

/// Layer `i`'s sensitivity bar, its length relative to the largest (`top`), its value beside.
fn sensitivity_bar_ui(ui: &mut egui::Ui, bars: &LayerBars, top: f64, i: usize) {
    let value = bars.values[i];
    let share = if top > 0.0 { (value / top) as f32 } else { 0.0 };
    let text = format!("{:.3} %", 100.0 * value);
    ui.horizontal(|ui| {
        let (rect, r) = ui.allocate_exact_size(
            egui::vec2(BAR_WIDTH, ui.spacing().interact_size.y * 0.6),
            egui::Sense::hover(),
        );
        let mut colour = ui.visuals().selection.bg_fill;
        if bars.stale {
            colour = colour.gamma_multiply(0.4);
        }
        let mut bar = rect;
        bar.set_width(BAR_WIDTH * share.clamp(0.0, 1.0));
        ui.painter().rect_filled(bar, 2.0, colour);
        ui.painter().rect_stroke(
            rect,
            2.0,
            ui.visuals().widgets.noninteractive.bg_stroke,
            egui::StrokeKind::Inside,
        );
        r.on_hover_text(format!("layer {}: {text} — {}", i + 1, bars.what));
        ui.label(RichText::new(text).small().weak())
            .on_hover_text(format!("layer {} sensitivity", i + 1));
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
