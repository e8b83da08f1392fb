//! GDD and colour targets: values equal the analysis views', derivatives, refinement toward
//! the goal, old files, bad input.

mod common;

use std::ops::ControlFlow;

use stackwise::analysis::color::{Illuminant, Observer, design_colour};
use stackwise::analysis::phase::phase_spectrum;
use stackwise::design::{
    ColourCoordinate, ColourLight, ColourObserver, Design, Layer, Measure, Nm, Pol, Quantity,
    Target, TargetKind, file,
};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optimize::{Evaluator, OptimizeError, Options, evaluate_targets, refine};

fn constant(name: &str, n: f64) -> Material {
    Material::user(name, Model::Constant { n, k: 0.0 })
}

/// Glass 1.52 with H = 2.35, L = 1.45 (lossless, non-dispersive), in air.
fn base(layers: &[(&str, f64)]) -> Design {
    let mut d = Design::new_empty("test");
    d.substrate = "G".into();
    d.materials = vec![
        constant("G", 1.52),
        constant("H", 2.35),
        constant("L", 1.45),
    ];
    d.layers = layers
        .iter()
        .map(|&(m, nm)| Layer::new(m, Nm::new(nm).expect("valid test input")))
        .collect();
    d
}

fn target(measure: Measure, kind: TargetKind, goal: f64, tolerance: f64) -> Target {
    Target {
        quantity: Quantity::R,
        pol: Pol::Mean,
        aoi_deg: 0.0,
        from_nm: 790.0,
        to_nm: 810.0,
        step_nm: 10.0,
        kind,
        goal,
        tolerance,
        weight: 1.0,
        measure,
    }
}

fn colour(coordinate: ColourCoordinate, goal: f64, tolerance: f64) -> Target {
    target(
        Measure::Colour {
            coordinate,
            illuminant: ColourLight::D65,
            observer: ColourObserver::TwoDeg,
        },
        TargetKind::Equal,
        goal,
        tolerance,
    )
}

/// (HL)^n H quarter waves at `lambda_nm`.
fn mirror(lambda_nm: f64, pairs: usize) -> Design {
    let (h, l) = (lambda_nm / 4.0 / 2.35, lambda_nm / 4.0 / 1.45);
    let mut layers = vec![("H", h)];
    for _ in 0..pairs {
        layers.push(("L", l));
        layers.push(("H", h));
    }
    base(&layers)
}

/// A four-layer broadband AR start with targets a* = 0 ± 2, b* = −5 ± 2 and `third`.
fn neutral_bluish_ar(third: Target) -> Design {
    let mut d = base(&[("H", 13.0), ("L", 33.0), ("H", 114.0), ("L", 94.0)]);
    d.targets = vec![
        colour(ColourCoordinate::A, 0.0, 2.0),
        colour(ColourCoordinate::B, -5.0, 2.0),
        third,
    ];
    d
}

fn go(_: &stackwise::optimize::Progress<'_>) -> ControlFlow<()> {
    ControlFlow::Continue(())
}

#[test]
fn target_values_equal_the_analysis_views() {
    let mut d = mirror(800.0, 3);
    d.targets = vec![
        target(Measure::Gdd, TargetKind::AtMost, -50.0, 0.0),
        Target {
            pol: Pol::S,
            aoi_deg: 30.0,
            ..colour(ColourCoordinate::A, 0.0, 2.0)
        },
        Target {
            quantity: Quantity::T,
            aoi_deg: 30.0,
            ..colour(ColourCoordinate::B, 0.0, 2.0)
        },
    ];
    let e = evaluate_targets(&d).expect("valid test input");
    let r = d.resolve().expect("valid test input");
    let p = phase_spectrum(&r, &[790.0, 800.0, 810.0], 0.0, Side::Front).expect("valid");
    for i in 0..3 {
        let mean = 0.5 * (p.r_s.gdd_fs2[i] + p.r_p.gdd_fs2[i]);
        assert!(
            (e.targets[0].values[i] - mean).abs() < 1e-9,
            "{:?}",
            e.targets[0]
        );
    }
    // Mean of s and p at normal incidence: a quarter-wave stack's GDD vanishes at its centre
    // wavelength (the phase is odd in ω about ω₀ for non-dispersive layers; Macleod, Thin-Film
    // Optical Filters, ch. on ultrafast coatings (from memory)).
    assert!(e.targets[0].values[1].abs() < 0.5, "{:?}", e.targets[0]);
    // Colour: the library's own view, same angle, illuminant and observer.
    let c = design_colour(&r, 30.0, Illuminant::D65, Observer::Cie1931TwoDeg).expect("valid");
    assert!((e.targets[2].values[0] - c.transmitted.lab.b).abs() < 1e-9);
    assert_eq!(e.targets[2].values.len(), 1);
    // s-polarised: the view gives the mean, so compute s through the public colour sums.
    let s = stackwise::analysis::spectrum(
        &r,
        &stackwise::analysis::color::color_wavelengths_nm(),
        30.0,
        Side::Front,
    )
    .expect("valid");
    let lab_s = stackwise::analysis::color::colour_of(
        &s.curves.r_s,
        Illuminant::D65,
        Observer::Cie1931TwoDeg,
    )
    .expect("valid")
    .lab;
    assert!((e.targets[1].values[0] - lab_s.a).abs() < 1e-9);
    assert!(
        (lab_s.a - c.reflected.lab.a).abs() > 1e-3,
        "s differs from the mean"
    );
}

