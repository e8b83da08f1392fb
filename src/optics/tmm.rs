//! The coherent characteristic-matrix solver (conventions in the module doc of `optics`).

use num_complex::Complex64;

use super::Response;

const ONE: Complex64 = Complex64::new(1.0, 0.0);

/// Above this attenuation (nepers) across one layer, the layer's matrix is rescaled by
/// e^(−b) so that thick metal layers cannot overflow; the scale is tracked in a logarithm.
const RESCALE_NEPERS: f64 = 30.0;

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
        let mut q = (n2 - snell * snell).sqrt();
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
            inv_eta_p: eta_p.inv(),
        }
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
    }
    let cos_ratio = (incident.q / incident.n) / (substrate.q / substrate.n);
    let scale2 = (-2.0 * log_scale).exp();
    let s = finish(incident.eta_s, bs, cs, substrate.eta_s, ONE, scale2);
    let p = finish(incident.eta_p, bp, cp, substrate.eta_p, cos_ratio, scale2);
    Coherent { s, p }
}

/// R, T, A and amplitudes from [B; C]; `eta0` is the polarisation's η₀, `t_factor` turns
/// the tangential-field ratio into the electric-field ratio, `scale2` = e^(−2·log scale).
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
    scale2: f64,
) -> Amplitudes {
    if eta0.im != 0.0 {
        return finish_absorbing(eta0, b, c, eta_sub, t_factor, scale2);
    }
    let eta0 = eta0.re;
    let den = eta0 * b + c;
    let den2 = den.norm_sqr();
    let r = (eta0 * b - c) / den;
    let four = 4.0 * eta0 / den2;
    let transmittance = four * eta_sub.re * scale2;
    let absorptance = four * ((b * c.conj()).re - eta_sub.re * scale2);
    let scale = scale2.sqrt();
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
    scale2: f64,
) -> Amplitudes {
    let den = eta0 * b + c;
    let r = (eta0 * b - c) / den;
    let four = 4.0 * eta0.norm_sqr() / (eta0.re * den.norm_sqr());
    let transmittance = four * eta_sub.re * scale2;
    let absorptance = four * ((b * c.conj()).re - eta_sub.re * scale2);
    Amplitudes {
        r,
        t: 2.0 * eta0 / den * t_factor * scale2.sqrt(),
        reflectance: r.norm_sqr(),
        transmittance,
        absorptance,
    }
}
