//! The command line end to end: the built binary on the example designs and on bad input.

mod common;

use common::{fails, here, ok};

use stackwise::analysis::{spectrum, wavelengths_nm};
use stackwise::design::file;
use stackwise::number::Short;
use stackwise::optics::Side;

const EXAMPLES: [&str; 5] = [
    "designs/camera-window-ar.ron",
    "designs/laser-mirror-1064-45.ron",
    "designs/shortpass-550.ron",
    "designs/protected-silver-mirror.ron",
    "designs/window-ar-both-faces.ron",
];

fn rows(csv: &str) -> Vec<Vec<f64>> {
    csv.lines()
        .skip(1)
        .map(|l| l.split(',').map(|x| x.parse().expect("a number")).collect())
        .collect()
}

#[test]
fn every_example_design_computes() {
    for design in EXAMPLES {
        let path = here(design);
        let (csv, _) = ok(&["spectrum", path.to_str().unwrap(), "--aoi", "30"]);
        assert_eq!(
            csv.lines().next(),
            Some("wavelength_nm,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A"),
            "{design}"
        );
        let rows = rows(&csv);
        assert_eq!(rows.len(), 401, "{design}: default 400 steps");
        for r in &rows {
            assert!(
                r[1..].iter().all(|v| (-1e-12..=1.0 + 1e-12).contains(v)),
                "{design}: {r:?}"
            );
            assert!(
                (r[3] + r[6] + r[9] - 1.0).abs() < 1e-9,
                "{design}: R+T+A at {}",
                r[0]
            );
        }
        let (info, _) = ok(&["info", path.to_str().unwrap()]);
        assert!(
            info.contains("QWOT") && info.contains("layers"),
            "{design}: {info}"
        );
    }
}

#[test]
fn the_cli_prints_exactly_what_the_engine_computes() {
    let path = here("designs/laser-mirror-1064-45.ron");
    let (csv, _) = ok(&[
        "spectrum",
        path.to_str().unwrap(),
        "--from",
        "1000",
        "--to",
        "1100",
        "--step",
        "10",
        "--aoi",
        "45",
    ]);
    let d = file::load(&path).unwrap();
    let wl = wavelengths_nm(1000.0, 1100.0, 10.0).unwrap();
    let s = spectrum(&d.resolve().unwrap(), &wl, 45.0, Side::Front).unwrap();
    for (i, line) in csv.lines().skip(1).enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        let text = |x: f64| Short(x).to_string();
        assert_eq!(cells[0], text(s.wavelength_nm[i]), "wavelength");
        assert_eq!(cells[1], text(s.curves.r_s[i]), "R_s at {}", cells[0]);
        assert_eq!(cells[6], text(s.curves.t[i]), "T at {}", cells[0]);
    }
    // The mirror meets its specification: R_s > 99.8 % at 1064 nm, 45°.
    let row = rows(&csv)
        .into_iter()
        .find(|r| (r[0] - 1060.0).abs() < 1e-9)
        .unwrap();
    assert!(row[1] > 0.998, "R_s at 1060 nm = {}", row[1]);
}

#[test]
fn angles_and_back_side() {
    let path = here("designs/camera-window-ar.ron");
    let p = path.to_str().unwrap();
    let (csv, _) = ok(&[
        "angles",
        p,
        "--wavelength",
        "550",
        "--to",
        "80",
        "--step",
        "10",
    ]);
    assert_eq!(
        csv.lines().next(),
        Some("aoi_deg,R_s,R_p,R,T_s,T_p,T,A_s,A_p,A")
    );
    assert_eq!(rows(&csv).len(), 9, "0, 10, …, 80");
    // Lossless coating on a semi-infinite substrate: T is the same from both sides (at the
    // same Snell invariant), so T(front, 0°) = T(back, 0°).
    let (front, _) = ok(&["spectrum", p, "--from", "550", "--to", "550"]);
    let (back, _) = ok(&[
        "spectrum", p, "--from", "550", "--to", "550", "--side", "back",
    ]);
    let (f, b) = (&rows(&front)[0], &rows(&back)[0]);
    assert!(
        (f[6] - b[6]).abs() < 1e-9,
        "T front {} vs back {}",
        f[6],
        b[6]
    );
}

