//! Fitting a design to a measured run: thicknesses and index scales recovered from computed
//! "measurements", noise bounded by the linearised least-squares covariance, bad input, the
//! `fit` command.

#![allow(
    clippy::float_cmp,
    clippy::unwrap_used,
    reason = "a locked thickness must come back exactly; test set-up may panic"
)]

use std::fmt::Write as _;
use std::ops::ControlFlow;
use std::path::PathBuf;

use nalgebra::DMatrix;
use rand_distr::{Distribution as _, Normal};
use rand_pcg::Pcg64Mcg;
use rand_pcg::rand_core::SeedableRng as _;
use stackwise::analysis::measured::MeasuredCurve;
use stackwise::analysis::spectrum;
use stackwise::design::{Design, Layer, Nm, Quantity, file};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optimize::fit::{FitError, FitSettings, FitStop, fit};

mod common;

/// Six layers of constant indices 2.35 / 1.46 on 1.52 glass, thicknesses away from quarter
/// waves so no layer is degenerate with another.
fn design() -> Design {
    let mut d = Design::new_empty("Six layers");
    d.substrate = "G".into();
    d.materials = vec![
        Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
        Material::user("L", Model::Constant { n: 1.46, k: 0.0 }),
        Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
    ];
    for (m, nm) in [
        ("H", 41.0),
        ("L", 83.0),
        ("H", 67.0),
        ("L", 121.0),
        ("H", 29.0),
        ("L", 97.0),
    ] {
        d.layers.push(Layer::new(m, Nm::new(nm).unwrap()));
    }
    d
}

fn wavelengths() -> Vec<f64> {
    (0..=250).map(|i| 400.0 + 2.0 * f64::from(i)).collect()
}

/// The design's computed T at `wl` (the engine's spectrum, the same the window shows).
fn t_of(d: &Design, wl: &[f64]) -> Vec<f64> {
    spectrum(&d.resolve().unwrap(), wl, 0.0, Side::Front)
        .unwrap()
        .curves
        .t
}

fn measured(values: Vec<f64>) -> MeasuredCurve {
    MeasuredCurve {
        wavelength_nm: wavelengths(),
        value: values,
        ..MeasuredCurve::default()
    }
}

/// The design with each thickness changed by the given percentages.
fn perturbed(pcts: &[f64]) -> Design {
    let mut d = design();
    for (l, p) in d.layers.iter_mut().zip(pcts) {
        l.nm = Nm::new(l.nm.get() * (1.0 + p / 100.0)).unwrap();
    }
    d
}

const PCTS: [f64; 6] = [3.0, -2.0, 2.5, -3.0, 4.0, 1.5];

fn go(
    d: &Design,
    m: &MeasuredCurve,
    s: &FitSettings,
) -> Result<stackwise::optimize::fit::FitOutcome, FitError> {
    fit(d, m, s, |_| ControlFlow::Continue(()))
}

fn t_settings() -> FitSettings {
    FitSettings {
        quantity: Quantity::T,
        ..FitSettings::default()
    }
}

#[test]
fn thicknesses_are_recovered_from_an_exact_measurement() {
    let truth = perturbed(&PCTS);
    let m = measured(t_of(&truth, &wavelengths()));
    let f = go(&design(), &m, &t_settings()).unwrap();
    for (l, t) in f.layers.iter().zip(&truth.layers) {
        assert!(
            (l.fitted_nm - t.nm.get()).abs() < 0.1,
            "layer {}: fitted {} truth {}",
            l.layer,
            l.fitted_nm,
            t.nm.get()
        );
        let want_pct = 100.0 * (t.nm.get() / l.designed_nm - 1.0);
        assert!(
            (l.change_pct() - want_pct).abs() < 0.2,
            "layer {} %",
            l.layer
        );
    }
    assert!(
        f.rms_before > 0.003,
        "a visible difference first: {}",
        f.rms_before
    );
    assert!(f.rms_after < 1e-6, "then none: {}", f.rms_after);
    assert_eq!(f.stop, FitStop::Converged, "converged");
    assert_eq!((f.points_used, f.points_skipped), (251, 0), "all points");
    // The fitted design, computed afresh, gives the reported RMS.
    let t = t_of(&f.design, &wavelengths());
    let rms = (t
        .iter()
        .zip(&m.value)
        .map(|(a, b)| (a - b).powi(2))
        .sum::<f64>()
        / t.len() as f64)
        .sqrt();
    assert!(
        (rms - f.rms_after).abs() < 1e-12,
        "{rms} vs {}",
        f.rms_after
    );
}

