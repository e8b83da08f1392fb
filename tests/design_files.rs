//! Design files: good files load exactly, saving is atomic and round-trips, and every broken
//! file in `tests/broken/` is refused with a message that names the problem.

mod common;

use std::path::PathBuf;

/// A file of the test corpus (`tests/good/`, `tests/broken/`).
fn here(rel: &str) -> PathBuf {
    common::here("tests").join(rel)
}

use stackwise::design::{Design, Layer, Nm, Pol, Quantity, TargetKind, file};
use stackwise::material::{Material, Model};

#[test]
fn architecture_example_loads_with_its_comments() {
    let d = file::load(&here("good/cover_window.ron")).unwrap();
    assert_eq!(d.format, 1, "format");
    assert_eq!(d.name, "Cover window, visible AR", "name");
    assert_eq!(d.reference_nm.to_bits(), 550.0f64.to_bits(), "reference");
    assert_eq!(
        (d.incident.as_str(), d.exit.as_str()),
        ("Air", "Air"),
        "media"
    );
    assert_eq!(d.substrate, "Fused silica", "substrate");
    assert_eq!(d.substrate_mm, Some(3.0), "substrate thickness");
    assert_eq!(
        d.layers,
        vec![
            Layer::new("H", Nm::new(13.2).unwrap()),
            Layer {
                material: "L".into(),
                nm: Nm::new(34.9).unwrap(),
                locked: true
            },
        ],
        "layers, substrate side first"
    );
    let models: Vec<&Model> = d.materials.iter().map(|m| &m.model).collect();
    assert_eq!(
        models,
        [
            &Model::Constant { n: 2.35, k: 0.0 },
            &Model::Cauchy {
                a: 1.372,
                b: 0.0041,
                c: 0.0
            },
            &Model::Sellmeier {
                a: 0.0,
                b: vec![1.0396, 0.2318],
                c: vec![0.0060, 0.0200]
            },
            &Model::Table {
                rows: vec![(400.0, 0.05, 2.10), (700.0, 0.04, 4.80)]
            },
        ],
        "materials"
    );
    assert!(d.targets.is_empty(), "targets default to none");
    // The substrate is a built-in; define it here so the check does not depend on the library.
    let mut d = d;
    d.materials.push(Material::user(
        "Fused silica",
        Model::Constant { n: 1.46, k: 0.0 },
    ));
    d.validate().unwrap();
}

#[test]
fn targets_load_and_the_design_resolves() {
    let d = file::load(&here("good/with_targets.ron")).unwrap();
    assert_eq!(d.targets.len(), 2, "two targets");
    let t = &d.targets[1];
    assert_eq!(
        (t.quantity, t.pol, t.kind),
        (Quantity::T, Pol::S, TargetKind::AtLeast),
        "enums"
    );
    assert_eq!(t.wavelengths_nm(), vec![532.0], "single wavelength");
    let r = d.resolve().unwrap();
    assert_eq!(r.substrate_mm, None, "semi-infinite");
    assert_eq!(
        r.layers,
        vec![(0, 56.6), (1, 96.4), (0, 113.2)],
        "layers index the materials"
    );
    assert_eq!(r.materials.len(), 2, "H and L once each");
}

#[test]
fn save_then_load_round_trips_and_leaves_no_temporary() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("copy.ron");
    for good in ["good/cover_window.ron", "good/with_targets.ron"] {
        let d = file::load(&here(good)).unwrap();
        file::save(&path, &d).unwrap();
        assert_eq!(file::load(&path).unwrap(), d, "{good} round trip");
    }
    // Overwrites the previous file completely.
    let small = Design::new_empty("Small");
    file::save(&path, &small).unwrap();
    assert_eq!(file::load(&path).unwrap(), small, "overwritten");
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names, ["copy.ron"], "no .tmp left behind");
}

