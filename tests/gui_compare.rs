//! Several designs open at once, driven headless: tabs, per-design edits and undo, overlays,
//! the compare view's figures checked against the engine's own arrays, and the unsaved-changes
//! questions on closing.

// Exact float comparisons are the point: the window and these checks run the same engine on
// the same grid, so their numbers must be bit-identical.
#![allow(clippy::float_cmp, clippy::unwrap_used)]

use std::path::{Path, PathBuf};

use egui::accesskit::Role;
use egui::{Key, Modifiers, Vec2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::analysis;
use stackwise::design::file;
use stackwise::gui::compare::{fmt_nm, fmt_percent};
use stackwise::gui::{App, CentralView, Command, DesignId, FileAction, WindowCommand};
use stackwise::optics::Side;

const ALPHA: &str = r#"(
    format: 1,
    name: "Design Alpha",
    reference_nm: 550.0,
    incident: "Air",
    substrate: "Fused silica",
    exit: "Air",
    layers: [(material: "MgF2", nm: 99.6)],
)"#;

const BETA: &str = r#"(
    format: 1,
    name: "Design Beta",
    reference_nm: 550.0,
    incident: "Air",
    substrate: "Fused silica",
    exit: "Air",
    layers: [(material: "TiO2", nm: 25.0), (material: "SiO2", nm: 100.0)],
)"#;

/// Writes the two designs to `dir` and returns their paths.
fn write_designs(dir: &Path) -> (PathBuf, PathBuf) {
    let a = dir.join("alpha.ron");
    let b = dir.join("beta.ron");
    std::fs::write(&a, ALPHA).unwrap();
    std::fs::write(&b, BETA).unwrap();
    (a, b)
}

/// A window with both designs opened through commands (Beta shown), sweeps inline.
fn two_designs(dir: &Path) -> (Harness<'static, App>, DesignId, DesignId) {
    let (a, b) = write_designs(dir);
    let mut app = App::new(Some(a));
    app.force_inline = true;
    let mut h = Harness::builder()
        .with_size(Vec2::new(1400.0, 900.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app);
    h.run();
    h.state_mut().push(Command::Open(b));
    h.run();
    let ids: Vec<DesignId> = h.state().designs.iter().map(|d| d.id).collect();
    assert_eq!(ids.len(), 2, "two designs open");
    (h, ids[0], ids[1])
}

fn thickness(h: &Harness<'_, App>, id: DesignId, layer: usize) -> f64 {
    h.state().design(id).unwrap().doc.design().layers[layer]
        .nm
        .get()
}

fn name(h: &Harness<'_, App>) -> String {
    h.state().doc().design().name.clone()
}

#[test]
fn two_designs_switch_edit_and_undo_separately() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, beta) = two_designs(dir.path());
    assert_eq!(name(&h), "Design Beta", "the opened design is shown");
    assert!(h.state().doc().title().starts_with("Design Beta"), "title");
    let colours: Vec<_> = h.state().designs.iter().map(|d| d.colour).collect();
    assert_ne!(colours[0], colours[1], "each design its own colour");

    // Switch by clicking the tab.
    h.get_by_role_and_label(Role::Button, "Design Alpha")
        .click();
    h.run();
    assert_eq!(name(&h), "Design Alpha");
    h.get_by_label("Layer 1 nm").set_value_accesskit(80.0);
    h.run();
    assert_eq!(thickness(&h, alpha, 0), 80.0, "edited");
    assert_eq!(thickness(&h, beta, 0), 25.0, "the other design untouched");
    assert!(h.state().design(alpha).unwrap().doc.is_dirty());
    assert!(
        !h.state().design(beta).unwrap().doc.is_dirty(),
        "no mark on Beta"
    );
    // The tab shows the unsaved mark.
    h.get_by_role_and_label(Role::Button, "Design Alpha •");

    h.get_by_role_and_label(Role::Button, "Design Beta").click();
    h.run();
    h.get_by_label("Layer 1 nm").set_value_accesskit(20.0);
    h.run();
    assert_eq!(thickness(&h, beta, 0), 20.0);
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(thickness(&h, beta, 0), 25.0, "undo undid Beta's edit");
    assert_eq!(thickness(&h, alpha, 0), 80.0, "and left Alpha's alone");
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(
        thickness(&h, alpha, 0),
        80.0,
        "Beta has nothing more to undo"
    );

    h.get_by_role_and_label(Role::Button, "Design Alpha •")
        .click();
    h.run();
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(thickness(&h, alpha, 0), 99.6, "Alpha's own undo");
    assert!(!h.state().design(alpha).unwrap().doc.is_dirty());
}

