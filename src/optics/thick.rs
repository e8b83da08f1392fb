//! A thick, incoherent substrate: the coating and the bare back surface combined by intensity.
//!
//! Multiple reflections inside the substrate add as a geometric series of intensities, each
//! pass through the substrate multiplied by its internal transmittance τ:
//!
//! * light from the front: R = R_f + T_f² τ² R′ / (1 − R_b R′ τ²), T = T_f τ T′ / (1 − R_b R′ τ²)
//! * light from the back: R = R′_e + T′² τ² R_b / (1 − R_b R′ τ²), T = T′ τ T_f / (1 − R_b R′ τ²)
//!
//! where f is the coating seen from the incident medium, b the coating seen from inside the
//! substrate, ′ the back surface seen from inside (and ′_e from the exit medium); the coating's
//! transmittance is the same from both sides (reciprocity) and so is the bare surface's.

use num_complex::Complex64;

use super::Coherent;

/// The pieces a thick substrate combines, per polarisation.
#[derive(Clone, Copy, Debug)]
pub struct ThickSides {
    /// The surface the light meets first, seen from outside: the coating from the incident
    /// medium (front incidence) or the bare back surface from the exit medium (back incidence).
    pub coating_in: Coherent,
    /// The coating seen from inside the substrate.
    pub coating_inside: Coherent,
    /// The bare back surface seen from inside the substrate.
    pub back_inside: Coherent,
    /// Internal transmittance τ of one pass through the substrate, s and p.
    pub internal: f64,
}

/// Internal transmittance of one oblique pass: exp(−2 k₀ Im(q) d) with q = N cos θ.
///
/// ```
/// use num_complex::Complex64;
/// // k = 1e-6 at 500 nm through 1 mm at normal incidence: exp(−4π k d / λ)
/// let tau = stackwise::optics::thick::internal_transmittance(Complex64::new(1.5, 1e-6), 1e6, 500.0);
/// assert!((tau - (-4.0 * std::f64::consts::PI * 1e-6 * 1e6 / 500.0).exp()).abs() < 1e-15);
/// ```
#[must_use]
pub fn internal_transmittance(q: Complex64, thickness_nm: f64, wavelength_nm: f64) -> f64 {
    (-2.0 * std::f64::consts::TAU / wavelength_nm * q.im * thickness_nm).exp()
}

/// (R, T, A) for s then p, for light arriving at the coated front.
#[must_use]
pub fn combine_front(sides: &ThickSides) -> [(f64, f64, f64); 2] {
    let tau = sides.internal;
    let one = |f: (f64, f64), rb: f64, (rr, tr): (f64, f64)| {
        let (rf, tf) = f;
        let den = 1.0 - rb * rr * tau * tau;
        let r = rf + tf * tf * tau * tau * rr / den;
        let t = tf * tau * tr / den;
        // A by difference; a negative value can only be rounding.
        (r, t, (1.0 - r - t).max(0.0))
    };
    let c = sides;
    [
        one(
            (c.coating_in.s.reflectance, c.coating_in.s.transmittance),
            c.coating_inside.s.reflectance,
            (c.back_inside.s.reflectance, c.back_inside.s.transmittance),
        ),
        one(
            (c.coating_in.p.reflectance, c.coating_in.p.transmittance),
            c.coating_inside.p.reflectance,
            (c.back_inside.p.reflectance, c.back_inside.p.transmittance),
        ),
    ]
}

/// (R, T, A) for s then p, for light arriving at the bare back surface from the exit medium;
/// `coating_in` holds that bare surface seen from the exit medium.
#[must_use]
pub fn combine_back(sides: &ThickSides) -> [(f64, f64, f64); 2] {
    let tau = sides.internal;
    let one = |(re, te): (f64, f64), (rb, tb): (f64, f64), rr: f64| {
        let den = 1.0 - rb * rr * tau * tau;
        let r = re + te * te * tau * tau * rb / den;
        let t = te * tau * tb / den;
        // A by difference; a negative value can only be rounding.
        (r, t, (1.0 - r - t).max(0.0))
    };
    let c = sides;
    [
        one(
            (c.coating_in.s.reflectance, c.coating_in.s.transmittance),
            (
                c.coating_inside.s.reflectance,
                c.coating_inside.s.transmittance,
            ),
            c.back_inside.s.reflectance,
        ),
        one(
            (c.coating_in.p.reflectance, c.coating_in.p.transmittance),
            (
                c.coating_inside.p.reflectance,
                c.coating_inside.p.transmittance,
            ),
            c.back_inside.p.reflectance,
        ),
    ]
}
