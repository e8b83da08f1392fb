//! A thick, incoherent substrate: its two faces combined by intensity.
//!
//! Each face of the substrate — a coating, or the bare surface — is a coherent problem of its
//! own, solved once from outside and once from inside the substrate, with the substrate's
//! complex index as the medium on the inner side. What a face does by intensity is a [`Face`]:
//! reflectance and transmittance from outside and from inside. Multiple reflections inside
//! the substrate then add as a geometric series of intensities, each pass multiplied by the
//! internal transmittance τ. For light meeting face 1 first and face 2 after the substrate:
//!
//! ```text
//! R = R₁ + T₁ T₁′ τ² R₂′ / (1 − R₁′ R₂′ τ²)      T = T₁ τ T₂′ / (1 − R₁′ R₂′ τ²)
//! ```
//!
//! where unprimed values are seen from outside and primed ones from inside the substrate
//! (T₁ goes in, T₁′ and T₂′ go out). This is the incoherent-layer method of Katsidis and
//! Siapkas, Appl. Opt. 41, 3978 (2002), for one incoherent layer; with an absorbing substrate
//! T₁ ≠ T₁′, since the flux into an absorbing medium is taken just inside its surface (Byrnes,
//! arXiv:1603.02720, for the p-polarised flux Re(N cos θ*) that this uses).

use num_complex::Complex64;

use super::Amplitudes;

/// One face of a thick substrate by intensity, for one polarisation.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Face {
    /// Reflectance seen from outside (from the incident or exit medium).
    pub r_out: f64,
    /// Transmittance from outside into the substrate.
    pub t_in: f64,
    /// Reflectance seen from inside the substrate.
    pub r_in: f64,
    /// Transmittance from inside the substrate out.
    pub t_out: f64,
    /// In and back out again, `t_in · t_out`.
    pub t_in_out: f64,
}

impl Face {
    /// A face from its two coherent solutions: `outside` with the outer medium as incident
    /// medium and the substrate as exit, `inside` the other way round.
    ///
    /// Between two transparent media the transmittance is the same both ways (reciprocity);
    /// with `lossless_substrate`, `t_in_out` is computed as `t_in²`, so that a lossless
    /// substrate gives the one-sided formula's numbers to the last bit.
    #[must_use]
    pub fn new(outside: &Amplitudes, inside: &Amplitudes, lossless_substrate: bool) -> Self {
        let (t_in, t_out) = (outside.transmittance, inside.transmittance);
        Self {
            r_out: outside.reflectance,
            t_in,
            r_in: inside.reflectance,
            t_out,
            t_in_out: if lossless_substrate {
                t_in * t_in
            } else {
                t_in * t_out
            },
        }
    }
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

/// Total (R, T, A) of a thick substrate, one polarisation, for light meeting `first` first,
/// then one pass through the substrate with internal transmittance `internal`, then
/// `second`. A is by difference (a negative value can only be rounding and becomes 0).
///
/// Light from the front meets the front coating first; light from the back meets the back
/// face (its coating, or the bare surface) first.
///
/// ```
/// use stackwise::optics::thick::{Face, combine};
/// // Two bare faces with R = 0.04 and no loss: R = 2R/(1 + R), T = (1 − R)/(1 + R).
/// let f = Face { r_out: 0.04, t_in: 0.96, r_in: 0.04, t_out: 0.96, t_in_out: 0.96 * 0.96 };
/// let (r, t, a) = combine(&f, &f, 1.0);
/// assert!((r - 0.08 / 1.04).abs() < 1e-15 && (t - 0.96 / 1.04).abs() < 1e-15 && a < 1e-15);
/// ```
#[must_use]
pub fn combine(first: &Face, second: &Face, internal: f64) -> (f64, f64, f64) {
    let tau2 = internal * internal;
    let den = 1.0 - first.r_in * second.r_in * tau2;
    let r = first.r_out + first.t_in_out * tau2 * second.r_in / den;
    let t = first.t_in * internal * second.t_out / den;
    (r, t, (1.0 - r - t).max(0.0))
}