#[test]
fn opening_an_open_file_switches_to_it_and_a_bad_file_names_itself() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, _) = two_designs(dir.path());
    assert!(
        h.state_mut()
            .apply(Command::Open(dir.path().join("alpha.ron")))
    );
    h.run();
    assert_eq!(h.state().designs.len(), 2, "not opened twice");
    assert_eq!(h.state().active().id, alpha, "switched to it");

    let missing = dir.path().join("gamma.ron");
    assert!(!h.state_mut().apply(Command::Open(missing)));
    h.run();
    assert_eq!(h.state().designs.len(), 2, "nothing added");
    let msg = h.state().error_window.clone().unwrap();
    assert!(msg.contains("gamma.ron"), "{msg}");
}

#[test]
fn an_overlay_draws_the_other_design_from_its_own_cache() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, beta) = two_designs(dir.path());
    h.state_mut().push_window(WindowCommand::Activate(alpha));
    h.run();
    assert!(
        h.query_by_label("Design Beta: R").is_none(),
        "no overlay before asking"
    );
    h.get_by_role_and_label(Role::CheckBox, "Design Beta")
        .click();
    h.run();
    assert_eq!(h.state().overlays, vec![beta]);
    // Legend entries are check boxes named after the design and the curve: R (mean) in both
    // views, R_s only in the angle view (its default curves).
    let legend = |h: &Harness<'_, App>, label: &str| {
        h.query_all_by_role_and_label(Role::CheckBox, label).count()
    };
    assert_eq!(legend(&h, "Design Beta: R"), 2, "overlaid in both views");
    assert_eq!(legend(&h, "Design Beta: R_s"), 1, "angle view");
    assert_eq!(legend(&h, "R_s"), 1, "the active design's own curves stay");
    h.get_by_role_and_label(Role::CheckBox, "Design Beta")
        .click();
    h.run();
    assert_eq!(legend(&h, "Design Beta: R"), 0, "overlay off");
    h.get_by_role_and_label(Role::CheckBox, "Design Beta")
        .click();
    h.run();

    // Beta's curve is the engine's for the active design's sweep.
    let v = h.state().view.clone();
    let shown = h.state().design(beta).unwrap().spectrum.result().unwrap();
    let shown = shown.as_ref().unwrap();
    let d = file::load(&dir.path().join("beta.ron")).unwrap();
    let wl = analysis::wavelengths_nm(v.from_nm, v.to_nm, v.step_nm).unwrap();
    let direct = analysis::spectrum(&d.resolve().unwrap(), &wl, v.aoi_deg, Side::Front).unwrap();
    assert_eq!(shown.x, direct.wavelength_nm);
    assert_eq!(shown.curves.r, direct.curves.r);
}

/// Mean, min, where, max, where of `ys` over all points, by a plain loop.
fn plain_figures(wl: &[f64], ys: &[f64]) -> (f64, f64, f64, f64, f64) {
    let (mut sum, mut min, mut min_at, mut max, mut max_at) = (0.0, ys[0], wl[0], ys[0], wl[0]);
    for i in 0..ys.len() {
        sum += ys[i];
        if ys[i] < min {
            min = ys[i];
            min_at = wl[i];
        }
        if ys[i] > max {
            max = ys[i];
            max_at = wl[i];
        }
    }
    (sum / ys.len() as f64, min, min_at, max, max_at)
}

