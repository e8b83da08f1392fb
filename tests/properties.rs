//! Properties that hold for every stack, on random absorbing stacks at oblique incidence, and
//! an independent algorithm (the recursive Airy/Rouard summation of interface coefficients)
//! that must agree with the characteristic-matrix solver.

mod common;

use approx::assert_relative_eq;
use common::{re, stack, stack_side};
use num_complex::Complex64;
use proptest::prelude::*;
use stackwise::optics::{
    Media4, Response, Scratch4, Side, StackAt, Tilted, solve, solve4, solve4_with,
};

/// Recursive reflection/transmission (Rouard's method), written independently of the matrix
/// code: starting at the substrate, each layer j between the medium above (a) and its own
/// medium combines the interface coefficients r_aj, t_aj with the result below it:
/// r = (r_aj + r_below e^{2iδ}) / (1 + r_aj r_below e^{2iδ}),
/// t = t_aj t_below e^{iδ} / (1 + r_aj r_below e^{2iδ}),
/// with admittance-form interface coefficients r_ab = (η_a − η_b)/(η_a + η_b) and
/// tangential-field t_ab = 2η_a/(η_a + η_b). Returns (r, T) for s and p.
fn rouard(
    incident: f64,
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    wl: f64,
    aoi_deg: f64,
) -> [(Complex64, f64); 2] {
    rouard_log(incident, layers, substrate, wl, aoi_deg).map(|(r, t, _)| (r, t))
}

/// [`rouard`], with t carried as a unit-size factor times e^(log |t|) so that it neither
/// underflows nor overflows however long the stack; returns (r, T, ln T) for s and p. The
/// reflection recursion needs no scaling (|r| stays near 1 or below).
fn rouard_log(
    incident: f64,
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    wl: f64,
    aoi_deg: f64,
) -> [(Complex64, f64, f64); 2] {
    let snell = incident * aoi_deg.to_radians().sin();
    let k0 = std::f64::consts::TAU / wl;
    let media: Vec<Tilted> = std::iter::once(Tilted::new(re(incident), snell))
        .chain(layers.iter().rev().map(|l| Tilted::new(l.0, snell)))
        .chain(std::iter::once(Tilted::new(substrate, snell)))
        .collect();
    // media[0] = incident, media[1..=n] = layers from the incident side, media[n+1] = substrate
    let n = layers.len();
    let mut out = [(Complex64::default(), 0.0, 0.0); 2];
    for (pol, o) in out.iter_mut().enumerate() {
        let eta = |m: &Tilted| if pol == 0 { m.eta_s } else { m.eta_p };
        let (ea, eb) = (eta(&media[n]), eta(&media[n + 1]));
        let mut r = (ea - eb) / (ea + eb);
        let mut t = 2.0 * ea / (ea + eb);
        let mut log_t = 0.0;
        for j in (1..=n).rev() {
            let d = layers[n - j].1;
            let phase = Complex64::i() * media[j].q * k0 * d;
            let (e1, e2) = (phase.exp(), (2.0 * phase).exp());
            let (ea, eb) = (eta(&media[j - 1]), eta(&media[j]));
            let r_aj = (ea - eb) / (ea + eb);
            let t_aj = 2.0 * ea / (ea + eb);
            let den = 1.0 + r_aj * r * e2;
            t = t_aj * t * e1 / den;
            r = (r_aj + r * e2) / den;
            let size = t.norm();
            if size > 0.0 {
                log_t += size.ln();
                t /= size;
            }
        }
        let ratio = eta(&media[n + 1]).re / eta(&media[0]).re;
        let log_big_t = ratio.ln() + t.norm_sqr().ln() + 2.0 * log_t;
        *o = (r, log_big_t.exp(), log_big_t);
    }
    out
}

fn index() -> impl Strategy<Value = Complex64> {
    prop_oneof![
        (1.3f64..2.6).prop_map(re),
        (1.3f64..4.5, 0.0f64..0.5).prop_map(|(n, k)| Complex64::new(n, k)),
        (0.03f64..2.0, 1.5f64..8.0).prop_map(|(n, k)| Complex64::new(n, k)),
    ]
}

fn layers(max: usize) -> impl Strategy<Value = Vec<(Complex64, f64)>> {
    prop::collection::vec((index(), 0.0f64..400.0), 0..max)
}

