//! Comparing spectra: figures of merit over a band (mean, minimum, maximum of R and T and
//! where the extremes fall) for one or several designs, and the difference of two spectra.
//!
//! ```
//! use stackwise::analysis::{compare::band_figures, Spectrum};
//! let mut s = Spectrum { wavelength_nm: vec![400.0, 500.0, 600.0], ..Spectrum::default() };
//! s.curves.r = vec![0.1, 0.3, 0.2];
//! s.curves.t = vec![0.9, 0.7, 0.8];
//! let f = band_figures(&s, 450.0, 600.0)?;
//! assert_eq!(f.points, 2);
//! assert_eq!((f.r.max, f.r.max_at_nm), (0.3, 500.0));
//! assert_eq!((f.t.min, f.t.min_at_nm), (0.7, 500.0));
//! # Ok::<(), stackwise::analysis::compare::CompareError>(())
//! ```

use super::Spectrum;
use crate::design::{Pol, Quantity};
use crate::table::interp::within;

/// The curve of `quantity` for `pol` from a spectrum (fractions).
///
/// ```
/// use stackwise::analysis::{compare::curve, Spectrum};
/// use stackwise::design::{Pol, Quantity};
/// let mut s = Spectrum::default();
/// s.curves.t_p = vec![0.5];
/// assert_eq!(curve(&s, Quantity::T, Pol::P), &[0.5]);
/// ```
#[must_use]
pub fn curve(s: &Spectrum, quantity: Quantity, pol: Pol) -> &[f64] {
    let c = &s.curves;
    match (quantity, pol) {
        (Quantity::R, Pol::S) => &c.r_s,
        (Quantity::R, Pol::P) => &c.r_p,
        (Quantity::R, Pol::Mean) => &c.r,
        (Quantity::T, Pol::S) => &c.t_s,
        (Quantity::T, Pol::P) => &c.t_p,
        (Quantity::T, Pol::Mean) => &c.t,
        (Quantity::A, Pol::S) => &c.a_s,
        (Quantity::A, Pol::P) => &c.a_p,
        (Quantity::A, Pol::Mean) => &c.a,
    }
}

/// Why figures could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum CompareError {
    /// The band is not a finite range with from ≤ to.
    #[error("band {from_nm} to {to_nm} nm is not a range; give finite wavelengths with from ≤ to")]
    BadBand {
        /// Start (nm).
        from_nm: f64,
        /// End (nm).
        to_nm: f64,
    },
    /// No computed wavelength falls in the band.
    #[error(
        "no computed wavelength lies in {from_nm}–{to_nm} nm (the spectrum covers \
         {first_nm}–{last_nm} nm); widen the band or compute over it"
    )]
    EmptyBand {
        /// Start (nm).
        from_nm: f64,
        /// End (nm).
        to_nm: f64,
        /// First computed wavelength (NaN if none).
        first_nm: f64,
        /// Last computed wavelength (NaN if none).
        last_nm: f64,
    },
}

/// Mean, minimum and maximum of one curve over a band, and where the extremes are.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stats {
    /// Arithmetic mean over the band's points (fraction).
    pub mean: f64,
    /// Smallest value (fraction).
    pub min: f64,
    /// Wavelength of the smallest value (nm; the first if it repeats).
    pub min_at_nm: f64,
    /// Largest value (fraction).
    pub max: f64,
    /// Wavelength of the largest value (nm; the first if it repeats).
    pub max_at_nm: f64,
}

/// Figures of a spectrum over a band, for the mean of s and p.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Figures {
    /// Band start (nm).
    pub from_nm: f64,
    /// Band end (nm).
    pub to_nm: f64,
    /// Computed points inside the band.
    pub points: usize,
    /// Reflectance.
    pub r: Stats,
    /// Transmittance.
    pub t: Stats,
}

fn stats(wl: &[f64], ys: &[f64], inside: &[usize]) -> Stats {
    let mut s = Stats {
        mean: 0.0,
        min: f64::INFINITY,
        min_at_nm: f64::NAN,
        max: f64::NEG_INFINITY,
        max_at_nm: f64::NAN,
    };
    for &i in inside {
        let y = ys[i];
        s.mean += y;
        if y < s.min {
            s.min = y;
            s.min_at_nm = wl[i];
        }
        if y > s.max {
            s.max = y;
            s.max_at_nm = wl[i];
        }
    }
    s.mean /= inside.len() as f64;
    s
}