#[test]
fn optical_constants_and_the_library() {
    // Fused silica n = 1.458464 at 587.5618 nm (Malitson, JOSA 55, 1205 (1965))
    let (csv, _) = ok(&[
        "nk",
        "Fused silica",
        "--from",
        "587.5618",
        "--to",
        "587.5618",
    ]);
    assert_eq!(csv.lines().next(), Some("wavelength_nm,n,k"));
    let n = rows(&csv)[0][1];
    assert!((n - 1.458_464).abs() < 5e-7, "n = {n}");
    let (lib, _) = ok(&["materials"]);
    assert_eq!(lib.lines().next(), Some("name,model,min_nm,max_nm,source"));
    for name in [
        "Fused silica",
        "N-BK7",
        "Sapphire",
        "CaF2",
        "MgF2",
        "SiO2",
        "TiO2",
        "Ta2O5",
        "Nb2O5",
        "HfO2",
        "Al2O3",
        "ZnS",
        "ZnSe",
        "Ge",
        "Si",
        "Ag",
        "Al",
        "Au",
        "Cr",
    ] {
        assert!(
            lib.lines().any(|l| l.starts_with(&format!("{name},"))),
            "{name} missing"
        );
    }
    // Outside a material's data: computed, with a warning that names it.
    let (_, warn) = ok(&["nk", "SiO2", "--from", "200", "--to", "300", "--step", "50"]);
    assert!(
        warn.contains("warning: SiO2") && warn.contains("extrapolated"),
        "{warn}"
    );
}

#[test]
fn bad_input_gets_a_clear_message() {
    let ar = here("designs/camera-window-ar.ron");
    let ar = ar.to_str().unwrap();
    let e = fails(&["spectrum", "no/such/file.ron"]);
    assert!(e.contains("no/such/file.ron"), "{e}");
    let e = fails(&[
        "spectrum",
        here("tests/broken/newer_format.ron").to_str().unwrap(),
    ]);
    assert!(e.contains("newer"), "{e}");
    let e = fails(&[
        "spectrum",
        here("tests/broken/not_utf8.ron").to_str().unwrap(),
    ]);
    assert!(e.contains("UTF-8"), "{e}");
    let e = fails(&[
        "spectrum",
        here("tests/broken/negative_thickness.ron")
            .to_str()
            .unwrap(),
    ]);
    assert!(
        e.contains("-5") || e.contains("negative") || e.contains("not allowed"),
        "{e}"
    );
    let e = fails(&["spectrum", ar, "--from", "700", "--to", "400"]);
    assert!(e.contains("backwards"), "{e}");
    let e = fails(&[
        "spectrum", ar, "--from", "400", "--to", "400", "--step", "0",
    ]);
    assert!(e.contains("step"), "{e}");
    let e = fails(&["spectrum", ar, "--aoi", "90"]);
    assert!(e.contains("angle of incidence 90"), "{e}");
    let e = fails(&["angles", ar, "--wavelength", "550", "--to", "95"]);
    assert!(e.contains("95"), "{e}");
    let e = fails(&["angles", ar, "--wavelength", "-1"]);
    assert!(e.contains("wavelength"), "{e}");
    let e = fails(&["nk", "Unobtainium"]);
    assert!(e.contains("unknown material \"Unobtainium\""), "{e}");
    let e = fails(&["nk", "tio2"]);
    assert!(e.contains("did you mean \"TiO2\""), "{e}");
}

#[test]
fn out_writes_the_same_csv_to_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("s.csv");
    let ar = here("designs/camera-window-ar.ron");
    let args = [
        "spectrum",
        ar.to_str().unwrap(),
        "--from",
        "400",
        "--to",
        "700",
        "--step",
        "50",
    ];
    let (stdout, _) = ok(&args);
    let mut with_out = args.to_vec();
    with_out.extend(["--out", out.to_str().unwrap()]);
    let (nothing, _) = ok(&with_out);
    assert!(nothing.is_empty(), "--out writes nothing to stdout");
    assert_eq!(std::fs::read_to_string(&out).unwrap(), stdout);
}