fn lossless_layers(max: usize) -> impl Strategy<Value = Vec<(Complex64, f64)>> {
    prop::collection::vec(((1.3f64..2.6).prop_map(re), 0.0f64..400.0), 0..max)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn energy_is_conserved(ls in layers(12), sub in 1.4f64..1.9, wl in 300.0f64..2000.0, aoi in 0.0f64..85.0) {
        let r = stack(re(1.0), &ls, re(sub), wl, aoi);
        prop_assert!((r.r_s + r.t_s + r.a_s - 1.0).abs() < 1e-12, "s: {r:?}");
        prop_assert!((r.r_p + r.t_p + r.a_p - 1.0).abs() < 1e-12, "p: {r:?}");
        prop_assert!(r.r_s >= 0.0 && r.t_s >= 0.0 && r.a_s > -1e-12);
        prop_assert!(r.r_p >= 0.0 && r.t_p >= 0.0 && r.a_p > -1e-12);
    }

    #[test]
    fn lossless_stacks_absorb_nothing(ls in lossless_layers(20), sub in 1.4f64..1.9, wl in 300.0f64..2000.0, aoi in 0.0f64..85.0) {
        let r = stack(re(1.0), &ls, re(sub), wl, aoi);
        prop_assert!(r.a_s.abs() < 1e-12 && r.a_p.abs() < 1e-12, "{r:?}");
    }

    #[test]
    fn transmittance_is_the_same_from_both_sides(ls in layers(10), sub in 1.4f64..1.9, wl in 300.0f64..2000.0, aoi in 0.0f64..80.0) {
        let f = stack(re(1.0), &ls, re(sub), wl, aoi);
        let inside = (aoi.to_radians().sin() / sub).asin().to_degrees();
        let b = stack_side(re(1.0), &ls, re(sub), wl, inside, Side::Back);
        prop_assert!((f.t_s - b.t_s).abs() < 1e-12 && (f.t_p - b.t_p).abs() < 1e-12, "{f:?} {b:?}");
    }

    #[test]
    fn a_zero_thickness_layer_is_no_layer(ls in layers(8), extra in index(), at in 0usize..9, wl in 300.0f64..2000.0, aoi in 0.0f64..85.0) {
        let mut with = ls.clone();
        with.insert(at.min(ls.len()), (extra, 0.0));
        let a = stack(re(1.0), &ls, re(1.52), wl, aoi);
        let b = stack(re(1.0), &with, re(1.52), wl, aoi);
        prop_assert!((a.r_s - b.r_s).abs() < 1e-13 && (a.r_p - b.r_p).abs() < 1e-13);
        prop_assert!((a.t_s - b.t_s).abs() < 1e-13 && (a.t_p - b.t_p).abs() < 1e-13);
    }

    #[test]
    fn splitting_a_layer_changes_nothing(ls in layers(8).prop_filter("need a layer", |l| !l.is_empty()), at in 0usize..8, frac in 0.0f64..1.0, wl in 300.0f64..2000.0, aoi in 0.0f64..85.0) {
        let i = at % ls.len();
        let (n, d) = ls[i];
        let mut split = ls.clone();
        split[i] = (n, d * frac);
        split.insert(i + 1, (n, d * (1.0 - frac)));
        let a = stack(re(1.0), &ls, re(1.52), wl, aoi);
        let b = stack(re(1.0), &split, re(1.52), wl, aoi);
        prop_assert!((a.amp_r_s - b.amp_r_s).norm() < 1e-12 && (a.amp_r_p - b.amp_r_p).norm() < 1e-12);
        prop_assert!((a.t_s - b.t_s).abs() < 1e-12 && (a.t_p - b.t_p).abs() < 1e-12);
    }

    #[test]
    fn four_lanes_agree_with_one_point_at_a_time(
        ls in layers(14),
        lane_n in prop::array::uniform4(index()),
        wl in prop::array::uniform4(300.0f64..2000.0),
        aoi in prop::array::uniform4(0.0f64..1.5),
        mm in prop::option::of(0.1f64..10.0),
        back in any::<bool>(),
    ) {
        // Each lane gets its own index for the first material, wavelength and angle.
        let idx: Vec<(usize, f64)> = ls.iter().enumerate().map(|(i, l)| (i, l.1)).collect();
        let mats: Vec<[Complex64; 4]> = ls
            .iter()
            .enumerate()
            .map(|(i, l)| if i == 0 { lane_n } else { [l.0; 4] })
            .collect();
        let per_lane: Vec<Vec<Complex64>> =
            (0..4).map(|k| mats.iter().map(|m| m[k]).collect()).collect();
        let stacks: Vec<StackAt<'_>> = per_lane
            .iter()
            .map(|m| StackAt {
                incident: re(1.0),
                substrate: Complex64::new(1.52, 1e-7),
                exit: re(1.33),
                materials: m,
                layers: &idx,
                back_layers: &[],
                substrate_mm: mm,
            })
            .collect();
        let side = if back { Side::Back } else { Side::Front };
        let refs = [&stacks[0], &stacks[1], &stacks[2], &stacks[3]];
        let four = solve4(refs, wl, aoi, side, &mut Scratch4::default());
        // The optimiser's entry: the media tilted beforehand.
        let with = solve4_with(&Media4::new(refs, aoi, side), refs, wl);
        for (k, f) in (0..4).flat_map(|k| [(k, &four[k]), (k, &with[k])]) {
            let one = solve(&stacks[k], wl[k], aoi[k], side, &mut Vec::new());
            for (a, b) in [(one.r_s, f.r_s), (one.r_p, f.r_p), (one.t_s, f.t_s), (one.t_p, f.t_p), (one.a_s, f.a_s), (one.a_p, f.a_p)] {
                prop_assert!((a - b).abs() < 1e-12, "lane {k}: {one:?} vs {f:?}");
            }
            prop_assert!((one.amp_r_s - f.amp_r_s).norm() < 1e-12 && (one.amp_r_p - f.amp_r_p).norm() < 1e-12);
            prop_assert!((one.amp_t_s - f.amp_t_s).norm() < 1e-12 && (one.amp_t_p - f.amp_t_p).norm() < 1e-12);
        }
    }

    #[test]
    fn recursive_method_agrees(ls in layers(12), sub in index(), inc in 1.0f64..1.8, wl in 300.0f64..2000.0, aoi in 0.0f64..85.0) {
        let r = stack(re(inc), &ls, sub, wl, aoi);
        let [(rs, ts), (rp, tp)] = rouard(inc, &ls, sub, wl, aoi);
        prop_assert!((r.amp_r_s - rs).norm() < 1e-12, "r_s {} vs {}", r.amp_r_s, rs);
        prop_assert!((r.amp_r_p - rp).norm() < 1e-12, "r_p {} vs {}", r.amp_r_p, rp);
        prop_assert!((r.t_s - ts).abs() < 1e-12, "T_s {} vs {}", r.t_s, ts);
        prop_assert!((r.t_p - tp).abs() < 1e-12, "T_p {} vs {}", r.t_p, tp);
    }
}

