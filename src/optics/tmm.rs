//! The coherent characteristic-matrix solver (conventions in the module doc of `optics`).

use num_complex::Complex64;

use super::Response;

const ONE: Complex64 = Complex64::new(1.0, 0.0);

/// Above this attenuation (nepers) across one layer, the layer's matrix is rescaled by
/// e^(−b) so that thick metal layers cannot overflow; the scale is tracked in a logarithm.
const RESCALE_NEPERS: f64 = 30.0;

/// Every this many layers (in the four-lane loop; the one-point loop checks every layer) the
/// running [B; C] is brought back near 1 when it has left
/// [`SMALL`, `BIG`]: a long stack in its stop band (or many metal layers) multiplies it by a
/// factor per layer, and 1 000 quarter-wave pairs would overflow. R needs only C/B; the scale
/// goes into a logarithm that T and t use.
pub(crate) const RENORM_EVERY: usize = 8;
/// Upper bound of the running [B; C] before rescaling (2^200 ≈ 1.6e60): far enough from
/// overflow that [`RENORM_EVERY`] layers of any accepted index and thickness fit.
pub(crate) const BIG: f64 = 1.606_938_044_258_990_3e60;
/// Lower bound of the running [B; C] before rescaling (2^−200).
pub(crate) const SMALL: f64 = 6.223_015_277_861_142e-61;

/// The power of two that brings `m` (the largest component of [B; C]) back near 1, or `None`
/// when `m` is inside [`SMALL`, `BIG`] (or not a usable number).
pub(crate) fn renorm_factor(m: f64) -> Option<f64> {
    (m.is_finite() && (m > BIG || (m < SMALL && m > 0.0))).then(|| (-m.log2().floor()).exp2())
}

/// Rescales [B; C] by an exact power of two when it has left [`SMALL`, `BIG`]; the natural
/// logarithm of the factor taken out is added to `log_norm`.
fn renorm(b: &mut Complex64, c: &mut Complex64, log_norm: &mut f64) {
    let m = b.re.abs().max(b.im.abs()).max(c.re.abs()).max(c.im.abs());
    if let Some(f) = renorm_factor(m) {
        *b *= f;
        *c *= f;
        *log_norm -= f.ln();
    }
}

/// A medium at one wavelength and one Snell invariant: q = N cos θ and the tilted admittances.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Tilted {
    /// The complex index N.
    pub n: Complex64,
    /// q = N cos θ on the decaying (or forward-propagating) branch.
    pub q: Complex64,
    /// s admittance η_s = q.
    pub eta_s: Complex64,
    /// p admittance η_p = N² / q.
    pub eta_p: Complex64,
    pub(crate) inv_eta_s: Complex64,
    pub(crate) inv_eta_p: Complex64,
}

impl Tilted {
    /// Tilts a medium of index `n` for the Snell invariant `snell` = n₀ sin θ₀.
    ///
    /// ```
    /// use num_complex::Complex64;
    /// use stackwise::optics::Tilted;
    /// // Beyond the critical angle the wave is evanescent: q is purely imaginary, Im q > 0.
    /// let air = Tilted::new(Complex64::new(1.0, 0.0), 1.5 * 60f64.to_radians().sin());
    /// assert!(air.q.re.abs() < 1e-15 && air.q.im > 0.0);
    /// ```
    #[must_use]
    pub fn new(n: Complex64, snell: f64) -> Self {
        let n2 = n * n;
        let mut q = principal_sqrt(n2 - snell * snell);
        if q.im < 0.0 || (q.im == 0.0 && q.re < 0.0) {
            q = -q;
        }
        // Exactly at a critical angle q = 0 and η_p is infinite; nudge to a tiny value so the
        // limit (|r| → 1) comes out instead of NaN.
        if q.norm_sqr() < 1e-300 {
            q = Complex64::new(0.0, 1e-150);
        }
        let eta_p = n2 / q;
        Self {
            n,
            q,
            eta_s: q,
            eta_p,
            inv_eta_s: q.inv(),
            inv_eta_p: q / n2,
        }
    }
}

/// The principal square root of `w` by the algebraic formula: two real square roots and a
/// division, no polar form (which costs an arctangent and a sine and cosine). Accurate to a
/// few ulp: the root is taken of |w| ± Re w with the sign that does not cancel.
fn principal_sqrt(w: Complex64) -> Complex64 {
    let (u, v) = (w.re, w.im);
    // |w|² cannot overflow for the indices a design allows (|N²| ≤ 1e8 or so).
    let m = (u * u + v * v).sqrt();
    if m == 0.0 {
        return Complex64::new(0.0, v);
    }
    if u >= 0.0 {
        let t = (0.5 * (m + u)).sqrt();
        Complex64::new(t, v / (2.0 * t))
    } else {
        let t = (0.5 * (m - u)).sqrt();
        Complex64::new(v.abs() / (2.0 * t), t.copysign(v))
    }
}

