//! Targets and optimisation: merit, refinement, needle insertion, cancel, bad input, and the
//! `optimize` command end to end.

mod common;

use common::stackwise;

use std::ops::ControlFlow;

use stackwise::analysis::spectrum;
use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind, file};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optimize::{
    OptimizeError, Options, Stage, StopReason, evaluate_targets, needle, refine,
};

fn constant(name: &str, n: f64, k: f64) -> Material {
    Material::user(name, Model::Constant { n, k })
}

fn target(kind: TargetKind, goal: f64, from_nm: f64, to_nm: f64) -> Target {
    Target {
        quantity: Quantity::R,
        pol: Pol::Mean,
        aoi_deg: 0.0,
        from_nm,
        to_nm,
        step_nm: 10.0,
        kind,
        goal,
        tolerance: 0.0,
        weight: 1.0,
        measure: stackwise::design::Measure::Spectral,
    }
}

/// Glass 1.52 with H = 2.35, L = 1.38 (lossless, non-dispersive), in air.
fn base(layers: &[(&str, f64)]) -> Design {
    let mut d = Design::new_empty("test");
    d.substrate = "G".into();
    d.materials = vec![
        constant("G", 1.52, 0.0),
        constant("H", 2.35, 0.0),
        constant("L", 1.38, 0.0),
    ];
    d.layers = layers
        .iter()
        .map(|&(m, nm)| Layer::new(m, Nm::new(nm).expect("valid test input")))
        .collect();
    d
}

fn go(_: &stackwise::optimize::Progress<'_>) -> ControlFlow<()> {
    ControlFlow::Continue(())
}

#[test]
fn merit_is_zero_when_every_target_is_met() {
    // Bare glass n = 1.52: R = ((1.52 − 1)/(1.52 + 1))² = 0.042580 at normal incidence
    // (Fresnel, Born & Wolf §1.5), T = 1 − R.
    let mut d = base(&[]);
    let r = (0.52f64 / 2.52).powi(2);
    d.targets = vec![
        target(TargetKind::AtMost, 0.05, 400.0, 700.0),
        target(TargetKind::AtLeast, 0.04, 400.0, 700.0),
        Target {
            quantity: Quantity::T,
            tolerance: 1e-9,
            ..target(TargetKind::Equal, 1.0 - r, 500.0, 500.0)
        },
    ];
    let e = evaluate_targets(&d).expect("valid test input");
    assert!(e.merit <= 0.0, "every target met");
    assert_eq!(e.passed, 3, "all pass");
    assert!((e.targets[0].values[0] - r).abs() < 1e-12, "Fresnel value");
    // One target missed by a known amount: R at most 0.03 misses by r − 0.03 everywhere, so
    // the merit (rms over equally weighted samples of two targets) is (r − 0.03)/√2.
    d.targets[1] = target(TargetKind::AtMost, 0.03, 400.0, 700.0);
    let e = evaluate_targets(&d).expect("valid test input");
    assert_eq!(e.passed, 2, "one fails");
    assert!(!e.targets[1].pass, "the missed one");
    let n0 = e.targets[0].values.len() as f64;
    let expect = ((r - 0.03).powi(2) * n0 / (2.0 * n0 + 1.0)).sqrt();
    assert!((e.merit - expect).abs() < 1e-12, "{} vs {expect}", e.merit);
}

/// The targets of a known design: its own R and T (s and p) at 0° and 50°, equal, no
/// tolerance. The known design meets them exactly.
fn self_targets(d: &Design) -> Vec<Target> {
    let mut out = Vec::new();
    let wl: Vec<f64> = (0..=30).map(|i| 400.0 + 10.0 * f64::from(i)).collect();
    for aoi_deg in [0.0, 50.0] {
        let s = spectrum(
            &d.resolve().expect("valid test input"),
            &wl,
            aoi_deg,
            Side::Front,
        )
        .expect("valid test input");
        for (i, &w) in wl.iter().enumerate() {
            for (quantity, pol, v) in [
                (Quantity::R, Pol::S, s.curves.r_s[i]),
                (Quantity::R, Pol::P, s.curves.r_p[i]),
                (Quantity::T, Pol::S, s.curves.t_s[i]),
            ] {
                out.push(Target {
                    quantity,
                    pol,
                    aoi_deg,
                    from_nm: w,
                    to_nm: w,
                    step_nm: 0.0,
                    kind: TargetKind::Equal,
                    goal: v,
                    tolerance: 0.0,
                    weight: 1.0,
                    measure: stackwise::design::Measure::Spectral,
                });
            }
        }
    }
    out
}

