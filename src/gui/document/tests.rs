//! Tests of `Document::apply`: every edit checked, refusals change nothing.

use super::*;
use crate::material::Model;

fn doc() -> Document {
    let mut d = Design::new_empty("t");
    d.materials = vec![
        Material::user("H", Model::Constant { n: 2.0, k: 0.0 }),
        Material::user("L", Model::Constant { n: 1.5, k: 0.0 }),
    ];
    d.layers = vec![
        Layer::new("H", Nm::new(10.0).unwrap()),
        Layer::new("L", Nm::new(20.0).unwrap()),
        Layer::new("H", Nm::new(30.0).unwrap()),
    ];
    Document::new(d, None)
}

fn nms(d: &Document) -> Vec<f64> {
    d.design.layers.iter().map(|l| l.nm.get()).collect()
}

#[test]
fn layer_edits_reach_the_back_face() {
    let mut d = doc();
    let back = |e| Edit::on_face(Face::Back, e);
    let layer = Layer::new("L", Nm::new(90.0).unwrap());
    let e = d
        .apply(back(Edit::InsertLayer {
            at: 0,
            layer: layer.clone(),
        }))
        .unwrap_err();
    assert!(e.to_string().contains("turn on \"back surface\""), "{e}");
    d.apply(Edit::SetSubstrateMm(Some(2.0))).unwrap();
    d.apply(back(Edit::InsertLayer { at: 0, layer })).unwrap();
    d.apply(back(Edit::SetQwot {
        layer: 0,
        qwot: 1.0,
    }))
    .unwrap();
    // A quarter wave of n = 1.5 at 550 nm: 550 / 6 nm.
    assert!((d.design().back_layers[0].nm.get() - 550.0 / 6.0).abs() < 1e-9);
    assert_eq!(nms(&d), [10.0, 20.0, 30.0], "the front is untouched");
    let e = d.apply(back(Edit::ToggleLock(1))).unwrap_err();
    assert!(
        e.to_string().starts_with("back face: there is no layer 2"),
        "{e}"
    );
    let e = d.apply(back(Edit::SetName("x".into()))).unwrap_err();
    assert!(e.to_string().contains("only layer edits"), "{e}");
    let e = d.apply(Edit::SetSubstrateMm(None)).unwrap_err();
    assert!(e.to_string().contains("1 layer(s)"), "{e}");
    assert_eq!(d.design().substrate_mm, Some(2.0), "refused");
    d.apply(back(Edit::RemoveLayers(vec![0]))).unwrap();
    d.apply(Edit::SetSubstrateMm(None)).unwrap();
}

#[test]
fn thickness_is_checked() {
    let mut d = doc();
    d.apply(Edit::SetThickness { layer: 1, nm: 42.0 }).unwrap();
    assert_eq!(nms(&d), [10.0, 42.0, 30.0], "set");
    for bad in [-1.0, f64::NAN, f64::INFINITY] {
        let e = d
            .apply(Edit::SetThickness { layer: 0, nm: bad })
            .unwrap_err();
        assert!(e.to_string().contains("thickness"), "{e}");
    }
    let e = d
        .apply(Edit::SetThickness { layer: 3, nm: 1.0 })
        .unwrap_err();
    assert!(e.to_string().contains("no layer 4"), "{e}");
    assert_eq!(nms(&d), [10.0, 42.0, 30.0], "refusals change nothing");
}

#[test]
fn qwot_sets_nm_through_the_design() {
    let mut d = doc();
    d.apply(Edit::SetQwot {
        layer: 0,
        qwot: 1.0,
    })
    .unwrap();
    // d = λ/(4n) = 550/8.
    assert!(
        (d.design.layers[0].nm.get() - 550.0 / 8.0).abs() < 1e-9,
        "{:?}",
        nms(&d)
    );
    assert!(
        (d.design.layer_qwot(1).unwrap() - 1.0).abs() < 1e-12,
        "round trip"
    );
    assert!(
        d.apply(Edit::SetQwot {
            layer: 0,
            qwot: -2.0
        })
        .is_err(),
        "negative"
    );
}

#[test]
fn insert_duplicate_remove_move_scale() {
    let mut d = doc();
    d.apply(Edit::InsertLayer {
        at: 3,
        layer: Layer::new("L", Nm::new(5.0).unwrap()),
    })
    .unwrap();
    assert_eq!(nms(&d), [10.0, 20.0, 30.0, 5.0], "append");
    d.apply(Edit::DuplicateLayer(0)).unwrap();
    assert_eq!(nms(&d), [10.0, 10.0, 20.0, 30.0, 5.0], "duplicate");
    d.apply(Edit::RemoveLayers(vec![4, 0, 0])).unwrap();
    assert_eq!(
        nms(&d),
        [10.0, 20.0, 30.0],
        "remove, duplicates in the list ignored"
    );
    d.apply(Edit::MoveLayer { from: 0, to: 2 }).unwrap();
    assert_eq!(nms(&d), [20.0, 30.0, 10.0], "move");
    d.apply(Edit::ScaleLayers {
        layers: vec![0, 2],
        factor: 1.5,
    })
    .unwrap();
    assert_eq!(nms(&d), [30.0, 30.0, 15.0], "scale");
    for f in [0.0, -1.0, f64::NAN] {
        assert!(
            d.apply(Edit::ScaleLayers {
                layers: vec![0],
                factor: f
            })
            .is_err(),
            "{f}"
        );
    }
    assert!(
        d.apply(Edit::RemoveLayers(vec![0, 9])).is_err(),
        "out of range"
    );
    assert_eq!(d.design.layers.len(), 3, "nothing removed on refusal");
    assert!(
        d.apply(Edit::InsertLayer {
            at: 0,
            layer: Layer::new("Unobtainium", Nm::ZERO)
        })
        .is_err(),
        "unknown material"
    );
}

