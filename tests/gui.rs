//! The design window, driven headless with egui_kittest: edits go through the widgets, and
//! the numbers on show are checked against the command line's for the saved design.

// Exact float comparisons are the point: the window and the CLI run the same engine, so their
// numbers must be bit-identical, and thicknesses typed in must be stored as typed.
#![allow(clippy::float_cmp, clippy::unwrap_used)]

use std::path::Path;

use egui::{Key, Modifiers, Vec2};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::cli::{self, SideArg};
use stackwise::design::file;
use stackwise::gui::{App, Command, Edit, FileAction};

mod common;

use common::run_until;

fn harness(app: App) -> Harness<'static, App> {
    Harness::builder()
        .with_size(Vec2::new(1400.0, 900.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app)
}

/// The `.ron` files in a recovery folder.
fn recovery_files(dir: &Path) -> Vec<std::path::PathBuf> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "ron"))
        .collect()
}

/// The demo design with sweeps computed inline, so each frame shows the current design.
fn demo() -> Harness<'static, App> {
    let mut app = App::new(None);
    app.force_inline = true;
    let mut h = harness(app);
    h.run();
    h
}

fn nms(h: &Harness<'_, App>) -> Vec<f64> {
    h.state()
        .doc()
        .design()
        .layers
        .iter()
        .map(|l| l.nm.get())
        .collect()
}

/// Runs `stackwise spectrum` on `path` and returns (wavelength, R) rows.
fn cli_spectrum(path: &Path, from: f64, to: f64, step: f64) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let mut err = Vec::new();
    cli::run(
        cli::Command::Spectrum {
            design: path.to_path_buf(),
            range: cli::Range {
                from: Some(from),
                to: Some(to),
                step: Some(step),
            },
            aoi: 0.0,
            side: SideArg::Front,
            out: None,
        },
        &mut out,
        &mut err,
    )
    .unwrap();
    let text = String::from_utf8(out).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next(),
        Some("wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A"),
        "CSV header"
    );
    lines
        .map(|l| {
            let f: Vec<f64> = l.split(',').map(|x| x.parse().unwrap()).collect();
            (f[0], f[3])
        })
        .collect()
}

#[test]
fn editing_a_thickness_shows_what_the_cli_computes_for_the_saved_file() {
    let mut h = demo();
    let before_r = h
        .state()
        .active()
        .spectrum
        .result()
        .unwrap()
        .as_ref()
        .unwrap()
        .curves
        .r
        .clone();
    h.get_by_label("Layer 2 nm").set_value_accesskit(50.0);
    h.run();
    assert_eq!(nms(&h)[1], 50.0, "the table edited layer 2");

    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("edited.ron");
    assert!(h.state_mut().apply(Command::SaveAs(path.clone())), "saved");
    h.run();
    assert!(!h.state().doc().is_dirty(), "clean after saving");
    assert_eq!(
        file::load(&path).unwrap().layers[1].nm.get(),
        50.0,
        "on disk"
    );

    let view = h.state().view.clone();
    let shown = h
        .state()
        .active()
        .spectrum
        .result()
        .unwrap()
        .as_ref()
        .unwrap()
        .clone();
    assert_ne!(shown.curves.r, before_r, "the plot follows the edit");
    let cli = cli_spectrum(&path, view.from_nm, view.to_nm, view.step_nm);
    assert_eq!(cli.len(), shown.x.len(), "same points");
    for (i, (wl, r)) in cli.iter().enumerate() {
        assert_eq!(*wl, shown.x[i], "wavelength {i}");
        assert_eq!(*r, shown.curves.r[i], "R at {wl} nm");
    }
}

