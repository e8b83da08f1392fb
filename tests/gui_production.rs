//! The production window, driven headless with egui_kittest: tolerances with the yield,
//! sensitivity, monitoring and the fit, each opened from the menu, its numbers checked against
//! the library's, bad settings answered with their message.

#![allow(
    clippy::float_cmp,
    clippy::unwrap_used,
    reason = "the window and the library run the same engine, so numbers must be identical"
)]

use std::fmt::Write as _;
use std::ops::ControlFlow;
use std::path::Path;

use egui::Vec2;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::analysis::monitor::{MonitorSettings, monitor};
use stackwise::analysis::tolerance::ToleranceSettings;
use stackwise::design::{Design, Layer, Nm, file};
use stackwise::gui::App;

mod common;

use common::run_until;
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optimize::{merit_sensitivity, tolerance_with_yield};

fn harness(app: App) -> Harness<'static, App> {
    Harness::builder()
        .with_size(Vec2::new(1600.0, 1100.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app)
}

/// Two layers of constant indices on 1.52 glass with the target "R ≤ 1.27 % at 550 nm",
/// which thickness and index errors meet in some runs and miss in others.
fn design() -> Design {
    let mut d = common::quarter_wave_with_target(0.0);
    d.name = "Two layers".into();
    d.materials
        .push(Material::user("H", Model::Constant { n: 2.0, k: 0.0 }));
    d.layers.insert(0, Layer::new("H", Nm::new(20.0).unwrap()));
    // Set the goal just above the design's own R at 550 nm, so the yield is partial.
    let r = stackwise::optimize::evaluate_targets(&d).unwrap().targets[0].values[0];
    d.targets[0].goal = r + 0.0005;
    d
}

fn open(dir: &Path, d: &Design) -> Harness<'static, App> {
    let path = dir.join("design.ron");
    std::fs::write(&path, file::to_ron_string(d).unwrap()).unwrap();
    let mut app = App::new(Some(path));
    app.force_inline = true;
    let mut h = harness(app);
    h.run();
    h.get_by_label("Production…").click();
    h.run();
    h
}

#[test]
fn tolerances_show_the_yield_of_the_library_and_refuse_bad_settings() {
    let dir = tempfile::tempdir().unwrap();
    let d = design();
    let mut h = open(dir.path(), &d);
    h.state_mut().production.tolerance.runs = 300;
    h.run();
    h.get_by_label("Run tolerances").click();
    run_until(&mut h, |a| {
        !a.production.tolerance.running() && a.production.tolerance.result.is_some()
    });
    let s = ToleranceSettings {
        runs: 300,
        ..ToleranceSettings::default()
    };
    let lib = tolerance_with_yield(&d, &[550.0], &s, |_| ControlFlow::Continue(())).unwrap();
    let passed = lib.passed.unwrap();
    assert!(passed > 0 && passed < 300, "partial yield: {passed}");
    let shown = &h
        .state()
        .production
        .tolerance
        .result
        .as_ref()
        .unwrap()
        .envelope;
    assert_eq!(
        shown.passed,
        Some(passed),
        "the window's count is the library's"
    );
    let text = format!(
        "yield {:.1} %: {passed} of 300 runs meet every target (merit 0)",
        100.0 * passed as f64 / 300.0
    );
    h.get_by_label(&text);
    // The nominal curve is the engine's spectrum over the view's range.
    let v = &h.state().view;
    let spectrum = stackwise::analysis::spectrum(
        &d.resolve().unwrap(),
        &shown.wavelength_nm,
        v.aoi_deg,
        Side::Front,
    )
    .unwrap();
    assert_eq!(shown.nominal, spectrum.curves.r, "nominal = spectrum R");
    assert_eq!(shown.wavelength_nm.len(), 301, "the documented default");

    // Zero runs, then a negative σ: each answered with its message, no result replaced.
    h.state_mut().production.tolerance.runs = 0;
    h.run();
    h.get_by_label("Run tolerances").click();
    run_until(&mut h, |a| a.production.tolerance.error.is_some());
    h.get_by_label_contains("0 runs: give at least 1");
    h.state_mut().production.tolerance.runs = 100;
    h.state_mut().production.tolerance.thickness_pct = -1.0;
    h.run();
    h.get_by_label("Run tolerances").click();
    run_until(&mut h, |a| {
        a.production
            .tolerance
            .error
            .as_deref()
            .is_some_and(|e| e.contains("thickness σ"))
    });
    h.get_by_label_contains("thickness σ of -1 %");
}