/// Amplitudes and intensities for one polarisation of a coherent stack.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Amplitudes {
    /// Complex reflection amplitude (admittance sign convention).
    pub r: Complex64,
    /// Complex transmission amplitude (ratio of electric fields).
    pub t: Complex64,
    /// Reflectance |r|².
    pub reflectance: f64,
    /// Transmittance into the substrate.
    pub transmittance: f64,
    /// Absorptance in the layers.
    pub absorptance: f64,
}

/// s and p results of a coherent stack.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Coherent {
    /// s-polarisation (TE).
    pub s: Amplitudes,
    /// p-polarisation (TM).
    pub p: Amplitudes,
}

impl Coherent {
    /// As a [`Response`] (intensities and amplitudes for s and p).
    #[must_use]
    pub fn response(&self) -> Response {
        Response {
            r_s: self.s.reflectance,
            r_p: self.p.reflectance,
            t_s: self.s.transmittance,
            t_p: self.p.transmittance,
            a_s: self.s.absorptance,
            a_p: self.p.absorptance,
            amp_r_s: self.s.r,
            amp_r_p: self.p.r,
            amp_t_s: self.s.t,
            amp_t_p: self.p.t,
        }
    }
}

/// The coherent response of `layers` (deposition order: the layer on `substrate` first) between
/// a transparent `incident` medium and a semi-infinite `substrate`, all tilted for the same
/// Snell invariant. `(medium, thickness nm)` pairs; no allocation.
///
/// ```
/// use num_complex::Complex64;
/// use stackwise::optics::{coherent, Tilted};
/// let s = 1.0 * 45f64.to_radians().sin();
/// let air = Tilted::new(Complex64::new(1.0, 0.0), s);
/// let glass = Tilted::new(Complex64::new(1.5, 0.0), s);
/// let c = coherent(&air, std::iter::empty(), &glass, 550.0);
/// // Fresnel, 1.0 → 1.5 at 45°: R_s = 0.0920133630 (Born & Wolf §1.5)
/// assert!((c.s.reflectance - 0.0920133630).abs() < 1e-10);
/// ```
#[must_use]
pub fn coherent<'a>(
    incident: &Tilted,
    layers: impl Iterator<Item = (&'a Tilted, f64)>,
    substrate: &Tilted,
    wavelength_nm: f64,
) -> Coherent {
    let k0 = std::f64::consts::TAU / wavelength_nm;
    let (mut bs, mut cs) = (ONE, substrate.eta_s);
    let (mut bp, mut cp) = (ONE, substrate.eta_p);
    let mut log_scale = 0.0;
    let (mut norm_s, mut norm_p) = (0.0, 0.0);
    for (m, d_nm) in layers {
        let delta = m.q * (k0 * d_nm);
        let (sin_a, cos_a) = delta.re.sin_cos();
        let b = delta.im;
        // cos δ and i·sin δ for δ = a + i b.
        let (cos_d, i_sin_d) = if b == 0.0 {
            (Complex64::new(cos_a, 0.0), Complex64::new(0.0, sin_a))
        } else {
            let (ch, sh) = if b.abs() < RESCALE_NEPERS {
                let e = b.exp();
                let ei = 1.0 / e;
                (0.5 * (e + ei), 0.5 * (e - ei))
            } else {
                // Scale the whole matrix by e^(−|b|): cosh, sinh → (1 ± e^(−2|b|))/2.
                log_scale += b.abs();
                let e2 = (-2.0 * b.abs()).exp();
                (0.5 * (1.0 + e2), 0.5 * (1.0 - e2) * b.signum())
            };
            // cos(a + ib) = cos a cosh b − i sin a sinh b; sin(a + ib) = sin a cosh b + i cos a sinh b
            let cos_d = Complex64::new(cos_a * ch, -sin_a * sh);
            let sin_d = Complex64::new(sin_a * ch, cos_a * sh);
            (cos_d, Complex64::new(-sin_d.im, sin_d.re))
        };
        let (xs, ys) = (i_sin_d * m.inv_eta_s, i_sin_d * m.eta_s);
        (bs, cs) = (cos_d * bs - xs * cs, cos_d * cs - ys * bs);
        let (xp, yp) = (i_sin_d * m.inv_eta_p, i_sin_d * m.eta_p);
        (bp, cp) = (cos_d * bp - xp * cp, cos_d * cp - yp * bp);
        // One point at a time, the test is cheap next to the complex products: every layer
        // (a layer below RESCALE_NEPERS may still grow [B; C] by up to e^30).
        renorm(&mut bs, &mut cs, &mut norm_s);
        renorm(&mut bp, &mut cp, &mut norm_p);
    }
    let cos_ratio = (incident.q / incident.n) / (substrate.q / substrate.n);
    let s = finish(
        incident.eta_s,
        bs,
        cs,
        substrate.eta_s,
        ONE,
        log_scale + norm_s,
    );
    let p = finish(
        incident.eta_p,
        bp,
        cp,
        substrate.eta_p,
        cos_ratio,
        log_scale + norm_p,
    );
    Coherent { s, p }
}

