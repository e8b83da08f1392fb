//! Dispersion models: how a material's complex index N = n + i k depends on wavelength.
//!
//! Formulas take the wavelength in micrometres (λ, "um" below) because that is how the
//! published coefficients are written; [`Model::index_at`] takes nanometres like the rest of
//! the program.

use num_complex::Complex64;
use serde::{Deserialize, Serialize};

use super::MaterialError;
use crate::table::interp::{held, held_each, held_each_at};

/// Photon energy in eV times wavelength in µm (h c / e), as used by the Lorentz–Drude form.
pub const EV_UM: f64 = 1.239_841_984;

/// One Lorentz oscillator of a [`Model::LorentzDrude`] material.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Oscillator {
    /// Oscillator strength `f_j` (dimensionless).
    pub f: f64,
    /// Damping `Γ_j` in eV.
    pub gamma_ev: f64,
    /// Resonance energy `ω_j` in eV.
    pub omega_ev: f64,
}

/// A dispersion model. The RON spelling of each variant is part of the design-file format.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[non_exhaustive]
pub enum Model {
    /// The same N = n + i k at every wavelength.
    Constant {
        /// Refractive index n.
        n: f64,
        /// Extinction coefficient k (>= 0).
        #[serde(default)]
        k: f64,
    },
    /// n = a + b/λ² + c/λ⁴ with λ in µm; k = 0.
    Cauchy {
        /// Constant term.
        a: f64,
        /// Coefficient of 1/λ² (µm²).
        #[serde(default)]
        b: f64,
        /// Coefficient of 1/λ⁴ (µm⁴).
        #[serde(default)]
        c: f64,
    },
    /// `n² = 1 + a + Σ b_i λ²/(λ² − c_i)` with λ in µm and `c_i` in µm²; k = 0.
    Sellmeier {
        /// Extra constant added to 1 (0 for the classic form).
        #[serde(default, skip_serializing_if = "is_zero")]
        a: f64,
        /// Strengths `b_i`.
        b: Vec<f64>,
        /// Resonance wavelengths squared, `c_i` in µm².
        c: Vec<f64>,
    },
    /// `n² = a + Σ b_i / (λ² − c_i)` with λ in µm and `c_i` in µm²; k = 0.
    /// (A pole at `c_i = 0` gives a plain b/λ² term.)
    Rational {
        /// Constant term (ε at infinite frequency).
        a: f64,
        /// Numerators `b_i` (µm²).
        b: Vec<f64>,
        /// Pole positions `c_i` (µm²).
        c: Vec<f64>,
    },
    /// Rows of (wavelength nm, n, k), interpolated linearly in wavelength; the end values are
    /// held outside the rows (and flagged as extrapolated by the caller).
    Table {
        /// (wavelength nm, n, k), strictly increasing in wavelength.
        rows: Vec<(f64, f64, f64)>,
    },
    /// A formula for n with a separate table of k: rows of (wavelength nm, k), linear in
    /// wavelength, end values held outside the rows.
    WithK {
        /// Model for the real part (its own k is ignored).
        n: Box<Model>,
        /// (wavelength nm, k), strictly increasing in wavelength.
        k: Vec<(f64, f64)>,
    },
    /// Lorentz–Drude permittivity (the Rakić et al. 1998 form):
    /// `ε(ω) = 1 − f₀ωₚ²/(ω(ω + iΓ₀)) + Σ f_j ωₚ²/(ω_j² − ω² − iωΓ_j)`, ω in eV, N = √ε.
    LorentzDrude {
        /// Plasma energy ωₚ in eV.
        plasma_ev: f64,
        /// Drude (free-electron) strength f₀.
        f0: f64,
        /// Drude damping Γ₀ in eV.
        gamma0_ev: f64,
        /// Bound-electron oscillators.
        oscillators: Vec<Oscillator>,
    },
}

#[expect(
    clippy::trivially_copy_pass_by_ref,
    reason = "serde's skip_serializing_if signature"
)]
fn is_zero(x: &f64) -> bool {
    *x == 0.0
}