#[test]
fn add_delete_reorder_and_scale_through_the_buttons() {
    let mut h = demo();
    let start = nms(&h);
    assert_eq!(start.len(), 4, "demo has four layers");

    h.get_by_label("Add").click();
    h.run();
    assert_eq!(
        h.state().doc().design().layers.len(),
        5,
        "added on the outside"
    );
    assert_eq!(&nms(&h)[..4], &start[..], "others untouched");

    h.get_by_label("Select layer 5").click();
    h.run();
    h.get_by_label("Delete").click();
    h.run();
    assert_eq!(nms(&h), start, "deleted the new layer");

    h.get_by_label("Select layer 1").click();
    h.run();
    h.get_by_label("Up").click();
    h.run();
    assert_eq!(
        nms(&h),
        [start[1], start[0], start[2], start[3]],
        "layer 1 moved one place out"
    );
    assert!(
        h.state().stack.selected.contains(&1),
        "selection follows the layer"
    );

    h.get_by_label("Scale…").click();
    h.run();
    h.get_by_label("Scale factor").set_value_accesskit(2.0);
    h.run();
    h.get_by_label("Apply scale").click();
    h.run();
    let now = nms(&h);
    assert!((now[1] - 2.0 * start[0]).abs() < 1e-9, "scaled {now:?}");
    assert_eq!(now[0], start[1], "unselected layer unchanged");
}

#[test]
fn qwot_and_nm_stay_in_step() {
    let mut h = demo();
    h.get_by_label("Layer 1 QWOT").set_value_accesskit(1.0);
    h.run();
    let d = &h.state().doc().design();
    let q = d.layer_qwot(1).unwrap();
    assert!((q - 1.0).abs() < 1e-9, "QWOT {q}");
    // Editing nm moves the QWOT by the same ratio.
    let nm = d.layers[0].nm.get();
    h.get_by_label("Layer 1 nm").set_value_accesskit(nm * 0.5);
    h.run();
    let q = h.state().doc().design().layer_qwot(1).unwrap();
    assert!((q - 0.5).abs() < 1e-9, "QWOT after halving nm: {q}");
}

#[test]
fn undo_and_redo_from_the_keyboard() {
    let mut h = demo();
    let start = nms(&h);
    h.get_by_label("Layer 3 nm").set_value_accesskit(77.0);
    h.run();
    h.get_by_label("Layer 4 nm").set_value_accesskit(88.0);
    h.run();
    assert!(h.state().doc().title().contains('•'), "unsaved mark");
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(nms(&h)[3], start[3], "second edit undone");
    assert_eq!(nms(&h)[2], 77.0, "first edit kept");
    h.key_press_modifiers(Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(nms(&h), start, "both undone");
    assert!(!h.state().doc().is_dirty(), "back to the opened design");
    h.key_press_modifiers(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z);
    h.run();
    assert_eq!(nms(&h)[2], 77.0, "redo");
    h.key_press_modifiers(Modifiers::COMMAND, Key::Y);
    h.run();
    assert_eq!(nms(&h)[3], 88.0, "Ctrl+Y redoes too");
}

#[test]
fn a_malformed_file_keeps_the_open_design_and_shows_where() {
    let mut h = demo();
    let before = h.state().doc().design().clone();
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("broken.ron");
    std::fs::write(
        &bad,
        "(\n    format: 1,\n    name: \"x\",\n    reference_nm: \"550\",\n)",
    )
    .unwrap();
    let ctx = h.ctx.clone();
    h.state_mut().file_action(&ctx, FileAction::Open(bad));
    h.run();
    assert_eq!(*h.state().doc().design(), before, "design untouched");
    let msg = h.state().error_window.clone().expect("error window open");
    assert!(msg.contains("line 4"), "{msg}");
    assert!(
        h.query_all_by_label_contains("line 4, column")
            .next()
            .is_some(),
        "shown: {msg}"
    );
    h.get_by_label("OK").click();
    h.run();
    assert!(h.state().error_window.is_none(), "dismissed");
}

#[test]
fn a_bad_start_file_opens_the_demo_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("nope.ron");
    let app = App::new(Some(missing));
    let msg = app.error_window.clone().expect("error shown");
    assert!(msg.contains("nope.ron"), "{msg}");
    assert_eq!(app.doc().design().layers.len(), 4, "demo design");
}

