//! The analysis views (phase and dispersion, field, admittance, colour, wavelength × angle
//! map): physics checks against published values. The commands: `tests/views_cli.rs`.

use std::ops::ControlFlow;

use stackwise::analysis::admittance::admittance_locus;
use stackwise::analysis::color::{
    Illuminant, Observer, SAMPLES, color_wavelengths_nm, colour_of, design_colour, tristimulus,
};
use stackwise::analysis::field::field_profile;
use stackwise::analysis::map::{MapStop, rt_map};
use stackwise::analysis::phase::{C_NM_PER_FS, phase_spectrum};
use stackwise::analysis::{angles_deg, spectrum, wavelengths_nm};
use stackwise::design::{Design, Layer, Nm, Pol, Quantity};
use stackwise::material::{Material, Model};
use stackwise::optics::Side;
use stackwise::optics::field::Polarisation;

/// A design of constant-index materials: `layers` as (material, nm), substrate side first.
fn design(incident: f64, substrate: f64, mats: &[(&str, f64)], layers: &[(&str, f64)]) -> Design {
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
    for (name, n) in mats {
        d.materials
            .push(Material::user(name, Model::Constant { n: *n, k: 0.0 }));
    }
    d.layers = layers
        .iter()
        .map(|(m, nm)| Layer::new(m, Nm::new(*nm).expect("a valid thickness")))
        .collect();
    d
}

/// A quarter-wave stack at `l0` of 2.35 / 1.45 on 1.52 from air, substrate side first.
fn quarter_waves(l0: f64, pattern: &str) -> Design {
    let (h, l) = (l0 / (4.0 * 2.35), l0 / (4.0 * 1.45));
    let layers: Vec<(&str, f64)> = pattern
        .chars()
        .map(|c| if c == 'H' { ("H", h) } else { ("L", l) })
        .collect();
    design(1.0, 1.52, &[("H", 2.35), ("L", 1.45)], &layers)
}

// ---------------------------------------------------------------- phase, group delay, GDD

#[test]
fn quarter_wave_mirror_group_delay_matches_the_penetration_depth_result() {
    // λ0 = 800 nm, nH = 2.35, nL = 1.45, from air on 1.52. Babić & Corzine, IEEE J. Quantum
    // Electron. 28, 514 (1992) (citation from memory): H outermost τ = λ0 n0 / (2c (nH − nL)),
    // L outermost τ = λ0 nH nL / (2c n0 (nH − nL)); the 40-pair values 1.482507 fs and
    // 5.051643 fs are tabulated in reference/physics-checks.md §1.11.
    let l0 = 800.0;
    let hl_h = format!("{}H", "HL".repeat(40));
    let p = phase_spectrum(
        &quarter_waves(l0, &hl_h).resolve().unwrap(),
        &[l0],
        0.0,
        Side::Front,
    )
    .unwrap();
    let closed = l0 * 1.0 / (2.0 * C_NM_PER_FS * (2.35 - 1.45));
    assert!((closed - 1.482_507).abs() < 1e-6, "closed form {closed}");
    assert!(
        (p.r_s.gd_fs[0] - 1.482_507).abs() < 2e-6,
        "{:?}",
        p.r_s.gd_fs
    );
    assert!(
        (p.r_p.gd_fs[0] - p.r_s.gd_fs[0]).abs() < 1e-9,
        "s = p at 0°"
    );
    // GDD is exactly 0 at the centre of an ideal quarter-wave stack (r(1 − x) = conj r(1 + x),
    // physics-checks.md §1.11); the difference scheme's noise is far below 1e-3 fs².
    assert!(p.r_s.gdd_fs2[0].abs() < 1e-3, "{:?}", p.r_s.gdd_fs2);

    // L outermost: H on the substrate, L last.
    let lh = "HL".repeat(40);
    let p = phase_spectrum(
        &quarter_waves(l0, &lh).resolve().unwrap(),
        &[l0],
        0.0,
        Side::Front,
    )
    .unwrap();
    let closed = l0 * 2.35 * 1.45 / (2.0 * C_NM_PER_FS * (2.35 - 1.45));
    assert!((closed - 5.051_643).abs() < 1e-6, "closed form {closed}");
    assert!(
        (p.r_s.gd_fs[0] - 5.051_643).abs() < 2e-6,
        "{:?}",
        p.r_s.gd_fs
    );
}