/// A design on a thick substrate, solved through the public entry point.
fn thick(
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    mm: f64,
    wl: f64,
    aoi: f64,
    side: Side,
) -> stackwise::optics::Response {
    let mats: Vec<Complex64> = layers.iter().map(|l| l.0).collect();
    let idx: Vec<(usize, f64)> = layers.iter().enumerate().map(|(i, l)| (i, l.1)).collect();
    let s = StackAt {
        incident: re(1.0),
        substrate,
        exit: re(1.0),
        materials: &mats,
        layers: &idx,
        back_layers: &[],
        substrate_mm: Some(mm),
    };
    solve(&s, wl, aoi.to_radians(), side, &mut Vec::new())
}

#[test]
fn bare_thick_slab_adds_both_surfaces_by_intensity() {
    // Incoherent slab, both faces bare: the geometric series of internal reflections gives
    // R = R1 + (1 − R1)² R1 / (1 − R1²) = 2 R1 / (1 + R1) and T = (1 − R1)/(1 + R1), with
    // R1 = ((n − 1)/(n + 1))² = 0.04 for n = 1.5 (closed form, derived from Fresnel's R1).
    let r = thick(&[], re(1.5), 2.0, 550.0, 0.0, Side::Front);
    assert_relative_eq!(r.r(), 2.0 * 0.04 / 1.04, epsilon = 1e-15);
    assert_relative_eq!(r.t(), 0.96 / 1.04, epsilon = 1e-15);
    // Absorbing slab: τ = exp(−4π k d / λ); T = (1 − R1)² τ / (1 − R1² τ²).
    let k = 2e-7;
    let tau = (-4.0 * std::f64::consts::PI * k * 1e6 / 550.0).exp();
    let r = thick(&[], Complex64::new(1.5, k), 1.0, 550.0, 0.0, Side::Front);
    assert_relative_eq!(
        r.t(),
        0.96 * 0.96 * tau / (1.0 - 0.0016 * tau * tau),
        epsilon = 1e-14
    );
    assert_relative_eq!(r.r() + r.t() + r.a(), 1.0, epsilon = 1e-15);
}

