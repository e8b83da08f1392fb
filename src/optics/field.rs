//! The tangential fields inside a coherent stack: what the field-intensity profile and the
//! admittance locus are drawn from.
//!
//! At every plane parallel to the layers the tangential electric field E and the tangential
//! magnetic field H (in units of the free-space admittance, so that H = η E for a single wave
//! of tilted admittance η) are continuous. Across a layer of phase δ they change by the layer
//! matrix of the module doc of [`crate::optics`]:
//! `[E; H]_top = [[cos δ, −i sin δ / η], [−i η sin δ, cos δ]] · [E; H]_bottom`; a part of the
//! layer of thickness z uses the same matrix with δ(z) = 2π q z / λ.
//!
//! [`boundary_fields`] starts in the substrate with the transmitted wave alone,
//! [E; H] = [1; η_sub], and walks up to the front surface, where the incident wave's
//! tangential field is E_i = (η₀ B + C) / (2 η₀). Everything is then divided by E_i, so the
//! fields are relative to the incident wave's tangential field. Products through thick metal
//! are rescaled as they grow, so no value overflows (tiny ones underflow to 0 instead).

use num_complex::Complex64;

use super::Tilted;

/// A polarisation of one coherent problem.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Polarisation {
    /// s (TE): E perpendicular to the plane of incidence.
    S,
    /// p (TM): E in the plane of incidence.
    P,
}

/// Tangential fields (E, H) at one plane, relative to the incident wave's tangential E.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Tangential {
    /// Tangential electric field.
    pub e: Complex64,
    /// Tangential magnetic field, in units of the free-space admittance.
    pub h: Complex64,
}

impl Tangential {
    /// The net power flow into the stack through this plane, relative to the incident
    /// wave's: Re(E H*) / Re(η₀), with `eta0` the incident medium's tilted admittance. It is
    /// the same at every plane of a lossless stack and equals the transmittance T at the
    /// substrate.
    #[must_use]
    pub fn power_flow(&self, eta0: f64) -> f64 {
        (self.e * self.h.conj()).re / eta0
    }
}

/// The tilted admittance of `m` for `pol`.
#[must_use]
pub fn admittance(m: &Tilted, pol: Polarisation) -> Complex64 {
    match pol {
        Polarisation::S => m.eta_s,
        Polarisation::P => m.eta_p,
    }
}

/// The fields a distance `z_nm` above a plane inside medium `m` where they are `at`, at the
/// vacuum wavelength `wavelength_nm` (the layer matrix of a layer `z_nm` thick).
///
/// ```
/// use num_complex::Complex64;
/// use stackwise::optics::Tilted;
/// use stackwise::optics::field::{propagate, Polarisation, Tangential};
/// // A half wave (optical) of a lossless layer at normal incidence turns [E; H] into −[E; H].
/// let m = Tilted::new(Complex64::new(2.0, 0.0), 0.0);
/// let at = Tangential { e: Complex64::new(1.0, 0.0), h: Complex64::new(1.5, 0.0) };
/// let top = propagate(&m, Polarisation::S, at, 550.0 / 4.0, 550.0);
/// assert!((top.e + at.e).norm() < 1e-12 && (top.h + at.h).norm() < 1e-12);
/// ```
#[must_use]
pub fn propagate(
    m: &Tilted,
    pol: Polarisation,
    at: Tangential,
    z_nm: f64,
    wavelength_nm: f64,
) -> Tangential {
    let delta = m.q * (std::f64::consts::TAU / wavelength_nm * z_nm);
    let (cos_d, sin_d) = (delta.cos(), delta.sin());
    let eta = admittance(m, pol);
    let i = Complex64::i();
    Tangential {
        e: cos_d * at.e - i * sin_d / eta * at.h,
        h: cos_d * at.h - i * eta * sin_d * at.e,
    }
}

/// The fields at every boundary of a coherent stack: index 0 is the substrate boundary (the
/// bottom of layer 1), index j the top of layer j, the last the front surface. Relative to the
/// incident wave's tangential electric field. `layers` in deposition order (layer 1 first),
/// all media tilted for the same Snell invariant.
///
/// ```
/// use num_complex::Complex64;
/// use stackwise::optics::{coherent, Tilted};
/// use stackwise::optics::field::{boundary_fields, Polarisation};
/// let air = Tilted::new(Complex64::new(1.0, 0.0), 0.0);
/// let glass = Tilted::new(Complex64::new(1.52, 0.0), 0.0);
/// let f = boundary_fields(&air, &[], &glass, 550.0, Polarisation::S);
/// // Bare surface: E at the surface is 1 + r, the transmitted field t = 2/(1 + 1.52).
/// let r = coherent(&air, std::iter::empty(), &glass, 550.0).s.r;
/// assert!((f[0].e - (1.0 + r)).norm() < 1e-12);
/// assert!((f[0].e.re - 2.0 / 2.52).abs() < 1e-12);
/// ```
#[must_use]
pub fn boundary_fields(
    incident: &Tilted,
    layers: &[(Tilted, f64)],
    substrate: &Tilted,
    wavelength_nm: f64,
    pol: Polarisation,
) -> Vec<Tangential> {
    const RESCALE_ABOVE: f64 = 1e100;
    let mut out = Vec::with_capacity(layers.len() + 1);
    // Each boundary's fields with the natural log of the factor they were divided by.
    let mut scaled: Vec<(Tangential, f64)> = Vec::with_capacity(layers.len() + 1);
    let mut here = Tangential {
        e: Complex64::new(1.0, 0.0),
        h: admittance(substrate, pol),
    };
    let mut log_scale = 0.0;
    scaled.push((here, log_scale));
    for (m, d_nm) in layers {
        here = propagate(m, pol, here, *d_nm, wavelength_nm);
        let size = here.e.norm().max(here.h.norm());
        if size > RESCALE_ABOVE && size.is_finite() {
            here.e /= size;
            here.h /= size;
            log_scale += size.ln();
        }
        scaled.push((here, log_scale));
    }
    let eta0 = admittance(incident, pol).re;
    let incident_e = (eta0 * here.e + here.h) / (2.0 * eta0);
    for (f, log) in scaled {
        let factor = (log - log_scale).exp() / incident_e;
        out.push(Tangential {
            e: f.e * factor,
            h: f.h * factor,
        });
    }
    out
}

/// |E|² relative to the incident wave's |E|² at a plane in medium `m` where the tangential
/// fields (relative to the incident tangential E) are `f`.
///
/// For s the tangential field is the whole field. For p the whole field has a tangential part
/// E_x (the one the matrices carry) and a normal part E_z = −S H_y / N² (from Maxwell's
/// equations: both partial waves share the factor exp(i k₀ S x)); the intensity is
/// |E_x|² + |E_z|², and the incident wave's whole field is its tangential one over cos θ₀, so
/// the result is cos²θ₀ (|E_x|² + |S H_y / N²|²). `snell` is S = n₀ sin θ₀, `cos0` = cos θ₀.
#[must_use]
pub fn intensity(m: &Tilted, pol: Polarisation, f: Tangential, snell: f64, cos0: f64) -> f64 {
    match pol {
        Polarisation::S => f.e.norm_sqr(),
        Polarisation::P => {
            let ez = f.h * snell / (m.n * m.n);
            cos0 * cos0 * (f.e.norm_sqr() + ez.norm_sqr())
        }
    }
}
