//! The targets panel: what the coating must do, one row per target, with its pass/fail from the
//! last evaluation. R/T/A goals and tolerances show in percent (the file keeps fractions); GDD
//! goals in fs² and colour goals as L*, a* or b* numbers. GDD and colour targets have no mark on
//! the spectrum; their row says whether they are met, with the computed value.

use egui::{DragValue, RichText};

use crate::design::{
    ColourCoordinate, ColourLight, ColourObserver, Design, Measure, Pol, Quantity, Target,
    TargetKind,
};
use crate::number::Fixed;
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
    kind.sign()
}

/// One target in words, e.g. "R (mean) ≤ 0.5 % at 0°, 420–680 nm" (see [`Target::describe`]).
#[must_use]
pub fn describe(t: &Target) -> String {
    t.describe()
}

/// A GDD or colour target's computed value in words: "a* 1.23" or "GDD −12.3 to 4.5 fs²";
/// `None` for R/T/A targets (the spectrum marks show those).
fn computed(t: &Target, values: &[f64]) -> Option<String> {
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    match t.measure {
        Measure::Gdd if values.len() == 1 => Some(format!("GDD {} fs²", Fixed(lo, 1))),
        Measure::Gdd if !values.is_empty() => {
            Some(format!("GDD {} to {} fs²", Fixed(lo, 1), Fixed(hi, 1)))
        }
        Measure::Spectral | Measure::Gdd => None,
        Measure::Colour { coordinate, .. } => values
            .first()
            .map(|&v| format!("{} {}", coordinate.symbol(), Fixed(v, 2))),
    }
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
        let result = match evaluation {
            Some(Ok(e)) => e.targets.get(i),
            _ => None,
        };
        let pass = result.map(|r| r.pass);
        let shown = result.and_then(|r| computed(t, &r.values));
        ui.push_id(("target", i), |ui| {
            ui.horizontal_wrapped(|ui| {
                let (mark, colour) = match pass {
                    Some(true) => ("met", super::theme::PASS),
                    Some(false) => ("not met", super::theme::FAIL),
                    None => ("—", ui.visuals().weak_text_color()),
                };
                ui.label(RichText::new(format!("{}.", i + 1)).strong());
                ui.colored_label(colour, mark);
                if let Some(v) = &shown {
                    ui.label(v);
                }
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
    if targets.iter().any(|t| t.measure == Measure::Gdd) {
        // GDD targets are for ultrafast laser mirrors.
        ui.colored_label(ui.visuals().warn_fg_color, crate::cautions::SHORT);
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
        measure_ui(ui, i, t);
        let spectral = t.measure.is_spectral();
        let quantity = egui::ComboBox::from_id_salt(("quantity", i))
            .width(40.0)
            .selected_text(t.quantity.symbol())
            .show_ui(ui, |ui| {
                for q in [Quantity::R, Quantity::T, Quantity::A] {
                    // GDD and colour read reflected or transmitted light only.
                    if spectral || q != Quantity::A {
                        ui.selectable_value(&mut t.quantity, q, q.describe());
                    }
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
        match t.measure {
            Measure::Spectral => {
                percent_ui(ui, "goal", &mut t.goal);
                percent_ui(ui, "±", &mut t.tolerance);
            }
            Measure::Gdd => {
                value_ui(ui, "goal", &mut t.goal, -1e6..=1e6, " fs²");
                value_ui(ui, "±", &mut t.tolerance, 0.0..=1e6, " fs²");
            }
            Measure::Colour { coordinate, .. } => {
                let range = if coordinate == ColourCoordinate::L {
                    0.0..=100.0
                } else {
                    -200.0..=200.0
                };
                value_ui(ui, "goal", &mut t.goal, range, "");
                value_ui(ui, "±", &mut t.tolerance, 0.0..=100.0, "");
            }
        }
        changed |= *t != before;
    });
    ui.horizontal_wrapped(|ui| {
        let before = t.clone();
        if matches!(t.measure, Measure::Colour { .. }) {
            ui.label(RichText::new("colour sums 360–780 nm; no span or step").weak());
        } else {
            number_ui(ui, "from", &mut t.from_nm, 0.1, " nm");
            number_ui(ui, "to", &mut t.to_nm, 0.1, " nm");
            number_ui(ui, "step", &mut t.step_nm, 0.01, " nm");
        }
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

/// What the target measures: R/T/A, GDD or colour, and for colour the coordinate,
/// illuminant and observer. Switching kind sets a goal in the new kind's unit.
fn measure_ui(ui: &mut egui::Ui, i: usize, t: &mut Target) {
    let name = |m: Measure| match m {
        Measure::Spectral => "R/T/A",
        Measure::Gdd => "GDD",
        Measure::Colour { .. } => "colour",
    };
    let before = t.measure;
    let colour = Measure::Colour {
        coordinate: ColourCoordinate::A,
        illuminant: ColourLight::D65,
        observer: ColourObserver::TwoDeg,
    };
    egui::ComboBox::from_id_salt(("measure", i))
        .width(60.0)
        .selected_text(name(t.measure))
        .show_ui(ui, |ui| {
            for m in [Measure::Spectral, Measure::Gdd, colour] {
                let on = std::mem::discriminant(&t.measure) == std::mem::discriminant(&m);
                if ui.selectable_label(on, name(m)).clicked() && !on {
                    t.measure = m;
                }
            }
        })
        .response
        .accessible_name(format!("Target {} measures", i + 1));
    if std::mem::discriminant(&before) != std::mem::discriminant(&t.measure) {
        // A goal in the old unit means nothing in the new one.
        (t.goal, t.tolerance) = match t.measure {
            Measure::Spectral => (0.005, 0.0),
            Measure::Gdd => (0.0, 20.0),
            Measure::Colour { .. } => (0.0, 2.0),
        };
        t.kind = TargetKind::Equal;
        if t.quantity == Quantity::A {
            t.quantity = Quantity::R;
        }
    }
    if let Measure::Colour {
        coordinate,
        illuminant,
        observer,
    } = &mut t.measure
    {
        egui::ComboBox::from_id_salt(("coordinate", i))
            .width(36.0)
            .selected_text(coordinate.symbol())
            .show_ui(ui, |ui| {
                for c in [
                    ColourCoordinate::L,
                    ColourCoordinate::A,
                    ColourCoordinate::B,
                ] {
                    ui.selectable_value(coordinate, c, c.symbol());
                }
            })
            .response
            .accessible_name(format!("Target {} colour coordinate", i + 1));
        egui::ComboBox::from_id_salt(("illuminant", i))
            .width(44.0)
            .selected_text(illuminant.name())
            .show_ui(ui, |ui| {
                for l in [ColourLight::D65, ColourLight::A] {
                    ui.selectable_value(illuminant, l, l.name());
                }
            })
            .response
            .accessible_name(format!("Target {} illuminant", i + 1));
        egui::ComboBox::from_id_salt(("observer", i))
            .width(40.0)
            .selected_text(observer.name())
            .show_ui(ui, |ui| {
                for o in [ColourObserver::TwoDeg, ColourObserver::TenDeg] {
                    ui.selectable_value(observer, o, o.name());
                }
            })
            .response
            .accessible_name(format!("Target {} observer", i + 1));
    }
}

/// A goal or tolerance in its own unit (fs², CIELAB units), after its label.
fn value_ui(
    ui: &mut egui::Ui,
    label: &str,
    v: &mut f64,
    range: std::ops::RangeInclusive<f64>,
    suffix: &str,
) {
    let l = ui.label(label);
    ui.add(
        DragValue::new(v)
            .range(range)
            .speed(0.1)
            .max_decimals(3)
            .suffix(suffix),
    )
    .labelled_by(l.id);
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