#[test]
fn compare_prints_each_designs_band_figures() {
    let (a, b) = (here(EXAMPLES[0]), here(EXAMPLES[2]));
    let (csv, _) = ok(&[
        "compare",
        a.to_str().unwrap(),
        b.to_str().unwrap(),
        "--from",
        "450",
        "--to",
        "650",
        "--step",
        "2",
        "--aoi",
        "10",
    ]);
    let mut lines = csv.lines();
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("design,from_nm,to_nm,points,R_mean"),
        "{csv}"
    );
    let wl = wavelengths_nm(450.0, 650.0, 2.0).unwrap();
    let lines: Vec<&str> = lines.collect();
    assert_eq!(lines.len(), 2, "one row per design: {csv}");
    for (path, line) in [a, b].iter().zip(lines) {
        let d = file::load(path).unwrap();
        let s = spectrum(&d.resolve().unwrap(), &wl, 10.0, Side::Front).unwrap();
        // Mean and maximum of R by a plain loop over the engine's arrays.
        let r = &s.curves.r;
        let mean = r.iter().sum::<f64>() / r.len() as f64;
        let (imax, max) = r
            .iter()
            .copied()
            .enumerate()
            .fold((0, f64::MIN), |m, (i, v)| if v > m.1 { (i, v) } else { m });
        let cells: Vec<&str> = line
            .rsplitn(14, ',')
            .collect::<Vec<_>>()
            .into_iter()
            .rev()
            .collect();
        assert_eq!(cells.len(), 14, "{line}");
        let num = |i: usize| cells[i].parse::<f64>().expect("a number");
        assert_eq!(cells[3], "101", "points");
        assert!((num(4) - mean).abs() < 1e-12, "R mean {} vs {mean}", num(4));
        assert!((num(7) - max).abs() < 1e-15, "R max");
        assert!((num(8) - wl[imax]).abs() < 1e-9, "R max at {}", num(8));
    }
    let e = fails(&[
        "compare",
        here(EXAMPLES[0]).to_str().unwrap(),
        "--from",
        "450",
        "--to",
        "650",
    ]);
    assert!(e.contains("2 values required"), "{e}");
}

/// A design of `pairs` quarter-wave (HL) pairs of 2.3 / 1.45 at 550 nm on 1.52, as RON.
fn long_stack(pairs: usize) -> String {
    let pair = format!(
        "        (material: \"H\", nm: {}),\n        (material: \"L\", nm: {}),\n",
        550.0 / (4.0 * 2.3),
        550.0 / (4.0 * 1.45)
    );
    let layers = pair.repeat(pairs);
    format!(
        "(\n    format: 1,\n    name: \"Long stack\",\n    reference_nm: 550.0,\n    \
         incident: \"Air\",\n    substrate: \"S\",\n    substrate_mm: None,\n    \
         exit: \"Air\",\n    layers: [\n{layers}    ],\n    materials: [\n        \
         (name: \"S\", model: Constant(n: 1.52)),\n        \
         (name: \"H\", model: Constant(n: 2.3)),\n        \
         (name: \"L\", model: Constant(n: 1.45)),\n    ],\n)\n"
    )
}

fn s(p: &std::path::Path) -> &str {
    p.to_str().expect("UTF-8 path")
}

#[test]
fn out_never_replaces_an_input() {
    let dir = tempfile::tempdir().unwrap();
    let design = dir.path().join("d.ron");
    std::fs::copy(here("designs/camera-window-ar.ron"), &design).unwrap();
    let original = std::fs::read(&design).unwrap();
    let dotted = dir.path().join(".").join("d.ron");
    let link = dir.path().join("link.ron");
    std::os::unix::fs::symlink(&design, &link).unwrap();
    for out in [&design, &dotted, &link] {
        for args in [
            vec!["spectrum", s(&design), "--out", s(out)],
            vec!["report", s(&design), "--out", s(out)],
            vec![
                "compare",
                s(&design),
                s(&design),
                "--from",
                "400",
                "--to",
                "700",
                "--out",
                s(out),
            ],
        ] {
            let e = fails(&args);
            assert!(
                e.contains("is also an input of this command"),
                "{args:?}: {e}"
            );
        }
    }
    // The input given through a link, the output by its real name.
    let e = fails(&["spectrum", s(&link), "--out", s(&design)]);
    assert!(e.contains("is also an input"), "{e}");
    // A plot whose input happens to carry the output's name.
    let svg_named = dir.path().join("d.svg");
    std::fs::copy(&design, &svg_named).unwrap();
    let e = fails(&["plot", s(&svg_named), "--out", s(&svg_named)]);
    assert!(e.contains("is also an input"), "{e}");
    assert_eq!(
        std::fs::read(&svg_named).unwrap(),
        original,
        "plot input untouched"
    );
    assert_eq!(
        std::fs::read(&design).unwrap(),
        original,
        "design untouched"
    );
    // A different file in the same folder is fine.
    ok(&[
        "spectrum",
        s(&design),
        "--out",
        s(&dir.path().join("d.csv")),
    ]);
}

