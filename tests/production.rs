//! From design to production on the command line: `tolerance`, `sensitivity` and `monitor`
//! run in-process through the same parser and dispatcher as the binary.

#![allow(
    clippy::float_cmp,
    reason = "numbers written in round-trip form must come back exactly"
)]

use std::path::PathBuf;

use stackwise::analysis::{spectrum, wavelengths_nm};
use stackwise::design::file;
use stackwise::optics::Side;

mod common;

const AR: &str = "designs/camera-window-ar.ron";
const SHORTPASS: &str = "designs/shortpass-550.ron";

fn here(rel: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join(rel)
        .to_string_lossy()
        .into_owned()
}

/// Parses and runs `stackwise ARGS`; (stdout, stderr) or the whole error chain.
fn go(args: &[&str]) -> Result<(String, String), String> {
    common::run_in_process(args)
}

fn ok(args: &[&str]) -> (String, String) {
    go(args).unwrap_or_else(|e| panic!("{args:?} failed: {e}"))
}

fn fails(args: &[&str]) -> String {
    match go(args) {
        Ok((out, _)) => panic!("{args:?} should fail, wrote {out}"),
        Err(e) => e,
    }
}

fn table(csv: &str) -> (&str, Vec<Vec<f64>>) {
    let mut lines = csv.lines();
    let header = lines.next().expect("a header");
    let rows = lines
        .map(|l| {
            l.split(',')
                .map(|x| x.parse().unwrap_or(f64::NAN))
                .collect()
        })
        .collect();
    (header, rows)
}

#[test]
fn tolerance_writes_the_envelope_around_the_engine_spectrum() {
    let design = here(AR);
    let args = [
        "tolerance",
        &design,
        "--runs",
        "300",
        "--seed",
        "3",
        "--from",
        "400",
        "--to",
        "700",
        "--step",
        "10",
    ];
    let (csv, err) = ok(&args);
    let (header, rows) = table(&csv);
    assert_eq!(header, "wavelength_nm,nominal,p05,p50,p95", "exact header");
    assert_eq!(rows.len(), 31, "one row per wavelength");
    // The nominal column is the engine's R (mean of s and p) for the design.
    let d = file::load(design.as_ref()).expect("loads");
    let wl = wavelengths_nm(400.0, 700.0, 10.0).expect("grid");
    let s = spectrum(&d.resolve().expect("resolves"), &wl, 0.0, Side::Front).expect("computes");
    for (row, (&w, &r)) in rows.iter().zip(wl.iter().zip(&s.curves.r)) {
        assert_eq!((row[0], row[1]), (w, r), "nominal = spectrum R");
        assert!(
            row[2] <= row[3] && row[3] <= row[4],
            "p05 ≤ p50 ≤ p95: {row:?}"
        );
        assert!(row[2] < row[4], "the errors spread the runs: {row:?}");
    }
    assert!(err.contains("300 runs (seed 3)"), "summary: {err}");
    assert_eq!(ok(&args).0, csv, "same seed, same file");
    // Without errors every percentile is the nominal curve.
    let (flat, _) = ok(&[
        "tolerance",
        &design,
        "--runs",
        "20",
        "--thickness-pct",
        "0",
        "--systematic-pct",
        "0",
        "--index-pct",
        "0",
        "--quantity",
        "t",
    ]);
    for row in table(&flat).1 {
        assert!(row[2..].iter().all(|&p| p == row[1]), "{row:?}");
    }
}

#[test]
fn sensitivity_ranks_every_layer() {
    let design = here(SHORTPASS);
    let (csv, _) = ok(&["sensitivity", &design, "--from", "450", "--to", "750"]);
    let (header, rows) = table(&csv);
    assert_eq!(header, "layer,material,nm,sensitivity", "exact header");
    let d = file::load(design.as_ref()).expect("loads");
    assert_eq!(rows.len(), d.layers.len(), "one row per layer");
    let mut layers: Vec<usize> = rows.iter().map(|r| r[0] as usize).collect();
    for pair in rows.windows(2) {
        assert!(pair[0][3] >= pair[1][3], "ranked: {pair:?}");
    }
    assert!(rows[0][3] > 0.0, "a real sensitivity");
    for (line, row) in csv.lines().skip(1).zip(&rows) {
        let l = &d.layers[row[0] as usize - 1];
        assert!(line.contains(&format!(",{},", l.material)), "{line}");
        assert_eq!(row[2], l.nm.get(), "thickness");
    }
    layers.sort_unstable();
    assert_eq!(
        layers,
        (1..=d.layers.len()).collect::<Vec<_>>(),
        "each layer once"
    );
}