#[test]
fn the_compare_table_shows_the_engines_figures_over_the_chosen_band() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, beta) = two_designs(dir.path());
    h.get_by_label("Compare designs").click();
    h.run();
    assert_eq!(h.state().central, CentralView::Compare);
    // Opening the compare view the first time ticks every open design.
    assert_eq!(h.state().compare.picked, vec![alpha, beta]);
    h.get_by_role_and_label(Role::CheckBox, "Design Beta")
        .click();
    h.run();
    assert_eq!(h.state().compare.picked, vec![alpha], "unticked");
    h.get_by_role_and_label(Role::CheckBox, "Design Beta")
        .click();
    h.run();
    assert_eq!(h.state().compare.picked, vec![alpha, beta]);
    h.get_by_label("band from").set_value_accesskit(480.0);
    h.run();
    h.get_by_label("band to").set_value_accesskit(620.0);
    h.run();
    h.get_by_label("band step").set_value_accesskit(2.5);
    h.run();
    h.get_by_role_and_label(Role::Slider, "band angle")
        .set_value_accesskit(30.0);
    h.run();
    let c = h.state().compare.clone();
    assert_eq!(
        (c.band_from_nm, c.band_to_nm, c.band_step_nm, c.band_aoi_deg),
        (480.0, 620.0, 2.5, 30.0),
        "band set through the widgets"
    );
    // Shared axes and the difference of the two.
    h.get_by_role_and_label(Role::CheckBox, "Design Alpha: R");
    h.get_by_role_and_label(Role::CheckBox, "Design Beta: R");
    h.get_by_role_and_label(Role::CheckBox, "Design Alpha − Design Beta");

    let figures = h.state().compare_figures();
    assert_eq!(figures.len(), 2);
    for ((id, f), file_name) in figures.iter().zip(["alpha.ron", "beta.ron"]) {
        let f = f.as_ref().unwrap();
        let d = file::load(&dir.path().join(file_name)).unwrap();
        let wl = analysis::wavelengths_nm(480.0, 620.0, 2.5).unwrap();
        let s = analysis::spectrum(&d.resolve().unwrap(), &wl, 30.0, Side::Front).unwrap();
        assert_eq!(f.points, wl.len(), "{id:?}: every point of the band");
        let r = plain_figures(&s.wavelength_nm, &s.curves.r);
        let t = plain_figures(&s.wavelength_nm, &s.curves.t);
        assert_eq!(
            (f.r.mean, f.r.min, f.r.min_at_nm, f.r.max, f.r.max_at_nm),
            r,
            "{file_name} R"
        );
        assert_eq!(
            (f.t.mean, f.t.min, f.t.min_at_nm, f.t.max, f.t.max_at_nm),
            t,
            "{file_name} T"
        );
        // And the table shows them, formatted.
        for text in [
            fmt_percent(r.0),
            fmt_percent(r.3),
            fmt_nm(r.4),
            fmt_percent(t.0),
            fmt_percent(t.1),
        ] {
            assert!(
                h.query_all_by_label(&text).next().is_some(),
                "{file_name}: {text} shown"
            );
        }
    }
    assert_ne!(
        figures[0].1.as_ref().unwrap().r.mean,
        figures[1].1.as_ref().unwrap().r.mean,
        "two different designs, two different rows"
    );
}

