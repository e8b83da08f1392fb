//! The solver against closed-form results of thin-film optics.
//!
//! Sources of the check values: Born & Wolf, *Principles of Optics* (Fresnel equations,
//! Brewster and critical angles, TIR phase, §1.5), Macleod, *Thin-Film Optical Filters*
//! (single layers, quarter-wave stacks, two-layer AR, ch. 2–5). The digits were computed from
//! those closed forms in double precision; where a value is the closed form itself it is
//! evaluated in the test.

mod common;

use approx::assert_relative_eq;
use common::{qw, qw_stack, re, stack, stack_side};
use num_complex::Complex64;
use stackwise::optics::Side;

const DEG: f64 = std::f64::consts::PI / 180.0;

#[test]
fn fresnel_single_interface_at_45_degrees() {
    // Fresnel 1.0 → 1.5 at 45° (Born & Wolf §1.5.2; physics-checks §1.1)
    let r = stack(re(1.0), &[], re(1.5), 550.0, 45.0);
    assert_relative_eq!(r.r_s, 0.092_013_363_0, epsilon = 1e-10);
    assert_relative_eq!(r.r_p, 0.008_466_459_0, epsilon = 1e-10);
    assert_relative_eq!(r.r(), 0.050_239_911_0, epsilon = 1e-10);
    assert_relative_eq!(r.t_s, 0.907_986_637_0, epsilon = 1e-10);
    assert_relative_eq!(r.t_p, 0.991_533_541_0, epsilon = 1e-10);
    // Amplitudes: r_s = −0.3033370453; r_p in the admittance sign = −0.0920133630
    assert_relative_eq!(r.amp_r_s.re, -0.303_337_045_3, epsilon = 1e-10);
    assert_relative_eq!(r.amp_r_p.re, -0.092_013_363_0, epsilon = 1e-10);
    assert_relative_eq!(r.amp_t_s.re, 0.696_662_954_7, epsilon = 1e-10);
    assert_relative_eq!(r.amp_t_p.re, 0.728_008_908_7, epsilon = 1e-10);
    // Abelès: R_p(45°) = R_s(45°)² for any interface
    assert_relative_eq!(r.r_p, r.r_s * r.r_s, epsilon = 1e-14);
}

#[test]
fn fresnel_glass_1_52_at_several_angles() {
    // physics-checks §1.1, glass 1.52 from air: (angle, R_s, R_p)
    let table = [
        (0.0, 0.042_579_995_0, 0.042_579_995_0),
        (30.0, 0.061_208_692_3, 0.027_078_310_0),
        (45.0, 0.096_733_160_0, 0.009_357_304_2),
        (60.0, 0.183_438_250_7, 0.001_527_159_9),
        (80.0, 0.546_362_546_9, 0.235_537_179_9),
    ];
    for (aoi, rs, rp) in table {
        let r = stack(re(1.0), &[], re(1.52), 600.0, aoi);
        assert_relative_eq!(r.r_s, rs, epsilon = 1e-10);
        assert_relative_eq!(r.r_p, rp, epsilon = 1e-10);
        assert_relative_eq!(r.r_s + r.t_s, 1.0, epsilon = 1e-14);
        assert_relative_eq!(r.r_p + r.t_p, 1.0, epsilon = 1e-14);
    }
}

#[test]
fn brewster_angle_kills_p_reflection() {
    // tan θB = n2/n1; R_s at θB (physics-checks §1.2)
    for (n1, n2, theta_b, rs) in [
        (1.0f64, 1.5f64, 56.309_932_474_0, 0.147_928_994_1),
        (1.0, 1.52, 56.659_292_653_5, 0.156_691_999_4),
        (1.5, 1.0, 33.690_067_526_0, 0.147_928_994_1),
        (1.0, 2.35, 66.948_699_083_5, 0.480_760_718_5),
    ] {
        assert_relative_eq!((n2 / n1).atan() / DEG, theta_b, epsilon = 1e-9);
        let r = stack(re(n1), &[], re(n2), 550.0, (n2 / n1).atan() / DEG);
        assert!(r.r_p < 1e-28, "R_p at Brewster {n1}→{n2}: {}", r.r_p);
        assert_relative_eq!(r.r_s, rs, epsilon = 1e-10);
    }
}

