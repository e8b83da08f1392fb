//! The targets panel: what the coating must do, one row per target, with its pass/fail from the
//! last evaluation. Goals and tolerances show in percent; the file keeps fractions.

use egui::{DragValue, RichText};

use crate::design::{Design, Pol, Quantity, Target, TargetKind};
use crate::optimize::Evaluation;

use super::document::Edit;

/// A new target for a design: R (mean of s and p) at most 0.5 % over the given span at normal
/// incidence — the usual first wish for an anti-reflection coating.
#[must_use]
pub fn new_target(from_nm: f64, to_nm: f64) -> Target {
    Target {
        quantity: Quantity::R,
        pol: Pol::Mean,
        aoi_deg: 0.0,
        from_nm: from_nm.round(),
        to_nm: to_nm.round().max(from_nm.round()),
        step_nm: 5.0,
        kind: TargetKind::AtMost,
        goal: 0.005,
        tolerance: 0.0,
        weight: 1.0,
        measure: crate::design::Measure::Spectral,
    }
}

/// The sign people write for a kind: "=", "≤" or "≥".
#[must_use]
pub fn kind_sign(kind: TargetKind) -> &'static str {
    match kind {
        TargetKind::Equal => "=",
        TargetKind::AtMost => "≤",
        TargetKind::AtLeast => "≥",
    }
}

/// One target in words, e.g. "R (mean) ≤ 0.5 % at 0°, 420–680 nm".
#[must_use]
pub fn describe(t: &Target) -> String {
    let pol = match t.pol {
        Pol::S => "s",
        Pol::P => "p",
        Pol::Mean => "mean",
    };
    let span = if t.to_nm <= t.from_nm {
        format!("{} nm", t.from_nm)
    } else {
        format!("{}–{} nm", t.from_nm, t.to_nm)
    };
    format!(
        "{} ({pol}) {} {} % at {}°, {span}",
        t.quantity.symbol(),
        kind_sign(t.kind),
        round4(t.goal * 100.0),
        t.aoi_deg
    )
}

fn round4(x: f64) -> f64 {
    (x * 1e4).round() / 1e4
}

/// The targets table. Returns the edit to make, if the user changed anything.
pub fn targets_ui(
    ui: &mut egui::Ui,
    design: &Design,
    evaluation: Option<&Result<Evaluation, String>>,
    default_span_nm: (f64, f64),
) -> Option<Edit> {
    let mut targets = design.targets.clone();
    let mut changed = false;
    match evaluation {
        Some(Ok(e)) => {
            ui.label(format!(
                "merit {:.4} % · {} of {} targets met",
                e.merit * 100.0,
                e.passed,
                targets.len()
            ));
        }
        Some(Err(e)) => {
            ui.colored_label(ui.visuals().error_fg_color, format!("targets: {e}"));
        }
        None if targets.is_empty() => {
            ui.label(
                RichText::new("no targets yet: add one to say what the coating must do").weak(),
            );
        }
        None => {}
    }
    let mut remove = None;
    let mut duplicate = None;
    let mut swap = None;
    let count = targets.len();
    for (i, t) in targets.iter_mut().enumerate() {
        let pass = match evaluation {
            Some(Ok(e)) => e.targets.get(i).map(|r| r.pass),
            _ => None,
        };
        ui.push_id(("target", i), |ui| {
            ui.horizontal_wrapped(|ui| {
                let (mark, colour) = match pass {
                    Some(true) => ("met", super::theme::PASS),
                    Some(false) => ("not met", super::theme::FAIL),
                    None => ("—", ui.visuals().weak_text_color()),
                };
                ui.label(RichText::new(format!("{}.", i + 1)).strong());
                ui.colored_label(colour, mark);
                if ui.small_button("Copy").clicked() {
                    duplicate = Some(i);
                }
                if ui.small_button("Remove").clicked() {
                    remove = Some(i);
                }
                if ui
                    .add_enabled(i > 0, egui::Button::new("Earlier").small())
                    .clicked()
                {
                    swap = Some((i, i - 1));
                }
                if ui
                    .add_enabled(i + 1 < count, egui::Button::new("Later").small())
                    .clicked()
                {
                    swap = Some((i, i + 1));
                }
            });
            changed |= target_row_ui(ui, i, t);
        });
        ui.separator();
    }
    if ui.button("Add target").clicked() {
        targets.push(new_target(default_span_nm.0, default_span_nm.1));
        changed = true;
    }
    if let Some(i) = duplicate {
        let copy = targets[i].clone();
        targets.insert(i + 1, copy);
        changed = true;
    }
    if let Some(i) = remove {
        targets.remove(i);
        changed = true;
    }
    if let Some((a, b)) = swap {
        targets.swap(a, b);
        changed = true;
    }
    changed.then_some(Edit::SetTargets(targets))
}

