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
//!   wavelength, so **material dispersion is included**. A tabulated material is linear
//!   between its rows, so its dn/dω jumps at every row; differenced as it is, each row would
//!   show up as a spike of GDD. Its index at the stencil points is therefore taken from a
//!   least-squares cubic in ω over ±[`FIT_HALF_WIDTH`]·ω (see `stencil_indices`), which
//!   keeps the data's trend and smooths the kinks; formulas are evaluated exactly.
//!
//! The amplitudes are the coating's own (with a thick substrate: the coating on a
//! semi-infinite substrate of the same real index; the incoherent back surface has no phase).

use nalgebra::DMatrix;
use num_complex::Complex64;
use rayon::prelude::*;

use super::media::check_point;
use super::{SweepError, Warning};
use crate::design::ResolvedDesign;
use crate::material::{Material, MaterialError, Model};
use crate::optics::{Response, Side, StackAt, solve};

/// The speed of light in vacuum, nm/fs (exact, SI definition).
pub const C_NM_PER_FS: f64 = 299.792_458;

/// The finite-difference step in angular frequency, relative to ω.
pub const RELATIVE_STEP: f64 = 3e-5;

/// Half-width, relative to ω, of the window over which a tabulated material's index is
/// smoothed by a cubic fit before differencing (±3 %: about ±24 nm at 800 nm). Narrower
/// windows let the rounding of tabulated digits through (a 6-decimal table over ±1 % gives
/// GDD errors of several percent); features of n narrower than the window are smoothed.
pub const FIT_HALF_WIDTH: f64 = 0.03;

/// Samples of a tabulated material in the smoothing window.
pub const FIT_POINTS: usize = 17;

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

/// Whether a material's index comes (partly) from a table, linear between its rows.
fn is_tabulated(m: &Material) -> bool {
    matches!(m.model, Model::Table { .. } | Model::WithK { .. })
}

/// The material's index at the five stencil frequencies around `omega` (rad/fs).
///
/// A formula is evaluated exactly. A table is linear between its rows, so its dn/dω jumps at
/// every row and a second difference across a row would turn the kink into a spike of GDD;
/// for tables the index is instead taken from a least-squares cubic in ω through
/// [`FIT_POINTS`] samples spread over ±[`FIT_HALF_WIDTH`]·ω, which follows the data's trend
/// and smooths the kinks (and the rounding of the tabulated digits).
fn stencil_indices(m: &Material, omega: f64) -> Result<[Complex64; 5], MaterialError> {
    let at = |w: f64| m.index_at(std::f64::consts::TAU * C_NM_PER_FS / w);
    let h = RELATIVE_STEP * omega;
    let mut out = [Complex64::new(0.0, 0.0); 5];
    if !is_tabulated(m) {
        for (slot, k) in out.iter_mut().zip(-2..=2) {
            *slot = at(omega + h * f64::from(k))?;
        }
        return Ok(out);
    }
    let half = FIT_HALF_WIDTH * omega;
    let last = (FIT_POINTS - 1) as f64;
    let mut design_matrix = DMatrix::<f64>::zeros(FIT_POINTS, 4);
    let mut values = DMatrix::<f64>::zeros(FIT_POINTS, 2);
    for j in 0..FIT_POINTS {
        let x = 2.0 * j as f64 / last - 1.0;
        let n = at(omega + half * x)?;
        for (p, v) in [1.0, x, x * x, x * x * x].into_iter().enumerate() {
            design_matrix[(j, p)] = v;
        }
        values[(j, 0)] = n.re;
        values[(j, 1)] = n.im;
    }
    // Least squares by the normal equations (4 × 4, well conditioned on x in −1…1).
    let normal = design_matrix.transpose() * &design_matrix;
    let rhs = design_matrix.transpose() * values;
    let Some(c) = normal.lu().solve(&rhs) else {
        // Cannot happen for distinct sample points; fall back to exact evaluation.
        for (slot, k) in out.iter_mut().zip(-2..=2) {
            *slot = at(omega + h * f64::from(k))?;
        }
        return Ok(out);
    };
    let coef: [Complex64; 4] = std::array::from_fn(|p| Complex64::new(c[(p, 0)], c[(p, 1)]));
    for (slot, k) in out.iter_mut().zip(-2..=2) {
        let x = h * f64::from(k) / half;
        *slot = coef[0] + x * (coef[1] + x * (coef[2] + x * coef[3]));
    }
    Ok(out)
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
    for &wl in wavelengths_nm {
        check_point(wl, aoi_deg)?;
    }
    let omega: Vec<f64> = wavelengths_nm
        .iter()
        .map(|wl| std::f64::consts::TAU * C_NM_PER_FS / wl)
        .collect();
    let media: Vec<&Material> = d
        .materials
        .iter()
        .chain([&d.incident, &d.substrate, &d.exit])
        .collect();
    let nm = d.materials.len();
    let aoi = aoi_deg.to_radians();
    // Five responses per wavelength, wavelengths in parallel.
    let responses = omega
        .par_iter()
        .map_init(Vec::new, |scratch, &w| {
            let table = media
                .iter()
                .map(|m| stencil_indices(m, w))
                .collect::<Result<Vec<_>, _>>()?;
            let mut five = [Response::default(); 5];
            for (k, slot) in five.iter_mut().enumerate() {
                let mats: Vec<Complex64> = table[..nm].iter().map(|t| t[k]).collect();
                let stack = StackAt {
                    incident: table[nm][k],
                    substrate: table[nm + 1][k],
                    exit: table[nm + 2][k],
                    materials: &mats,
                    layers: &d.layers,
                    back_layers: &d.back_layers,
                    substrate_mm: d.substrate_mm,
                };
                let wm = w * (1.0 + RELATIVE_STEP * (k as f64 - 2.0));
                let wl = std::f64::consts::TAU * C_NM_PER_FS / wm;
                *slot = solve(&stack, wl, aoi, side, scratch);
            }
            Ok::<_, MaterialError>(five)
        })
        .collect::<Result<Vec<_>, _>>()?;
    let column = |f: fn(&Response) -> Complex64| -> Vec<Complex64> {
        responses.iter().flatten().map(f).collect()
    };
    let mut warnings: Vec<Warning> = Vec::new();
    for m in &media {
        if let Some(w) = m.range_warning(wavelengths_nm)
            && !warnings
                .iter()
                .any(|o| matches!(o, Warning::Extrapolated(x) if x.material == w.material))
        {
            warnings.push(Warning::Extrapolated(w));
        }
    }
    Ok(PhaseSpectrum {
        wavelength_nm: wavelengths_nm.to_vec(),
        aoi_deg,
        r_s: curve(&column(|r| r.amp_r_s), &omega),
        r_p: curve(&column(|r| r.amp_r_p), &omega),
        t_s: curve(&column(|r| r.amp_t_s), &omega),
        t_p: curve(&column(|r| r.amp_t_p), &omega),
        warnings,
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