#[test]
fn coated_thick_substrate_from_both_sides() {
    // A quarter-wave MgF2-like layer (1.38) on a 1 mm slab of 1.52 at 20°: from the front the
    // coated face reflects less than the bare back face adds; from behind, the same
    // transmittance (reciprocity of each part) and a different reflectance.
    let layers = [(re(1.38), 550.0 / (4.0 * 1.38))];
    let f = thick(&layers, re(1.52), 1.0, 550.0, 20.0, Side::Front);
    let b = thick(&layers, re(1.52), 1.0, 550.0, 20.0, Side::Back);
    assert_relative_eq!(f.t_s, b.t_s, epsilon = 1e-14);
    assert_relative_eq!(f.t_p, b.t_p, epsilon = 1e-14);
    assert_relative_eq!(f.r_s + f.t_s, 1.0, epsilon = 1e-14);
    assert_relative_eq!(b.r_p + b.t_p, 1.0, epsilon = 1e-14);
    // With both faces the coated one alone: R_total > R_coated (the back face adds ≈ 4 %).
    let coated = stack(re(1.0), &layers, re(1.52), 550.0, 20.0);
    assert!(
        f.r() > coated.r() + 0.03,
        "back face must add reflection: {} vs {}",
        f.r(),
        coated.r()
    );
}

/// Solves one stack at four wavelengths through the four-lane solver (the path every sweep
/// takes) and at each wavelength through the one-point solver; both must agree.
fn both_solvers(
    layers: &[(Complex64, f64)],
    substrate: Complex64,
    wl: [f64; 4],
    aoi_deg: f64,
) -> [Response; 4] {
    let materials: Vec<Complex64> = layers.iter().map(|l| l.0).collect();
    let idx: Vec<(usize, f64)> = layers.iter().enumerate().map(|(i, l)| (i, l.1)).collect();
    let s = StackAt {
        incident: re(1.0),
        substrate,
        exit: re(1.0),
        materials: &materials,
        layers: &idx,
        back_layers: &[],
        substrate_mm: None,
    };
    let aoi = aoi_deg.to_radians();
    let four = solve4([&s; 4], wl, [aoi; 4], Side::Front, &mut Scratch4::default());
    for (k, f) in four.iter().enumerate() {
        let one = solve(&s, wl[k], aoi, Side::Front, &mut Vec::new());
        for (a, b) in [
            (one.r_s, f.r_s),
            (one.r_p, f.r_p),
            (one.t_s, f.t_s),
            (one.t_p, f.t_p),
        ] {
            assert!(
                (a - b).abs() <= 1e-9 * a.abs().max(1e-300),
                "lanes vs one point at {} nm: {one:?} vs {f:?}",
                wl[k]
            );
        }
    }
    four
}

/// Every figure finite, within 0..1 and R + T + A = 1.
fn assert_sound(r: &Response, what: &str) {
    for (name, x) in [
        ("R_s", r.r_s),
        ("R_p", r.r_p),
        ("T_s", r.t_s),
        ("T_p", r.t_p),
        ("A_s", r.a_s),
        ("A_p", r.a_p),
    ] {
        assert!(
            x.is_finite() && (-1e-9..=1.0 + 1e-9).contains(&x),
            "{what}: {name} = {x}"
        );
    }
    assert!((r.r_s + r.t_s + r.a_s - 1.0).abs() < 1e-9, "{what}: s sum");
    assert!((r.r_p + r.t_p + r.a_p - 1.0).abs() < 1e-9, "{what}: p sum");
}

/// Compares the solver with the log-scaled recursive method: r to `tol_r`, and T in
/// logarithms (relative 1e-6) wherever the recursive T is representable.
fn agrees_with_recursive(
    r: &Response,
    layers: &[(Complex64, f64)],
    sub: Complex64,
    wl: f64,
    aoi: f64,
    tol_r: f64,
) {
    let [(rs, ts, lts), (rp, tp, ltp)] = rouard_log(1.0, layers, sub, wl, aoi);
    assert!(
        (r.amp_r_s - rs).norm() < tol_r,
        "{wl} nm {aoi}°: r_s {} vs {rs}",
        r.amp_r_s
    );
    assert!(
        (r.amp_r_p - rp).norm() < tol_r,
        "{wl} nm {aoi}°: r_p {} vs {rp}",
        r.amp_r_p
    );
    for (t, t_ref, lt_ref, pol) in [(r.t_s, ts, lts, "s"), (r.t_p, tp, ltp, "p")] {
        if t_ref > 1e-290 {
            assert!(
                (t.ln() - lt_ref).abs() < 1e-6 * lt_ref.abs().max(1.0),
                "{wl} nm {aoi}°: T_{pol} {t:e} vs {t_ref:e}"
            );
        } else {
            assert!(t < 1e-280, "{wl} nm {aoi}°: T_{pol} {t:e} vs e^{lt_ref}");
        }
    }
}

