//! Thick, incoherent substrates: absorbing substrates with their complex index, and a coating
//! on the back face as well as the front.
//!
//! Check values come from two independent places:
//! * closed forms derived here for a bare slab (Fresnel amplitudes in admittance form,
//!   Macleod, *Thin-Film Optical Filters*, ch. 2; the flux of one plane wave S_z ∝ Re(η)|E_t|²,
//!   which for p is Re(N cos θ*)|E|², Born & Wolf §1.5; the geometric series of intensities
//!   inside an incoherent slab), evaluated in the test;
//! * the incoherent-layer method of Katsidis & Siapkas, Appl. Opt. 41, 3978 (2002), as
//!   implemented by the Python package `tmm` 0.2.0 (S. J. Byrnes, arXiv:1603.02720), function
//!   `inc_tmm`; the script that produced the digits is quoted beside them.

use num_complex::Complex64;
use stackwise::design::{Design, Layer, Nm};
use stackwise::material::{Material, Model};
use stackwise::optics::{Response, Scratch4, Side, StackAt, solve, solve4};

fn re(n: f64) -> Complex64 {
    Complex64::new(n, 0.0)
}

/// A part: incident | front coating | thick substrate | back coating | exit. Both coatings
/// are listed from the substrate outward, (index, nm).
struct Part<'a> {
    incident: f64,
    front: &'a [(Complex64, f64)],
    substrate: Complex64,
    mm: f64,
    back: &'a [(Complex64, f64)],
    exit: f64,
}

impl Part<'_> {
    fn solve(&self, wavelength_nm: f64, aoi_deg: f64, side: Side) -> Response {
        let materials: Vec<Complex64> = self.front.iter().chain(self.back).map(|l| l.0).collect();
        let front: Vec<(usize, f64)> = self
            .front
            .iter()
            .enumerate()
            .map(|(i, l)| (i, l.1))
            .collect();
        let n = self.front.len();
        let back: Vec<(usize, f64)> = self
            .back
            .iter()
            .enumerate()
            .map(|(i, l)| (n + i, l.1))
            .collect();
        let s = StackAt {
            incident: re(self.incident),
            substrate: self.substrate,
            exit: re(self.exit),
            materials: &materials,
            layers: &front,
            back_layers: &back,
            substrate_mm: Some(self.mm),
        };
        let one = solve(
            &s,
            wavelength_nm,
            aoi_deg.to_radians(),
            side,
            &mut Vec::new(),
        );
        // The four-lane solver must give the same numbers.
        let four = solve4(
            [&s; 4],
            [wavelength_nm; 4],
            [aoi_deg.to_radians(); 4],
            side,
            &mut Scratch4::default(),
        );
        for f in four {
            for (a, b) in [
                (one.r_s, f.r_s),
                (one.r_p, f.r_p),
                (one.t_s, f.t_s),
                (one.t_p, f.t_p),
            ] {
                assert!((a - b).abs() < 1e-13, "solve4 {f:?} vs solve {one:?}");
            }
        }
        one
    }
}

/// (R_s, T_s, R_p, T_p) to `eps`.
fn check(r: &Response, want: [f64; 4], eps: f64, what: &str) {
    let got = [r.r_s, r.t_s, r.r_p, r.t_p];
    for (name, (g, w)) in ["R_s", "T_s", "R_p", "T_p"]
        .iter()
        .zip(got.iter().zip(want))
    {
        assert!(
            (g - w).abs() <= eps,
            "{what} {name}: got {g:.17} want {w:.17} (diff {:.2e})",
            g - w
        );
    }
}

/// q = √(N² − S²) on the decaying branch.
fn tilt(n: Complex64, snell: f64) -> Complex64 {
    let q = (n * n - snell * snell).sqrt();
    if q.im < 0.0 { -q } else { q }
}

