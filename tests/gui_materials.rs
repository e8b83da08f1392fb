//! The materials panel, driven headless through its accessibility tree.

use eframe::egui;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use stackwise::design::{Design, Layer, Nm};
use stackwise::gui::materials::{BrowserAction, BrowserState, materials_ui};
use stackwise::material::{Material, Model, builtin};

type State = (BrowserState, Design, Option<BrowserAction>);

fn harness(design: Design) -> Harness<'static, State> {
    Harness::builder()
        .with_size(egui::vec2(900.0, 1600.0))
        .build_ui_state(
            |ui, s: &mut State| {
                if let Some(a) = materials_ui(ui, &mut s.0, &s.1) {
                    s.2 = Some(a);
                }
            },
            (BrowserState::default(), design, None),
        )
}

/// Clicks the field labelled `label` and types `text` into it.
fn type_into(h: &mut Harness<'_, State>, label: &str, text: &str) {
    h.get_by_label(label).click();
    h.run();
    h.get_by_label(label).type_text(text);
    h.run();
}

fn added(h: &Harness<'_, State>) -> Material {
    match &h.state().2 {
        Some(BrowserAction::AddMaterial(m)) => m.clone(),
        other => panic!("expected an AddMaterial action, got {other:?}"),
    }
}

#[test]
fn constant_form_adds_the_typed_material() {
    let mut h = harness(Design::new_empty("test"));
    h.run();
    type_into(&mut h, "Name", "Hi-index");
    type_into(&mut h, "Index n", "2.35");
    type_into(&mut h, "Extinction k", "0.001");
    h.get_by_label("Add to design").click();
    h.run();
    let m = added(&h);
    assert_eq!(m.name, "Hi-index");
    assert_eq!(m.model, Model::Constant { n: 2.35, k: 0.001 });
    assert_eq!(m.range_nm, None, "no range was typed");
}

#[test]
fn pasted_csv_becomes_a_table_material() {
    let mut h = harness(Design::new_empty("test"));
    h.run();
    type_into(&mut h, "Name", "My film");
    h.get_by_label("Table from CSV").click();
    h.run();
    h.get_by_label("CSV table").click();
    h.run();
    // Micrometres, descending, semicolons with decimal commas: all converted by the importer.
    h.event(egui::Event::Paste(
        "wavelength (µm);n;k\n0,8;1,45;0\n0,6;1,46;0,002\n0,4;1,48;0,01\n".into(),
    ));
    h.run();
    assert!(
        h.query_by_label_contains("3 rows, 400–800 nm").is_some(),
        "the parsed row count and span are shown before adding"
    );
    h.get_by_label("Add to design").click();
    h.run();
    let m = added(&h);
    assert_eq!(m.name, "My film");
    let Model::Table { rows } = &m.model else {
        panic!("expected a table model, got {:?}", m.model);
    };
    let want = [
        (400.0, 1.48, 0.01),
        (600.0, 1.46, 0.002),
        (800.0, 1.45, 0.0),
    ];
    assert_eq!(rows.len(), want.len(), "{rows:?}");
    for (got, want) in rows.iter().zip(want) {
        assert!(
            (got.0 - want.0).abs() < 1e-9
                && (got.1 - want.1).abs() < 1e-12
                && (got.2 - want.2).abs() < 1e-12,
            "row {got:?} should be {want:?}"
        );
    }
}

#[test]
fn a_bad_table_shows_the_line_and_cannot_be_added() {
    let mut h = harness(Design::new_empty("test"));
    h.run();
    // No name yet: the table's own error must still show.
    h.get_by_label("Table from CSV").click();
    h.run();
    h.get_by_label("CSV table").click();
    h.run();
    h.event(egui::Event::Paste("400,1.5,0\n500,1.4,-0.2\n".into()));
    h.run();
    assert!(
        h.query_by_label_contains("line 2: k = -0.2 is negative")
            .is_some(),
        "the parse error is shown in place, naming the line"
    );
    type_into(&mut h, "Name", "Broken");
    h.get_by_label("Add to design").click();
    h.run();
    assert_eq!(h.state().2, None, "a broken table must not be added");
}

#[test]
fn a_name_clash_offers_replace() {
    let mut design = Design::new_empty("test");
    design
        .materials
        .push(Material::user("L", Model::Constant { n: 1.38, k: 0.0 }));
    let mut h = harness(design);
    h.run();
    type_into(&mut h, "Name", "L");
    type_into(&mut h, "Index n", "1.46");
    assert!(
        h.query_by_label("Add to design").is_none(),
        "adding a second material of the same name is not offered"
    );
    h.get_by_label("Replace it").click();
    h.run();
    assert_eq!(
        h.state().2,
        Some(BrowserAction::ReplaceMaterial {
            old_name: "L".into(),
            material: Material::user("L", Model::Constant { n: 1.46, k: 0.0 }),
        })
    );
}

#[test]
fn a_builtin_name_is_allowed_with_a_warning() {
    let name = builtin()
        .first()
        .map(|m| m.name.clone())
        .expect("the library has materials");
    let mut h = harness(Design::new_empty("test"));
    h.run();
    type_into(&mut h, "Name", &name);
    type_into(&mut h, "Index n", "1.5");
    assert!(
        h.query_by_label_contains("takes precedence").is_some(),
        "the shadowing is explained"
    );
    h.get_by_label("Add to design").click();
    h.run();
    assert_eq!(added(&h).name, name);
}

