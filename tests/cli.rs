//! The command line end to end: the built binary on the example designs and on bad input.

use std::path::PathBuf;

use assert_cmd::Command;
use stackwise::analysis::{spectrum, wavelengths_nm};
use stackwise::design::file;
use stackwise::optics::Side;

const EXAMPLES: [&str; 5] = [
    "designs/camera-window-ar.ron",
    "designs/laser-mirror-1064-45.ron",
    "designs/shortpass-550.ron",
    "designs/protected-silver-mirror.ron",
    "designs/window-ar-both-faces.ron",
];

fn here(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(rel)
}

fn stackwise() -> Command {
    Command::cargo_bin("stackwise").expect("the binary builds")
}

/// Runs and returns (stdout, stderr), asserting success.
fn ok(args: &[&str]) -> (String, String) {
    let out = stackwise().args(args).output().expect("runs");
    let (o, e) = (
        String::from_utf8(out.stdout).expect("UTF-8 output"),
        String::from_utf8(out.stderr).expect("UTF-8 errors"),
    );
    assert!(out.status.success(), "{args:?} failed: {e}");
    (o, e)
}

/// Runs and returns stderr, asserting failure with a message.
fn fails(args: &[&str]) -> String {
    let out = stackwise().args(args).output().expect("runs");
    let e = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(!out.status.success(), "{args:?} should fail");
    assert!(
        e.starts_with("error"),
        "{args:?}: message should start with error: {e}"
    );
    assert!(!e.contains("panicked"), "{args:?} panicked: {e}");
    e
}

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
        assert_eq!(cells[0], s.wavelength_nm[i].to_string(), "wavelength");
        assert_eq!(cells[1], s.curves.r_s[i].to_string(), "R_s at {}", cells[0]);
        assert_eq!(cells[6], s.curves.t[i].to_string(), "T at {}", cells[0]);
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
