//! The analysis-view commands end to end (phase, field, admittance, color, map): the built
//! binary, its exact CSV headers, its numbers against the library's, images, and bad input.

mod common;

use common::{fails, ok, stackwise};

use std::path::{Path, PathBuf};

use stackwise::analysis::phase::phase_spectrum;
use stackwise::design::{Design, Layer, Nm, file};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;

/// A design of constant-index materials: `layers` as (material, nm), substrate side first.
fn design(incident: f64, substrate: f64, layers: &[(&str, f64, f64)]) -> Design {
    let mut d = Design::new_empty("test");
    d.incident = "I".into();
    d.substrate = "S".into();
    d.materials = vec![
        Material::user(
            "I",
            Model::Constant {
                n: incident,
                k: 0.0,
            },
        ),
        Material::user(
            "S",
            Model::Constant {
                n: substrate,
                k: 0.0,
            },
        ),
    ];
    for (name, n, nm) in layers {
        d.materials
            .push(Material::user(name, Model::Constant { n: *n, k: 0.0 }));
        d.layers
            .push(Layer::new(name, Nm::new(*nm).expect("a valid thickness")));
    }
    d
}

// ---------------------------------------------------------------- the commands

fn run(args: &[&str]) -> (bool, String, String) {
    let out = stackwise().args(args).output().expect("runs");
    (
        out.status.success(),
        String::from_utf8(out.stdout).expect("UTF-8"),
        String::from_utf8(out.stderr).expect("UTF-8"),
    )
}

fn saved(dir: &Path, name: &str, d: &Design) -> PathBuf {
    let p = dir.join(name);
    file::save(&p, d).expect("the design saves");
    p
}

fn example(rel: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join(rel)
        .to_str()
        .expect("a UTF-8 path")
        .to_owned()
}

#[test]
fn commands_write_the_agreed_headers_and_the_engine_numbers() {
    let mirror = example("designs/laser-mirror-1064-45.ron");
    let m = mirror.as_str();
    let (csv, _) = ok(&[
        "phase", m, "--from", "1000", "--to", "1100", "--step", "50", "--aoi", "45",
    ]);
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some(
            "wavelength_nm,phase_r_s_deg,phase_r_p_deg,phase_t_s_deg,phase_t_p_deg,\
             gd_r_s_fs,gd_r_p_fs,gdd_r_s_fs2,gdd_r_p_fs2"
        )
    );
    let d = file::load(Path::new(m)).unwrap().resolve().unwrap();
    let p = phase_spectrum(&d, &[1000.0, 1050.0, 1100.0], 45.0, Side::Front).unwrap();
    let first: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(
        first[5],
        p.r_s.gd_fs[0].to_string(),
        "the engine's group delay"
    );

    let (csv, err) = ok(&[
        "field",
        m,
        "--wavelength",
        "1064",
        "--aoi",
        "45",
        "--pol",
        "p",
    ]);
    assert_eq!(csv.lines().next(), Some("depth_nm,layer,e2"));
    assert!(
        err.contains("does not predict laser-induced damage"),
        "{err}"
    );
    let (peaks, _) = ok(&["field", m, "--wavelength", "1064", "--peaks"]);
    assert_eq!(peaks.lines().count(), 1 + 25, "one row per layer");

    let (csv, _) = ok(&["admittance", m, "--wavelength", "1064"]);
    assert_eq!(csv.lines().next(), Some("layer,re,im"));
    assert!(
        csv.lines().last().unwrap().starts_with("26,1,"),
        "incident medium last"
    );

    let (csv, err) = ok(&["color", m, "--illuminant", "A", "--observer", "10"]);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "light,X,Y,Z,x,y,L,a,b");
    assert!(lines[1].starts_with("reflected,") && lines[2].starts_with("transmitted,"));
    assert_eq!(lines.len(), 3, "{csv}");
    assert!(err.contains("sRGB swatch: reflected #"), "{err}");
    let (csv, _) = ok(&["color", m, "--angles", "0:80:20"]);
    assert_eq!(csv.lines().next(), Some("aoi_deg,light,X,Y,Z,x,y,L,a,b"));
    assert_eq!(csv.lines().count(), 1 + 2 * 5, "two rows per angle");

    let (csv, _) = ok(&[
        "map",
        m,
        "--from",
        "1000",
        "--to",
        "1100",
        "--step",
        "50",
        "--angles",
        "0:40:20",
        "--quantity",
        "t",
        "--pol",
        "s",
    ]);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "wavelength_nm,aoi_deg,value");
    assert_eq!(lines.len(), 1 + 3 * 3);
    assert!(
        lines[4].starts_with("1000,20,"),
        "angle by angle: {}",
        lines[4]
    );
}