/// Closed form of a bare slab of index `n` (d nm) in a transparent medium `n0`, s then p:
/// each surface by Fresnel in admittance form, η_s = q and η_p = N²/q, r = (η₀ − η)/(η₀ + η)
/// (the same |r| from either side); the flux into the slab T = |2η₀/(η₀ + η)|² Re(η)/η₀ and
/// out of it T′ = |2η/(η + η₀)|² η₀/Re(η); one pass τ = exp(−4π Im(q) d/λ); the geometric
/// series R = R₁ + T T′ τ² R₁/(1 − R₁² τ²), T_total = T T′ τ/(1 − R₁² τ²).
fn bare_slab(n0: f64, n: Complex64, d_nm: f64, wl: f64, aoi_deg: f64) -> [f64; 4] {
    let snell = n0 * aoi_deg.to_radians().sin();
    let q0 = n0 * aoi_deg.to_radians().cos();
    let q = tilt(n, snell);
    let tau = (-4.0 * std::f64::consts::PI * q.im * d_nm / wl).exp();
    let one = |eta0: f64, eta: Complex64| {
        let r1 = ((eta0 - eta) / (eta0 + eta)).norm_sqr();
        let t_in = (2.0 * eta0 / (eta0 + eta)).norm_sqr() * eta.re / eta0;
        let t_out = (2.0 * eta / (eta + eta0)).norm_sqr() * eta0 / eta.re;
        let den = 1.0 - r1 * r1 * tau * tau;
        (
            r1 + t_in * t_out * tau * tau * r1 / den,
            t_in * t_out * tau / den,
        )
    };
    let (rs, ts) = one(q0, q);
    let (rp, tp) = one(n0 * n0 / q0, n * n / q);
    [rs, ts, rp, tp]
}

#[test]
fn bare_absorbing_slab_matches_its_closed_form() {
    // A germanium-like slab in the mid-infrared, k/n = 2.5e-4, and a weakly absorbing glass
    // at a grazing 80°, where the old real-index treatment was off by ~1e-6.
    let cases = [
        (re(1.0), Complex64::new(4.0, 1e-3), 0.2, 5000.0),
        (re(1.0), Complex64::new(1.5, 2e-6), 1.0, 550.0),
        (re(1.0), Complex64::new(1.52, 5e-4), 3.0, 1000.0),
    ];
    for (n0, n, mm, wl) in cases {
        for aoi in [0.0, 30.0, 60.0, 80.0, 89.0] {
            let part = Part {
                incident: n0.re,
                front: &[],
                substrate: n,
                mm,
                back: &[],
                exit: n0.re,
            };
            let want = bare_slab(n0.re, n, mm * 1e6, wl, aoi);
            for side in [Side::Front, Side::Back] {
                let r = part.solve(wl, aoi, side);
                check(
                    &r,
                    want,
                    1e-12,
                    &format!("slab {n} {mm} mm {wl} nm {aoi}° {side:?}"),
                );
                assert!((r.r_s + r.t_s + r.a_s - 1.0).abs() < 1e-14, "energy s");
            }
        }
    }
}

#[test]
fn bare_absorbing_slab_matches_the_incoherent_layer_method() {
    // tmm 0.2.0: inc_tmm(pol, [1, 4.0+0.001j, 1], [inf, 0.2e6, inf], ['i','i','i'], th, 5000.0)
    let table = [
        (
            0.0,
            [
                0.416_645_174_726_534_3,
                0.260_112_012_609_371_8,
                0.416_645_174_726_534_3,
                0.260_112_012_609_371_8,
            ],
        ),
        (
            45.0,
            [
                0.534_397_071_628_950_4,
                0.174_678_781_731_275_66,
                0.284_393_443_883_486_14,
                0.359_214_308_565_071_8,
            ],
        ),
        (
            80.0,
            [
                0.846_477_027_974_678_9,
                0.021_316_569_571_073_352,
                0.036_383_914_587_461_73,
                0.563_493_207_834_734_9,
            ],
        ),
    ];
    let part = Part {
        incident: 1.0,
        front: &[],
        substrate: Complex64::new(4.0, 1e-3),
        mm: 0.2,
        back: &[],
        exit: 1.0,
    };
    for (aoi, want) in table {
        check(
            &part.solve(5000.0, aoi, Side::Front),
            want,
            1e-12,
            &format!("slab {aoi}°"),
        );
    }
}

/// Front coating, substrate side first: L 1.46 95 nm, then H 2.1+0.002i 70 nm towards air.
const FRONT: [(Complex64, f64); 2] = [
    (Complex64::new(1.46, 0.0), 95.0),
    (Complex64::new(2.1, 0.002), 70.0),
];