#[test]
fn media_and_reference_are_checked() {
    let mut d = doc();
    d.apply(Edit::SetSubstrate("N-BK7".into())).unwrap();
    assert_eq!(d.design.substrate, "N-BK7", "built-in");
    let e = d
        .apply(Edit::SetExit("Nope".into()))
        .unwrap_err()
        .to_string();
    assert!(e.starts_with("exit medium: unknown material"), "{e}");
    assert!(d.apply(Edit::SetSubstrateMm(Some(0.0))).is_err(), "zero mm");
    d.apply(Edit::SetSubstrateMm(Some(2.0))).unwrap();
    assert_eq!(d.design.substrate_mm, Some(2.0), "mm");
    assert!(
        d.apply(Edit::SetReference(f64::NAN)).is_err(),
        "NaN reference"
    );
}

#[test]
fn revision_and_dirty_follow_changes() {
    let mut d = doc();
    assert!(!d.is_dirty(), "fresh");
    let r = d.revision;
    d.apply(Edit::ToggleLock(0)).unwrap();
    assert!(d.is_dirty() && d.revision > r, "changed");
    assert!(d.title().contains('•'), "{}", d.title());
    d.apply(Command::Undo).unwrap();
    assert!(!d.is_dirty(), "undone");
    d.apply(Command::Redo).unwrap();
    assert!(d.design.layers[0].locked, "redone");
}

#[test]
fn a_result_is_adopted_only_for_the_revision_it_was_computed_from() {
    let mut d = doc();
    let from = d.revision();
    let mut better = d.design().clone();
    better.layers[0].nm = Nm::new(11.0).unwrap();
    d.apply(Edit::ToggleLock(2)).unwrap();
    d.commit();
    let e = d
        .apply(Edit::Adopt {
            from_revision: from,
            design: Box::new(better.clone()),
        })
        .unwrap_err();
    assert!(matches!(e, CommandError::Stale { .. }), "{e}");
    assert_eq!(nms(&d), [10.0, 20.0, 30.0], "the edited design is kept");
    d.apply(Edit::Adopt {
        from_revision: d.revision(),
        design: Box::new(better),
    })
    .unwrap();
    assert_eq!(nms(&d), [11.0, 20.0, 30.0], "adopted");
    d.commit();
    d.apply(Command::Undo).unwrap();
    assert_eq!(nms(&d), [10.0, 20.0, 30.0], "one undo step takes it back");
    assert!(
        d.design().layers[2].locked,
        "to the design before the result"
    );
}

#[test]
fn save_open_and_a_malformed_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("a.ron");
    let mut d = doc();
    assert!(
        matches!(d.apply(Command::Save), Err(CommandError::NoPath)),
        "no path"
    );
    d.apply(Edit::SetName("Saved one".into())).unwrap();
    d.apply(Command::SaveAs(path.clone())).unwrap();
    assert!(!d.is_dirty(), "saved");
    assert_eq!(file::load(&path).unwrap(), d.design, "on disk");

    let bad = dir.path().join("bad.ron");
    std::fs::write(&bad, "(format: 1,\n name: 3,\n)").unwrap();
    let before = d.design.clone();
    let e = d.apply(Command::Open(bad)).unwrap_err().to_string();
    assert!(e.contains("line 2"), "{e}");
    assert_eq!(d.design, before, "untouched");
    assert_eq!(d.path.as_deref(), Some(path.as_path()), "path kept");

    d.apply(Command::New).unwrap();
    assert!(d.design.layers.is_empty() && d.path.is_none(), "new");
    d.apply(Command::Open(path)).unwrap();
    assert_eq!(d.design.name, "Saved one", "reopened");
}

#[test]
fn materials_are_added_renamed_and_removed_safely() {
    let mut d = doc();
    let m = Material::user("M", Model::Constant { n: 1.7, k: 0.0 });
    d.apply(Edit::AddMaterial(m.clone())).unwrap();
    assert!(d.apply(Edit::AddMaterial(m)).is_err(), "duplicate");
    let e = d
        .apply(Edit::RemoveMaterial("H".into()))
        .unwrap_err()
        .to_string();
    assert!(e.contains("layer 1") && e.contains("layer 3"), "{e}");
    d.apply(Edit::ReplaceMaterial {
        old_name: "H".into(),
        material: Material::user("Hi", Model::Constant { n: 2.1, k: 0.0 }),
    })
    .unwrap();
    assert_eq!(d.design.layers[0].material, "Hi", "layers follow a rename");
    d.apply(Edit::RemoveMaterial("M".into())).unwrap();
    assert_eq!(d.design.materials.len(), 2, "removed");
}