#[test]
fn ten_thousand_layer_quarter_wave_stack_stays_finite_and_agrees() {
    // 5 000 (HL) pairs of 2.3 / 1.45 quarter waves at 550 nm on 1.52: the most layers the
    // stack notation allows. Without rescaling, 1 000 pairs already overflow to NaN.
    let layers = common::qw_stack(2.3, 1.45, 5000, false, 550.0);
    assert_eq!(layers.len(), 10_000, "layer count");
    let sub = re(1.52);
    for aoi in [0.0, 45.0] {
        for wl in [[400.0, 480.0, 530.0, 550.0], [560.0, 600.0, 650.0, 700.0]] {
            let four = both_solvers(&layers, sub, wl, aoi);
            for (k, r) in four.iter().enumerate() {
                assert_sound(r, &format!("{} nm {aoi}°", wl[k]));
                agrees_with_recursive(r, &layers, sub, wl[k], aoi, 1e-7);
            }
        }
    }
    // At the centre at normal incidence, each quarter wave turns the admittance below it into
    // n²/Y; with L on the substrate and H facing the air, Y = n_s (n_H/n_L)^(2N), so
    // R = ((1 − Y)/(1 + Y))² (Macleod, Thin-Film Optical Filters, ch. 6) and T = 4Y/(1 + Y)².
    let [centre, ..] = both_solvers(&layers, sub, [550.0; 4], 0.0);
    let log_y = 1.52f64.ln() + 10_000.0 * (2.3f64 / 1.45).ln();
    assert!(log_y > 4000.0, "T underflows any double: ln Y = {log_y}");
    assert!((centre.r() - 1.0).abs() < 1e-12, "R = {}", centre.r());
    assert!(centre.t() < 1e-300, "T = {:e}", centre.t());
}

#[test]
fn six_hundred_pairs_carry_a_tiny_transmittance_exactly() {
    // 600 pairs: [B; C] passes 2^200 and is rescaled, and T ≈ 4/Y ≈ e^(−553) is still a
    // double; the rescaled product must give it to the recursive method's precision.
    let layers = common::qw_stack(2.3, 1.45, 600, false, 550.0);
    let sub = re(1.52);
    let four = both_solvers(&layers, sub, [540.0, 550.0, 560.0, 520.0], 0.0);
    for (k, r) in four.iter().enumerate() {
        assert_sound(r, "600 pairs");
        assert!(r.t() > 0.0 && r.t() < 1e-200, "T = {:e}", r.t());
        agrees_with_recursive(r, &layers, sub, [540.0, 550.0, 560.0, 520.0][k], 0.0, 1e-9);
    }
    // Closed form at the centre (see above): T = 4Y/(1 + Y)² with Y = n_s (n_H/n_L)^(2N), so
    // ln T = ln 4 − ln Y − 2 ln(1 + 1/Y).
    let log_y = 1.52f64.ln() + 1200.0 * (2.3f64 / 1.45).ln();
    let expect = 4f64.ln() - log_y - 2.0 * (-log_y).exp().ln_1p();
    assert!(
        (four[1].t().ln() - expect).abs() < 1e-6 * expect.abs(),
        "ln T {} vs {expect}",
        four[1].t().ln()
    );
}

#[test]
fn eight_hundred_silver_and_silica_layers_stay_finite_and_agree() {
    // 400 pairs of 20 nm silver and 100 nm silica on glass. Silver at 550 nm:
    // N = 0.13423 + 3.17225i (Rakić et al. 1998 Lorentz–Drude check value in the reference
    // materials table); silica 1.46 (common practice). Without rescaling the product overflows.
    let ag = Complex64::new(0.13423, 3.17225);
    let layers: Vec<(Complex64, f64)> = (0..800)
        .map(|i| {
            if i % 2 == 0 {
                (ag, 20.0)
            } else {
                (re(1.46), 100.0)
            }
        })
        .collect();
    let sub = re(1.52);
    for aoi in [0.0, 60.0] {
        let wl = [450.0, 500.0, 550.0, 700.0];
        let four = both_solvers(&layers, sub, wl, aoi);
        for (k, r) in four.iter().enumerate() {
            assert_sound(r, &format!("Ag/SiO2 {} nm {aoi}°", wl[k]));
            agrees_with_recursive(r, &layers, sub, wl[k], aoi, 1e-9);
        }
    }
}