/// The fields of one target; true when one changed.
fn target_row_ui(ui: &mut egui::Ui, i: usize, t: &mut Target) -> bool {
    let mut changed = false;
    ui.horizontal_wrapped(|ui| {
        let before = t.clone();
        let quantity = egui::ComboBox::from_id_salt(("quantity", i))
            .width(40.0)
            .selected_text(t.quantity.symbol())
            .show_ui(ui, |ui| {
                for q in [Quantity::R, Quantity::T, Quantity::A] {
                    ui.selectable_value(&mut t.quantity, q, q.describe());
                }
            });
        quantity
            .response
            .accessible_name(format!("Target {} quantity", i + 1));
        let pol = egui::ComboBox::from_id_salt(("pol", i))
            .width(60.0)
            .selected_text(match t.pol {
                Pol::S => "s",
                Pol::P => "p",
                Pol::Mean => "mean",
            })
            .show_ui(ui, |ui| {
                for p in [Pol::Mean, Pol::S, Pol::P] {
                    ui.selectable_value(&mut t.pol, p, p.describe());
                }
            });
        pol.response
            .accessible_name(format!("Target {} polarisation", i + 1));
        let kind = egui::ComboBox::from_id_salt(("kind", i))
            .width(36.0)
            .selected_text(kind_sign(t.kind))
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut t.kind, TargetKind::AtMost, "≤ at most");
                ui.selectable_value(&mut t.kind, TargetKind::AtLeast, "≥ at least");
                ui.selectable_value(&mut t.kind, TargetKind::Equal, "= equal to");
            });
        kind.response
            .accessible_name(format!("Target {} kind", i + 1));
        percent_ui(ui, "goal", &mut t.goal);
        percent_ui(ui, "±", &mut t.tolerance);
        changed |= *t != before;
    });
    ui.horizontal_wrapped(|ui| {
        let before = t.clone();
        number_ui(ui, "from", &mut t.from_nm, 0.1, " nm");
        number_ui(ui, "to", &mut t.to_nm, 0.1, " nm");
        number_ui(ui, "step", &mut t.step_nm, 0.01, " nm");
        let l = ui.label("at");
        ui.add(
            DragValue::new(&mut t.aoi_deg)
                .range(0.0..=89.0)
                .speed(0.5)
                .suffix("°"),
        )
        .labelled_by(l.id);
        let l = ui.label("weight");
        ui.add(
            DragValue::new(&mut t.weight)
                .range(0.0..=1000.0)
                .speed(0.05),
        )
        .labelled_by(l.id);
        if t.to_nm < t.from_nm {
            t.to_nm = t.from_nm;
        }
        changed |= *t != before;
    });
    changed
}

fn number_ui(ui: &mut egui::Ui, label: &str, v: &mut f64, speed: f64, suffix: &str) {
    let l = ui.label(label);
    ui.add(
        DragValue::new(v)
            .range(0.1..=1_000_000.0)
            .speed(speed)
            .suffix(suffix),
    )
    .labelled_by(l.id);
}

/// A fraction shown and edited in percent, after its label.
fn percent_ui(ui: &mut egui::Ui, label: &str, fraction: &mut f64) {
    let mut pct = *fraction * 100.0;
    let l = ui.label(label);
    let r = ui
        .add(
            DragValue::new(&mut pct)
                .range(0.0..=100.0)
                .speed(0.01)
                .max_decimals(4)
                .suffix(" %"),
        )
        .labelled_by(l.id);
    if r.changed() {
        *fraction = pct / 100.0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_target_reads_as_an_engineer_writes_it() {
        let mut t = new_target(420.0, 680.0);
        assert_eq!(describe(&t), "R (mean) ≤ 0.5 % at 0°, 420–680 nm");
        t.kind = TargetKind::AtLeast;
        t.goal = 0.998;
        t.from_nm = 1064.0;
        t.to_nm = 1064.0;
        t.aoi_deg = 45.0;
        t.pol = Pol::S;
        assert_eq!(describe(&t), "R (s) ≥ 99.8 % at 45°, 1064 nm");
    }
}