fn recovers(mut known: Design) {
    known.targets = self_targets(&known);
    assert!(
        evaluate_targets(&known).expect("valid test input").merit < 1e-12,
        "known design meets its own targets"
    );
    let mut start = known.clone();
    let factors = [1.03, 0.97, 1.04, 0.96, 1.02];
    for (l, f) in start.layers.iter_mut().zip(factors.iter().cycle()) {
        l.nm = Nm::new(l.nm.get() * f).expect("valid test input");
    }
    let out = refine(&start, &Options::default(), go).expect("valid test input");
    for (a, b) in out.design.layers.iter().zip(&known.layers) {
        assert!(
            (a.nm.get() - b.nm.get()).abs() < 0.1,
            "recovered {} nm, known {} nm",
            a.nm.get(),
            b.nm.get()
        );
    }
    assert!(out.merit < 1e-6, "merit {}", out.merit);
}

#[test]
fn refinement_recovers_a_perturbed_known_design() {
    recovers(base(&[("H", 25.0), ("L", 40.0), ("H", 110.0), ("L", 90.0)]));
}

#[test]
fn refinement_recovers_through_a_thick_absorbing_substrate() {
    let mut d = base(&[("H", 60.0), ("L", 140.0), ("H", 35.0), ("L", 80.0)]);
    d.materials[0] = constant("G", 1.52, 2e-7);
    d.materials[1] = constant("H", 2.1, 0.01);
    d.substrate_mm = Some(1.0);
    recovers(d);
}

#[test]
fn locked_layers_stay_and_minimum_holds() {
    let mut d = base(&[("H", 30.0), ("L", 6.0), ("H", 100.0), ("L", 95.0)]);
    d.layers[2].locked = true;
    d.targets = vec![target(TargetKind::AtMost, 0.0, 420.0, 680.0)];
    let opts = Options {
        min_nm: 10.0,
        ..Options::default()
    };
    let out = refine(&d, &opts, go).expect("valid test input");
    assert_eq!(out.design.layers[2], d.layers[2], "locked layer untouched");
    assert!(
        out.design.layers.iter().all(|l| l.nm.get() >= 10.0 - 1e-12),
        "minimum thickness kept"
    );
    assert!(out.merit < out.start_merit, "improved");
}

#[test]
fn needle_insertion_never_makes_the_merit_worse() {
    // Visible AR from one quarter-wave low-index layer (the benchmark's start).
    let mut d = base(&[("L", 550.0 / 4.0 / 1.38)]);
    d.targets = vec![target(TargetKind::AtMost, 0.0, 400.0, 700.0)];
    let refined = refine(&d, &Options::default(), go).expect("valid test input");
    let opts = Options {
        materials: vec!["H".into(), "L".into()],
        max_layers: 8,
        ..Options::default()
    };
    let mut accepted = Vec::new();
    let out = needle(&d, &opts, |p| {
        if p.stage == Stage::Needle {
            accepted.push(p.merit);
        }
        ControlFlow::Continue(())
    })
    .expect("valid test input");
    assert!(
        out.merit <= refined.merit + 1e-15,
        "never worse than refinement alone"
    );
    assert!(
        accepted.windows(2).all(|w| w[1] < w[0]),
        "each insertion lowers the merit: {accepted:?}"
    );
    assert!(
        out.merit < 0.5 * refined.merit,
        "layers help here: {} → {} with {} layers, {} insertions ({})",
        refined.merit,
        out.merit,
        out.design.layers.len(),
        out.insertions,
        out.reason
    );
    assert!(out.design.layers.len() <= 8, "layer limit");
    assert!(
        out.design.layers.iter().all(|l| l.nm.get() >= 5.0 - 1e-12),
        "minimum thickness kept"
    );
    assert!(
        out.design
            .layers
            .windows(2)
            .all(|w| w[0].material != w[1].material),
        "neighbours of one material merged"
    );
    let check = evaluate_targets(&out.design).expect("valid test input");
    assert!(
        (check.merit - out.merit).abs() < 1e-12,
        "reported merit is the design's"
    );
}