#[test]
fn coated_absorbing_substrate_matches_the_incoherent_layer_method() {
    // tmm 0.2.0 at 600 nm, substrate 1.52+5e-5i, 1 mm:
    //   n = [1, 2.1+0.002j, 1.46, 1.52+5e-5j, 1]; d = [inf, 70, 95, 1e6, inf]
    //   c = ['i','c','c','i','i']; front: inc_tmm(pol, n, d, c, th, 600.0);
    //   back: inc_tmm(pol, n[::-1], d[::-1], c[::-1], th, 600.0)
    let front = [
        (
            0.0,
            [
                0.269_391_880_294_852_5,
                0.245_963_589_148_402_08,
                0.269_391_880_294_852_5,
                0.245_963_589_148_402_08,
            ],
        ),
        (
            30.0,
            [
                0.325_677_123_035_905_57,
                0.209_530_598_449_574_33,
                0.209_999_846_754_097_75,
                0.253_487_363_690_340_97,
            ],
        ),
        (
            60.0,
            [
                0.531_641_381_867_145_2,
                0.108_063_299_216_473_35,
                0.036_847_566_475_801_6,
                0.268_042_889_690_662_4,
            ],
        ),
        (
            80.0,
            [
                0.804_554_183_978_123_5,
                0.023_129_266_833_393_385,
                0.131_242_084_937_112_26,
                0.169_922_870_274_659_27,
            ],
        ),
    ];
    let back = [
        (
            0.0,
            [
                0.072_663_125_807_945_1,
                0.245_963_589_148_402_27,
                0.072_663_125_807_945_1,
                0.245_963_589_148_402_27,
            ],
        ),
        (
            30.0,
            [
                0.092_163_533_444_306_11,
                0.209_530_598_449_574_45,
                0.048_502_623_651_094_014,
                0.253_487_363_690_341_5,
            ],
        ),
        (
            60.0,
            [
                0.211_118_650_591_041_32,
                0.108_063_299_216_473_31,
                0.004_399_921_229_609_739,
                0.268_042_889_690_662_3,
            ],
        ),
        (
            80.0,
            [
                0.557_193_343_503_384_1,
                0.023_129_266_833_393_385,
                0.239_984_415_353_142_55,
                0.169_922_870_274_659_47,
            ],
        ),
    ];
    let part = Part {
        incident: 1.0,
        front: &FRONT,
        substrate: Complex64::new(1.52, 5e-5),
        mm: 1.0,
        back: &[],
        exit: 1.0,
    };
    for (aoi, want) in front {
        check(
            &part.solve(600.0, aoi, Side::Front),
            want,
            1e-12,
            &format!("front {aoi}°"),
        );
    }
    for (aoi, want) in back {
        check(
            &part.solve(600.0, aoi, Side::Back),
            want,
            1e-12,
            &format!("back {aoi}°"),
        );
    }
}

#[test]
fn both_faces_coated_match_the_incoherent_layer_method() {
    // tmm 0.2.0 at 600 nm: the front coating above, substrate 1.52+5e-5i 1 mm, back coating
    // L 1.38 110 nm on the substrate then H 2.3+0.001i 60 nm, exit medium 1.33:
    //   n = [1, 2.1+0.002j, 1.46, 1.52+5e-5j, 1.38, 2.3+0.001j, 1.33]
    //   d = [inf, 70, 95, 1e6, 110, 60, inf]; c = ['i','c','c','i','c','c','i']
    //   front: inc_tmm(pol, n, d, c, th, 600.0); back: the lists reversed
    let front = [
        (
            0.0,
            [
                0.284_384_963_865_611_46,
                0.189_149_674_204_902_45,
                0.284_384_963_865_611_46,
                0.189_149_674_204_902_45,
            ],
        ),
        (
            45.0,
            [
                0.413_317_348_866_591_4,
                0.119_880_359_437_126_67,
                0.143_885_922_307_761_45,
                0.219_893_592_937_092_85,
            ],
        ),
        (
            80.0,
            [
                0.804_331_219_522_240_2,
                0.027_335_354_338_445_43,
                0.122_527_079_340_227_73,
                0.208_593_176_409_223_12,
            ],
        ),
    ];
    let back = [
        (
            0.0,
            [
                0.285_695_262_626_336_43,
                0.189_149_674_204_902_67,
                0.285_695_262_626_336_43,
                0.189_149_674_204_902_67,
            ],
        ),
        (
            45.0,
            [
                0.451_724_511_266_319_63,
                0.052_646_058_581_213_33,
                0.079_080_986_338_310_61,
                0.241_133_610_121_677_4,
            ],
        ),
        // 1.33 · sin 80° > 1: total internal reflection at the air side, T ≈ 0.
        (
            80.0,
            [
                0.842_759_190_030_517_7,
                2.699_934_008_381_71e-18,
                0.252_099_009_045_451_46,
                1.613_453_509_020_798e-17,
            ],
        ),
    ];
    let back_coating = [
        (Complex64::new(1.38, 0.0), 110.0),
        (Complex64::new(2.3, 0.001), 60.0),
    ];
    let part = Part {
        incident: 1.0,
        front: &FRONT,
        substrate: Complex64::new(1.52, 5e-5),
        mm: 1.0,
        back: &back_coating,
        exit: 1.33,
    };
    for (aoi, want) in front {
        check(
            &part.solve(600.0, aoi, Side::Front),
            want,
            1e-12,
            &format!("front {aoi}°"),
        );
    }
    for (aoi, want) in back {
        check(
            &part.solve(600.0, aoi, Side::Back),
            want,
            1e-12,
            &format!("back {aoi}°"),
        );
    }
}