#[test]
fn with_noise_the_fit_stays_within_the_noise_effect() {
    // Gaussian noise σ = 0.3 % T, seeded. The bound: to first order the fitted thicknesses
    // scatter about the truth with covariance σ² (JᵀJ)⁻¹ (linearised least squares, e.g.
    // Press et al., Numerical Recipes, 3rd ed., §15.5), J the Jacobian of T at the truth,
    // here taken by central differences of the engine's spectrum (independent of the fit's
    // analytic derivatives). Each layer must land within 5 standard deviations; and since the
    // truth itself has RMS = the noise's RMS, the best fit can be no worse than that.
    let sigma = 0.003;
    let truth = perturbed(&PCTS);
    let wl = wavelengths();
    let clean = t_of(&truth, &wl);
    let mut rng = Pcg64Mcg::seed_from_u64(20_261_202);
    let normal = Normal::new(0.0, sigma).unwrap();
    let noise: Vec<f64> = clean.iter().map(|_| normal.sample(&mut rng)).collect();
    let noisy: Vec<f64> = clean.iter().zip(&noise).map(|(c, n)| c + n).collect();
    let noise_rms = (noise.iter().map(|n| n * n).sum::<f64>() / noise.len() as f64).sqrt();
    let f = go(&design(), &measured(noisy), &t_settings()).unwrap();
    assert!(
        f.rms_after <= noise_rms + 1e-9,
        "fit {} vs noise {noise_rms}",
        f.rms_after
    );
    let p = truth.layers.len();
    let mut jac = DMatrix::zeros(wl.len(), p);
    for k in 0..p {
        let h = 1e-3;
        let at = |dx: f64| {
            let mut d = truth.clone();
            d.layers[k].nm = Nm::new(d.layers[k].nm.get() + dx).unwrap();
            t_of(&d, &wl)
        };
        let (up, down) = (at(h), at(-h));
        for i in 0..wl.len() {
            jac[(i, k)] = (up[i] - down[i]) / (2.0 * h);
        }
    }
    let cov = (jac.transpose() * &jac).try_inverse().unwrap() * (sigma * sigma);
    for (k, (l, t)) in f.layers.iter().zip(&truth.layers).enumerate() {
        let sd = cov[(k, k)].sqrt();
        let off = (l.fitted_nm - t.nm.get()).abs();
        assert!(sd > 0.0 && sd < 2.0, "layer {} σ {sd} nm", l.layer);
        assert!(
            off <= 5.0 * sd,
            "layer {}: off by {off} nm, σ {sd} nm",
            l.layer
        );
    }
}

#[test]
fn an_index_scale_is_recovered_when_enabled() {
    // The chamber made H with n 3 % high and the thicknesses off as before.
    let mut truth = perturbed(&PCTS);
    truth.materials[0].model = Model::Constant {
        n: 2.35 * 1.03,
        k: 0.0,
    };
    let m = measured(t_of(&truth, &wavelengths()));
    let s = FitSettings {
        index_scale: true,
        ..t_settings()
    };
    let f = go(&design(), &m, &s).unwrap();
    let scale_of = |name: &str| f.scales.iter().find(|x| x.material == name).unwrap().scale;
    assert!((scale_of("H") - 1.03).abs() < 1e-4, "H × {}", scale_of("H"));
    assert!((scale_of("L") - 1.0).abs() < 1e-4, "L × {}", scale_of("L"));
    for (l, t) in f.layers.iter().zip(&truth.layers) {
        assert!((l.fitted_nm - t.nm.get()).abs() < 0.1, "layer {}", l.layer);
    }
    assert!(f.rms_after < 1e-6, "{}", f.rms_after);
    // The fitted design carries the scaled H as a new material, and computes the same curve.
    let h = f
        .design
        .materials
        .iter()
        .find(|m| m.name == "H (fitted)")
        .expect("the fitted H");
    let Model::Constant { n, .. } = h.model else {
        panic!("same kind of model: {:?}", h.model)
    };
    assert!((n - 2.35 * 1.03).abs() < 3e-4, "n {n}");
    assert_eq!(f.design.layers[0].material, "H (fitted)", "layers use it");
    assert_eq!(design().layers[0].material, "H", "the input is untouched");
    let t = t_of(&f.design, &wavelengths());
    let worst = t
        .iter()
        .zip(&m.value)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(worst < 1e-5, "{worst}");
    // Without index scales the same data cannot be fitted as well.
    let plain = go(&design(), &m, &t_settings()).unwrap();
    assert!(plain.rms_after > 100.0 * f.rms_after, "{}", plain.rms_after);
}

#[test]
fn locked_layers_stay_and_cancel_keeps_the_best() {
    let truth = perturbed(&PCTS);
    let m = measured(t_of(&truth, &wavelengths()));
    let mut d = design();
    d.layers[2].locked = true;
    let f = go(&d, &m, &t_settings()).unwrap();
    assert_eq!(f.layers[2].fitted_nm, 67.0, "locked layer kept");
    assert!(f.layers[2].locked, "reported as locked");
    assert!(f.rms_after < f.rms_before, "the others still help");
    let mut calls = 0;
    let c = fit(&design(), &m, &t_settings(), |_| {
        calls += 1;
        if calls >= 3 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    })
    .unwrap();
    assert_eq!(c.stop, FitStop::Cancelled, "typed stop");
    assert!(c.rms_after <= c.rms_before, "best so far, never worse");
    assert_eq!(c.design.layers.len(), 6, "a whole design");
}