#[test]
fn map_writes_a_heat_map_image() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("map.png");
    let m = example("designs/shortpass-550.ron");
    ok(&[
        "map",
        &m,
        "--angles",
        "0:60:5",
        "--out",
        out.to_str().unwrap(),
        "--width",
        "600",
        "--height",
        "400",
    ]);
    let img = image::open(&out).unwrap();
    assert_eq!((img.width(), img.height()), (600, 400));
    let svg_out = dir.path().join("map.svg");
    ok(&[
        "map",
        &m,
        "--angles",
        "0:60:30",
        "--step",
        "10",
        "--out",
        svg_out.to_str().unwrap(),
    ]);
    let svg = std::fs::read_to_string(&svg_out).unwrap();
    assert!(
        svg.contains("Reflectance R (%)"),
        "the colour scale is labelled"
    );
}

#[test]
fn bad_input_gets_a_clear_message() {
    let dir = tempfile::tempdir().unwrap();
    let bare = saved(dir.path(), "bare.ron", &design(1.0, 1.52, &[]));
    let bare = bare.to_str().unwrap();
    let m = example("designs/laser-mirror-1064-45.ron");
    let m = m.as_str();

    let e = fails(&["field", bare, "--wavelength", "550"]);
    assert!(e.contains("no layers"), "{e}");
    for cmd in ["field", "admittance"] {
        let e = fails(&[cmd, m, "--wavelength", "1064", "--aoi", "90"]);
        assert!(e.contains("90") && e.contains("below 90"), "{cmd}: {e}");
        let e = fails(&[cmd, m, "--wavelength", "-5"]);
        assert!(e.contains("--wavelength"), "{cmd}: {e}");
    }
    let e = fails(&["phase", m, "--aoi", "95"]);
    assert!(e.contains("95"), "{e}");
    let e = fails(&["map", m, "--angles", "0:90:1"]);
    assert!(e.contains("90"), "{e}");
    let e = fails(&["map", m, "--angles", "0-80"]);
    assert!(e.contains("FROM:TO:STEP"), "{e}");
    let e = fails(&["color", m, "--illuminant", "F11"]);
    assert!(e.contains("unknown illuminant \"F11\""), "{e}");
    let e = fails(&["color", m, "--observer", "4"]);
    assert!(e.contains("unknown observer \"4\""), "{e}");
    let e = fails(&[
        "map", m, "--from", "300", "--to", "3000", "--step", "0.01", "--angles", "0:89:0.1",
    ]);
    assert!(
        e.contains("points") && e.contains("layers") && e.contains(" s of work"),
        "{e}"
    );
    let e = fails(&["map", m, "--out", m]);
    assert!(e.contains("also an input of this command"), "{e}");
    assert!(file::load(Path::new(m)).is_ok(), "the design is untouched");

    // A wavelength outside every material's data: the materials are named, as a warning
    // (the data are extrapolated) or, where a formula gives no index there, as the error.
    let (_, _, err) = run(&["field", m, "--wavelength", "20000"]);
    assert!(err.contains("Ta2O5") || err.contains("SiO2"), "{err}");
    assert!(!err.contains("panicked"), "{err}");
}
