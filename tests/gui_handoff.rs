//! Hand-off from the window, driven headless with egui_kittest: the export window writes what
//! the command line writes, images decode at the size asked for, the layer report lists every
//! layer, and a measured curve shows in the legend with the RMS difference the library gives.
//! File dialogs are bypassed: paths go in through `App::export_to` and `App::load_measured`,
//! which is what the dialogs' answers call.

#![allow(clippy::unwrap_used)]

use std::fmt::Write as _;
use std::path::Path;

use egui::Vec2;
use egui::accesskit::Role;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use stackwise::analysis::measured::{ValueScale, parse_measured_csv, rms_difference};
use stackwise::analysis::{self, Spectrum};
use stackwise::cli::{self, SideArg};
use stackwise::design::{Quantity, file};
use stackwise::gui::{App, Command};
use stackwise::material::import::WavelengthUnit;
use stackwise::optics::Side;

fn harness(app: App) -> Harness<'static, App> {
    Harness::builder()
        .with_size(Vec2::new(1400.0, 900.0))
        .build_ui_state(|ui, app: &mut App| app.show(ui), app)
}

/// The demo design, saved to `dir`, with sweeps computed inline.
fn saved_demo(dir: &Path) -> (Harness<'static, App>, std::path::PathBuf) {
    let mut app = App::new(None);
    app.force_inline = true;
    let path = dir.join("demo.ron");
    assert!(app.apply(Command::SaveAs(path.clone())), "saved the demo");
    let mut h = harness(app);
    h.run();
    (h, path)
}

fn open_export(h: &mut Harness<'_, App>, choice: &str) {
    h.get_by_label("Export…").click();
    h.run();
    h.get_by_label(choice).click();
    h.run();
}

/// The spectrum the window's view settings ask for, computed directly.
fn view_spectrum(app: &App) -> Spectrum {
    let v = &app.view;
    let wl = analysis::wavelengths_nm(v.from_nm, v.to_nm, v.step_nm).unwrap();
    analysis::spectrum(
        &app.doc().design().resolve().unwrap(),
        &wl,
        v.aoi_deg,
        Side::Front,
    )
    .unwrap()
}

#[test]
fn spectrum_csv_from_the_window_is_the_cli_csv() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, design_path) = saved_demo(dir.path());
    h.state_mut().view.aoi_deg = 25.0;
    h.run();
    open_export(&mut h, "Spectrum table (CSV)");
    let out = dir.path().join("window.csv");
    let written = h.state_mut().export_to(&out).unwrap();
    h.run();
    assert_eq!(written, out, "written where asked");
    h.get_by_label_contains("Wrote");

    let v = h.state().view.clone();
    let cli_out = dir.path().join("cli.csv");
    cli::run(
        cli::Command::Spectrum {
            design: design_path,
            range: cli::Range {
                from: Some(v.from_nm),
                to: Some(v.to_nm),
                step: Some(v.step_nm),
            },
            aoi: v.aoi_deg,
            side: SideArg::Front,
            out: Some(cli_out.clone()),
        },
        &mut Vec::new(),
        &mut Vec::new(),
    )
    .unwrap();
    let window = std::fs::read_to_string(&out).unwrap();
    let cli = std::fs::read_to_string(&cli_out).unwrap();
    assert!(
        window.lines().count() > 100,
        "a full table: {} lines",
        window.lines().count()
    );
    assert_eq!(window, cli, "byte for byte the CLI's CSV");
}

#[test]
fn exports_follow_the_side_the_views_show() {
    let dir = tempfile::tempdir().unwrap();
    let design_path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("designs/laser-mirror-1064-45.ron");
    let mut app = App::new(Some(design_path.clone()));
    app.force_inline = true;
    app.view.side = Side::Back;
    app.view.aoi_deg = 45.0;
    let mut h = harness(app);
    h.run();
    open_export(&mut h, "Spectrum table (CSV)");
    h.get_by_label_contains("light from the back");
    let out = dir.path().join("window.csv");
    h.state_mut().export_to(&out).unwrap();

    let v = h.state().view.clone();
    let cli_csv = |side: SideArg| {
        let mut stdout = Vec::new();
        cli::run(
            cli::Command::Spectrum {
                design: design_path.clone(),
                range: cli::Range {
                    from: Some(v.from_nm),
                    to: Some(v.to_nm),
                    step: Some(v.step_nm),
                },
                aoi: v.aoi_deg,
                side,
                out: None,
            },
            &mut stdout,
            &mut Vec::new(),
        )
        .unwrap();
        String::from_utf8(stdout).unwrap()
    };
    let window = std::fs::read_to_string(&out).unwrap();
    assert_eq!(
        window,
        cli_csv(SideArg::Back),
        "the CLI's --side back, byte for byte"
    );
    assert_ne!(
        window,
        cli_csv(SideArg::Front),
        "not the front side's numbers"
    );

    // The angle table, too.
    open_export(&mut h, "Angle table (CSV)");
    let out = dir.path().join("angles.csv");
    h.state_mut().export_to(&out).unwrap();
    let mut stdout = Vec::new();
    cli::run(
        cli::Command::Angles {
            design: design_path.clone(),
            wavelength: v.angle_wavelength_nm,
            from: 0.0,
            to: 89.0,
            step: v.angle_step_deg,
            side: SideArg::Back,
            out: None,
        },
        &mut stdout,
        &mut Vec::new(),
    )
    .unwrap();
    assert_eq!(
        std::fs::read_to_string(&out).unwrap(),
        String::from_utf8(stdout).unwrap(),
        "angle table from the back"
    );
}