impl Model {
    /// A short name of the model kind, for tables and the CLI.
    #[must_use]
    pub fn kind_name(&self) -> &'static str {
        match self {
            Model::Constant { .. } => "constant",
            Model::Cauchy { .. } => "Cauchy",
            Model::Sellmeier { .. } => "Sellmeier",
            Model::Rational { .. } => "rational",
            Model::Table { .. } => "table",
            Model::WithK { .. } => "formula + k table",
            Model::LorentzDrude { .. } => "Lorentz-Drude",
        }
    }

    /// The wavelength span (nm) covered by tabulated data, if the model has any.
    #[must_use]
    pub fn table_span_nm(&self) -> Option<(f64, f64)> {
        match self {
            Model::Table { rows } => Some((rows.first()?.0, rows.last()?.0)),
            // The k table's end values are held outside its rows; the material's stated
            // range says where the pair is valid.
            Model::WithK { n, .. } => n.table_span_nm(),
            _ => None,
        }
    }

    /// Checks the coefficients once, so evaluation can stay branch-free.
    pub fn validate(&self, name: &str) -> Result<(), MaterialError> {
        let bad = |what: String| MaterialError::BadModel {
            name: name.to_owned(),
            what,
        };
        let all_finite = |xs: &[f64]| xs.iter().all(|x| x.is_finite());
        match self {
            Model::Constant { n, k } => {
                if !(n.is_finite() && *n > 0.0) {
                    return Err(bad(format!("n must be a positive number, got {n}")));
                }
                if !(k.is_finite() && *k >= 0.0) {
                    return Err(bad(format!("k must be zero or positive, got {k}")));
                }
            }
            Model::Cauchy { a, b, c } => {
                if !all_finite(&[*a, *b, *c]) {
                    return Err(bad("Cauchy coefficients must be finite numbers".into()));
                }
            }
            Model::Sellmeier { a, b, c } | Model::Rational { a, b, c } => {
                if b.len() != c.len() {
                    return Err(bad(format!(
                        "b has {} terms but c has {}; they must pair up",
                        b.len(),
                        c.len()
                    )));
                }
                if !(a.is_finite() && all_finite(b) && all_finite(c)) {
                    return Err(bad("coefficients must be finite numbers".into()));
                }
            }
            Model::Table { rows } => {
                check_rows(rows.iter().map(|r| (r.0, r.1, r.2)), name)?;
            }
            Model::WithK { n, k } => {
                n.validate(name)?;
                check_rows(k.iter().map(|r| (r.0, 1.0, r.1)), name)?;
            }
            Model::LorentzDrude {
                plasma_ev,
                f0,
                gamma0_ev,
                oscillators,
            } => {
                let mut xs = vec![*plasma_ev, *f0, *gamma0_ev];
                for o in oscillators {
                    xs.extend([o.f, o.gamma_ev, o.omega_ev]);
                }
                if !all_finite(&xs) {
                    return Err(bad("Lorentz-Drude parameters must be finite numbers".into()));
                }
            }
        }
        Ok(())
    }

    /// [`Model::index_at`] at each of `wavelengths_nm`, into `out` (same length): the same
    /// numbers, bit for bit, but the formulas run over all wavelengths in one loop each, so
    /// their divisions and square roots overlap instead of waiting on one another.
    pub fn indices_at(&self, wavelengths_nm: &[f64], out: &mut [Complex64]) {
        match self {
            // n² = base + Σ term(b, c, λ²): the sums gather in `out`'s real parts, term by
            // term in the order `index_at` adds them.
            Model::Sellmeier { a, b, c } => {
                gather_terms(out, wavelengths_nm, b, c, |b, c, l2| b * l2 / (l2 - c));
                for o in out.iter_mut() {
                    *o = real_sqrt(1.0 + a + o.re);
                }
            }
            Model::Rational { a, b, c } => {
                gather_terms(out, wavelengths_nm, b, c, |b, c, l2| b / (l2 - c));
                for o in out.iter_mut() {
                    *o = real_sqrt(a + o.re);
                }
            }
            Model::Constant { n, k } => out.fill(Complex64::new(*n, *k)),
            Model::Table { rows } => {
                held_each_at(
                    rows,
                    wavelengths_nm,
                    |r| r.0,
                    |r| [r.1, r.2],
                    |i, [n, k]| out[i] = Complex64::new(n, k),
                );
            }
            _ => {
                for (o, &w) in out.iter_mut().zip(wavelengths_nm) {
                    *o = self.index_at(w);
                }
            }
        }
    }

    /// N = n + i k at a wavelength in nanometres. May be non-finite for coefficients that put
    /// a pole at this wavelength; `Material::index_at` turns that into an error.
    #[must_use]
    pub fn index_at(&self, wavelength_nm: f64) -> Complex64 {
        let um = wavelength_nm * 1e-3;
        let l2 = um * um;
        match self {
            Model::Constant { n, k } => Complex64::new(*n, *k),
            Model::Cauchy { a, b, c } => Complex64::new(a + b / l2 + c / (l2 * l2), 0.0),
            Model::Sellmeier { a, b, c } => {
                let n2 = 1.0 + a + b.iter().zip(c).map(|(b, c)| b * l2 / (l2 - c)).sum::<f64>();
                real_sqrt(n2)
            }
            Model::Rational { a, b, c } => {
                let n2 = a + b.iter().zip(c).map(|(b, c)| b / (l2 - c)).sum::<f64>();
                real_sqrt(n2)
            }
            Model::Table { rows } => {
                let [n, k] = held_each(rows, wavelength_nm, |r| r.0, |r| [r.1, r.2]);
                Complex64::new(n, k)
            }
            Model::WithK { n, k } => {
                let re = n.index_at(wavelength_nm).re;
                Complex64::new(re, held(k, wavelength_nm, |r| r.0, |r| r.1))
            }
            Model::LorentzDrude {
                plasma_ev,
                f0,
                gamma0_ev,
                oscillators,
            } => {
                let w = EV_UM / um;
                let wp2 = plasma_ev * plasma_ev;
                let i = Complex64::i();
                let mut eps = Complex64::new(1.0, 0.0) - f0 * wp2 / (w * (w + i * gamma0_ev));
                for o in oscillators {
                    eps += o.f * wp2
                        / (Complex64::new(o.omega_ev * o.omega_ev - w * w, 0.0)
                            - i * w * o.gamma_ev);
                }
                let mut n = eps.sqrt();
                if n.im < 0.0 {
                    n = -n;
                }
                n
            }
        }
    }
}