#[test]
fn out_respects_read_only_files_and_keeps_modes() {
    use std::os::unix::fs::PermissionsExt as _;
    let dir = tempfile::tempdir().unwrap();
    let design = here("designs/camera-window-ar.ron");
    let out = dir.path().join("out.csv");
    std::fs::write(&out, "keep").unwrap();
    std::fs::set_permissions(&out, std::fs::Permissions::from_mode(0o444)).unwrap();
    let e = fails(&["spectrum", s(&design), "--out", s(&out)]);
    assert!(e.contains("read-only"), "{e}");
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "keep", "untouched");
    let mode = |p: &std::path::Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
    assert_eq!(mode(&out), 0o444, "mode untouched");
    // A writable file is replaced and keeps its mode.
    std::fs::set_permissions(&out, std::fs::Permissions::from_mode(0o604)).unwrap();
    ok(&["spectrum", s(&design), "--out", s(&out)]);
    assert!(
        std::fs::read_to_string(&out)
            .unwrap()
            .starts_with("wavelength_nm,"),
        "replaced"
    );
    assert_eq!(mode(&out), 0o604, "mode kept");
}

#[test]
fn out_writes_into_pipes_and_devices() {
    use std::os::unix::fs::FileTypeExt as _;
    let design = here("designs/camera-window-ar.ron");
    let (csv, _) = ok(&["spectrum", s(&design), "--out", "/dev/stdout"]);
    assert!(csv.starts_with("wavelength_nm,R_s"), "{csv}");
    assert_eq!(csv.lines().count(), 402, "header and 401 rows");

    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("pipe");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success(), "mkfifo");
    let reader = {
        let fifo = fifo.clone();
        std::thread::Builder::new()
            .name("fifo-reader".into())
            .spawn(move || std::fs::read_to_string(fifo).unwrap())
            .unwrap()
    };
    ok(&["report", s(&design), "--format", "csv", "--out", s(&fifo)]);
    let text = reader.join().unwrap();
    assert!(
        text.contains("layer"),
        "report came through the pipe: {text}"
    );
    assert!(
        std::fs::symlink_metadata(&fifo)
            .unwrap()
            .file_type()
            .is_fifo(),
        "the pipe is still a pipe"
    );
}

#[test]
fn ten_thousand_layers_compute_finite_values_and_short_csv() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("long.ron");
    std::fs::write(&path, long_stack(5000)).unwrap();
    let (csv, _) = ok(&[
        "spectrum",
        s(&path),
        "--from",
        "400",
        "--to",
        "700",
        "--step",
        "10",
    ]);
    let rows = rows(&csv);
    assert_eq!(rows.len(), 31, "rows");
    for r in &rows {
        assert!(r.iter().all(|x| x.is_finite()), "{r:?}");
        assert!((r[3] + r[6] + r[9] - 1.0).abs() < 1e-9, "R+T+A at {}", r[0]);
    }
    // 600 pairs: T at the centre is about 1e-240 (see the closed form in tests/properties.rs),
    // written with an exponent rather than as hundreds of digits.
    std::fs::write(&path, long_stack(600)).unwrap();
    let (csv, _) = ok(&[
        "spectrum",
        s(&path),
        "--from",
        "550",
        "--to",
        "550",
        "--step",
        "1",
    ]);
    let line = csv.lines().nth(1).unwrap();
    assert!(line.len() < 250, "short: {line}");
    let t: f64 = line.split(',').nth(6).unwrap().parse().unwrap();
    assert!(t > 0.0 && t < 1e-200, "T = {t:e}");
}