/// R, T, A and amplitudes from [B; C]; `eta0` is the polarisation's η₀, `t_factor` turns the
/// tangential-field ratio into the electric-field ratio, and the true [B; C] is the given one
/// times e^`log_scale`. R needs only the ratio; T = 4 η₀ Re(η_sub) e^(−2·log_scale) / |η₀B +
/// C|² is formed in logarithms so that neither factor overflows or underflows on its own.
///
/// An absorbing incident medium (only ever the inside of a thick substrate) keeps its complex
/// η₀: r = (η₀B − C)/(η₀B + C), T = |t_tan|² Re(η_sub)/Re(η₀) with t_tan = 2η₀/(η₀B + C) —
/// the flux of the transmitted wave over that of the incident wave alone, as the
/// incoherent-layer method defines it — and A the flux the layers take, on the same scale.
pub(crate) fn finish(
    eta0: Complex64,
    b: Complex64,
    c: Complex64,
    eta_sub: Complex64,
    t_factor: Complex64,
    log_scale: f64,
) -> Amplitudes {
    if eta0.im != 0.0 {
        return finish_absorbing(eta0, b, c, eta_sub, t_factor, log_scale);
    }
    let eta0 = eta0.re;
    let den = eta0 * b + c;
    let den2 = den.norm_sqr();
    let r = (eta0 * b - c) / den;
    let four = 4.0 * eta0 / den2;
    let (transmittance, absorptance, scale) = if log_scale == 0.0 {
        let t = four * eta_sub.re;
        (t, four * ((b * c.conj()).re - eta_sub.re), 1.0)
    } else if log_scale.abs() < 150.0 && (1e-150..1e150).contains(&den2) {
        // Both factors are far from overflow and underflow: one exponential.
        let scale = (-log_scale).exp();
        let t = four * eta_sub.re * (scale * scale);
        (t, four * (b * c.conj()).re - t, scale)
    } else {
        let x = 4.0 * eta0 * eta_sub.re;
        let t = x.signum() * (x.abs().ln() - 2.0 * log_scale - den2.ln()).exp();
        (t, four * (b * c.conj()).re - t, (-log_scale).exp())
    };
    Amplitudes {
        r,
        t: 2.0 * eta0 / den * t_factor * scale,
        reflectance: r.norm_sqr(),
        transmittance,
        absorptance,
    }
}

/// [`finish`] for an incident medium with a complex admittance.
fn finish_absorbing(
    eta0: Complex64,
    b: Complex64,
    c: Complex64,
    eta_sub: Complex64,
    t_factor: Complex64,
    log_scale: f64,
) -> Amplitudes {
    let den = eta0 * b + c;
    let r = (eta0 * b - c) / den;
    let den2 = eta0.re * den.norm_sqr();
    let four = 4.0 * eta0.norm_sqr() / den2;
    let (transmittance, scale) = if log_scale == 0.0 {
        (four * eta_sub.re, 1.0)
    } else if log_scale.abs() < 150.0 && (1e-150..1e150).contains(&den2.abs()) {
        let scale = (-log_scale).exp();
        (four * eta_sub.re * (scale * scale), scale)
    } else {
        let x = 4.0 * eta0.norm_sqr() * eta_sub.re;
        let t =
            x.signum() * (x.abs().ln() - 2.0 * log_scale - den2.abs().ln()).exp() * den2.signum();
        (t, (-log_scale).exp())
    };
    let absorptance = four * (b * c.conj()).re - transmittance;
    Amplitudes {
        r,
        t: 2.0 * eta0 / den * t_factor * scale,
        reflectance: r.norm_sqr(),
        transmittance,
        absorptance,
    }
}