#[test]
fn a_back_coating_like_the_front_one_looks_the_same_from_both_sides() {
    // Air | C | substrate | C | air with the same coating C on both faces (each listed from
    // the substrate outward) is its own mirror image: R and T are the same from either side.
    for substrate in [re(1.52), Complex64::new(1.52, 1e-5)] {
        let part = Part {
            incident: 1.0,
            front: &FRONT,
            substrate,
            mm: 2.0,
            back: &FRONT,
            exit: 1.0,
        };
        for aoi in [0.0, 20.0, 45.0, 70.0] {
            for wl in [450.0, 600.0, 900.0] {
                let f = part.solve(wl, aoi, Side::Front);
                let b = part.solve(wl, aoi, Side::Back);
                check(
                    &b,
                    [f.r_s, f.t_s, f.r_p, f.t_p],
                    1e-14,
                    &format!("{wl} nm {aoi}°"),
                );
            }
        }
    }
    // With the back bare instead, the two sides differ (the check above can fail): the
    // absorbing H layer takes more from light that reaches it through the substrate.
    let bare = Part {
        incident: 1.0,
        front: &FRONT,
        substrate: re(1.52),
        mm: 2.0,
        back: &[],
        exit: 1.0,
    };
    let (f, b) = (
        bare.solve(600.0, 0.0, Side::Front),
        bare.solve(600.0, 0.0, Side::Back),
    );
    assert!((f.r() - b.r()).abs() > 1e-4, "{} vs {}", f.r(), b.r());
}

#[test]
fn an_ar_coating_on_the_back_removes_the_back_reflection() {
    // A quarter wave of n = √1.52 on each face of a lossless 1.52 window at λ0 is a perfect
    // AR coating (Macleod ch. 3: R = ((n0 ns − n1²)/(n0 ns + n1²))² = 0), so with both faces
    // coated R = 0 and T = 1; with only the front coated the bare back face's 4.26 % remains
    // (Fresnel ((1.52 − 1)/(1.52 + 1))² = 0.042579994960947, physics-checks §1.1).
    let n1 = 1.52f64.sqrt();
    let ar = [(re(n1), 550.0 / (4.0 * n1))];
    let both = Part {
        incident: 1.0,
        front: &ar,
        substrate: re(1.52),
        mm: 3.0,
        back: &ar,
        exit: 1.0,
    };
    let r = both.solve(550.0, 0.0, Side::Front);
    assert!(r.r() < 1e-15 && (r.t() - 1.0).abs() < 1e-15, "{r:?}");
    let front_only = Part { back: &[], ..both };
    let r = front_only.solve(550.0, 0.0, Side::Front);
    assert!((r.r() - 0.042_579_994_960_947).abs() < 1e-12, "{r:?}");
    // Light from the back meets the back face first: coat the back only and look from
    // behind — the same 4.26 % now comes from the bare front face.
    let back_only = Part {
        front: &[],
        back: &ar,
        ..front_only
    };
    let r = back_only.solve(550.0, 0.0, Side::Back);
    assert!((r.r() - 0.042_579_994_960_947).abs() < 1e-12, "{r:?}");
}