#[test]
fn group_delay_includes_material_dispersion() {
    // A layer between two half-spaces of its own material transmits t = exp(i k0 n d), so
    // its group delay is d n_g / c with the group index n_g = n − λ dn/dλ. For Cauchy
    // n = a + b/λ² (λ in µm): n_g = a + 3b/λ² (closed form; Born & Wolf §1.3.4 for n_g).
    let (a, b) = (1.45, 0.0036);
    let mut d = Design::new_empty("dispersive block");
    d.incident = "G".into();
    d.substrate = "G".into();
    d.materials = vec![Material::user("G", Model::Cauchy { a, b, c: 0.0 })];
    let thick_nm = 20_000.0;
    d.layers = vec![Layer::new("G", Nm::new(thick_nm).unwrap())];
    let wl = [500.0, 800.0, 1300.0];
    let p = phase_spectrum(&d.resolve().unwrap(), &wl, 0.0, Side::Front).unwrap();
    for (i, l) in wl.iter().enumerate() {
        let um2 = (l / 1000.0) * (l / 1000.0);
        let n_g = a + 3.0 * b / um2;
        let want = thick_nm * n_g / C_NM_PER_FS;
        assert!(
            (p.t_s.gd_fs[i] - want).abs() < 1e-6 * want,
            "{l} nm: {} vs {want}",
            p.t_s.gd_fs[i]
        );
        // Without dispersion it would be d n / c: clearly different.
        let phase_only = thick_nm * (a + b / um2) / C_NM_PER_FS;
        assert!((p.t_s.gd_fs[i] - phase_only).abs() > 1e-3, "{l} nm");
        // GDD = d/c · dn_g/dω; n_g = a + 3b/λ² grows with ω (λ = 2πc/ω), so with
        // dλ/dω = −λ²/(2πc): dn_g/dω = 6b/λ³ · λ²/(2πc) = 6b/(2πcλ) (λ in µm, c in µm/fs).
        let c_um = C_NM_PER_FS / 1000.0;
        let gdd = thick_nm * 6.0 * b / (std::f64::consts::TAU * c_um * (l / 1000.0)) / C_NM_PER_FS;
        assert!(
            (p.t_s.gdd_fs2[i] - gdd).abs() < 1e-3 * gdd,
            "{l} nm: GDD {} vs {gdd}",
            p.t_s.gdd_fs2[i]
        );
    }
    // Unwrapped along a grid fine enough (≈ 42° per step at 500 nm), the phase of t follows
    // δ = 2π n d / λ exactly, many turns over the band.
    let fine = wavelengths_nm(500.0, 1300.0, 1.0).unwrap();
    let p = phase_spectrum(&d.resolve().unwrap(), &fine, 0.0, Side::Front).unwrap();
    let delta_deg = |l: f64| {
        let um2 = (l / 1000.0) * (l / 1000.0);
        360.0 * (a + b / um2) * thick_nm / l
    };
    let turned = p.t_s.phase_deg[0] - p.t_s.phase_deg[fine.len() - 1];
    let want = delta_deg(500.0) - delta_deg(1300.0);
    assert!(want > 3600.0, "more than ten turns: {want}");
    assert!((turned - want).abs() < 1e-6, "{turned} vs {want}");
}

#[test]
fn a_tabulated_material_gives_a_smooth_group_delay_dispersion() {
    // The same dispersive block as above, but its material given as a table: the Cauchy
    // values at every 2 nm, rounded to 6 decimals (as published tables are), linear between
    // rows. At wavelengths on a row the kink of the linear interpolation must not turn into a
    // spike (differenced as they are, the rows give 56 840 fs² at 600 nm instead of 1.275):
    // GD and GDD agree with the closed forms of the smooth formula, GDD to within the noise of
    // the 6-decimal rounding (about 1 %).
    let (a, b) = (1.45, 0.0036);
    let cauchy = |l: f64| a + b / ((l / 1000.0) * (l / 1000.0));
    let rows: Vec<(f64, f64, f64)> = (0..=500)
        .map(|i| {
            let l = 400.0 + 2.0 * f64::from(i);
            (l, (cauchy(l) * 1e6).round() / 1e6, 0.0)
        })
        .collect();
    let mut d = Design::new_empty("tabulated block");
    d.incident = "G".into();
    d.substrate = "G".into();
    d.materials = vec![Material::user("G", Model::Table { rows })];
    let thick_nm = 20_000.0;
    d.layers = vec![Layer::new("G", Nm::new(thick_nm).unwrap())];
    let wl = [600.0, 800.0, 1000.0, 1001.0];
    let p = phase_spectrum(&d.resolve().unwrap(), &wl, 0.0, Side::Front).unwrap();
    for (i, l) in wl.iter().enumerate() {
        let um = l / 1000.0;
        let gd = thick_nm * (a + 3.0 * b / (um * um)) / C_NM_PER_FS;
        let c_um = C_NM_PER_FS / 1000.0;
        let gdd = thick_nm * 6.0 * b / (std::f64::consts::TAU * c_um * um) / C_NM_PER_FS;
        assert!(
            (p.t_s.gd_fs[i] - gd).abs() < 1e-5 * gd,
            "{l} nm: GD {} vs {gd}",
            p.t_s.gd_fs[i]
        );
        assert!(
            (p.t_s.gdd_fs2[i] - gdd).abs() < 0.02 * gdd,
            "{l} nm: GDD {} vs {gdd}",
            p.t_s.gdd_fs2[i]
        );
    }
}