#[test]
fn monitor_follows_the_whole_run() {
    let design = here(AR);
    let (csv, err) = ok(&["monitor", &design, "--wavelength", "550", "--step-nm", "5"]);
    let (header, rows) = table(&csv);
    assert_eq!(header, "deposited_nm,layer,signal", "exact header");
    let d = file::load(design.as_ref()).expect("loads");
    let mut end = 0.0;
    for (i, l) in d.layers.iter().enumerate() {
        end += l.nm.get();
        assert!(
            rows.iter()
                .any(|r| (r[0] - end).abs() < 1e-9 && r[1] as usize == i + 1),
            "the end of layer {} is a row",
            i + 1
        );
    }
    assert_eq!(
        rows.first().map(|r| r[0]),
        Some(0.0),
        "starts on the bare substrate"
    );
    for pair in rows.windows(2) {
        assert!(pair[0][0] < pair[1][0], "rising thickness: {pair:?}");
        assert!((0.0..=1.0).contains(&pair[1][2]), "a fraction: {pair:?}");
    }
    // The per-layer table: a header and one line per layer.
    assert_eq!(err.lines().count(), d.layers.len() + 1, "{err}");
    assert!(err.contains("turns"), "{err}");
}

#[test]
fn bad_input_gets_a_clear_message_and_writes_nothing() {
    let design = here(AR);
    let dir = tempfile::tempdir().expect("a temporary folder");
    let out = dir.path().join("out.csv");
    let out = out.to_str().expect("UTF-8 path");
    let cases: [(&[&str], &str); 9] = [
        (&["tolerance", &design, "--runs", "0"], "0 runs"),
        (
            &["tolerance", &design, "--runs", "-5"],
            "--runs must be at least 1, got -5",
        ),
        (
            &["tolerance", &design, "--thickness-pct", "-1"],
            "thickness σ of -1 %",
        ),
        (
            &["tolerance", &design, "--index-pct", "NaN"],
            "index σ of NaN %",
        ),
        (
            &["tolerance", &design, "--systematic-pct", "50"],
            "systematic σ of 50 %",
        ),
        (
            &["monitor", &design, "--wavelength", "100000"],
            "outside the data of",
        ),
        (
            &["monitor", &design, "--wavelength", "-1"],
            "monitor wavelength -1 nm",
        ),
        (
            &["monitor", &design, "--wavelength", "550", "--step-nm", "0"],
            "row step 0",
        ),
        (
            &["sensitivity", &design, "--aoi", "90"],
            "angle of incidence 90",
        ),
    ];
    for (args, fragment) in cases {
        let mut with_out = args.to_vec();
        with_out.extend(["--out", out]);
        let e = fails(&with_out);
        assert!(e.contains(fragment), "{args:?}: {e}");
        assert!(!e.contains("panicked"), "{args:?}: {e}");
        assert!(!std::path::Path::new(out).exists(), "{args:?} wrote a file");
    }
}

#[test]
fn tolerance_reports_the_yield_and_sensitivity_the_merit_when_there_are_targets() {
    use stackwise::analysis::tolerance::ToleranceSettings;
    let dir = tempfile::tempdir().expect("a temporary folder");
    let path = dir.path().join("qw.ron");
    let d = common::quarter_wave_with_target(0.0127);
    std::fs::write(&path, file::to_ron_string(&d).expect("RON")).expect("written");
    let p = path.to_str().expect("UTF-8 path");
    let (_, err) = ok(&[
        "tolerance",
        p,
        "--runs",
        "200",
        "--from",
        "500",
        "--to",
        "600",
    ]);
    let s = ToleranceSettings {
        runs: 200,
        ..ToleranceSettings::default()
    };
    let lib = stackwise::optimize::tolerance_with_yield(&d, &[550.0], &s, |_| {
        std::ops::ControlFlow::Continue(())
    })
    .expect("runs");
    let passed = lib.passed.expect("judged");
    assert!(passed > 0 && passed < 200, "a partial yield: {passed}");
    let want = format!(
        "yield {:.1} % ({passed} of 200 runs meet every target)",
        100.0 * passed as f64 / 200.0
    );
    assert!(err.contains(&want), "{want} in: {err}");
    // Without targets, no yield.
    let (_, err) = ok(&["tolerance", &here(AR), "--runs", "20"]);
    assert!(!err.contains("yield"), "{err}");

    let (csv, err) = ok(&["sensitivity", p]);
    assert!(err.contains("sensitivity of the merit"), "{err}");
    let lib = stackwise::optimize::merit_sensitivity(&d).expect("computes");
    let (_, rows) = table(&csv);
    assert_eq!(
        rows[0][3], lib.layers[0].sensitivity,
        "the library's number"
    );
    let (_, err) = ok(&["sensitivity", p, "--spectrum"]);
    assert!(err.contains("sensitivity of the spectrum"), "{err}");
}