/// A design file's text, with an optional `back_layers` line.
fn design_text(back_layers: &str) -> String {
    format!(
        r#"(
    format: 1,
    name: "Window",
    reference_nm: 550.0,
    incident: "Air",
    substrate: "G",
    substrate_mm: Some(2.0),
    exit: "Air",
    layers: [(material: "H", nm: 60.0), (material: "L", nm: 94.0)],
    {back_layers}
    materials: [
        (name: "G", model: Constant(n: 1.52, k: 0.0)),
        (name: "H", model: Constant(n: 2.1, k: 0.0)),
        (name: "L", model: Constant(n: 1.46, k: 0.0)),
    ],
)"#
    )
}

#[test]
fn zero_back_layers_change_nothing() {
    // A file without the field, one with `back_layers: []`: the same design and the same
    // numbers to the last bit, from both sides.
    let old: Design = ron::from_str(&design_text("")).unwrap();
    let empty: Design = ron::from_str(&design_text("back_layers: [],")).unwrap();
    assert_eq!(old, empty, "same design");
    let wl: Vec<f64> = (0..=60).map(|i| 400.0 + 5.0 * f64::from(i)).collect();
    for side in [Side::Front, Side::Back] {
        for aoi in [0.0, 45.0] {
            let a = stackwise::analysis::spectrum(&old.resolve().unwrap(), &wl, aoi, side).unwrap();
            let b =
                stackwise::analysis::spectrum(&empty.resolve().unwrap(), &wl, aoi, side).unwrap();
            assert_eq!(
                format!("{:?}", a.curves),
                format!("{:?}", b.curves),
                "{side:?} {aoi}°"
            );
        }
    }
    // Saving a design without back layers writes no back_layers field.
    assert!(
        !stackwise::design::file::to_ron_string(&old)
            .unwrap()
            .contains("back_layers")
    );
}

