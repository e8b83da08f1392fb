//! The window, driven headless with egui_kittest: editing the back face of a thick substrate
//! from the stack panel, and exported images in each design's own colour.

#![allow(clippy::unwrap_used)]

use std::path::Path;

use egui::Vec2;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::analysis;
use stackwise::design::Face;
use stackwise::export::palette::DESIGN_COLOURS;
use stackwise::gui::{App, Command, Edit, WindowCommand};
use stackwise::optics::Side;

fn harness(app: App) -> Harness<'static, App> {
    Harness::builder()
        .with_size(Vec2::new(1400.0, 900.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app)
}

#[test]
fn the_back_face_is_edited_from_the_stack_panel() {
    let mut app = App::new(None);
    app.force_inline = true;
    assert!(app.apply(Edit::SetSubstrateMm(None)), "semi-infinite");
    let mut h = harness(app);
    h.run();
    // Without a thickness there is no back face to pick.
    h.get_by_label("Back face").click();
    h.run();
    assert_eq!(
        h.state().stack.face,
        Face::Front,
        "back face needs a thickness"
    );

    assert!(h.state_mut().apply(Edit::SetSubstrateMm(Some(2.0))));
    h.run();
    let front = h.state().doc().design().layers.clone();
    h.get_by_label("Back face").click();
    h.run();
    assert_eq!(h.state().stack.face, Face::Back, "switched");
    h.get_by_label("Add").click();
    h.run();
    let d = h.state().doc().design().clone();
    assert_eq!(d.back_layers.len(), 1, "one back layer added");
    assert_eq!(d.layers, front, "the front coating is untouched");
    // The table now shows the back face: its one layer.
    h.get_by_label("Layer 1 nm");
    assert!(
        h.query_by_label("Layer 2 nm").is_none(),
        "only the back layer is listed"
    );

    // The notation box builds the chosen face too.
    h.state_mut().stack.notation = "LHL".into();
    h.run();
    h.get_by_label("Build").click();
    h.run();
    let d = h.state().doc().design().clone();
    assert_eq!(d.back_layers.len(), 3, "built on the back face");
    assert_eq!(d.layers, front, "the front coating is still untouched");

    // The spectrum the window shows counts the back coating: it is what the engine gives
    // for the design with it, and differs from the design without it.
    let v = h.state().view.clone();
    let wl = analysis::wavelengths_nm(v.from_nm, v.to_nm, v.step_nm).unwrap();
    let with = analysis::spectrum(&d.resolve().unwrap(), &wl, v.aoi_deg, Side::Front).unwrap();
    let mut bare = d.clone();
    bare.back_layers.clear();
    let without =
        analysis::spectrum(&bare.resolve().unwrap(), &wl, v.aoi_deg, Side::Front).unwrap();
    assert!(
        with.curves
            .r
            .iter()
            .zip(&without.curves.r)
            .any(|(a, b)| (a - b).abs() > 1e-3),
        "the back coating changes R"
    );

    // Undo takes the build back; the substrate cannot lose its thickness while the back face
    // has layers.
    assert!(h.state_mut().apply(Command::Undo));
    assert_eq!(h.state().doc().design().back_layers.len(), 1, "undone");
    assert!(!h.state_mut().apply(Edit::SetSubstrateMm(None)), "refused");
    assert_eq!(h.state().doc().design().substrate_mm, Some(2.0), "kept");
}

/// The hex form (`#rrggbb`, lower case) of a colour.
fn hex((r, g, b): (u8, u8, u8)) -> String {
    format!("#{r:02x}{g:02x}{b:02x}")
}

#[test]
fn each_design_exports_in_its_window_colour() {
    let dir = tempfile::tempdir().unwrap();
    let designs = Path::new(env!("CARGO_MANIFEST_DIR")).join("designs");
    let mut app = App::new(Some(designs.join("camera-window-ar.ron")));
    app.force_inline = true;
    for name in ["shortpass-550.ron", "protected-silver-mirror.ron"] {
        assert!(
            app.apply(Command::Open(designs.join(name))),
            "{name} opened"
        );
    }
    let mut h = harness(app);
    h.run();
    let ids: Vec<_> = h.state().designs.iter().map(|d| d.id).collect();
    assert_eq!(ids.len(), 3, "three designs open");
    for (k, &id) in ids.iter().enumerate() {
        h.state_mut().apply_window(WindowCommand::Activate(id));
        h.run();
        let c = h.state().designs[k].colour;
        let on_screen = (c.r(), c.g(), c.b());
        assert_eq!(on_screen, DESIGN_COLOURS[k], "design {k} on screen");
        h.state_mut().export.kind = stackwise::gui::export_window::ExportKind::Image(
            stackwise::gui::export_window::ImageFormat::Svg,
        );
        let out = dir.path().join(format!("design{k}.svg"));
        h.state_mut().export_to(&out).unwrap();
        let svg = std::fs::read_to_string(&out).unwrap().to_lowercase();
        assert!(
            svg.contains(&hex(on_screen)),
            "design {k} drawn in {}",
            hex(on_screen)
        );
        for (j, &other) in DESIGN_COLOURS.iter().enumerate().take(3) {
            if j != k {
                assert!(
                    !svg.contains(&hex(other)),
                    "design {k} not in design {j}'s colour"
                );
            }
        }
    }
    // The command line's plot of the same three designs, in the same order, draws each in
    // its window colour as well.
    let out = dir.path().join("cli.svg");
    let args = stackwise::cli::PlotArgs {
        design: designs.join("camera-window-ar.ron"),
        out: out.clone(),
        compare: vec![
            designs.join("shortpass-550.ron"),
            designs.join("protected-silver-mirror.ron"),
        ],
        range: stackwise::cli::Range {
            from: Some(400.0),
            to: Some(700.0),
            step: Some(10.0),
        },
        aoi: 0.0,
        side: stackwise::cli::SideArg::Front,
        quantity: stackwise::cli::QuantityArg::R,
        pol: stackwise::cli::PolArg::Mean,
        width: 800,
        height: 600,
        caution: false,
    };
    stackwise::cli::run(
        stackwise::cli::Command::Plot(args),
        &mut Vec::new(),
        &mut Vec::new(),
    )
    .unwrap();
    let svg = std::fs::read_to_string(&out).unwrap().to_lowercase();
    for (k, d) in h.state().designs.iter().enumerate() {
        let c = (d.colour.r(), d.colour.g(), d.colour.b());
        assert!(svg.contains(&hex(c)), "CLI plot: design {k} in {}", hex(c));
    }
}