#[test]
fn the_notation_box_builds_layers_and_shows_the_error_column() {
    let mut h = demo();
    h.get_by_label("Notation")
        .set_text_value_accesskit("(HL)^3 H");
    h.run();
    assert_eq!(h.state().stack.notation, "(HL)^3 H", "typed");
    h.get_by_label("Build").click();
    h.run();
    let d = &h.state().doc().design();
    assert_eq!(d.layers.len(), 7, "seven layers");
    assert_eq!(d.layers[0].material, "TiO2", "H is bound to TiO2");
    assert!(
        (d.layer_qwot(2).unwrap() - 1.0).abs() < 1e-9,
        "quarter waves"
    );

    h.get_by_label("Notation").set_text_value_accesskit("HL)");
    h.run();
    h.get_by_label("Build").click();
    h.run();
    assert_eq!(
        h.state().doc().design().layers.len(),
        7,
        "a bad notation changes nothing"
    );
    let e = h.state().stack.notation_error.clone().expect("error kept");
    assert!(e.contains("column 3"), "{e}");
    assert!(
        h.query_all_by_label_contains("column 3").next().is_some(),
        "shown in place: {e}"
    );
}

#[test]
fn new_keeps_the_unsaved_design_and_closing_it_asks_first() {
    let mut h = demo();
    h.get_by_label("Layer 1 nm").set_value_accesskit(1.0);
    h.run();
    let ctx = h.ctx.clone();
    h.state_mut().file_action(&ctx, FileAction::New);
    h.run();
    assert_eq!(
        h.state().designs.len(),
        2,
        "a second design, nothing replaced"
    );
    assert!(
        h.state().doc().design().layers.is_empty(),
        "the new one is shown"
    );
    assert_eq!(
        h.state().designs[0].doc.design().layers[0].nm.get(),
        1.0,
        "the edited design is still open with its edit"
    );
    let edited = h.state().designs[0].id;
    h.state_mut()
        .file_action(&ctx, FileAction::CloseDesign(edited));
    h.run();
    assert_eq!(h.state().designs.len(), 2, "not closed before the answer");
    h.get_by_label_contains("has changes that are not saved");
    h.get_by_label("Cancel").click();
    h.run();
    assert_eq!(h.state().designs.len(), 2, "cancel keeps it open");
    assert_eq!(
        h.state().doc().design().layers[0].nm.get(),
        1.0,
        "and shown"
    );
    h.state_mut()
        .file_action(&ctx, FileAction::CloseDesign(edited));
    h.run();
    h.get_by_label("Discard changes").click();
    h.run();
    assert_eq!(h.state().designs.len(), 1, "closed after discarding");
    assert!(h.state().design(edited).is_none());
}

#[test]
fn autosave_writes_a_recovery_file_that_is_offered_next_time() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = App::new(None);
    app.force_inline = true;
    app.recovery_dir = Some(dir.path().to_path_buf());
    let mut h = harness(app);
    h.run();
    h.get_by_label("Layer 2 nm").set_value_accesskit(42.0);
    h.run();
    assert_eq!(recovery_files(dir.path()).len(), 0, "not before the delay");
    std::thread::sleep(stackwise::gui::AUTOSAVE_DELAY + std::time::Duration::from_millis(200));
    h.run();
    let files = recovery_files(dir.path());
    assert_eq!(files.len(), 1, "one unsaved design, one file: {files:?}");
    let rec = files[0].clone();
    assert_eq!(
        file::load(&rec).unwrap().layers[1].nm.get(),
        42.0,
        "autosaved"
    );

    let mut next = App::new(None);
    next.recovery_dir = Some(dir.path().to_path_buf());
    next.check_recovery();
    next.force_inline = true;
    let mut h2 = harness(next);
    h2.run();
    h2.get_by_label("Recover").click();
    h2.run();
    assert_eq!(
        h2.state().doc().design().layers[1].nm.get(),
        42.0,
        "recovered"
    );
    assert!(h2.state().doc().is_dirty(), "recovered work is unsaved");
}

#[test]
fn cautions_are_one_click_away() {
    let mut h = demo();
    assert!(
        h.query_by_label_contains("ISO 21254").is_none(),
        "closed at start"
    );
    h.get_by_label("Cautions").click();
    h.run();
    h.get_by_label_contains("ISO 21254");
    h.get_by_label_contains("not a certification");
}

#[test]
fn warnings_from_the_engine_reach_the_status_line() {
    // The demo's SiO2 film data start at 252 nm; a sweep from 200 nm must say so.
    let mut h = demo();
    h.state_mut().view.from_nm = 200.0;
    h.run();
    h.get_by_label_contains("SiO2: data cover 252");
}

