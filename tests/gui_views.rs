//! The window's analysis views, driven headless with egui_kittest: each opens, shows the
//! numbers the library gives for the same design, follows an edit, and shows the library's
//! error text for bad input.

#![allow(clippy::unwrap_used)]

use std::ops::ControlFlow;

use egui::Vec2;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::analysis::admittance::admittance_locus;
use stackwise::analysis::color::{Illuminant, Observer, design_colour};
use stackwise::analysis::field::field_profile;
use stackwise::analysis::map::{MapStop, rt_map};
use stackwise::analysis::phase::phase_spectrum;
use stackwise::analysis::{angles_deg, wavelengths_nm};
use stackwise::cautions;
use stackwise::design::{Design, Pol, Quantity};
use stackwise::gui::views::{AnalysisView, admittance, colour, field, map};
use stackwise::gui::{App, CentralView, Edit};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optics::field::Polarisation;

fn harness(app: App) -> Harness<'static, App> {
    Harness::builder()
        .with_size(Vec2::new(1900.0, 1100.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app)
}

/// The demo design (a four-layer AR on N-BK7), computed inline, on the analysis view `v`,
/// with a coarse spectrum step so the phase and map views stay small.
fn open(v: AnalysisView) -> Harness<'static, App> {
    let mut app = App::new(None);
    app.force_inline = true;
    app.view.step_nm = 20.0;
    let mut h = harness(app);
    h.run();
    h.get_by_label("Analysis").click();
    h.run();
    assert_eq!(h.state().central, CentralView::Analysis, "analysis shown");
    h.get_by_label(v.label()).click();
    h.run();
    assert_eq!(h.state().analysis.view, v, "{v:?} chosen");
    h
}

fn design(h: &Harness<'_, App>) -> Design {
    h.state().doc().design().clone()
}

/// Makes the outermost layer 10 nm thicker (one undo step) and lets the window redraw.
fn thicken_top_layer(h: &mut Harness<'_, App>) {
    let d = design(h);
    let top = d.layers.len() - 1;
    let nm = d.layers[top].nm.get() + 10.0;
    assert!(
        h.state_mut().apply(Edit::SetThickness { layer: top, nm }),
        "edited"
    );
    h.run();
}

/// Makes the outermost layer a material whose formula gives no valid index below about
/// 365 nm (n = 1.5 − 0.2 / λ², λ in µm, crosses zero at 365 nm): the library refuses such a
/// wavelength with a message naming the material and the wavelength.
fn fading_top_layer(h: &mut Harness<'_, App>) {
    let m = Material::user(
        "Fades",
        Model::Cauchy {
            a: 1.5,
            b: -0.2,
            c: 0.0,
        },
    );
    assert!(h.state_mut().apply(Edit::AddMaterial(m)), "material added");
    let top = design(h).layers.len() - 1;
    let name = "Fades".to_owned();
    assert!(
        h.state_mut().apply(Edit::SetMaterial { layer: top, name }),
        "used"
    );
    h.run();
}

fn shows(h: &Harness<'_, App>, text: &str) -> bool {
    h.query_all_by_label(text).next().is_some()
}

fn shows_part(h: &Harness<'_, App>, text: &str) -> bool {
    h.query_all_by_label_contains(text).next().is_some()
}

#[test]
fn phase_view_shows_the_library_phase_and_follows_edits() {
    let mut h = open(AnalysisView::Phase);
    let library = |h: &Harness<'_, App>| {
        let v = &h.state().view;
        let wl = wavelengths_nm(v.from_nm, v.to_nm, v.step_nm).unwrap();
        phase_spectrum(&design(h).resolve().unwrap(), &wl, v.aoi_deg, Side::Front).unwrap()
    };
    let shown = h.state().analysis.phase.result().unwrap().clone().unwrap();
    assert_eq!(shown, library(&h), "the same call, the same numbers");
    h.get_by_label("GDD").click();
    h.get_by_label("transmitted (t)").click();
    h.run();

    thicken_top_layer(&mut h);
    let after = h.state().analysis.phase.result().unwrap().clone().unwrap();
    assert_eq!(after, library(&h), "recomputed for the edited design");
    assert_ne!(
        after.r_s.gd_fs, shown.r_s.gd_fs,
        "the edit changed the group delay"
    );

    // The spectrum view's angle is followed; 90° is refused with the library's words.
    h.state_mut().view.aoi_deg = 90.0;
    h.run();
    assert!(shows_part(&h, "cannot compute"), "an error is shown");
    assert!(shows_part(&h, "90"), "naming the angle");
}

