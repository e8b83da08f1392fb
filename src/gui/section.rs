//! The stack's cross-section strip, to scale: the incident medium with the light's direction,
//! the front coating, the substrate, and for a thick substrate its back-face coating and the
//! exit medium. Each material is drawn in its colour from [`super::theme`].

use std::collections::BTreeSet;
use std::fmt::Write as _;

use egui::{Color32, Pos2, Rect, Sense, Stroke, StrokeKind, Vec2};

use super::stack::{STRIP_HEIGHT, colour_of, nk_at_reference};
use super::theme;
use crate::design::{Design, Face, Layer};
use crate::material::Catalog;

/// The cross-section strip; `selection` marks layers of `face`, the face being edited.
///
/// To-scale cross-section: incident medium on top with the light's direction, layers with
/// heights proportional to thickness, the substrate below them; a thick substrate sits in the
/// middle with its back-face coating under it and the exit medium at the bottom.
pub(super) fn cross_section_ui(
    ui: &mut egui::Ui,
    design: &Design,
    catalog: &Catalog<'_>,
    selection: &BTreeSet<usize>,
    face: Face,
) {
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
    let label = |band: Rect, text: &str, fill: Color32| {
        painter.rect_filled(band, 0.0, fill);
        painter.text(
            band.center(),
            egui::Align2::CENTER_CENTER,
            text,
            egui::FontId::proportional(10.0),
            theme::text_on(fill),
        );
    };
    let sub_c = colour_of(catalog, &design.substrate, r);
    let between = Rect::from_min_max(
        Pos2::new(rect.min.x, top.max.y),
        Pos2::new(rect.max.x, bottom.min.y),
    );
    let selected = |f: Face| (f == face).then_some(selection);
    let hover = response.hover_pos();
    let (front_area, back_area) = if design.substrate_mm.is_some() {
        label(
            bottom,
            "exit",
            colour_of(catalog, &design.exit, r).gamma_multiply(0.5),
        );
        let (front, sub, back) = thick_layout(design, between, medium_h);
        label(sub, "substrate", sub_c);
        (front, Some(back))
    } else {
        label(bottom, "substrate", sub_c);
        (between, None)
    };
    let paint = |area: Rect, layers: &[Layer], f: Face| {
        face_bands(&painter, area, layers, f, catalog, r, selected(f), hover)
    };
    let mut hovered = paint(front_area, &design.layers, Face::Front).map(|i| (Face::Front, i));
    if let Some(area) = back_area
        && let Some(i) = paint(area, &design.back_layers, Face::Back)
    {
        hovered = Some((Face::Back, i));
    }
    painter.rect_stroke(
        rect,
        0.0,
        Stroke::new(1.0, Color32::GRAY),
        StrokeKind::Inside,
    );
    response.on_hover_text(hover_text(design, catalog, hovered));
}

/// The strip's hover text: the layer under the pointer, or the whole part.
fn hover_text(design: &Design, catalog: &Catalog<'_>, hovered: Option<(Face, usize)>) -> String {
    let r = design.reference_nm;
    if let Some((f, i)) = hovered {
        let l = &design.face_layers(f)[i];
        let nk = nk_at_reference(catalog, &l.material, r).map_or_else(String::new, |(n, k)| {
            format!("\nn = {n:.4}, k = {k:.4} at {r} nm")
        });
        return format!(
            "{} {}: {} {:.2} nm{nk}",
            f.layer_word(),
            i + 1,
            l.material,
            l.nm.get()
        );
    }
    let mut text = format!(
        "light from {} (top) onto the coating, {} layers, {:.1} nm in total, on {}",
        design.incident,
        design.layers.len(),
        design.total_nm(),
        design.substrate
    );
    if design.substrate_mm.is_some() {
        // Writing to a String cannot fail.
        write!(
            text,
            "; back face: {} layers, {:.1} nm, then {}",
            design.back_layers.len(),
            face_nm(&design.back_layers),
            design.exit
        )
        .ok();
    }
    text
}

/// Splits `between` (the strip between the two media) into the front coating, the substrate
/// (`substrate_h` high) and the back coating; the coatings share the height by thickness.
fn thick_layout(design: &Design, between: Rect, substrate_h: f32) -> (Rect, Rect, Rect) {
    let (front_nm, back_nm) = (design.total_nm(), face_nm(&design.back_layers));
    let share = match (design.layers.is_empty(), design.back_layers.is_empty()) {
        (false, true) => 1.0,
        (true, false) => 0.0,
        _ if front_nm + back_nm > 0.0 => (front_nm / (front_nm + back_nm)).clamp(0.2, 0.8),
        _ => 0.5,
    } as f32;
    let sub_top = between.min.y + (between.height() - substrate_h) * share;
    let (x0, x1) = (between.min.x, between.max.x);
    (
        Rect::from_min_max(between.min, Pos2::new(x1, sub_top)),
        Rect::from_min_max(Pos2::new(x0, sub_top), Pos2::new(x1, sub_top + substrate_h)),
        Rect::from_min_max(Pos2::new(x0, sub_top + substrate_h), between.max),
    )
}

/// Total physical thickness of a face's layers (nm).
fn face_nm(layers: &[Layer]) -> f64 {
    layers.iter().map(|l| l.nm.get()).sum()
}

/// Paints one face's layers into `area` to scale, layer 1 against the substrate (below the
/// area for the front face, above it for the back face); returns the layer under `hover`.
#[expect(
    clippy::too_many_arguments,
    reason = "one painter call with its context"
)]
fn face_bands(
    painter: &egui::Painter,
    area: Rect,
    layers: &[Layer],
    face: Face,
    catalog: &Catalog<'_>,
    reference_nm: f64,
    selected: Option<&BTreeSet<usize>>,
    hover: Option<Pos2>,
) -> Option<usize> {
    let total = face_nm(layers);
    let mut hovered = None;
    let mut edge = match face {
        Face::Front => area.max.y,
        Face::Back => area.min.y,
    };
    for (i, layer) in layers.iter().enumerate() {
        let share = if total > 0.0 {
            (layer.nm.get() / total) as f32
        } else {
            1.0 / layers.len() as f32
        };
        let h = area.height() * share;
        let (y0, y1) = match face {
            Face::Front => (edge - h, edge),
            Face::Back => (edge, edge + h),
        };
        let band = Rect::from_min_max(Pos2::new(area.min.x, y0), Pos2::new(area.max.x, y1));
        painter.rect_filled(band, 0.0, colour_of(catalog, &layer.material, reference_nm));
        if selected.is_some_and(|s| s.contains(&i)) {
            painter.rect_stroke(
                band,
                0.0,
                Stroke::new(2.0, Color32::WHITE),
                StrokeKind::Inside,
            );
        }
        if hover.is_some_and(|p| band.contains(p)) {
            hovered = Some(i);
        }
        edge = match face {
            Face::Front => y0,
            Face::Back => y1,
        };
    }
    hovered
}