#[test]
fn total_internal_reflection_and_its_phase() {
    // 1.5 → 1.0: θc = 41.8103148958° (sin θc = n2/n1); at 60° |r| = 1 and the phases follow
    // Born & Wolf §1.5.4: δs = 95.7391704773°, δp = 136.1982535581°, Δ = 40.4590830808°.
    assert_relative_eq!(
        (1.0f64 / 1.5).asin() / DEG,
        41.810_314_895_8,
        epsilon = 1e-9
    );
    let below = stack(re(1.5), &[], re(1.0), 550.0, 41.7);
    assert!(
        below.t_s > 0.0 && below.r_s < 1.0,
        "just below θc light still leaves"
    );
    let r = stack(re(1.5), &[], re(1.0), 550.0, 60.0);
    assert_relative_eq!(r.r_s, 1.0, epsilon = 1e-14);
    assert_relative_eq!(r.r_p, 1.0, epsilon = 1e-14);
    assert_relative_eq!(r.t_s + r.t_p, 0.0, epsilon = 1e-14);
    // exp(−iωt): arg r_s = −δs; the admittance r_p is the negative of Born & Wolf's.
    assert_relative_eq!(r.amp_r_s.arg() / DEG, -95.739_170_477_3, epsilon = 1e-8);
    assert_relative_eq!((-r.amp_r_p).arg() / DEG, -136.198_253_558_1, epsilon = 1e-8);
    let delta = ((-r.amp_r_p).arg() - r.amp_r_s.arg()) / DEG;
    assert_relative_eq!(delta, -40.459_083_080_8, epsilon = 1e-8);
}

#[test]
fn fresnel_rhomb_angles() {
    // n = 1.51: Δ = 45° at 48°37′ and 54°37′ (Born & Wolf, Fresnel rhomb; computed values
    // 48.624359° and 54.623105°, physics-checks §1.3)
    for aoi in [48.624_359, 54.623_105] {
        let r = stack(re(1.51), &[], re(1.0), 550.0, aoi);
        let delta = ((-r.amp_r_p).arg() - r.amp_r_s.arg()) / DEG;
        assert_relative_eq!(delta.abs(), 45.0, epsilon = 1e-4);
    }
}

#[test]
fn frustrated_total_internal_reflection() {
    // 1.5 | air gap d | 1.5 at 60°, 550 nm; closed form of a 1-D barrier (physics-checks §1.3b)
    for (d, ts, tp) in [
        (50.0, 0.803_838_647_926, 0.664_775_744_359),
        (100.0, 0.452_090_803_568, 0.285_357_934_237),
        (200.0, 0.085_731_893_597, 0.043_408_966_427),
        (550.0, 0.000_118_180_369, 0.000_057_194_745),
    ] {
        let r = stack(re(1.5), &[(re(1.0), d)], re(1.5), 550.0, 60.0);
        assert_relative_eq!(r.t_s, ts, epsilon = 1e-11, max_relative = 1e-9);
        assert_relative_eq!(r.t_p, tp, epsilon = 1e-11, max_relative = 1e-9);
        assert_relative_eq!(r.r_s + r.t_s, 1.0, epsilon = 1e-13);
    }
}

#[test]
fn single_quarter_wave_layer() {
    // R = ((n0 ns − n1²)/(n0 ns + n1²))² at λ0 (Macleod ch. 3; physics-checks §1.4)
    for (n1, ns, r0) in [
        (1.38, 1.52, 0.012_600_790_215),
        (1.38, 1.50, 0.014_110_458_642),
        (1.45, 1.52, 0.025_856_817_557),
        (2.00, 3.50, 0.004_444_444_444),
    ] {
        let r = stack(re(1.0), &[(re(n1), qw(n1, 550.0))], re(ns), 550.0, 0.0);
        assert_relative_eq!(r.r(), r0, epsilon = 1e-11);
        let closed = ((ns - n1 * n1) / (ns + n1 * n1)).powi(2);
        assert_relative_eq!(r.r(), closed, epsilon = 1e-14);
    }
    // Off centre: 1.38 quarter wave at 550 nm on 1.52 (Airy formula values)
    for (wl, r0) in [
        (400.0, 0.022_052_515_310),
        (450.0, 0.016_204_301_604),
        (500.0, 0.013_356_826_446),
        (600.0, 0.013_127_260_786),
        (650.0, 0.014_368_351_590),
        (700.0, 0.015_961_968_730),
        (800.0, 0.019_423_739_280),
    ] {
        let r = stack(re(1.0), &[(re(1.38), qw(1.38, 550.0))], re(1.52), wl, 0.0);
        assert_relative_eq!(r.r(), r0, epsilon = 1e-11);
    }
}