#[test]
fn merit_gradient_matches_a_finer_difference_of_the_merit() {
    // Both kinds active (far from their goals), so every row counts.
    let mut d = base(&[("H", 30.0), ("L", 90.0), ("H", 60.0), ("L", 95.0)]);
    d.targets = vec![
        Target {
            from_nm: 540.0,
            to_nm: 560.0,
            ..target(Measure::Gdd, TargetKind::Equal, 40.0, 0.0)
        },
        colour(ColourCoordinate::A, 20.0, 0.0),
        colour(ColourCoordinate::B, -20.0, 0.0),
    ];
    let ev = Evaluator::new(&d, &[]).expect("valid test input");
    let layers = ev.layers_of(&d);
    let mut grad = Vec::new();
    let merit = ev.merit_gradient(&layers, &mut grad);
    assert!(merit > 0.0);
    // ∂MF²/∂d by a central difference of the merit with a step 10× finer than the rows'.
    let h = 1e-3;
    for k in 0..layers.len() {
        let mut plus = layers.clone();
        let mut minus = layers.clone();
        plus[k].1 += h;
        minus[k].1 -= h;
        let fd = (ev.merit(&plus).powi(2) - ev.merit(&minus).powi(2)) / (2.0 * h);
        assert!(
            (grad[k] - fd).abs() <= 1e-4 * fd.abs().max(grad[k].abs()) + 1e-12,
            "layer {k}: {} vs {fd}",
            grad[k]
        );
    }
}

#[test]
fn refining_a_mirror_moves_gdd_toward_the_goal_and_keeps_it_reflecting() {
    // A quarter-wave stack sits where GDD is stationary in every thickness (its gradient there
    // is below 1e-7 fs²/nm), so start from one whose top layer is 20 % thick.
    let mut d = mirror(800.0, 6);
    let top = d.layers.len() - 1;
    d.layers[top].nm = Nm::new(d.layers[top].nm.get() * 1.2).expect("valid");
    d.targets = vec![
        target(Measure::Gdd, TargetKind::AtMost, -50.0, 0.0),
        target(Measure::Spectral, TargetKind::AtLeast, 0.99, 0.0),
    ];
    let before = evaluate_targets(&d).expect("valid test input");
    let out = refine(
        &d,
        &Options {
            max_iterations: 60,
            ..Options::default()
        },
        go,
    )
    .expect("valid test input");
    let after = evaluate_targets(&out.design).expect("valid test input");
    let worst_gdd = |e: &stackwise::optimize::Evaluation| {
        e.targets[0].values.iter().copied().fold(f64::MIN, f64::max)
    };
    assert!(
        worst_gdd(&after) < worst_gdd(&before) - 10.0,
        "{} → {}",
        worst_gdd(&before),
        worst_gdd(&after)
    );
    let min_r = after.targets[1].values.iter().copied().fold(1.0, f64::min);
    assert!(min_r > 0.985, "R fell to {min_r}");
    assert!(out.merit < out.start_merit);
}

#[test]
fn refining_an_ar_lands_its_reflected_colour_on_the_goal() {
    // Ask for a neutral-bluish reflection, a* 0 ± 2 and b* −5 ± 2, while R stays low over the
    // visible.
    let d = neutral_bluish_ar(Target {
        from_nm: 450.0,
        to_nm: 650.0,
        step_nm: 50.0,
        weight: 0.2,
        ..target(Measure::Spectral, TargetKind::AtMost, 0.01, 0.0)
    });
    let start = evaluate_targets(&d).expect("valid test input");
    assert!(
        !(start.targets[0].pass && start.targets[1].pass),
        "the start must miss the colour: {:?}",
        start.targets
    );
    let out = refine(&d, &Options::default(), go).expect("valid test input");
    let e = evaluate_targets(&out.design).expect("valid test input");
    let (a, b) = (e.targets[0].values[0], e.targets[1].values[0]);
    assert!(e.targets[0].pass && e.targets[1].pass, "a* {a}, b* {b}");
    assert!(a.abs() <= 2.0 + 1e-9 && (b + 5.0).abs() <= 2.0 + 1e-9);
}