#[test]
fn back_layers_round_trip_and_count() {
    let mut d: Design =
        ron::from_str(&design_text(r#"back_layers: [(material: "L", nm: 94.0)],"#)).unwrap();
    d.validate().unwrap();
    let r = d.resolve().unwrap();
    assert_eq!(
        r.back_layers,
        vec![(1, 94.0)],
        "the back layer shares the L material"
    );
    d.back_layers.push(Layer::new("H", Nm::new(10.0).unwrap()));
    let text = stackwise::design::file::to_ron_string(&d).unwrap();
    let again: Design = ron::from_str(&text).unwrap();
    assert_eq!(again, d, "round trip");
    // A back-only material is resolved too.
    d.materials
        .push(Material::user("M", Model::Constant { n: 1.7, k: 0.0 }));
    d.back_layers[0].material = "M".into();
    let r = d.resolve().unwrap();
    assert_eq!(r.materials.len(), 3, "H, L and M");
    assert_eq!(r.back_layers[0].0, 2, "M after the front materials");
}

#[test]
fn a_lossless_substrate_without_back_layers_gives_the_one_face_results_to_the_last_bit() {
    // The one-face formulas the engine used before back coatings existed (the coating from
    // outside f and from inside b, the bare back surface ′ from inside and from the exit
    // medium e): R = R_f + T_f² τ² R′/(1 − R_b R′ τ²), T = T_f τ T′/(…) from the front;
    // R = R′_e + T′_e² τ² R_b/(…), T = T′_e τ T_b/(…) from the back.
    use stackwise::optics::{Tilted, coherent};
    let layers = [
        (re(1.46), 95.0),
        (re(2.1), 70.0),
        (Complex64::new(0.05, 3.0), 8.0),
    ];
    let (n0, ns, ne) = (re(1.0), re(1.52), re(1.33));
    for (wl, aoi) in [(450.0, 0.0), (600.0, 30.0), (800.0, 60.0)] {
        for side in [Side::Front, Side::Back] {
            let snell = match side {
                Side::Front => n0.re,
                Side::Back => ne.re,
            } * f64::to_radians(aoi).sin();
            let t = |n| Tilted::new(n, snell);
            let mats: Vec<Tilted> = layers.iter().map(|l| t(l.0)).collect();
            let seq = || mats.iter().zip(layers.iter().map(|l| l.1));
            let f = coherent(&t(n0), seq(), &t(ns), wl);
            let b = coherent(&t(ns), seq().rev(), &t(n0), wl);
            let back = coherent(&t(ns), std::iter::empty(), &t(ne), wl);
            let bare = coherent(&t(ne), std::iter::empty(), &t(ns), wl);
            let tau: f64 = 1.0;
            let tau2 = tau * tau;
            let part = Part {
                incident: n0.re,
                front: &layers,
                substrate: ns,
                mm: 1.0,
                back: &[],
                exit: ne.re,
            };
            let got = part.solve(wl, aoi, side);
            for (pol, (f, b, back, bare), (r, tt)) in [
                ("s", (f.s, b.s, back.s, bare.s), (got.r_s, got.t_s)),
                ("p", (f.p, b.p, back.p, bare.p), (got.r_p, got.t_p)),
            ] {
                let den = 1.0 - b.reflectance * back.reflectance * tau2;
                let (want_r, want_t) = match side {
                    Side::Front => {
                        let tf = f.transmittance;
                        (
                            f.reflectance + tf * tf * tau2 * back.reflectance / den,
                            tf * tau * back.transmittance / den,
                        )
                    }
                    Side::Back => {
                        let te = bare.transmittance;
                        (
                            bare.reflectance + te * te * tau2 * b.reflectance / den,
                            te * tau * b.transmittance / den,
                        )
                    }
                };
                assert_eq!(
                    r.to_bits(),
                    want_r.to_bits(),
                    "R_{pol} {wl} nm {aoi}° {side:?}"
                );
                assert_eq!(
                    tt.to_bits(),
                    want_t.to_bits(),
                    "T_{pol} {wl} nm {aoi}° {side:?}"
                );
            }
        }
    }
}

#[test]
fn info_and_the_layer_report_list_both_faces() {
    use stackwise::cli;
    use stackwise::export::report::LayerReport;
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("window.ron");
    let text =
        design_text(r#"back_layers: [(material: "L", nm: 94.0), (material: "H", nm: 10.0)],"#);
    std::fs::write(&path, &text).unwrap();
    let (mut out, mut err) = (Vec::new(), Vec::new());
    cli::run(cli::Command::Info { design: path }, &mut out, &mut err).unwrap();
    let info = String::from_utf8(out).unwrap();
    assert!(info.contains("2 layers, 154.000 nm in all"), "{info}");
    assert!(
        info.contains("back face") && info.contains("2 back layers, 104.000 nm in all"),
        "{info}"
    );
    // Back layer 1, L (n = 1.46) 94 nm: QWOT 4·1.46·94/550 = 0.99811, optical 137.240 nm.
    assert!(
        info.contains("0.9981") && info.contains("137.240"),
        "{info}"
    );

    let d: Design = ron::from_str(&text).unwrap();
    let r = LayerReport::new(&d).unwrap();
    assert_eq!(r.back_rows.len(), 2, "two back rows");
    assert!(
        (r.back_rows[0].qwot - 4.0 * 1.46 * 94.0 / 550.0).abs() < 1e-12,
        "QWOT"
    );
    assert!((r.back_total_nm() - 104.0).abs() < 1e-12, "back total");
    let csv = r.to_csv();
    assert!(
        csv.contains("\nback_layer,material,nm,qwot,optical_nm,cumulative_nm,locked\n1,L,94,"),
        "{csv}"
    );
    assert!(
        csv.trim_end()
            .ends_with("2,H,10,0.15272727272727274,21,104,false"),
        "{csv}"
    );
    let md = r.to_markdown();
    assert!(
        md.contains("## Back face") && md.contains("| Back layer | Material"),
        "{md}"
    );
    let html = r.to_html();
    assert!(
        html.contains("<table class=\"back-layers\">") && html.ends_with("</html>\n"),
        "{html}"
    );

    // Without back layers, no second table.
    let bare: Design = ron::from_str(&design_text("")).unwrap();
    let r = LayerReport::new(&bare).unwrap();
    assert!(!r.to_csv().contains("back_layer") && !r.to_markdown().contains("Back face"));
}