#[test]
fn dragging_a_layer_number_moves_the_layer() {
    let mut h = demo();
    let before: Vec<String> = h
        .state()
        .doc()
        .design()
        .layers
        .iter()
        .map(|l| l.material.clone())
        .collect();
    let from = h.get_by_label("Select layer 1").rect().center();
    let to = h.get_by_label("Select layer 3").rect().center();
    h.drag_at(from);
    h.run();
    // Move in steps so egui sees a drag rather than a click.
    for k in 1..=5 {
        h.hover_at(from + (to - from) * (k as f32 / 5.0));
        h.run();
    }
    h.drop_at(to);
    h.run();
    let after: Vec<String> = h
        .state()
        .doc()
        .design()
        .layers
        .iter()
        .map(|l| l.material.clone())
        .collect();
    let mut expected = before.clone();
    let moved = expected.remove(0);
    expected.insert(2, moved);
    assert_ne!(after, before, "the drag must change the order");
    assert_eq!(after, expected, "layer 1 now sits third from the substrate");
}

#[test]
fn light_from_the_back_shows_what_the_engine_gives_for_the_back_side() {
    use stackwise::analysis;
    use stackwise::optics::Side;
    let mut h = demo();
    h.get_by_label("back").click();
    h.run();
    let v = h.state().view.clone();
    let shown = match h.state().active().spectrum.result() {
        Some(Ok(r)) => r.curves.r.clone(),
        other => panic!("no spectrum: {other:?}"),
    };
    let d = h.state().doc().design().clone();
    let wl = analysis::wavelengths_nm(v.from_nm, v.to_nm, v.step_nm).unwrap();
    let back = analysis::spectrum(&d.resolve().unwrap(), &wl, v.aoi_deg, Side::Back).unwrap();
    let front = analysis::spectrum(&d.resolve().unwrap(), &wl, v.aoi_deg, Side::Front).unwrap();
    assert_eq!(
        shown, back.curves.r,
        "the window shows the back-side reflectance"
    );
    assert_ne!(shown, front.curves.r, "which differs from the front side's");
}

#[test]
fn with_no_desktop_dialog_a_typed_path_and_enter_save_there() {
    let dir = tempfile::tempdir().unwrap();
    let mut app = App::new(None);
    app.force_inline = true;
    app.own_chooser = true;
    let mut h = harness(app);
    h.run();
    h.get_by_label("File").click();
    h.run();
    h.get_by_label_contains("Save as…").click();
    h.run();
    h.get_by_label("Save to file");
    assert!(
        h.ctx
            .memory(|m| m.has_focus(stackwise::gui::chooser::name_field_id())),
        "the name field has the keyboard focus"
    );
    // Typing goes straight into the field and replaces the suggested name.
    let target = dir.path().join("typed-here.ron");
    h.event(egui::Event::Text(target.display().to_string()));
    h.run();
    h.key_press(Key::Enter);
    h.run();
    assert!(target.exists(), "saved where the typed path says");
    let reference = dir.path().join("reference.ron");
    file::save(&reference, h.state().doc().design()).unwrap();
    assert_eq!(
        std::fs::read(&target).unwrap(),
        std::fs::read(&reference).unwrap(),
        "the same bytes as Save writes"
    );
    assert_eq!(
        h.state().doc().path(),
        Some(target.as_path()),
        "now the design's file"
    );
    assert!(!h.state().doc().is_dirty(), "saved");
}

/// Runs frames until `done` holds (background jobs report between frames), at most 60 s.
fn ar_start() -> Harness<'static, App> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("designs/visible-ar-start.ron");
    let mut app = App::new(Some(path));
    app.force_inline = true;
    let mut h = harness(app);
    h.run();
    h
}

#[test]
fn targets_show_pass_fail_and_edits_are_undo_steps() {
    let mut h = ar_start();
    // One quarter wave of SiO2 on N-BK7 leaves about 1 % reflectance: neither target is met.
    assert_eq!(
        h.query_all_by_label_contains("0 of 2 targets met").count(),
        2,
        "in the targets panel and in the status line"
    );
    h.get_by_label_contains("target 1: R (mean) ≤ 0.2 % at 0°, 420–680 nm");
    h.get_by_label("Add target").click();
    h.run();
    assert_eq!(h.state().doc().design().targets.len(), 3, "added");
    // The first target's Remove button comes first.
    h.query_all_by_label("Remove").next().unwrap().click();
    h.run();
    let t = &h.state().doc().design().targets;
    assert_eq!(t.len(), 2, "deleted");
    assert_eq!(t[0].aoi_deg, 30.0, "the first one went");
    h.state_mut().push(Command::Undo);
    h.run();
    assert_eq!(h.state().doc().design().targets.len(), 3, "undone");
}