#[test]
fn an_old_design_file_loads_with_plain_targets_and_saves_without_the_new_field() {
    // A shipped design written before GDD and colour targets existed: no `measure` field.
    let text = include_str!("../designs/visible-ar-start.ron");
    assert!(!text.contains("measure"));
    let d = file::from_ron_str(text).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(d.targets.len(), 2);
    assert!(d.targets.iter().all(|t| t.measure == Measure::Spectral));
    assert!((d.targets[1].goal - 0.005).abs() < 1e-15);
    // Plain targets still save without it, so older versions read the file.
    assert!(!file::to_ron_string(&d).expect("saves").contains("measure"));
    // New kinds round-trip.
    let mut n = d.clone();
    n.targets[0] = colour(ColourCoordinate::B, -5.0, 2.0);
    let back = file::from_ron_str(&file::to_ron_string(&n).expect("saves")).expect("loads");
    assert_eq!(back.targets, n.targets);
}

#[test]
fn bad_gdd_and_colour_targets_are_refused_by_name() {
    let msg = |t: Target| -> String {
        let mut d = mirror(800.0, 1);
        d.targets = vec![t];
        evaluate_targets(&d).expect_err("bad input").to_string()
    };
    let e = msg(target(Measure::Gdd, TargetKind::Equal, f64::NAN, 20.0));
    assert!(e.contains("target 1") && e.contains("GDD goal"), "{e}");
    let e = msg(Target {
        quantity: Quantity::A,
        ..colour(ColourCoordinate::A, 0.0, 2.0)
    });
    assert!(e.contains("colour") && e.contains("absorptance"), "{e}");
    let e = msg(colour(ColourCoordinate::L, 120.0, 2.0));
    assert!(e.contains("L*") && e.contains("120"), "{e}");
    let e = msg(target(Measure::Gdd, TargetKind::Equal, 0.0, -1.0));
    assert!(e.contains("tolerance") && e.contains("fs²"), "{e}");

    // An unknown illuminant in a file names itself.
    let text = include_str!("../designs/visible-ar-start.ron").replace(
        "weight: 0.5)",
        "weight: 0.5, measure: Colour(coordinate: A, illuminant: F11, observer: TwoDeg))",
    );
    let e = file::from_ron_str(&text)
        .expect_err("unknown illuminant")
        .to_string();
    assert!(e.contains("F11"), "{e}");

    // A colour target needs every material over the CIE range.
    let mut d = mirror(800.0, 1);
    d.materials.push(Material {
        range_nm: Some((500.0, 2000.0)),
        ..constant("Narrow", 1.8)
    });
    d.layers
        .push(Layer::new("Narrow", Nm::new(50.0).expect("valid")));
    d.targets = vec![colour(ColourCoordinate::A, 0.0, 2.0)];
    match evaluate_targets(&d) {
        Err(OptimizeError::OutsideData {
            target, material, ..
        }) => assert!(target == 1 && material == "Narrow"),
        other => panic!("{other:?}"),
    }
}

#[test]
fn the_command_line_optimises_and_lists_gdd_and_colour_targets() {
    let dir = tempfile::tempdir().expect("valid test input");
    let d = neutral_bluish_ar(Target {
        from_nm: 540.0,
        to_nm: 560.0,
        ..target(Measure::Gdd, TargetKind::AtMost, 50.0, 0.0)
    });
    let input = dir.path().join("start.ron");
    file::save(&input, &d).expect("valid test input");
    let (info, _) = common::ok(&["info", input.to_str().expect("utf-8")]);
    assert!(
        info.contains("1. reflected a* (mean) = 0 ± 2 (D65, 2°) at 0°, 360–780 nm (weight 1)")
            && info.contains("3. GDD of R (mean) ≤ 50 fs² at 0°, 540–560 nm"),
        "{info}"
    );
    let out_path = dir.path().join("new.ron");
    let (stdout, _) = common::ok(&[
        "optimize",
        input.to_str().expect("utf-8"),
        "--out",
        out_path.to_str().expect("utf-8"),
    ]);
    let new = file::load(&out_path).expect("written");
    let e = evaluate_targets(&new).expect("valid");
    assert!(e.targets[0].pass && e.targets[1].pass, "{:?}", e.targets);
    assert!(
        stdout.contains("target 2: reflected b* (mean) = -5 ± 2 (D65, 2°) at 0°, 360–780 nm — met")
            && stdout.contains("CIELAB units"),
        "{stdout}"
    );
    assert_eq!(new.targets, d.targets, "targets kept as written");
}