#[test]
fn half_wave_layer_is_absent() {
    // At λ0 a half-wave layer leaves the bare substrate's R = 0.042579994960947 (§1.5)
    for n in [1.38, 2.35, 4.0] {
        let r = stack(
            re(1.0),
            &[(re(n), 2.0 * qw(n, 550.0))],
            re(1.52),
            550.0,
            0.0,
        );
        assert_relative_eq!(r.r(), 0.042_579_994_960_947, epsilon = 1e-13);
    }
    // Oblique: n d cos θ = λ/2 for 2.35 at 45° → d = 122.707956 nm gives bare glass at 45°.
    let d = 550.0 / (2.0 * (2.35f64 * 2.35 - 0.5).sqrt());
    assert_relative_eq!(d, 122.707_956, epsilon = 1e-6);
    let r = stack(re(1.0), &[(re(2.35), d)], re(1.52), 550.0, 45.0);
    assert_relative_eq!(r.r_s, 0.096_733_159_968_295, epsilon = 1e-13);
    assert_relative_eq!(r.r_p, 0.009_357_304_237_452, epsilon = 1e-13);
    // Under a 1.38 quarter wave it still changes nothing.
    let r = stack(
        re(1.0),
        &[
            (re(2.35), 2.0 * qw(2.35, 550.0)),
            (re(1.38), qw(1.38, 550.0)),
        ],
        re(1.52),
        550.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.012_600_790_215, epsilon = 1e-11);
}

#[test]
fn quarter_wave_stack_at_its_centre() {
    // (HL)^N H on 1.52: Y = (nH/nL)^(2N) nH²/ns, R = ((1 − Y)/(1 + Y))² (Macleod ch. 5; §1.6)
    for (n, r0) in [
        (0, 0.323_004_795_293_649),
        (1, 0.683_312_968_496_645),
        (2, 0.877_245_128_261_666),
        (3, 0.955_854_501_571_443),
        (4, 0.984_551_601_330_325),
        (5, 0.994_645_547_750_720),
        (6, 0.998_150_302_929_326),
        (8, 0.999_779_859_659_446),
        (10, 0.999_973_818_974_594),
        (15, 0.999_999_872_325_387),
    ] {
        let r = stack(
            re(1.0),
            &qw_stack(2.35, 1.38, n, true, 550.0),
            re(1.52),
            550.0,
            0.0,
        );
        assert_relative_eq!(r.r(), r0, epsilon = 1e-13);
    }
    let r = stack(
        re(1.0),
        &qw_stack(2.35, 1.45, 5, true, 550.0),
        re(1.52),
        550.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.991_232_834_620_674, epsilon = 1e-13);
    let r = stack(
        re(1.0),
        &qw_stack(2.35, 1.45, 10, true, 550.0),
        re(1.52),
        550.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.999_929_570_377_598, epsilon = 1e-13);
    // (HL)^N with L next to the substrate: Y = (nH/nL)^(2N) ns
    let r = stack(
        re(1.0),
        &qw_stack(2.35, 1.38, 4, false, 550.0),
        re(1.52),
        550.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.963_468_909_154_550, epsilon = 1e-13);
    let r = stack(
        re(1.0),
        &qw_stack(2.35, 1.38, 8, false, 550.0),
        re(1.52),
        550.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.999_473_883_742_388, epsilon = 1e-13);
    // Pedrotti's exercise: 4 pairs Ge (4.0) / MgF2 (1.35) on 1.50 at 2 µm, 0.5 µm optical
    // thickness each (= quarter waves at 2000 nm): H next to air 0.99955119108.
    let r = stack(
        re(1.0),
        &qw_stack(4.0, 1.35, 4, false, 2000.0),
        re(1.5),
        2000.0,
        0.0,
    );
    assert_relative_eq!(r.r(), 0.999_551_191_08, epsilon = 1e-10);
}