#[test]
fn closing_the_window_asks_about_every_unsaved_design() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, beta) = two_designs(dir.path());
    for id in [alpha, beta] {
        h.state_mut().push_window(WindowCommand::Activate(id));
        h.run();
        h.get_by_label("Layer 1 nm").set_value_accesskit(50.0);
        h.run();
    }
    let ctx = h.ctx.clone();
    h.state_mut().file_action(&ctx, FileAction::Quit);
    h.run();
    h.get_by_label_contains("\"Design Alpha\" has changes");
    h.get_by_label_contains("1 other open design");
    h.get_by_label("Discard changes").click();
    // The next question replaces the first; let the windows settle.
    h.run_steps(10);
    h.get_by_label_contains("\"Design Beta\" has changes");
    h.get_by_label("Save").click();
    h.run_steps(10);
    assert!(
        h.query_by_label_contains("has changes").is_none(),
        "no more questions"
    );
    let beta_file = file::load(&dir.path().join("beta.ron")).unwrap();
    assert_eq!(beta_file.layers[0].nm.get(), 50.0, "Beta saved");
    let alpha_file = file::load(&dir.path().join("alpha.ron")).unwrap();
    assert_eq!(
        alpha_file.layers[0].nm.get(),
        99.6,
        "Alpha discarded, file untouched"
    );
}

#[test]
fn closing_a_design_with_the_button_asks_and_cancel_keeps_it() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, alpha, beta) = two_designs(dir.path());
    h.get_by_label("Layer 2 nm").set_value_accesskit(60.0);
    h.run();
    h.get_by_label("Close design").click();
    h.run();
    h.get_by_label_contains("\"Design Beta\" has changes");
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(h.state().designs.len(), 2, "kept");
    assert_eq!(thickness(&h, beta, 1), 60.0, "with its edit");
    h.get_by_label("Close design").click();
    h.run();
    h.get_by_label("Save").click();
    h.run();
    assert_eq!(h.state().designs.len(), 1, "closed once saved");
    assert_eq!(h.state().active().id, alpha, "the other design is shown");
    let saved = file::load(&dir.path().join("beta.ron")).unwrap();
    assert_eq!(saved.layers[1].nm.get(), 60.0);
    // A clean design closes without a question; the last one leaves an empty design.
    h.get_by_label("Close design").click();
    h.run();
    assert_eq!(h.state().designs.len(), 1);
    assert_eq!(name(&h), "Untitled");
}

#[test]
fn each_unsaved_design_gets_its_own_recovery_file() {
    let dir = tempfile::tempdir().unwrap();
    let rec = dir.path().join("recovery");
    let (mut h, alpha, beta) = two_designs(dir.path());
    h.state_mut().recovery_dir = Some(rec.clone());
    for (id, nm) in [(alpha, 70.0), (beta, 30.0)] {
        h.state_mut().push_window(WindowCommand::Activate(id));
        h.run();
        h.get_by_label("Layer 1 nm").set_value_accesskit(nm);
        h.run();
    }
    std::thread::sleep(stackwise::gui::AUTOSAVE_DELAY + std::time::Duration::from_millis(200));
    h.run();
    let mut found: Vec<f64> = std::fs::read_dir(&rec)
        .unwrap()
        .map(|e| file::load(&e.unwrap().path()).unwrap().layers[0].nm.get())
        .collect();
    found.sort_by(f64::total_cmp);
    assert_eq!(found, vec![30.0, 70.0], "one file per unsaved design");

    // Saving one removes its file; the other stays.
    h.state_mut().push_window(WindowCommand::Activate(alpha));
    h.run();
    assert!(h.state_mut().apply(Command::Save));
    let left: Vec<_> = std::fs::read_dir(&rec).unwrap().collect();
    assert_eq!(left.len(), 1, "Alpha's recovery file removed on save");

    // The next session offers what is left.
    let mut next = App::new(None);
    next.recovery_dir = Some(rec);
    next.check_recovery();
    next.force_inline = true;
    let mut h2 = Harness::builder()
        .with_size(Vec2::new(1400.0, 900.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), next);
    h2.run();
    h2.get_by_label("Recover").click();
    h2.run();
    assert_eq!(
        h2.state().designs.len(),
        2,
        "demo plus the recovered design"
    );
    assert_eq!(h2.state().doc().design().name, "Design Beta");
    assert_eq!(h2.state().doc().design().layers[0].nm.get(), 30.0);
    assert!(h2.state().doc().is_dirty(), "recovered work is unsaved");
}
