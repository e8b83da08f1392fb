//! Phase, group delay and group-delay dispersion of the coating's r and t, s and p, over
//! wavelength — what ultrafast-mirror and beam-splitter designers check.
//!
//! # How it is computed
//!
//! * **Phase** φ = arg r (or arg t) of the coating's complex amplitudes in the admittance
//!   convention of [`crate::optics`] (r_p = r_s at normal incidence), in degrees, unwrapped
//!   along the wavelengths in the order given: each step adds the multiple of 360° that keeps
//!   it within ±180° of the previous value. The unwrapping is only as good as the grid: a
//!   step across which the true phase turns by more than 180° cannot be told apart.
//! * **Group delay** τ = dφ/dω (fs) and **GDD** d²φ/dω² (fs²), ω = 2πc/λ the angular
//!   frequency. With fields ∝ exp(i(kz − ωt)) a pure delay τ has r ∝ exp(iωτ), so τ = +dφ/dω.
//!   The derivatives are taken by a **five-point central difference in ω**, step
//!   h = [`RELATIVE_STEP`] · ω, each wavelength on its own stencil ω + m h, m = −2…2:
//!   τ = (−φ₂ + 8φ₁ − 8φ₋₁ + φ₋₂) / 12h and
//!   GDD = (−φ₂ + 16φ₁ − 30φ₀ + 16φ₋₁ − φ₋₂) / 12h², both with truncation error O(h⁴).
//!   The phase differences φ_m − φ₀ = arg(r_m / r₀) are taken directly, so no unwrapping is
//!   involved. The step balances the two errors: the solver's round-off (about 1e-14 rad for
//!   long stacks) becomes about 1e-5 fs² of GDD noise at 800 nm, and the truncation error is
//!   of relative order (τh)⁴/90, below 1e-7 for a group delay τ of 1000 fs.
//!   Every stencil point is a full solve with every material's index evaluated at its own
//!   wavelength, so **material dispersion is included**. (A tabulated material is linear
//!   between its rows: its group delay jumps where the stencil crosses a row.)
//!
//! The amplitudes are the coating's own (with a thick substrate: the coating on a
//! semi-infinite substrate of the same real index; the incoherent back surface has no phase).

use num_complex::Complex64;

use super::{Spectrum, SweepError, Warning, spectrum};
use crate::design::ResolvedDesign;
use crate::optics::Side;

/// The speed of light in vacuum, nm/fs (exact, SI definition).
pub const C_NM_PER_FS: f64 = 299.792_458;

/// The finite-difference step in angular frequency, relative to ω.
pub const RELATIVE_STEP: f64 = 3e-5;

/// Phase, group delay and GDD of one amplitude over wavelength.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PhaseCurve {
    /// Unwrapped phase, degrees.
    pub phase_deg: Vec<f64>,
    /// Group delay dφ/dω, fs.
    pub gd_fs: Vec<f64>,
    /// Group-delay dispersion d²φ/dω², fs².
    pub gdd_fs2: Vec<f64>,
}

/// Phase and dispersion of r and t, s and p: plain data a plot borrows directly.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PhaseSpectrum {
    /// Wavelengths, nm.
    pub wavelength_nm: Vec<f64>,
    /// Angle of incidence, degrees.
    pub aoi_deg: f64,
    /// Reflection, s.
    pub r_s: PhaseCurve,
    /// Reflection, p.
    pub r_p: PhaseCurve,
    /// Transmission, s.
    pub t_s: PhaseCurve,
    /// Transmission, p.
    pub t_p: PhaseCurve,
    /// Materials evaluated outside their data, and the like.
    pub warnings: Vec<Warning>,
}

/// Adds multiples of 360° so that each value is within ±180° of the one before.
///
/// ```
/// let u = stackwise::analysis::phase::unwrap_deg(&[170.0, -170.0, -10.0, 175.0]);
/// assert_eq!(u, vec![170.0, 190.0, 350.0, 175.0]);
/// ```
#[must_use]
pub fn unwrap_deg(wrapped_deg: &[f64]) -> Vec<f64> {
    let mut out = Vec::with_capacity(wrapped_deg.len());
    let mut offset = 0.0;
    let mut prev: Option<f64> = None;
    for &p in wrapped_deg {
        if let Some(q) = prev {
            let step = p + offset - q;
            offset -= 360.0 * (step / 360.0).round();
        }
        let v = p + offset;
        out.push(v);
        prev = Some(v);
    }
    out
}