#[test]
fn failed_save_leaves_the_old_file() {
    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("missing-folder").join("x.ron");
    let e = file::save(&target, &Design::new_empty("x"))
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("cannot save the design"), "{e}");
    assert!(
        e.ends_with(&format!("(in {})", target.display())),
        "path last: {e}"
    );
    let e = file::load(&target).unwrap_err().to_string();
    assert!(e.starts_with("cannot read the design file"), "{e}");

    // A name so long that no temporary name fits beside it (Linux allows 255 bytes) makes the
    // write fail: the old file stays.
    let path = dir.path().join(format!("{}.ron", "k".repeat(249)));
    let old = Design::new_empty("Old");
    std::fs::write(&path, file::to_ron_string(&old).unwrap()).unwrap();
    assert!(
        file::save(&path, &Design::new_empty("New")).is_err(),
        "write must fail"
    );
    assert_eq!(file::load(&path).unwrap(), old, "old file untouched");
}

/// Where a broken file must fail, and what the message must say.
enum Expect {
    /// `load` fails; the message starts with `line N, ` when a line is given.
    Load(Option<usize>, &'static str),
    /// `load` succeeds and `validate` fails.
    Validate(&'static str),
}

use Expect::{Load, Validate};

const BROKEN: &[(&str, Expect)] = &[
    (
        "back_layer_negative_thickness.ron",
        Load(Some(15), "thickness -20 nm is not allowed"),
    ),
    (
        "back_layer_unknown_field.ron",
        Load(Some(15), "field named `lock` in `Layer`"),
    ),
    (
        "back_layer_unknown_material.ron",
        Validate("back layer 2: unknown material \"Mgf2\""),
    ),
    (
        "back_layers_without_substrate_mm.ron",
        Validate("back_layers needs a thick substrate"),
    ),
    ("comment_only.ron", Load(Some(1), "the file ends too soon")),
    (
        "duplicate_material.ron",
        Validate("defines \"H\" twice (entries 2 and 3)"),
    ),
    ("empty.ron", Load(None, "the design file is empty")),
    (
        "format_zero.ron",
        Load(None, "format 0 is not a design-file format"),
    ),
    (
        "huge_cauchy.ron",
        Validate("entry 3 (\"L\"): Cauchy b is 1e300, outside"),
    ),
    (
        "huge_index.ron",
        Validate("entry 2 (\"H\"): constant n is 1e200, outside"),
    ),
    (
        "huge_k.ron",
        Validate("entry 2 (\"H\"): constant k is 1e300, outside the physical range 0 to 10000"),
    ),
    (
        "huge_layer.ron",
        Validate("layer 1 nm is 1e308, outside the physical range 0 to 1000000"),
    ),
    (
        "huge_sellmeier.ron",
        Validate("entry 3 (\"L\"): Sellmeier b2 is 1e250, outside"),
    ),
    (
        "huge_substrate.ron",
        Validate("substrate_mm is 1e308, outside the physical range"),
    ),
    (
        "huge_table_n.ron",
        Validate("entry 2 (\"H\"): table row 2 n is 1e300, outside"),
    ),
    (
        "inf_thickness.ron",
        Load(Some(11), "thickness inf nm is not allowed"),
    ),
    ("missing_comma.ron", Load(Some(12), "expected comma")),
    (
        "missing_exit.ron",
        Load(Some(17), "missing field named `exit`"),
    ),
    (
        "missing_layer_nm.ron",
        Load(Some(11), "missing field named `nm` in `Layer`"),
    ),
    (
        "nan_thickness.ron",
        Load(Some(11), "thickness NaN nm is not allowed"),
    ),
    (
        "negative_k.ron",
        Validate("entry 2: material \"H\": k must be zero or positive"),
    ),
    (
        "negative_substrate.ron",
        Validate("substrate_mm must be a positive number"),
    ),
    (
        "negative_thickness.ron",
        Load(Some(11), "thickness -5 nm is not allowed"),
    ),
    (
        "newer_format.ron",
        Load(
            None,
            "written by a newer version of Stackwise (file format 2",
        ),
    ),
    (
        "not_utf8.ron",
        Load(Some(3), "(byte 35): the file is not UTF-8 text"),
    ),
    (
        "reference_zero.ron",
        Validate("reference_nm must be a positive number"),
    ),
    (
        "sellmeier_mismatch.ron",
        Validate("\"L\": b has 2 terms but c has 1"),
    ),
    (
        "substrate_mm_without_some.ron",
        Load(Some(7), "write Some(value)"),
    ),
    (
        "target_aoi_90.ron",
        Validate("target 1: aoi_deg must be at least 0 and below 90"),
    ),
    (
        "target_goal_percent.ron",
        Validate("target 2: goal must be a fraction from 0 to 1"),
    ),
    (
        "target_unknown_quantity.ron",
        Load(Some(19), "variant named `Reflectance`"),
    ),
    (
        "tiny_index.ron",
        Validate("entry 2 (\"H\"): constant n is 1e-300, outside the physical range 0.001 to 1000"),
    ),
    (
        "tiny_reference.ron",
        Validate("reference_nm is 1e-308, outside the physical range 1 to 1000000"),
    ),
    (
        "tiny_table_wavelength.ron",
        Validate("entry 2 (\"H\"): table row 1 wavelength (nm) is 1e-300, outside"),
    ),
    ("truncated.ron", Load(Some(11), "the file ends too soon")),
    ("unclosed_string.ron", Load(Some(5), "expected comma")),
    (
        "unknown_field_design.ron",
        Load(Some(4), "field named `refrence_nm` in `Design`"),
    ),
    (
        "unknown_field_layer.ron",
        Load(Some(11), "field named `lock` in `Layer`"),
    ),
    (
        "unknown_layer_material.ron",
        Validate("layer 2: unknown material \"Tio2\""),
    ),
    (
        "unknown_model.ron",
        Load(Some(16), "variant named `Lorentzian` in enum `Model`"),
    ),
    (
        "unknown_substrate.ron",
        Validate("substrate: unknown material \"Fused silca\""),
    ),
    (
        "unsorted_table.ron",
        Validate("\"M\": row 2: wavelengths must increase"),
    ),
    ("wrong_type_format.ron", Load(Some(2), "expected integer")),
    ("wrong_type_reference.ron", Load(Some(4), "expected float")),
];

#[test]
fn every_broken_file_is_refused_with_its_own_message() {
    let dir = here("broken");
    let mut on_disk: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    on_disk.sort();
    let listed: Vec<&str> = BROKEN.iter().map(|(f, _)| *f).collect();
    assert_eq!(
        on_disk, listed,
        "every file in tests/broken has an expectation, in order"
    );
    assert!(BROKEN.len() >= 15, "at least 15 broken files");

    for (name, expect) in BROKEN {
        let path = dir.join(name);
        let loaded = file::load(&path);
        match expect {
            Load(line, fragment) => {
                let e = loaded.expect_err(name);
                let msg = e.to_string();
                assert!(msg.contains(fragment), "{name}: {msg:?} lacks {fragment:?}");
                assert!(
                    msg.ends_with(&format!("(in {})", path.display())),
                    "{name}: {msg}"
                );
                assert_eq!(e.line(), *line, "{name}: line of {msg:?}");
                if let Some(line) = line {
                    assert!(
                        msg.starts_with(&format!("line {line}, column ")),
                        "{name}: {msg}"
                    );
                }
            }
            Validate(fragment) => {
                let design = loaded.unwrap_or_else(|e| panic!("{name} should load: {e}"));
                let msg = design.validate().expect_err(name).to_string();
                assert!(msg.contains(fragment), "{name}: {msg:?} lacks {fragment:?}");
                assert!(design.resolve().is_err(), "{name}: resolve validates too");
            }
        }
    }
}