#[test]
fn needle_leaves_a_two_layer_local_minimum() {
    // The shipped AR start (TiO2 / SiO2 on N-BK7, 420–680 nm) refines to a thin TiO2 under a
    // thick SiO2, where no needle of either material lowers the merit; adding layers on top
    // (gradual evolution) must carry the search on to a clearly better design.
    let mut d = file::load(&common::here("designs/visible-ar-start.ron")).expect("shipped design");
    for t in &mut d.targets {
        t.step_nm = 20.0;
    }
    let opts = Options {
        materials: vec!["TiO2".into(), "SiO2".into()],
        max_layers: 6,
        ..Options::default()
    };
    let refined = refine(&d, &opts, go).expect("valid test input");
    let out = needle(&d, &opts, go).expect("valid test input");
    assert!(
        out.merit < 0.25 * refined.merit,
        "needles and growth get past the local minimum: {} → {} with {} layers ({})",
        refined.merit,
        out.merit,
        out.design.layers.len(),
        out.reason
    );
    assert!(
        out.design.layers.iter().all(|l| l.nm.get() >= 5.0 - 1e-12),
        "minimum thickness kept"
    );
}

#[test]
fn cancel_keeps_the_best_design_so_far() {
    let mut d = base(&[("H", 20.0), ("L", 30.0), ("H", 80.0), ("L", 70.0)]);
    d.targets = vec![target(TargetKind::AtMost, 0.0, 420.0, 680.0)];
    let before = d.clone();
    let mut seen = Vec::new();
    let out = refine(&d, &Options::default(), |p| {
        seen.push((p.merit, p.best.clone()));
        if seen.len() >= 3 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    })
    .expect("valid test input");
    assert_eq!(out.reason, StopReason::Cancelled, "stopped on request");
    assert_eq!(d, before, "input untouched");
    let (best_merit, best) = seen.last().expect("valid test input");
    assert_eq!(&out.design, best, "the best design reported so far");
    assert!(
        out.merit <= *best_merit && out.merit <= out.start_merit,
        "best kept"
    );
    // Cancelled at once: Ok, the start design back.
    let out =
        needle(&d, &Options::default(), |_| ControlFlow::Break(())).expect("valid test input");
    assert_eq!(out.reason, StopReason::Cancelled, "cancelled at once");
    assert_eq!(out.design.layers, d.layers, "nothing changed");
}

#[test]
fn bad_input_is_refused_with_a_clear_message() {
    let ok = || {
        let mut d = base(&[("H", 20.0), ("L", 90.0)]);
        d.targets = vec![target(TargetKind::AtMost, 0.0, 420.0, 680.0)];
        d
    };
    let msg = |d: &Design, o: &Options| refine(d, o, go).unwrap_err().to_string();
    let o = Options::default();

    let mut d = ok();
    d.targets.clear();
    assert!(msg(&d, &o).contains("no targets"), "{}", msg(&d, &o));

    let mut d = ok();
    d.targets
        .push(target(TargetKind::AtLeast, 0.5, 500.0, 500.0));
    let e = msg(&d, &o);
    assert!(
        e.contains("targets 1 and 2 contradict") && e.contains("500"),
        "{e}"
    );

    let mut d = ok();
    d.targets = vec![
        target(TargetKind::AtLeast, 0.6, 500.0, 500.0),
        Target {
            quantity: Quantity::T,
            ..target(TargetKind::AtLeast, 0.6, 500.0, 500.0)
        },
    ];
    assert!(msg(&d, &o).contains("R + T + A = 1"), "{}", msg(&d, &o));

    let mut d = ok();
    d.targets[0].weight = 0.0;
    assert!(msg(&d, &o).contains("weight"), "{}", msg(&d, &o));

    let mut d = ok();
    for l in &mut d.layers {
        l.locked = true;
    }
    assert_eq!(
        refine(&d, &o, go).unwrap_err(),
        OptimizeError::AllLocked,
        "all layers locked"
    );

    let d = ok();
    let big = Options {
        min_nm: 200.0,
        ..Options::default()
    };
    let e = msg(&d, &big);
    assert!(
        e.contains("200 nm is larger than every unlocked layer"),
        "{e}"
    );

    let mut d = ok();
    d.materials[1] = Material::user(
        "H",
        Model::Table {
            rows: vec![(500.0, 2.0, 0.0), (800.0, 2.1, 0.0)],
        },
    );
    let e = msg(&d, &o);
    assert!(e.contains("target 1") && e.contains("\"H\""), "{e}");

    let d = ok();
    let unknown = Options {
        materials: vec!["Unobtainium".into()],
        ..Options::default()
    };
    let e = needle(&d, &unknown, go).unwrap_err().to_string();
    assert!(e.contains("Unobtainium"), "{e}");

    let nan = Options {
        min_nm: f64::NAN,
        ..Options::default()
    };
    assert!(
        msg(&ok(), &nan).contains("minimum thickness"),
        "NaN minimum"
    );
}