/// Figures of `s` over `from_nm..=to_nm` (mean polarisation).
pub fn band_figures(s: &Spectrum, from_nm: f64, to_nm: f64) -> Result<Figures, CompareError> {
    if !(from_nm.is_finite() && to_nm.is_finite() && from_nm <= to_nm) {
        return Err(CompareError::BadBand { from_nm, to_nm });
    }
    let c = &s.curves;
    let n = s.wavelength_nm.len().min(c.r.len()).min(c.t.len());
    let inside: Vec<usize> = (0..n)
        .filter(|&i| (from_nm..=to_nm).contains(&s.wavelength_nm[i]))
        .collect();
    if inside.is_empty() {
        return Err(CompareError::EmptyBand {
            from_nm,
            to_nm,
            first_nm: s.wavelength_nm.first().copied().unwrap_or(f64::NAN),
            last_nm: s.wavelength_nm.last().copied().unwrap_or(f64::NAN),
        });
    }
    Ok(Figures {
        from_nm,
        to_nm,
        points: inside.len(),
        r: stats(&s.wavelength_nm, &c.r, &inside),
        t: stats(&s.wavelength_nm, &c.t, &inside),
    })
}

/// [`band_figures`] for several named designs over the same band, in the given order.
pub fn compare(
    designs: &[(&str, &Spectrum)],
    from_nm: f64,
    to_nm: f64,
) -> Result<Vec<(String, Figures)>, CompareError> {
    designs
        .iter()
        .map(|(name, s)| band_figures(s, from_nm, to_nm).map(|f| ((*name).to_owned(), f)))
        .collect()
}

/// `a − b` for R, T and A (mean of s and p) on a shared grid.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Difference {
    /// The wavelengths of `a` that `b` covers (nm).
    pub wavelength_nm: Vec<f64>,
    /// R(a) − R(b).
    pub r: Vec<f64>,
    /// T(a) − T(b).
    pub t: Vec<f64>,
    /// A(a) − A(b).
    pub a: Vec<f64>,
}

/// The difference `a − b` at `a`'s wavelengths inside `b`'s range, with `b` interpolated
/// linearly between its points (exact where the grids share a point, so on equal grids this
/// is a plain subtraction). Empty if the spectra do not overlap.
///
/// ```
/// use stackwise::analysis::{compare::difference, Spectrum};
/// let mut a = Spectrum { wavelength_nm: vec![500.0, 550.0, 600.0], ..Spectrum::default() };
/// a.curves.r = vec![0.5, 0.5, 0.5];
/// a.curves.t = vec![0.5, 0.5, 0.5];
/// a.curves.a = vec![0.0, 0.0, 0.0];
/// let mut b = Spectrum { wavelength_nm: vec![500.0, 600.0], ..Spectrum::default() };
/// b.curves.r = vec![0.1, 0.3];
/// b.curves.t = vec![0.9, 0.7];
/// b.curves.a = vec![0.0, 0.0];
/// let d = difference(&a, &b);
/// assert_eq!(d.wavelength_nm, vec![500.0, 550.0, 600.0]);
/// assert!((d.r[1] - 0.3).abs() < 1e-12);
/// ```
#[must_use]
pub fn difference(a: &Spectrum, b: &Spectrum) -> Difference {
    let mut d = Difference::default();
    let (ca, cb) = (&a.curves, &b.curves);
    for (i, &wl) in a.wavelength_nm.iter().enumerate() {
        let at = |xs: &[f64], ys: &[f64], own: &[f64]| Some(own.get(i)? - within(xs, ys, wl)?);
        let bw = &b.wavelength_nm;
        if let (Some(r), Some(t), Some(ab)) = (
            at(bw, &cb.r, &ca.r),
            at(bw, &cb.t, &ca.t),
            at(bw, &cb.a, &ca.a),
        ) {
            d.wavelength_nm.push(wl);
            d.r.push(r);
            d.t.push(t);
            d.a.push(ab);
        }
    }
    d
}