#[test]
fn a_png_export_decodes_at_the_requested_size() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, _) = saved_demo(dir.path());
    open_export(&mut h, "Plot image");
    h.get_by_label("width").set_value_accesskit(640.0);
    h.get_by_label("height").set_value_accesskit(420.0);
    h.run();
    let out = dir.path().join("plot.png");
    h.state_mut().export_to(&out).unwrap();
    let img = image::load_from_memory(&std::fs::read(&out).unwrap()).unwrap();
    assert_eq!((img.width(), img.height()), (640, 420), "size asked for");

    // An unknown extension is refused with a reason, and nothing is written.
    let bad = dir.path().join("plot.jpg");
    let e = h.state_mut().export_to(&bad).unwrap_err();
    assert!(e.contains(".png or .svg"), "{e}");
    assert!(!bad.exists(), "nothing written");
    h.run();
    h.get_by_label_contains("Not written");
}

#[test]
fn images_of_a_mirror_carry_the_safety_caution() {
    let dir = tempfile::tempdir().unwrap();
    let design = Path::new(env!("CARGO_MANIFEST_DIR")).join("designs/laser-mirror-1064-45.ron");
    let mut app = App::new(Some(design));
    app.force_inline = true;
    let mut h = harness(app);
    h.run();
    open_export(&mut h, "Plot image");
    h.get_by_label("SVG").click();
    h.run();
    let out = dir.path().join("mirror.svg");
    h.state_mut().export_to(&out).unwrap();
    let svg = std::fs::read_to_string(&out).unwrap();
    let s = view_spectrum(h.state());
    assert!(
        stackwise::export::shows_blocking(&s),
        "the example mirror reflects above 99 %"
    );
    let first_words: String = stackwise::export::SAFETY_CAUTION
        .split_whitespace()
        .take(3)
        .collect::<Vec<_>>()
        .join(" ");
    assert!(svg.contains(&first_words), "caution on the image");
}

#[test]
fn the_markdown_report_lists_every_layer() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, _) = saved_demo(dir.path());
    open_export(&mut h, "Layer report");
    h.get_by_label("Markdown").click();
    h.run();
    let out = dir.path().join("layers");
    let written = h.state_mut().export_to(&out).unwrap();
    assert_eq!(written.extension().unwrap(), "md", "extension added");
    let md = std::fs::read_to_string(&written).unwrap();
    let design = file::load(&dir.path().join("demo.ron")).unwrap();
    assert!(!design.layers.is_empty(), "the demo has layers");
    for (i, layer) in design.layers.iter().enumerate() {
        let row = format!("| {} | {} | {:.2} |", i + 1, layer.material, layer.nm.get());
        assert!(md.contains(&row), "layer {} missing: {row}\n{md}", i + 1);
    }
    let rows = md
        .lines()
        .filter(|l| l.starts_with("| ") && l.ends_with(" |"));
    assert!(
        rows.count() >= design.layers.len(),
        "one table row per layer at least"
    );
}

#[test]
fn a_measured_curve_shows_in_the_legend_with_the_libraries_rms() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, _) = saved_demo(dir.path());
    // Wider than the plotted range (385–825 nm), so only the overlap is compared.
    let mut text = String::from("wavelength (nm), T (%)\n");
    for i in 0..=60 {
        let wl = 300.0 + 10.0 * f64::from(i);
        let t = 95.0 + 2.0 * (wl / 37.0).sin();
        writeln!(text, "{wl}, {t}").unwrap();
    }
    let path = dir.path().join("sample-T.csv");
    std::fs::write(&path, &text).unwrap();
    h.state_mut().load_measured(&path).unwrap();
    h.run();
    h.run();

    let legend = "measured: sample-T.csv";
    assert!(
        h.query_by_role_and_label(Role::CheckBox, legend).is_some(),
        "legend entry"
    );

    let m = parse_measured_csv(&text, WavelengthUnit::Auto, ValueScale::Auto).unwrap();
    let s = view_spectrum(h.state());
    let (rms_t, n_t) = rms_difference(&m, &s, Quantity::T).unwrap();
    assert!(n_t < m.wavelength_nm.len(), "only the overlap: {n_t}");
    h.get_by_label(&format!(
        "RMS difference: {:.4} percentage points over {n_t} points",
        100.0 * rms_t
    ));
    h.get_by_label_contains("wavelengths read in nm, values in percent");

    // The same file read as R compares against R.
    h.get_by_role_and_label(Role::RadioButton, "R").click();
    h.run();
    let (rms_r, n_r) = rms_difference(&m, &s, Quantity::R).unwrap();
    assert!(
        (rms_r - rms_t).abs() > 0.1,
        "R and T differ for an AR coating"
    );
    h.get_by_label(&format!(
        "RMS difference: {:.4} percentage points over {n_r} points",
        100.0 * rms_r
    ));

    h.get_by_label("Clear").click();
    h.run();
    h.run();
    assert!(
        h.query_by_role_and_label(Role::CheckBox, legend).is_none(),
        "cleared from the legend"
    );
}

#[test]
fn a_broken_measured_file_shows_its_line() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, _) = saved_demo(dir.path());
    let path = dir.path().join("broken.csv");
    std::fs::write(&path, "wavelength,T\n500,90\n510,abc\n520,91\n").unwrap();
    let e = h.state_mut().load_measured(&path).unwrap_err();
    assert!(e.contains("line 3"), "{e}");
    h.run();
    h.get_by_label_contains("broken.csv: line 3");
    assert!(
        h.query_by_role_and_label(Role::CheckBox, "measured: broken.csv")
            .is_none(),
        "nothing drawn"
    );
}