#[test]
fn field_view_shows_the_library_peaks_and_the_caution() {
    let mut h = open(AnalysisView::Field);
    assert!(shows(&h, cautions::FIELD), "the damage caution is shown");
    let library = |h: &Harness<'_, App>| {
        let f = &h.state().analysis.field.point;
        let wl = f.wavelength_nm;
        field_profile(
            &design(h).resolve().unwrap(),
            wl,
            f.aoi_deg,
            f.pol,
            wl / 200.0,
        )
        .unwrap()
    };
    let check = |h: &Harness<'_, App>| {
        let lib = library(h);
        let shown = &h
            .state()
            .analysis
            .field
            .result()
            .unwrap()
            .as_ref()
            .unwrap()
            .profile;
        assert_eq!(shown, &lib, "the same profile");
        for l in &lib.layers {
            assert!(
                shows(h, &field::e2_text(l.peak_e2)),
                "layer {} peak shown",
                l.layer
            );
        }
        for i in &lib.interfaces {
            assert!(
                shows(h, &field::e2_text(i.e2_below)),
                "interface at {}",
                i.depth_nm
            );
        }
        lib
    };
    let before = check(&h);
    thicken_top_layer(&mut h);
    let after = check(&h);
    assert!(
        (before.layers[0].peak_e2 - after.layers[0].peak_e2).abs() > 1e-6,
        "recomputed"
    );

    // p at 45°: still the library's numbers.
    h.get_by_label("p").click();
    h.state_mut().analysis.field.point.aoi_deg = 45.0;
    h.run();
    assert_eq!(h.state().analysis.field.point.pol, Polarisation::P);
    check(&h);
}

#[test]
fn field_view_refuses_bad_input_with_the_library_message() {
    let mut h = open(AnalysisView::Field);
    // An angle of 90° or more cannot be entered: the field holds it below.
    h.state_mut().analysis.field.point.aoi_deg = 95.0;
    h.run();
    assert!(
        h.state().analysis.field.point.aoi_deg < 90.0,
        "held below 90°"
    );
    assert!(
        h.state().analysis.field.result().unwrap().is_ok(),
        "computed"
    );
    // A wavelength where a material has no valid index: the library's message, no panic.
    h.state_mut().analysis.field.point.aoi_deg = 0.0;
    fading_top_layer(&mut h);
    h.state_mut().analysis.field.point.wavelength_nm = 300.0;
    h.run();
    let e = field_profile(
        &design(&h).resolve().unwrap(),
        300.0,
        0.0,
        Polarisation::P,
        1.0,
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("Fades") && e.contains("300"), "{e}");
    assert!(shows(&h, &format!("cannot compute: {e}")), "{e}");
    // A design with no layers has no field profile to show.
    h.state_mut().analysis.field.point.wavelength_nm = 550.0;
    h.state_mut().analysis.field.point.aoi_deg = 0.0;
    assert!(
        h.state_mut().apply(Edit::ReplaceLayers(Vec::new())),
        "emptied"
    );
    h.run();
    assert!(
        shows_part(&h, "the design has no layers"),
        "no-layer message"
    );
    // Far outside N-BK7's data: shown as a warning naming the material.
    assert!(
        h.state_mut().apply(stackwise::gui::Command::Undo),
        "layers back"
    );
    h.state_mut().analysis.field.point.wavelength_nm = 5000.0;
    h.run();
    assert!(
        shows_part(&h, "N-BK7"),
        "the extrapolated material is named"
    );
}

#[test]
fn admittance_view_ends_where_the_library_does() {
    let mut h = open(AnalysisView::Admittance);
    let end_text = |h: &Harness<'_, App>| {
        let a = &h.state().analysis.admittance.point;
        let wl = a.wavelength_nm;
        let y = admittance_locus(
            &design(h).resolve().unwrap(),
            wl,
            a.aoi_deg,
            a.pol,
            wl / 200.0,
        )
        .unwrap();
        let shown = &h
            .state()
            .analysis
            .admittance
            .result()
            .unwrap()
            .as_ref()
            .unwrap()
            .locus;
        assert_eq!(shown, &y, "the same locus");
        admittance::complex_text(*y.boundaries.last().unwrap())
    };
    let before = end_text(&h);
    assert!(
        shows_part(&h, &format!("front surface Y = {before};")),
        "{before}"
    );
    thicken_top_layer(&mut h);
    let after = end_text(&h);
    assert_ne!(before, after, "recomputed");
    assert!(
        shows_part(&h, &format!("front surface Y = {after};")),
        "{after}"
    );

    fading_top_layer(&mut h);
    h.state_mut().analysis.admittance.point.wavelength_nm = 300.0;
    h.run();
    let e = admittance_locus(
        &design(&h).resolve().unwrap(),
        300.0,
        0.0,
        Polarisation::S,
        1.0,
    )
    .unwrap_err()
    .to_string();
    assert!(shows(&h, &format!("cannot compute: {e}")), "{e}");
}