#[test]
fn refining_runs_in_the_background_and_applies_as_one_undo_step() {
    let mut h = ar_start();
    let before = h.state().doc().design().clone();
    let start_merit = stackwise::optimize::evaluate_targets(&before)
        .unwrap()
        .merit;
    h.state_mut().optimize.needle_materials = "TiO2, SiO2".into();
    h.get_by_label("Refine with needles").click();
    run_until(&mut h, |a| a.optimize.run.is_none());
    let found = h
        .state()
        .optimize
        .finished
        .as_ref()
        .expect("a result waits");
    assert!(found.outcome.merit < start_merit, "better than the start");
    assert_eq!(*h.state().doc().design(), before, "nothing applied yet");
    h.get_by_label("Apply").click();
    h.run();
    let after = h.state().doc().design().clone();
    let merit = stackwise::optimize::evaluate_targets(&after).unwrap().merit;
    assert!(merit < start_merit, "applied: {merit} < {start_merit}");
    assert!(after.layers.len() > 1, "needles added layers");
    h.state_mut().push(Command::Undo);
    h.run();
    assert_eq!(
        *h.state().doc().design(),
        before,
        "one undo step takes it back"
    );
}

#[test]
fn a_result_for_a_design_edited_meanwhile_is_not_applied_over_the_edit() {
    let mut h = ar_start();
    h.get_by_label("Refine").click();
    run_until(&mut h, |a| a.optimize.run.is_none());
    assert!(h.state().optimize.finished.is_some(), "a result waits");
    h.state_mut()
        .push(Edit::SetThickness { layer: 0, nm: 90.0 });
    h.run();
    let edited = h.state().doc().design().clone();
    h.get_by_label("Apply").click();
    h.run();
    assert_eq!(*h.state().doc().design(), edited, "the edit stands");
    h.get_by_label_contains("the design changed while the work was running");
    h.get_by_label("Open as new design").click();
    h.run();
    assert_eq!(h.state().designs.len(), 2, "the result opens beside it");
    assert!(h.state().doc().design().name.ends_with("(optimised)"));
    assert!(h.state().doc().is_dirty(), "a new, unsaved design");
}

#[test]
fn gdd_and_colour_targets_show_their_values_in_the_panel_and_no_spectrum_mark() {
    use stackwise::design::{ColourCoordinate, ColourLight, ColourObserver, Measure};
    let mut h = ar_start();
    let mut targets = h.state().doc().design().targets.clone();
    let mut colour = targets[0].clone();
    colour.measure = Measure::Colour {
        coordinate: ColourCoordinate::B,
        illuminant: ColourLight::D65,
        observer: ColourObserver::TwoDeg,
    };
    (colour.kind, colour.goal, colour.tolerance) =
        (stackwise::design::TargetKind::Equal, -5.0, 2.0);
    let mut gdd = targets[0].clone();
    gdd.measure = Measure::Gdd;
    (gdd.goal, gdd.tolerance) = (0.0, 20.0);
    targets.push(colour);
    targets.push(gdd);
    h.state_mut().push(Edit::SetTargets(targets));
    h.run();
    let d = h.state().doc().design().clone();
    let e = stackwise::optimize::evaluate_targets(&d).unwrap();
    // The panel row shows the value the evaluator computes, in the target's own unit.
    h.get_by_label(&format!("b* {:.2}", e.targets[2].values[0]));
    h.get_by_label_contains("GDD ");
    h.get_by_label_contains("colour sums 360–780 nm");
    h.get_by_label("Target 3 colour coordinate");
    h.get_by_label("Target 3 illuminant");
    h.get_by_label(stackwise::cautions::SHORT);
    // Only the two R targets are marks on the spectrum (the one at 0° in this view).
    h.get_by_label_contains("target 1: R (mean)");
    assert_eq!(h.query_all_by_label_contains("target 3:").count(), 0);
    assert_eq!(h.query_all_by_label_contains("target 4:").count(), 0);
}