// ---------------------------------------------------------------- field

fn three_layer() -> Design {
    // The lossless stack of physics-checks.md §1.10: air | 2.35 (60) | 1.38 (80) | 2.35 (37)
    // | 1.45 (100) | 1.52, listed here substrate side first.
    design(
        1.0,
        1.52,
        &[("H", 2.35), ("L", 1.38), ("M", 1.45)],
        &[("M", 100.0), ("H", 37.0), ("L", 80.0), ("H", 60.0)],
    )
}

#[test]
fn field_at_the_surface_is_the_incident_plus_reflected_standing_wave() {
    let d = three_layer();
    let r = d.resolve().unwrap();
    let (wl, aoi) = (616.8, 30.0);
    let s = spectrum(&r, &[wl], aoi, Side::Front).unwrap();
    // R_s, R_p of this stack: physics-checks.md §1.10.
    assert!(
        (s.curves.r_s[0] - 0.477_541_257_528_650).abs() < 1e-12,
        "R_s"
    );
    assert!(
        (s.curves.r_p[0] - 0.324_565_674_456_725).abs() < 1e-12,
        "R_p"
    );
    let th = aoi.to_radians();
    for pol in [Polarisation::S, Polarisation::P] {
        let f = field_profile(&r, wl, aoi, pol, 0.5).unwrap();
        let surface = f.interfaces[0];
        assert!(
            surface.depth_nm.abs() < 1e-12,
            "the first interface is the surface"
        );
        // E_tan = E_i,tan (1 + r), H = η0 E_i,tan (1 − r); for p also E_z = tan θ0 · (1 − r)
        // of the tangential incident amplitude (Born & Wolf §1.5 geometry).
        let (want, amp) = match pol {
            Polarisation::S => {
                let r = s.curves.amp_r_s[0];
                ((1.0 + r).norm_sqr(), r)
            }
            Polarisation::P => {
                let r = s.curves.amp_r_p[0];
                let c2 = th.cos().powi(2);
                (
                    c2 * (1.0 + r).norm_sqr() + (1.0 - c2) * (1.0 - r).norm_sqr(),
                    r,
                )
            }
        };
        assert!(
            (surface.e2_above - want).abs() < 1e-12,
            "{pol:?}: {} vs {want} (r = {amp})",
            surface.e2_above
        );
        // |E|² is continuous at the surface (same medium side for s; for p at the surface the
        // normal component jumps with N², so only s is compared across it).
        if pol == Polarisation::S {
            for x in &f.interfaces {
                assert!((x.e2_above - x.e2_below).abs() < 1e-12, "continuous: {x:?}");
            }
        }
        // Lossless: the net power flow is the same through every boundary, equal to T at the
        // substrate and to 1 − R at the surface.
        let (t, rr) = match pol {
            Polarisation::S => (s.curves.t_s[0], s.curves.r_s[0]),
            Polarisation::P => (s.curves.t_p[0], s.curves.r_p[0]),
        };
        for flow in &f.net_flow {
            assert!((flow - t).abs() < 1e-12, "{pol:?}: {flow} vs T {t}");
            assert!((flow - (1.0 - rr)).abs() < 1e-12, "{pol:?}: 1 − R");
        }
    }
}