/// Σ `term(b_i, c_i, λ²)` over the coefficient pairs at each wavelength (λ in µm), into the
/// real parts of `out`, one loop per term so the divisions of neighbouring wavelengths overlap.
fn gather_terms(
    out: &mut [Complex64],
    wavelengths_nm: &[f64],
    b: &[f64],
    c: &[f64],
    term: impl Fn(f64, f64, f64) -> f64,
) {
    out.fill(Complex64::ZERO);
    for (&b, &c) in b.iter().zip(c) {
        for (s, &w) in out.iter_mut().zip(wavelengths_nm) {
            let um = w * 1e-3;
            s.re += term(b, c, um * um);
        }
    }
}

/// √(n²) for a lossless formula; a negative n² (inside an absorption band the formula does not
/// model) becomes NaN so the caller reports it.
fn real_sqrt(n2: f64) -> Complex64 {
    if n2 > 0.0 {
        Complex64::new(n2.sqrt(), 0.0)
    } else {
        Complex64::new(f64::NAN, 0.0)
    }
}

fn check_rows(
    rows: impl Iterator<Item = (f64, f64, f64)>,
    name: &str,
) -> Result<(), MaterialError> {
    let bad = |what: String| MaterialError::BadModel {
        name: name.to_owned(),
        what,
    };
    let mut prev: Option<f64> = None;
    let mut count = 0;
    for (i, (wl, n, k)) in rows.enumerate() {
        count += 1;
        let row = i + 1;
        if !(wl.is_finite() && wl > 0.0) {
            return Err(bad(format!(
                "row {row}: wavelength must be a positive number, got {wl}"
            )));
        }
        if !(n.is_finite() && n > 0.0) {
            return Err(bad(format!(
                "row {row} ({wl} nm): n must be positive, got {n}"
            )));
        }
        if !(k.is_finite() && k >= 0.0) {
            return Err(bad(format!(
                "row {row} ({wl} nm): k must be zero or positive, got {k}"
            )));
        }
        if let Some(p) = prev
            && wl <= p
        {
            return Err(bad(format!(
                "row {row}: wavelengths must increase, but {wl} nm follows {p} nm"
            )));
        }
        prev = Some(wl);
    }
    if count == 0 {
        return Err(bad("the table has no rows".into()));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// The one-loop-per-formula evaluation gives the same numbers as one wavelength at a time,
    /// bit for bit, for every kind of model (and NaN at a pole stays NaN).
    #[test]
    fn indices_over_many_wavelengths_equal_one_at_a_time() {
        let models = [
            // Fused silica's Sellmeier coefficients (Malitson 1965), as in the library.
            Model::Sellmeier {
                a: 0.0,
                b: vec![0.696_166_3, 0.407_942_6, 0.897_479_4],
                c: vec![0.004_679_148, 0.013_512_06, 97.934_0],
            },
            Model::Rational {
                a: 2.0,
                b: vec![0.1, 0.05],
                c: vec![0.02, 0.25],
            },
            Model::Cauchy {
                a: 1.45,
                b: 0.004,
                c: 0.0,
            },
            Model::Table {
                rows: vec![(400.0, 2.3, 0.01), (700.0, 2.2, 0.0), (1000.0, 2.15, 0.0)],
            },
        ];
        // 500 nm is the rational model's pole (0.25 µm²).
        let wl: Vec<f64> = (0..200)
            .map(|i| 300.0 + 4.5 * f64::from(i))
            .chain([500.0])
            .collect();
        for m in &models {
            let mut many = vec![Complex64::ZERO; wl.len()];
            m.indices_at(&wl, &mut many);
            for (&w, got) in wl.iter().zip(&many) {
                let one = m.index_at(w);
                assert!(
                    got.re.to_bits() == one.re.to_bits() && got.im.to_bits() == one.im.to_bits(),
                    "{} at {w} nm: {got} vs {one}",
                    m.kind_name()
                );
            }
        }
    }

    #[test]
    fn table_interpolates_linearly_and_holds_ends() {
        let m = Model::Table {
            rows: vec![(400.0, 2.0, 0.1), (600.0, 1.0, 0.3)],
        };
        let n = m.index_at(500.0);
        assert_relative_eq!(n.re, 1.5, epsilon = 1e-15);
        assert_relative_eq!(n.im, 0.2, epsilon = 1e-15);
        assert_relative_eq!(m.index_at(300.0).re, 2.0, epsilon = 0.0);
        assert_relative_eq!(m.index_at(900.0).im, 0.3, epsilon = 0.0);
        assert_relative_eq!(m.index_at(400.0).re, 2.0, epsilon = 0.0);
        assert_relative_eq!(m.index_at(600.0).re, 1.0, epsilon = 0.0);
    }

    #[test]
    fn unsorted_table_is_rejected_with_the_row() {
        let m = Model::Table {
            rows: vec![(400.0, 2.0, 0.0), (300.0, 1.0, 0.0)],
        };
        let e = m.validate("X").unwrap_err().to_string();
        assert!(e.contains("row 2") && e.contains("300"), "{e}");
    }

    #[test]
    fn sellmeier_pole_gives_nan_not_a_number_silently() {
        // n² = 1 + 1·λ²/(λ² − 0.25) is negative for 0.125 < λ² < 0.25 µm² (354–500 nm):
        // no real index there. At 400 nm, λ² = 0.16 µm² and n² = 1 − 0.16/0.09 < 0.
        let m = Model::Sellmeier {
            a: 0.0,
            b: vec![1.0],
            c: vec![0.25],
        };
        assert!(
            m.index_at(400.0).re.is_nan(),
            "a negative n² must not turn into a number"
        );
        assert!(
            m.index_at(300.0).re.is_finite(),
            "below the band n² is positive again"
        );
    }
}