#[test]
fn command_line_end_to_end() {
    let dir = tempfile::tempdir().expect("valid test input");
    let mut d = base(&[("L", 99.6)]);
    d.name = "Visible AR".into();
    d.targets = vec![target(TargetKind::AtMost, 0.0, 400.0, 700.0)];
    let input = dir.path().join("start.ron");
    file::save(&input, &d).expect("valid test input");
    let out_path = dir.path().join("new.ron");
    let out = stackwise()
        .args([
            "optimize",
            input.to_str().expect("valid test input"),
            "--out",
        ])
        .arg(&out_path)
        .args(["--needle", "--materials", "H,L", "--max-layers", "6"])
        .output()
        .expect("valid test input");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "{stderr}");
    assert!(
        stderr.contains("merit"),
        "progress on standard error: {stderr}"
    );
    let new = file::load(&out_path).expect("valid test input");
    let e = evaluate_targets(&new).expect("valid test input");
    assert!(
        stdout.contains(&format!("merit {:.6}", e.merit))
            && stdout.contains(&format!("layers {}", new.layers.len()))
            && stdout.contains("mean deviation"),
        "{stdout}"
    );
    assert!(
        new.layers.len() > 1 && new.layers.len() <= 6,
        "layers inserted"
    );
    assert_eq!(
        file::load(&input).expect("valid test input"),
        d,
        "input untouched"
    );

    // Bad input: non-zero exit, a message naming the culprit, no file written.
    let fail = |extra: &[&str], path: &std::path::Path| {
        let o = stackwise()
            .args([
                "optimize",
                path.to_str().expect("valid test input"),
                "--out",
            ])
            .arg(dir.path().join("never.ron"))
            .args(extra)
            .output()
            .expect("valid test input");
        assert!(!o.status.success(), "{extra:?} should fail");
        assert!(!dir.path().join("never.ron").exists(), "nothing written");
        String::from_utf8_lossy(&o.stderr).into_owned()
    };
    let e = fail(&["--needle", "--materials", "H,Nope"], &input);
    assert!(e.contains("\"Nope\""), "{e}");
    let e = fail(&["--min-nm", "500"], &input);
    assert!(e.contains("larger than every unlocked layer"), "{e}");
    let mut locked = d.clone();
    locked.layers[0].locked = true;
    let locked_path = dir.path().join("locked.ron");
    file::save(&locked_path, &locked).expect("valid test input");
    let e = fail(&[], &locked_path);
    assert!(e.contains("every layer is locked"), "{e}");
    let o = stackwise()
        .args([
            "optimize",
            input.to_str().expect("valid test input"),
            "--out",
        ])
        .arg(&input)
        .output()
        .expect("valid test input");
    assert!(!o.status.success(), "refuses to overwrite the input");
    assert_eq!(
        file::load(&input).expect("valid test input"),
        d,
        "input untouched"
    );
}