/// Half the trace of the characteristic matrix of one H L period at normal incidence. For a
/// lossless period between two copies of one real medium, Re(1/t) = ½ tr M exactly (the
/// off-diagonal elements are imaginary), so the solver's own t gives it.
fn half_trace(nh: f64, nl: f64, lambda0: f64, wl: f64) -> f64 {
    let period = [(re(nl), qw(nl, lambda0)), (re(nh), qw(nh, lambda0))];
    stack(re(1.3), &period, re(1.3), wl, 0.0).amp_t_s.inv().re
}

/// The wavelength between `a` and `b` where the half trace crosses −1 (a band edge).
fn edge(nh: f64, nl: f64, lambda0: f64, mut a: f64, mut b: f64) -> f64 {
    let f = |wl: f64| half_trace(nh, nl, lambda0, wl) + 1.0;
    assert!(f(a) * f(b) < 0.0, "bracket must straddle the edge");
    for _ in 0..80 {
        let m = 0.5 * (a + b);
        if f(m) * f(a) > 0.0 { a = m } else { b = m }
    }
    0.5 * (a + b)
}

#[test]
fn stop_band_edges_match_the_closed_form() {
    // Half-width Δg = (2/π) asin((nH − nL)/(nH + nL)) in g = λ0/λ (Macleod ch. 5); the edges
    // are where |½ tr M_HL| = 1 (§1.7).
    let dg = 2.0 / std::f64::consts::PI * ((2.35 - 1.38) / (2.35 + 1.38f64)).asin();
    assert_relative_eq!(2.0 * dg, 0.334_960_972_2, epsilon = 1e-10);
    assert_relative_eq!(
        half_trace(2.35, 1.38, 550.0, 550.0),
        -0.5 * (2.35 / 1.38 + 1.38 / 2.35),
        epsilon = 1e-13
    );
    for (nh, nl, lambda0, lo, hi) in [
        (2.35, 1.38, 550.0, 471.099_951, 660.645_175),
        (2.35, 1.45, 550.0, 477.337_402, 648.756_900),
        (2.10, 1.45, 1064.0, 952.359_203, 1_205.290_838),
        (4.0, 2.2, 10_000.0, 8420.874, 12_308.074),
    ] {
        let long = edge(nh, nl, lambda0, lambda0 * 1.01, hi * 1.05);
        let short = edge(nh, nl, lambda0, lambda0 * 0.99, lo * 0.95);
        assert_relative_eq!(long, hi, epsilon = 2e-6 * lambda0);
        assert_relative_eq!(short, lo, epsilon = 2e-6 * lambda0);
    }
    // Inside the band a long stack reflects almost everything.
    let layers = qw_stack(2.35, 1.38, 40, true, 550.0);
    assert!(
        stack(re(1.0), &layers, re(1.52), 655.0, 0.0).r() > 0.999,
        "inside the band"
    );
}

#[test]
fn two_layer_antireflection_coatings() {
    // Quarter-quarter: zero R when n2/n1 = √(ns/n0): 1.38 over 1.7013782648 on 1.52 (§1.8)
    let n2 = 1.701_378_264_8;
    let r = stack(
        re(1.0),
        &[(re(n2), qw(n2, 550.0)), (re(1.38), qw(1.38, 550.0))],
        re(1.52),
        550.0,
        0.0,
    );
    assert!(r.r() < 1e-20, "quarter-quarter AR leaves R = {}", r.r());
    // V-coat (Macleod's two-layer AR): outer 1.38, 69.983439 nm; inner 2.35, 105.351316 nm.
    let r = stack(
        re(1.0),
        &[(re(2.35), 105.351_316), (re(1.38), 69.983_439)],
        re(1.52),
        550.0,
        0.0,
    );
    assert!(r.r() < 1e-13, "V-coat leaves R = {}", r.r());
    let r = stack(
        re(1.0),
        &[(re(2.05), 108.455_641), (re(1.45), 69.443_229)],
        re(1.52),
        550.0,
        0.0,
    );
    assert!(r.r() < 1e-13, "V-coat 1.45/2.05 leaves R = {}", r.r());
    // Away from λ0 it reflects: the V shape.
    assert!(
        stack(
            re(1.0),
            &[(re(2.35), 105.351_316), (re(1.38), 69.983_439)],
            re(1.52),
            450.0,
            0.0
        )
        .r() > 0.01
    );
}