/// One amplitude's curve from the stencil amplitudes, five per wavelength (m = −2…2).
fn curve(stencil: &[Complex64], omega: &[f64]) -> PhaseCurve {
    let mut wrapped = Vec::with_capacity(omega.len());
    let mut gd_fs = Vec::with_capacity(omega.len());
    let mut gdd_fs2 = Vec::with_capacity(omega.len());
    for (s, &w) in stencil.chunks_exact(5).zip(omega) {
        let h = RELATIVE_STEP * w;
        let centre = s[2];
        let d = |m: usize| (s[m] / centre).arg();
        let (dm2, dm1, dp1, dp2) = (d(0), d(1), d(3), d(4));
        wrapped.push(centre.arg().to_degrees());
        gd_fs.push((-dp2 + 8.0 * dp1 - 8.0 * dm1 + dm2) / (12.0 * h));
        gdd_fs2.push((-dp2 + 16.0 * dp1 + 16.0 * dm1 - dm2) / (12.0 * h * h));
    }
    PhaseCurve {
        phase_deg: unwrap_deg(&wrapped),
        gd_fs,
        gdd_fs2,
    }
}

/// Phase, group delay and GDD of `d` at each of `wavelengths_nm` (any order, unwrapped in
/// that order), at `aoi_deg` in the medium the light comes from.
///
/// ```
/// use stackwise::analysis::phase::phase_spectrum;
/// use stackwise::design::Design;
/// use stackwise::material::{Material, Model};
/// use stackwise::optics::Side;
/// let mut d = Design::new_empty("bare");
/// d.substrate = "S".into();
/// d.materials = vec![Material::user("S", Model::Constant { n: 1.52, k: 0.0 })];
/// let p = phase_spectrum(&d.resolve()?, &[500.0, 600.0], 0.0, Side::Front)?;
/// // A bare, non-dispersive surface: r = (1 − 1.52)/(1 + 1.52) < 0, phase 180°, no delay.
/// assert!((p.r_s.phase_deg[0].abs() - 180.0).abs() < 1e-9);
/// assert!(p.r_s.gd_fs[1].abs() < 1e-6);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn phase_spectrum(
    d: &ResolvedDesign,
    wavelengths_nm: &[f64],
    aoi_deg: f64,
    side: Side,
) -> Result<PhaseSpectrum, SweepError> {
    let mut omega = Vec::with_capacity(wavelengths_nm.len());
    let mut stencil_nm = Vec::with_capacity(5 * wavelengths_nm.len());
    for &wl in wavelengths_nm {
        if !(wl.is_finite() && wl > 0.0) {
            return Err(SweepError::BadWavelength { wavelength_nm: wl });
        }
        let w = std::f64::consts::TAU * C_NM_PER_FS / wl;
        omega.push(w);
        for m in -2..=2 {
            let wm = w * (1.0 + RELATIVE_STEP * f64::from(m));
            stencil_nm.push(std::f64::consts::TAU * C_NM_PER_FS / wm);
        }
    }
    let s: Spectrum = spectrum(d, &stencil_nm, aoi_deg, side)?;
    let c = &s.curves;
    Ok(PhaseSpectrum {
        wavelength_nm: wavelengths_nm.to_vec(),
        aoi_deg,
        r_s: curve(&c.amp_r_s, &omega),
        r_p: curve(&c.amp_r_p, &omega),
        t_s: curve(&c.amp_t_s, &omega),
        t_p: curve(&c.amp_t_p, &omega),
        warnings: s.warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn difference_scheme_recovers_a_known_polynomial_phase() {
        // φ(ω) = τ (ω − ω₀) + ½ D (ω − ω₀)² + c₃(ω − ω₀)³ exactly: the 5-point formulas are
        // exact for cubics, so τ and D come back to round-off.
        let (tau, gdd, c3) = (12.5, -40.0, 3.0);
        let w0 = std::f64::consts::TAU * C_NM_PER_FS / 800.0;
        let h = RELATIVE_STEP * w0;
        let amps: Vec<Complex64> = (-2..=2)
            .map(|m| {
                let x = h * f64::from(m);
                Complex64::from_polar(0.9, 0.3 + tau * x + 0.5 * gdd * x * x + c3 * x * x * x)
            })
            .collect();
        let c = curve(&amps, &[w0]);
        assert!((c.gd_fs[0] - tau).abs() < 1e-6, "{:?}", c.gd_fs);
        assert!((c.gdd_fs2[0] - gdd).abs() < 1e-3, "{:?}", c.gdd_fs2);
        assert!(
            (c.phase_deg[0] - 0.3f64.to_degrees()).abs() < 1e-12,
            "phase"
        );
    }
}