#[test]
fn sensitivity_and_monitoring_show_the_library_numbers() {
    let dir = tempfile::tempdir().unwrap();
    let d = design();
    let mut h = open(dir.path(), &d);
    h.get_by_label("Sensitivity").click();
    h.run();
    let lib = merit_sensitivity(&d).unwrap();
    h.get_by_label_contains("sensitivity of the merit");
    for l in &lib.layers {
        h.get_by_label(&format!("{:.4} %", 100.0 * l.sensitivity));
    }
    h.get_by_label("Monitoring").click();
    h.run();
    let curve = monitor(
        &d.resolve().unwrap(),
        &MonitorSettings {
            wavelength_nm: d.reference_nm,
            ..MonitorSettings::default()
        },
    )
    .unwrap();
    for l in &curve.layers {
        for text in [
            format!("{:.2}", l.end_nm),
            format!("{:.3}", 100.0 * l.end_signal),
        ] {
            assert!(
                h.query_all_by_label(&text).next().is_some(),
                "layer {} shows {text}",
                l.layer
            );
        }
    }
    // A monitor wavelength outside a material's data: its message.
    let mut d2 = d.clone();
    let l = d2.materials.iter().position(|m| m.name == "L").unwrap();
    d2.materials[l] = Material::user(
        "L",
        Model::Table {
            rows: vec![(400.0, 1.38, 0.0), (800.0, 1.37, 0.0)],
        },
    );
    let mut h = open(dir.path(), &d2);
    h.get_by_label("Monitoring").click();
    h.run();
    h.state_mut().production.monitor.wavelength_nm = Some(1200.0);
    h.run();
    h.get_by_label_contains("monitor wavelength 1200 nm is outside the data of \"L\"");
}

#[test]
fn the_fit_uses_the_loaded_curve_and_opens_the_result_as_a_new_design() {
    let dir = tempfile::tempdir().unwrap();
    let d = design();
    // "Measured": the same design with the layers 3 % and −2 % off, as T in percent.
    let mut truth = d.clone();
    truth.layers[0].nm = Nm::new(20.0 * 1.03).unwrap();
    truth.layers[1].nm = Nm::new(d.layers[1].nm.get() * 0.98).unwrap();
    let wl: Vec<f64> = (0..=150).map(|i| 400.0 + 3.0 * f64::from(i)).collect();
    let t = stackwise::analysis::spectrum(&truth.resolve().unwrap(), &wl, 0.0, Side::Front)
        .unwrap()
        .curves
        .t;
    let mut csv = String::from("wavelength_nm,T (%)\n");
    for (w, t) in wl.iter().zip(&t) {
        writeln!(csv, "{w},{}", 100.0 * t).unwrap();
    }
    let measured = dir.path().join("run.csv");
    std::fs::write(&measured, csv).unwrap();
    let mut h = open(dir.path(), &d);
    // The design as the window read it back from its file.
    let d = h.state().doc().design().clone();
    h.get_by_label("Fit to measured run").click();
    h.run();
    h.get_by_label("No measured curve loaded.");
    h.state_mut().measured.load(&measured).unwrap();
    h.run();
    h.get_by_label("Fit").click();
    run_until(&mut h, |a| {
        !a.production.fit.running() && a.production.fit.result.is_some()
    });
    let o = &h.state().production.fit.result.as_ref().unwrap().outcome;
    let lib = stackwise::optimize::fit::fit(
        &d,
        h.state().measured.loaded().map(|l| &l.curve).unwrap(),
        &stackwise::optimize::fit::FitSettings::default(),
        |_| ControlFlow::Continue(()),
    )
    .unwrap();
    assert!(o == &lib, "the window's fit is the library's");
    assert!((o.layers[0].fitted_nm - 20.6).abs() < 0.1, "{:?}", o.layers);
    let text = format!(
        "RMS difference {:.4} % before, {:.4} % after",
        100.0 * o.rms_before,
        100.0 * o.rms_after
    );
    h.get_by_label(&text);
    h.get_by_label(&format!("{:+.2}", o.layers[0].change_pct()));
    let before = h.state().designs.len();
    h.get_by_label("Open fitted design as new design").click();
    h.run();
    let a = h.state();
    assert_eq!(a.designs.len(), before + 1, "a new tab");
    assert_eq!(a.doc().design().name, "Two layers (fitted)", "shown");
    assert_eq!(a.designs[0].doc.design(), &d, "the original is untouched");
}

#[test]
fn sensitivity_bars_sit_beside_the_layer_table() {
    let dir = tempfile::tempdir().unwrap();
    let d = design();
    let path = dir.path().join("design.ron");
    std::fs::write(&path, file::to_ron_string(&d).unwrap()).unwrap();
    let mut app = App::new(Some(path));
    app.force_inline = true;
    let mut h = harness(app);
    h.run();
    let lib = merit_sensitivity(&d).unwrap();
    let first = format!("{:.3} %", 100.0 * lib.layers[0].sensitivity);
    assert!(h.query_all_by_label(&first).next().is_none());
    h.get_by_label("Sensitivity bars").click();
    h.run();
    h.run();
    // The column shows the merit's sensitivity (the design has a target), as the library has it.
    for l in &lib.layers {
        let text = format!("{:.3} %", 100.0 * l.sensitivity);
        assert!(
            h.query_all_by_label(&text).next().is_some(),
            "layer {} shows {text}",
            l.layer
        );
    }
    // Switched off, the column goes.
    h.get_by_label("Sensitivity bars").click();
    h.run();
    assert!(h.query_all_by_label(&first).next().is_none());
}