#[test]
fn field_in_the_substrate_is_the_transmitted_wave_and_p_jumps_with_the_index() {
    // Below the stack only the transmitted wave remains: |E|² = |t|² with t the solver's
    // field amplitude (its own formula, optics module doc). For p the tangential E_x and H_y
    // are continuous and E_z = −S H_y / N² (Maxwell: D_z continuous), so just above the
    // interface the intensity differs by cos²θ0 S² |H|² (1/nH⁴ − 1/ns⁴).
    let (nh, ns, wl, aoi) = (2.35, 1.52, 550.0, 50.0);
    let d = design(1.0, ns, &[("H", nh)], &[("H", 100.0)]);
    let r = d.resolve().unwrap();
    let s = spectrum(&r, &[wl], aoi, Side::Front).unwrap();
    let (sin0, cos0) = aoi.to_radians().sin_cos();
    let cos_s = (1.0 - (sin0 / ns).powi(2)).sqrt();
    for pol in [Polarisation::S, Polarisation::P] {
        let f = field_profile(&r, wl, aoi, pol, 0.5).unwrap();
        let x = f.interfaces[1];
        assert_eq!((x.above, x.below), (1, 0), "layer 1 over the substrate");
        let t = match pol {
            Polarisation::S => s.curves.amp_t_s[0],
            Polarisation::P => s.curves.amp_t_p[0],
        };
        assert!(
            (x.e2_below - t.norm_sqr()).abs() < 1e-12,
            "{pol:?}: {x:?} vs |t|²"
        );
        let last = f.points.last().unwrap()[1];
        assert!(
            (last - t.norm_sqr()).abs() < 1e-12,
            "{pol:?}: constant in the substrate"
        );
        if pol == Polarisation::P {
            let ex = t * cos_s / cos0; // tangential, per unit incident tangential field
            let h = ex * ns / cos_s; // η_p = N / cos θ
            let jump = cos0 * cos0 * sin0 * sin0 * h.norm_sqr() * (nh.powi(-4) - ns.powi(-4));
            assert!(jump.abs() > 1e-3, "a visible jump");
            assert!(
                (x.e2_above - x.e2_below - jump).abs() < 1e-12,
                "{x:?} vs jump {jump}"
            );
        } else {
            assert!(
                (x.e2_above - x.e2_below).abs() < 1e-12,
                "s is continuous: {x:?}"
            );
        }
    }
}

#[test]
fn field_for_a_design_with_no_layers_is_refused() {
    let d = design(1.0, 1.52, &[], &[]);
    let e = field_profile(&d.resolve().unwrap(), 550.0, 0.0, Polarisation::S, 1.0)
        .unwrap_err()
        .to_string();
    assert!(e.contains("no layers"), "{e}");
}

// ---------------------------------------------------------------- admittance

#[test]
fn a_quarter_wave_layer_ends_at_eta_squared_over_the_substrate() {
    // Macleod, "Thin-Film Optical Filters", ch. 2: a quarter wave turns Y into η²/Y; with
    // tilted admittances the same holds at oblique incidence for a quarter wave of q d.
    let (n, ns, wl, aoi): (f64, f64, f64, f64) = (2.1, 1.52, 633.0, 45.0);
    let snell = aoi.to_radians().sin();
    let q = (n * n - snell * snell).sqrt();
    let d = design(1.0, ns, &[("H", n)], &[("H", wl / (4.0 * q))]);
    let r = d.resolve().unwrap();
    for pol in [Polarisation::S, Polarisation::P] {
        let y = admittance_locus(&r, wl, aoi, pol, 1.0).unwrap();
        let qs = (ns * ns - snell * snell).sqrt();
        let (eta, eta_s) = match pol {
            Polarisation::S => (q, qs),
            Polarisation::P => (n * n / q, ns * ns / qs),
        };
        let end = y.boundaries[1];
        assert!(
            (end[0] - eta * eta / eta_s).abs() < 1e-12,
            "{pol:?}: {end:?}"
        );
        assert!(end[1].abs() < 1e-12, "{pol:?}: real at the end");
        assert!(
            (y.boundaries[0][0] - eta_s).abs() < 1e-12,
            "starts at the substrate"
        );
        let eta0 = match pol {
            Polarisation::S => aoi.to_radians().cos(),
            Polarisation::P => 1.0 / aoi.to_radians().cos(),
        };
        assert!(
            (y.incident[0] - eta0).abs() < 1e-12,
            "{pol:?}: incident admittance"
        );
        // The locus of a lossless layer is a circle centred on the real axis.
        let centre = 0.5 * (eta_s + eta * eta / eta_s);
        let radius = 0.5 * (eta * eta / eta_s - eta_s).abs();
        // Counter-clockwise with N = n + ik: from the real axis at η_s < η it heads into
        // Im Y < 0 (the layer matrix's −i sin δ terms).
        assert!(
            y.points[2][1] < 0.0,
            "{pol:?}: direction {:?}",
            &y.points[..3]
        );
        for p in &y.points[1..] {
            let dist = ((p[0] - centre).powi(2) + p[1] * p[1]).sqrt();
            assert!(
                (dist - radius).abs() < 1e-9,
                "{pol:?}: off the circle at {p:?}"
            );
        }
    }
}