#[test]
fn colour_view_table_is_the_library_colour() {
    let mut h = open(AnalysisView::Colour);
    let check = |h: &Harness<'_, App>, illuminant, observer| {
        let c = design_colour(&design(h).resolve().unwrap(), 0.0, illuminant, observer).unwrap();
        for (light, col) in [("reflected", &c.reflected), ("transmitted", &c.transmitted)] {
            for t in colour::row_texts(col) {
                assert!(shows(h, &t), "{light} {t} shown");
            }
        }
        c
    };
    let d65 = check(&h, Illuminant::D65, Observer::Cie1931TwoDeg);
    let path = &h
        .state()
        .analysis
        .colour
        .result()
        .unwrap()
        .as_ref()
        .unwrap()
        .path;
    assert_eq!(path.aoi_deg.len(), 17, "0–80° in 5° steps");
    h.get_by_label("A (tungsten)").click();
    h.get_by_label("10° (CIE 1964)").click();
    h.run();
    let a = check(&h, Illuminant::A, Observer::Cie1964TenDeg);
    assert_ne!(
        a.reflected.xyz, d65.reflected.xyz,
        "another light, another colour"
    );
    thicken_top_layer(&mut h);
    let edited = check(&h, Illuminant::A, Observer::Cie1964TenDeg);
    assert_ne!(edited.reflected.xyz, a.reflected.xyz, "recomputed");

    // The colour sums start at 360 nm, where the fading material has no valid index.
    fading_top_layer(&mut h);
    let e = design_colour(
        &design(&h).resolve().unwrap(),
        0.0,
        Illuminant::A,
        Observer::Cie1964TenDeg,
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("Fades"), "{e}");
    assert!(shows(&h, &format!("cannot compute: {e}")), "{e}");
}

#[test]
fn map_view_is_the_library_map_and_a_large_one_can_be_cancelled() {
    let mut h = open(AnalysisView::Map);
    h.state_mut().analysis.map.settings = map::MapSettings {
        quantity: Quantity::T,
        pol: Pol::P,
        columns: 11,
        from_deg: 0.0,
        to_deg: 80.0,
        step_deg: 20.0,
        fit_scale: false,
    };
    h.run();
    let library = |h: &Harness<'_, App>| {
        let v = &h.state().view;
        let s = h.state().analysis.map.settings;
        let wl = wavelengths_nm(v.from_nm, v.to_nm, s.step_nm(v.from_nm, v.to_nm)).unwrap();
        let a = angles_deg(0.0, 80.0, 20.0).unwrap();
        rt_map(
            &design(h).resolve().unwrap(),
            &wl,
            &a,
            Quantity::T,
            Pol::P,
            |_| ControlFlow::Continue(()),
        )
        .unwrap()
    };
    let shown = h.state().analysis.map.result().unwrap().clone().unwrap();
    assert_eq!(shown, library(&h), "the same call, the same map");
    assert_eq!(shown.values.len(), 11 * 5, "11 wavelengths × 5 angles");
    assert!(
        shows_part(&h, "point at the map"),
        "the readout invites a pointer"
    );
    thicken_top_layer(&mut h);
    let after = h.state().analysis.map.result().unwrap().clone().unwrap();
    assert_eq!(after, library(&h), "recomputed for the edit");
    assert_ne!(after.values, shown.values, "the edit changed the map");

    // A large map runs as a job with progress and Cancel; the rows finished are kept.
    h.state_mut().force_inline = false;
    h.state_mut().analysis.map.settings.columns = 2000;
    h.state_mut().analysis.map.settings.step_deg = 0.01;
    h.step();
    assert!(h.state().analysis.map.busy(), "a job started");
    h.step();
    h.get_by_label("Cancel").click();
    for _ in 0..3000 {
        h.step();
        if !h.state().analysis.map.busy() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    let m = h.state().analysis.map.result().unwrap().clone().unwrap();
    assert_eq!(m.stop, MapStop::Cancelled, "stopped on request");
    assert!(
        m.aoi_deg.len() < 8001,
        "stopped early: {} rows",
        m.aoi_deg.len()
    );
    h.step();
    assert!(shows_part(&h, "stopped:"), "says it stopped");

    // A range where a material has no valid index: the library's words.
    h.state_mut().force_inline = true;
    h.state_mut().analysis.map.settings.step_deg = 20.0;
    fading_top_layer(&mut h);
    h.state_mut().view.from_nm = 300.0;
    h.run();
    assert!(shows_part(&h, "cannot compute: "), "error shown");
    assert!(shows_part(&h, "Fades"), "naming the material");
}