#[test]
fn bare_metals() {
    // R = |(n0 − N)/(n0 + N)|², Abelès R_p(45°) = R_s(45°)² (§1.9; N from Johnson & Christy 1972
    // for Ag and Rakić 1995 for Al)
    for (n, k, r0, rs45, rp45) in [
        (
            0.06,
            4.152,
            0.986_930_029_5,
            0.990_871_114_5,
            0.981_825_565_6,
        ),
        (
            0.06,
            3.586,
            0.982_836_296_3,
            0.988_061_043_5,
            0.976_264_625_8,
        ),
        (
            0.04,
            7.795,
            0.997_412_829_5,
            0.998_177_376_7,
            0.996_358_075_3,
        ),
        (
            1.3660,
            7.4052,
            0.909_588_729_2,
            0.935_451_127_7,
            0.875_068_812_3,
        ),
        (
            1.0728,
            6.7839,
            0.914_718_050_5,
            0.939_215_749_5,
            0.882_126_224_1,
        ),
    ] {
        let metal = Complex64::new(n, k);
        let r = stack(re(1.0), &[], metal, 600.0, 0.0);
        assert_relative_eq!(r.r(), r0, epsilon = 1e-10);
        // What is not reflected enters the (semi-infinite) metal.
        assert_relative_eq!(r.r() + r.t(), 1.0, epsilon = 1e-14);
        let r = stack(re(1.0), &[], metal, 600.0, 45.0);
        assert_relative_eq!(r.r_s, rs45, epsilon = 1e-10);
        assert_relative_eq!(r.r_p, rp45, epsilon = 1e-10);
    }
}

#[test]
fn thin_silver_film_on_glass() {
    // Ag 0.06 + 4.152i on 1.52 at 616.8 nm, normal incidence (§1.9)
    for (d, r0, t0, a0) in [
        (10.0, 0.403_139_455_9, 0.576_267_419_2, 0.020_593_124_9),
        (20.0, 0.742_736_165_2, 0.236_523_259_1, 0.020_740_575_7),
        (50.0, 0.968_614_148_8, 0.017_003_745_4, 0.014_382_105_7),
        (100.0, 0.986_649_752_7, 0.000_245_303_5, 0.013_104_943_7),
    ] {
        let r = stack(
            re(1.0),
            &[(Complex64::new(0.06, 4.152), d)],
            re(1.52),
            616.8,
            0.0,
        );
        assert_relative_eq!(r.r(), r0, epsilon = 1e-10);
        assert_relative_eq!(r.t(), t0, epsilon = 1e-10);
        assert_relative_eq!(r.a(), a0, epsilon = 1e-10);
    }
}

#[test]
fn thick_metal_does_not_overflow() {
    // 20 µm of silver at 400 nm: the field dies out (k0·k·d ≈ 660 nepers); R is that of bulk
    // silver, T is 0, and nothing is NaN.
    let ag = Complex64::new(0.06, 4.152);
    let r = stack(
        re(1.0),
        &[(ag, 20_000.0), (re(1.38), 100.0)],
        re(1.52),
        400.0,
        30.0,
    );
    let bulk = stack(re(1.0), &[(re(1.38), 100.0)], ag, 400.0, 30.0);
    assert!(
        r.r_s.is_finite() && r.t_s.is_finite() && r.a_s.is_finite(),
        "{r:?}"
    );
    assert_relative_eq!(r.r_s, bulk.r_s, epsilon = 1e-12);
    assert_relative_eq!(r.r_p, bulk.r_p, epsilon = 1e-12);
    assert_relative_eq!(r.t(), 0.0, epsilon = 1e-300);
    assert_relative_eq!(r.r_s + r.t_s + r.a_s, 1.0, epsilon = 1e-12);
}