#[test]
fn bad_input_is_a_typed_error_naming_the_culprit() {
    let truth = perturbed(&PCTS);
    let m = measured(t_of(&truth, &wavelengths()));
    // A material with data only from 1000 to 2000 nm.
    let mut d = design();
    d.materials[1] = Material::user(
        "L",
        Model::Table {
            rows: vec![(1000.0, 1.46, 0.0), (2000.0, 1.45, 0.0)],
        },
    );
    let e = go(&d, &m, &t_settings()).unwrap_err();
    assert!(
        matches!(&e, FitError::NoOverlap { material, .. } if material == "L"),
        "{e:?}"
    );
    assert!(e.to_string().contains("400–900 nm"), "{e}");
    let mut d = design();
    for l in &mut d.layers {
        l.locked = true;
    }
    let e = go(&d, &m, &t_settings()).unwrap_err();
    assert_eq!(e, FitError::NothingFree { index_scale: false }, "{e}");
    assert!(e.to_string().contains("allow index scales"), "{e}");
    // With index scales allowed, all-locked layers still fit the two scales.
    let s = FitSettings {
        index_scale: true,
        ..t_settings()
    };
    assert!(go(&d, &m, &s).is_ok(), "scales are free");
    let e = go(
        &design(),
        &m,
        &FitSettings {
            quantity: Quantity::A,
            ..t_settings()
        },
    )
    .unwrap_err();
    assert!(matches!(e, FitError::BadQuantity { .. }), "{e:?}");
    let e = go(
        &design(),
        &m,
        &FitSettings {
            aoi_deg: 90.0,
            ..t_settings()
        },
    )
    .unwrap_err();
    assert!(e.to_string().contains("90"), "{e}");
    let few = MeasuredCurve {
        wavelength_nm: vec![500.0, 600.0],
        value: vec![0.9, 0.9],
        ..MeasuredCurve::default()
    };
    let e = go(&design(), &few, &t_settings()).unwrap_err();
    assert_eq!(e, FitError::TooFewPoints { points: 2, free: 6 }, "{e}");
    let e = go(&design(), &MeasuredCurve::default(), &t_settings()).unwrap_err();
    assert_eq!(e, FitError::EmptyMeasurement, "{e}");
}

fn cli(args: &[&str]) -> Result<(String, String), String> {
    common::run_in_process(args)
}

#[test]
fn the_fit_command_writes_the_fitted_design_and_the_changes() {
    let dir = tempfile::tempdir().unwrap();
    let path = |n: &str| -> PathBuf { dir.path().join(n) };
    let truth = perturbed(&PCTS);
    let wl = wavelengths();
    // Measured in percent, as a spectrophotometer writes it.
    let mut csv = String::from("wavelength_nm,T (%)\n");
    for (w, t) in wl.iter().zip(t_of(&truth, &wl)) {
        writeln!(csv, "{w},{}", 100.0 * t).unwrap();
    }
    std::fs::write(path("run.csv"), csv).unwrap();
    std::fs::write(path("design.ron"), file::to_ron_string(&design()).unwrap()).unwrap();
    let s = |p: PathBuf| p.to_string_lossy().into_owned();
    let (run_csv, design_ron, fitted) = (
        s(path("run.csv")),
        s(path("design.ron")),
        s(path("fitted.ron")),
    );
    let (out, _err) = cli(&[
        "fit",
        &run_csv,
        &design_ron,
        "--quantity",
        "t",
        "--out",
        &fitted,
    ])
    .unwrap();
    assert!(out.starts_with("rms before "), "{out}");
    let rms_after: f64 = out.split_whitespace().nth(4).unwrap().parse().unwrap();
    assert!(rms_after < 1e-5, "{out}");
    let d = file::load(std::path::Path::new(&fitted)).unwrap();
    for (l, t) in d.layers.iter().zip(&truth.layers) {
        assert!((l.nm.get() - t.nm.get()).abs() < 0.1, "{out}");
    }
    assert!(out.contains("1,H,41.000,42.230,+1.230,+3.000"), "{out}");
    // The output may not be an input; nothing is written then.
    let e = cli(&[
        "fit",
        &run_csv,
        &design_ron,
        "--quantity",
        "t",
        "--out",
        &design_ron,
    ])
    .unwrap_err();
    assert!(e.contains("input") || e.contains("same"), "{e}");
    assert_eq!(
        file::load(std::path::Path::new(&design_ron)).unwrap(),
        design(),
        "the design file is kept"
    );
    let e = cli(&["fit", &run_csv, &design_ron, "--out", &fitted]).unwrap_err();
    assert!(e.contains("--quantity"), "{e}");
}