// ---------------------------------------------------------------- colour

#[test]
fn grey_check_of_the_colorimetry_recipe() {
    // Flat R = 0.04, D65, CIE 1931 2°: reference/colorimetry.md §5.2.
    let xyz = tristimulus(&[0.04; SAMPLES], Illuminant::D65, Observer::Cie1931TwoDeg).unwrap();
    assert!((xyz.x - 3.801_860).abs() < 1e-6, "{xyz:?}");
    assert!((xyz.y - 4.000_000).abs() < 1e-9, "{xyz:?}");
    assert!((xyz.z - 4.355_881).abs() < 1e-6, "{xyz:?}");
    let c = colour_of(&[0.04; SAMPLES], Illuminant::D65, Observer::Cie1931TwoDeg).unwrap();
    assert!((c.xy[0] - 0.312_711).abs() < 1e-6 && (c.xy[1] - 0.329_008).abs() < 1e-6);
    assert!((c.lab.l - 23.671_442).abs() < 1e-6, "{:?}", c.lab);
    assert!(c.lab.a.abs() < 1e-9 && c.lab.b.abs() < 1e-9, "neutral");
}

#[test]
fn colour_agrees_with_colour_science() {
    // R(λ) = 0.5 + 0.4 sin(2π(λ − 360)/150) at 360–780 nm, 5 nm. Values from colour-science
    // 0.4.7 (sd_to_XYZ with its default ASTM E308 method; XYZ_to_Lab against the xy of the
    // same sum with R ≡ 1; XYZ_to_sRGB with that white, Bradford adaptation, sRGB encoding),
    // computed once offline:
    //   D65 2°:  XYZ 40.590387 58.957490 34.671900, xy 0.302417 0.439261,
    //            Lab 81.268224 -42.730079 31.135335, sRGB 0.523219 0.868781 0.555303
    //   A 2°:    XYZ 42.988653 55.191032 10.742927, xy 0.394672 0.506699,
    //            Lab 79.151176 -44.408912 29.886014, sRGB 0.321696 0.876462 0.510571
    //   D65 10°: XYZ 42.626006 56.340521 36.135854, xy 0.315509 0.417021,
    //            Lab 79.807228 -29.925256 26.047707, sRGB 0.614103 0.831114 0.580524
    //   A 10°:   XYZ 45.386980 53.887338 10.960150, xy 0.411731 0.488843,
    //            Lab 78.395995 -35.926595 27.194391, sRGB 0.434967 0.852352 0.529907
    let r: Vec<f64> = color_wavelengths_nm()
        .iter()
        .map(|l| 0.5 + 0.4 * (std::f64::consts::TAU * (l - 360.0) / 150.0).sin())
        .collect();
    let cases = [
        (
            Illuminant::D65,
            Observer::Cie1931TwoDeg,
            [40.590_387, 58.957_490, 34.671_900],
            [0.302_417, 0.439_261],
            [81.268_224, -42.730_079, 31.135_335],
            [0.523_219, 0.868_781, 0.555_303],
        ),
        (
            Illuminant::A,
            Observer::Cie1931TwoDeg,
            [42.988_653, 55.191_032, 10.742_927],
            [0.394_672, 0.506_699],
            [79.151_176, -44.408_912, 29.886_014],
            [0.321_696, 0.876_462, 0.510_571],
        ),
        (
            Illuminant::D65,
            Observer::Cie1964TenDeg,
            [42.626_006, 56.340_521, 36.135_854],
            [0.315_509, 0.417_021],
            [79.807_228, -29.925_256, 26.047_707],
            [0.614_103, 0.831_114, 0.580_524],
        ),
        (
            Illuminant::A,
            Observer::Cie1964TenDeg,
            [45.386_980, 53.887_338, 10.960_150],
            [0.411_731, 0.488_843],
            [78.395_995, -35.926_595, 27.194_391],
            [0.434_967, 0.852_352, 0.529_907],
        ),
    ];
    for (ill, obs, xyz, xy, lab, rgb) in cases {
        let c = colour_of(&r, ill, obs).unwrap();
        let tag = format!("{ill:?} {obs:?}");
        for (got, want) in [c.xyz.x, c.xyz.y, c.xyz.z].iter().zip(xyz) {
            assert!((got - want).abs() < 2e-6, "{tag}: XYZ {got} vs {want}");
        }
        for (got, want) in c.xy.iter().zip(xy) {
            assert!((got - want).abs() < 2e-6, "{tag}: xy {got} vs {want}");
        }
        for (got, want) in [c.lab.l, c.lab.a, c.lab.b].iter().zip(lab) {
            assert!((got - want).abs() < 2e-6, "{tag}: Lab {got} vs {want}");
        }
        for (got, want) in [c.srgb.r, c.srgb.g, c.srgb.b].iter().zip(rgb) {
            assert!((got - want).abs() < 2e-6, "{tag}: sRGB {got} vs {want}");
        }
        assert!(c.srgb.in_gamut, "{tag}");
    }
}