#[test]
fn removing_a_used_design_material_warns_and_asks_the_caller() {
    let mut design = Design::new_empty("test");
    design
        .materials
        .push(Material::user("H", Model::Constant { n: 2.3, k: 0.0 }));
    let thick = Nm::new(100.0).expect("a valid thickness");
    design.layers.push(Layer::new("SiO2", thick));
    design.layers.push(Layer::new("H", thick));
    let mut h = harness(design);
    h.run();
    h.get_by_label("H — constant (in this design)").click();
    h.run();
    assert!(
        h.query_by_label_contains("used by layer 2").is_some(),
        "the layers using it are named"
    );
    h.get_by_label("Remove from design").click();
    h.run();
    assert_eq!(h.state().2, Some(BrowserAction::RemoveMaterial("H".into())));
}

#[test]
fn editing_a_design_material_emits_replace_with_the_old_name() {
    let mut design = Design::new_empty("test");
    design
        .materials
        .push(Material::user("H", Model::Constant { n: 2.3, k: 0.0 }));
    let mut h = harness(design);
    h.run();
    h.get_by_label("H — constant (in this design)").click();
    h.run();
    h.get_by_label("Edit").click();
    h.run();
    assert_eq!(
        h.get_by_label("Index n").value().as_deref(),
        Some("2.3"),
        "the form is filled from the material"
    );
    // Rename it; the replacement keeps the old name as its key.
    type_into(&mut h, "Name", "2");
    h.get_by_label("Save changes").click();
    h.run();
    assert_eq!(
        h.state().2,
        Some(BrowserAction::ReplaceMaterial {
            old_name: "H".into(),
            material: Material::user("H2", Model::Constant { n: 2.3, k: 0.0 }),
        })
    );
}

#[test]
fn search_filters_the_list() {
    let mut design = Design::new_empty("test");
    design
        .materials
        .push(Material::user("Zeta", Model::Constant { n: 2.0, k: 0.0 }));
    let mut h = harness(design);
    h.run();
    type_into(&mut h, "Search", "zet");
    assert!(
        h.query_by_label_contains("Zeta").is_some(),
        "the matching material stays"
    );
    assert_eq!(
        h.query_all_by_label_contains(" — ").count(),
        1,
        "only the one match is listed"
    );
}

#[test]
fn sellmeier_terms_are_added_in_order() {
    let mut h = harness(Design::new_empty("test"));
    h.run();
    type_into(&mut h, "Name", "Glass");
    h.get_by_label("Sellmeier").click();
    h.run();
    type_into(&mut h, "B1", "1.03");
    type_into(&mut h, "C1 (µm²)", "0.006");
    h.get_by_label("Add term").click();
    h.run();
    type_into(&mut h, "B2", "0.23");
    type_into(&mut h, "C2 (µm²)", "0.02");
    type_into(&mut h, "Valid from (nm)", "350");
    type_into(&mut h, "to (nm)", "2000");
    h.get_by_label("Add to design").click();
    h.run();
    let m = added(&h);
    assert_eq!(
        m.model,
        Model::Sellmeier {
            a: 0.0,
            b: vec![1.03, 0.23],
            c: vec![0.006, 0.02],
        }
    );
    assert_eq!(m.range_nm, Some((350.0, 2000.0)));
}

#[test]
fn a_copied_builtin_keeps_its_citation() {
    let original = builtin()
        .iter()
        .find(|m| matches!(m.model, Model::Table { .. }) && !m.source.is_empty())
        .expect("the library has a cited table");
    let mut h = harness(Design::new_empty("test"));
    h.run();
    type_into(&mut h, "Search", &original.name);
    h.get_by_label_contains(&format!("{} — ", original.name))
        .click();
    h.run();
    h.get_by_label("Copy to form").click();
    h.run();
    type_into(&mut h, "Name", " copy");
    h.get_by_label("Add to design").click();
    h.run();
    let m = added(&h);
    assert_eq!(m.name, format!("{} copy", original.name));
    assert_eq!(
        m.model, original.model,
        "the rows survive the form's round trip"
    );
    assert!(
        m.source.contains(&original.source) && m.source.contains("based on"),
        "{}",
        m.source
    );
}

#[test]
fn every_builtin_and_every_form_kind_can_be_shown() {
    // The harness panics on a character the bundled fonts cannot draw, so this also checks
    // that names, citations and the form's formulas render.
    let mut h = harness(Design::new_empty("test"));
    h.run();
    for m in builtin() {
        h.state_mut().0 = BrowserState::default();
        h.run();
        type_into(&mut h, "Search", &m.name);
        let label = format!("{} — {}", m.name, m.model.kind_name());
        h.get_by_label(&label).scroll_to_me();
        h.run();
        h.get_by_label(&label).click();
        h.run();
        assert!(
            h.query_by_label("Copy to form").is_some(),
            "{} is shown with its details",
            m.name
        );
    }
    for kind in ["Cauchy", "Sellmeier", "Table from CSV", "Constant"] {
        h.get_by_label(kind).click();
        h.run();
    }
    assert!(
        h.query_by_label("Index n").is_some(),
        "the last choice, Constant, shows its fields"
    );
}