#[test]
fn lossless_stack_at_30_degrees_and_from_behind() {
    // air | 2.35 (60) | 1.38 (80) | 2.35 (37) | 1.45 (100) | 1.52, 616.8 nm, 30° (§1.10);
    // listed from the air side, so reversed here into deposition order.
    let layers = [
        (re(1.45), 100.0),
        (re(2.35), 37.0),
        (re(1.38), 80.0),
        (re(2.35), 60.0),
    ];
    let r = stack(re(1.0), &layers, re(1.52), 616.8, 30.0);
    assert_relative_eq!(r.r_s, 0.477_541_257_528_650, epsilon = 1e-13);
    assert_relative_eq!(r.r_p, 0.324_565_674_456_725, epsilon = 1e-13);
    assert_relative_eq!(r.r_s + r.t_s, 1.0, epsilon = 1e-14);
    // From the glass with the same Snell invariant: the same R for a lossless stack.
    let theta_glass = (30f64.to_radians().sin() / 1.52).asin() / DEG;
    let b = stack_side(re(1.0), &layers, re(1.52), 616.8, theta_glass, Side::Back);
    assert_relative_eq!(b.r_s, r.r_s, epsilon = 1e-13);
    assert_relative_eq!(b.r_p, r.r_p, epsilon = 1e-13);
}

#[test]
fn absorbing_stack_from_both_sides() {
    // air | 2.35 (60) | Ag 0.06+4.152i (20) | 1.45 (100) | 1.52, 616.8 nm, 30° (§1.10):
    // T is the same from both sides, R and A differ.
    let ag = Complex64::new(0.06, 4.152);
    let layers = [(re(1.45), 100.0), (ag, 20.0), (re(2.35), 60.0)];
    let f = stack(re(1.0), &layers, re(1.52), 616.8, 30.0);
    assert_relative_eq!(f.r_s, 0.594_794_994_081, epsilon = 1e-11);
    assert_relative_eq!(f.t_s, 0.367_370_513_417, epsilon = 1e-11);
    assert_relative_eq!(f.a_s, 0.037_834_492_503, epsilon = 1e-11);
    assert_relative_eq!(f.r_p, 0.552_520_397_019, epsilon = 1e-11);
    assert_relative_eq!(f.t_p, 0.410_230_522_644, epsilon = 1e-11);
    assert_relative_eq!(f.a_p, 0.037_249_080_338, epsilon = 1e-11);
    let theta_glass = (30f64.to_radians().sin() / 1.52).asin() / DEG;
    assert_relative_eq!(theta_glass, 19.2049, epsilon = 1e-4);
    let b = stack_side(re(1.0), &layers, re(1.52), 616.8, theta_glass, Side::Back);
    assert_relative_eq!(b.r_s, 0.623_502_383_084, epsilon = 1e-11);
    assert_relative_eq!(b.t_s, 0.367_370_513_417, epsilon = 1e-11);
    assert_relative_eq!(b.a_s, 0.009_127_103_499, epsilon = 1e-11);
    assert_relative_eq!(b.r_p, 0.577_401_397_588, epsilon = 1e-11);
    assert_relative_eq!(b.t_p, 0.410_230_522_644, epsilon = 1e-11);
    assert_relative_eq!(b.a_p, 0.012_368_079_768, epsilon = 1e-11);
}

#[test]
fn adding_a_half_wave_is_periodic() {
    // 2.0, 73 nm on 1.52 at 600 nm: R = 0.2016154550; adding λ/(2n) = 150 nm changes nothing
    // (§1.10)
    let r = stack(re(1.0), &[(re(2.0), 73.0)], re(1.52), 600.0, 0.0);
    assert_relative_eq!(r.r(), 0.201_615_455_0, epsilon = 1e-10);
    let r2 = stack(re(1.0), &[(re(2.0), 223.0)], re(1.52), 600.0, 0.0);
    assert_relative_eq!(r2.r(), r.r(), epsilon = 1e-14);
}