#[test]
fn unknown_illuminant_and_observer_are_named() {
    let e = "F2".parse::<Illuminant>().unwrap_err().to_string();
    assert!(e.contains("\"F2\"") && e.contains("D65"), "{e}");
    let e = "5".parse::<Observer>().unwrap_err().to_string();
    assert!(e.contains("\"5\"") && e.contains("10"), "{e}");
    assert_eq!(
        "d65".parse::<Illuminant>().unwrap(),
        Illuminant::D65,
        "any case"
    );
    assert_eq!(
        "10°".parse::<Observer>().unwrap(),
        Observer::Cie1964TenDeg,
        "with a degree sign"
    );
}

#[test]
fn colour_of_a_design_uses_its_spectrum() {
    // An AR coating's residual reflection is coloured; T + R = 1 for a lossless design, so
    // the transmitted and reflected Y add to 100.
    let d = quarter_waves(550.0, "HL");
    let c = design_colour(
        &d.resolve().unwrap(),
        20.0,
        Illuminant::D65,
        Observer::Cie1931TwoDeg,
    )
    .unwrap();
    assert!(
        (c.reflected.xyz.y + c.transmitted.xyz.y - 100.0).abs() < 1e-9,
        "{c:?}"
    );
}

// ---------------------------------------------------------------- map

#[test]
fn every_map_row_equals_the_spectrum_at_that_angle() {
    let d = quarter_waves(600.0, "HLHLHLH").resolve().unwrap();
    let wl = wavelengths_nm(400.0, 800.0, 5.0).unwrap();
    let angles = angles_deg(0.0, 80.0, 10.0).unwrap();
    for (q, pol) in [
        (Quantity::R, Pol::S),
        (Quantity::T, Pol::Mean),
        (Quantity::R, Pol::P),
    ] {
        let m = rt_map(&d, &wl, &angles, q, pol, |_| ControlFlow::Continue(())).unwrap();
        assert_eq!(m.stop, MapStop::Done);
        for (i, &a) in angles.iter().enumerate() {
            let s = spectrum(&d, &wl, a, Side::Front).unwrap();
            let want = stackwise::analysis::compare::curve(&s, q, pol);
            assert_eq!(m.row(i), want, "{q:?} {pol:?} at {a}°");
        }
    }
}

#[test]
fn a_cancelled_map_keeps_the_rows_done() {
    let d = quarter_waves(600.0, &"HL".repeat(30)).resolve().unwrap();
    let wl = wavelengths_nm(400.0, 800.0, 1.0).unwrap();
    let angles = angles_deg(0.0, 80.0, 1.0).unwrap();
    let mut calls = 0;
    let m = rt_map(&d, &wl, &angles, Quantity::R, Pol::Mean, |p| {
        calls += 1;
        assert!(p.done < p.total, "{p:?}");
        ControlFlow::Break(())
    })
    .unwrap();
    assert_eq!(m.stop, MapStop::Cancelled);
    assert_eq!(calls, 1, "stopped at the first report");
    assert_eq!(
        m.values.len(),
        m.aoi_deg.len() * wl.len(),
        "whole rows only"
    );
    assert!(m.aoi_deg.len() < angles.len(), "not every row");
}