#[test]
fn impossible_work_is_refused_before_it_starts() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("long.ron");
    std::fs::write(&path, long_stack(5000)).unwrap();
    let started = std::time::Instant::now();
    let e = fails(&[
        "spectrum",
        s(&path),
        "--from",
        "400",
        "--to",
        "590",
        "--step",
        "0.0001",
    ]);
    assert!(
        e.contains("layer·points") && e.contains("10000 layers × 190000"),
        "{e}"
    );
    assert!(
        e.contains("larger step") && e.contains("at most 100000 wavelengths"),
        "{e}"
    );
    assert!(started.elapsed().as_secs() < 20, "refused quickly");
    // The plot's size is checked before its sweep: the size error comes, not the work error.
    let e = fails(&[
        "plot",
        s(&path),
        "--out",
        s(&dir.path().join("p.svg")),
        "--step",
        "0.0001",
        "--width",
        "9000",
    ]);
    assert!(e.contains("image width 9000 px"), "{e}");
    // PNG pixel cap advice suggests SVG; an SVG of that size is fine.
    let design = here("designs/camera-window-ar.ron");
    let png = dir.path().join("p.png");
    let e = fails(&[
        "plot",
        s(&design),
        "--out",
        s(&png),
        "--width",
        "8000",
        "--height",
        "8000",
    ]);
    assert!(e.contains("use SVG"), "{e}");
    let svg = dir.path().join("p.svg");
    ok(&[
        "plot",
        s(&design),
        "--out",
        s(&svg),
        "--width",
        "8000",
        "--height",
        "8000",
    ]);
}

#[test]
fn a_mistyped_command_is_named_as_one() {
    let design = here("designs/camera-window-ar.ron");
    let e = fails(&["colr", s(&design)]);
    assert!(e.starts_with("error: unknown command `colr`"), "{e}");
    assert!(
        e.contains("spectrum") && e.contains("plot") && e.contains("compare"),
        "{e}"
    );
    assert!(!e.contains("window"), "no attempt to open the window: {e}");
    let e = fails(&["spectrun", s(&design)]);
    assert!(e.contains("did you mean `spectrum`"), "{e}");
}

#[test]
fn extreme_values_in_a_file_are_refused_by_name() {
    let e = fails(&["spectrum", s(&here("tests/broken/huge_layer.ron"))]);
    assert!(e.contains("layer 1 nm is 1e308"), "{e}");
    let e = fails(&["info", s(&here("tests/broken/tiny_reference.ron"))]);
    assert!(e.contains("reference_nm is 1e-308"), "{e}");
}

const AR: &str = "designs/camera-window-ar.ron";
const MIRROR: &str = "designs/laser-mirror-1064-45.ron";

/// Runs `stackwise ARGS`, asserting success, and returns its standard output.
fn ok_out(args: &[&str]) -> String {
    ok(args).0
}

/// The spectrum of an example design, computed in-process.
fn computed(rel: &str, from: f64, to: f64, step: f64, aoi: f64) -> stackwise::analysis::Spectrum {
    let d = file::load(&here(rel)).expect("example design loads");
    let wl = wavelengths_nm(from, to, step).expect("valid range");
    spectrum(&d.resolve().expect("resolves"), &wl, aoi, Side::Front).expect("computes")
}

// ---------------------------------------------------------------- plot, report, measured

#[test]
fn cli_plot_writes_png_and_svg() {
    let dir = tempfile::tempdir().expect("temp dir");
    let png = dir.path().join("a.PNG");
    let svg = dir.path().join("b.svg");
    let ar = here(AR);
    let mirror = here(MIRROR);
    let (ar, mirror) = (ar.to_str().expect("path"), mirror.to_str().expect("path"));
    ok_out(&[
        "plot",
        ar,
        "--out",
        png.to_str().expect("path"),
        "--width",
        "300",
        "--height",
        "200",
    ]);
    let img = image::load_from_memory(&std::fs::read(&png).expect("written"))
        .expect("PNG decodes")
        .to_rgb8();
    assert_eq!(img.dimensions(), (300, 200), "size");
    ok_out(&[
        "plot",
        mirror,
        "--out",
        svg.to_str().expect("path"),
        "--compare",
        ar,
        "--quantity",
        "t",
        "--aoi",
        "45",
        "--from",
        "900",
        "--to",
        "1200",
        "--step",
        "2",
    ]);
    let text = std::fs::read_to_string(&svg).expect("svg written");
    roxmltree::Document::parse(&text).expect("valid XML");
    for name in [
        "Turning mirror, 1064 nm at 45 deg",
        "Camera cover window, visible AR",
        "Transmittance T (%)",
    ] {
        assert!(text.contains(name), "missing {name}");
    }
    assert!(
        text.contains("Computed values are theoretical"),
        "mirror plot carries the caution"
    );

    let bad = dir.path().join("c.jpg");
    let e = fails(&["plot", ar, "--out", bad.to_str().expect("path")]);
    assert!(e.contains(".png or .svg"), "{e}");
    let e = fails(&[
        "plot",
        ar,
        "--out",
        png.to_str().expect("path"),
        "--width",
        "50",
    ]);
    assert!(e.contains("width 50"), "{e}");
    let e = fails(&[
        "plot",
        ar,
        "--out",
        svg.to_str().expect("path"),
        "--compare",
        "missing.ron",
    ]);
    assert!(e.contains("missing.ron"), "{e}");
    let e = fails(&[
        "plot",
        ar,
        "--out",
        svg.to_str().expect("path"),
        "--from",
        "900",
        "--to",
        "400",
    ]);
    assert!(e.contains("--from"), "{e}");
}

#[test]
fn cli_report_in_each_format() {
    let ar = here(AR);
    let ar = ar.to_str().expect("path");
    let csv = ok_out(&["report", ar, "--format", "csv"]);
    assert!(
        csv.contains("layer,material,nm,qwot,optical_nm,cumulative_nm,locked"),
        "{csv}"
    );
    assert!(
        ok_out(&["report", ar]).starts_with("# Layer report: Camera cover window"),
        "md default"
    );
    let dir = tempfile::tempdir().expect("temp dir");
    let out = dir.path().join("r.html");
    ok_out(&[
        "report",
        ar,
        "--format",
        "html",
        "--out",
        out.to_str().expect("path"),
    ]);
    let html = std::fs::read_to_string(&out).expect("written");
    assert!(
        html.starts_with("<!DOCTYPE html>") && html.ends_with("</html>\n"),
        "whole page"
    );
    let e = fails(&["report", ar, "--format", "pdf"]);
    assert!(e.contains("pdf"), "{e}");
    let e = fails(&["report", "no-such-design.ron"]);
    assert!(e.contains("no-such-design.ron"), "{e}");
}

#[test]
fn cli_measured_reports_units_and_rms() {
    let s = computed(AR, 400.0, 700.0, 10.0, 0.0);
    let dir = tempfile::tempdir().expect("temp dir");
    // A "measurement" made from the computed T, written in µm and percent, offset by 1 %.
    let mut text = String::from("wavelength,T\n");
    for (wl, t) in s.wavelength_nm.iter().zip(&s.curves.t) {
        text.push_str(&format!("{};{}\n", wl / 1000.0, 100.0 * t + 1.0).replace('.', ","));
    }
    let path = dir.path().join("meas.csv");
    std::fs::write(&path, text).expect("write");
    let ar = here(AR);
    let out = ok_out(&[
        "measured",
        path.to_str().expect("path"),
        ar.to_str().expect("path"),
    ]);
    assert!(out.contains("wavelength unit: µm"), "{out}");
    assert!(out.contains("value scale: percent"), "{out}");
    let rms: f64 = out
        .lines()
        .find_map(|l| l.strip_prefix("rms_fraction,"))
        .expect("rms line")
        .parse()
        .expect("a number");
    // The 1 % offset, plus a little from interpolating the computed curve between its points.
    assert!((rms - 0.01).abs() < 2e-4, "rms {rms}");

    let broken = dir.path().join("broken.csv");
    std::fs::write(&broken, "400,0.1\n500,oops\n").expect("write");
    let e = fails(&[
        "measured",
        broken.to_str().expect("path"),
        ar.to_str().expect("path"),
    ]);
    assert!(e.contains("line 2") && e.contains("oops"), "{e}");
    let e = fails(&["measured", "no-such-file.csv", ar.to_str().expect("path")]);
    assert!(e.contains("no-such-file.csv"), "{e}");
}
