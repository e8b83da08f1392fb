//! Materials: dispersion models, named materials with their valid range and source, the
//! built-in library, and the lookup that resolves a name to a material.
//!
//! Sign convention: N = n + i k with k >= 0 for absorption, as users type it (see
//! [`crate::optics`]).

pub mod import;
mod library;
mod model;

use std::fmt;

use num_complex::Complex64;
use serde::{Deserialize, Serialize};

pub use library::{builtin, find_builtin};
pub use model::{EV_UM, Model, Oscillator};

/// Smallest refractive index n the program computes with. Metals reach n ≈ 0.03 in the
/// visible (silver, sodium); below 0.001 a model is far outside its data.
pub const MIN_N: f64 = 1e-3;
/// Largest refractive index n the program computes with (dielectrics stay below about 10;
/// metals in the far infrared reach several hundred: aluminium n ≈ 300 at 124 µm by the
/// Lorentz–Drude model of the built-in library).
pub const MAX_N: f64 = 1000.0;
/// Largest extinction coefficient k the program computes with (metals in the far infrared
/// reach several hundred).
pub const MAX_K: f64 = 10_000.0;

/// What can go wrong with a material.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum MaterialError {
    /// The model's coefficients or table are unusable.
    #[error("material {name:?}: {what}")]
    BadModel {
        /// Material name.
        name: String,
        /// What is wrong, in words.
        what: String,
    },
    /// The model gives no physical index at this wavelength (e.g. inside a pole of a formula).
    #[error(
        "material {name:?} gives no usable index at {wavelength_nm} nm (n = {n}, k = {k}; \
         usable: {MIN_N} ≤ n ≤ {MAX_N}, 0 ≤ k ≤ {MAX_K}); its data cover {min_nm}–{max_nm} nm"
    )]
    NoIndex {
        /// Material name.
        name: String,
        /// Where it was evaluated.
        wavelength_nm: f64,
        /// The real part that came out.
        n: f64,
        /// The imaginary part that came out.
        k: f64,
        /// Start of the material's valid range.
        min_nm: f64,
        /// End of the material's valid range.
        max_nm: f64,
    },
    /// No material of this name in the design or the built-in library.
    #[error("unknown material {name:?}{hint}")]
    Unknown {
        /// The name asked for.
        name: String,
        /// A suggestion such as `; did you mean "SiO2"?`, or empty.
        hint: String,
    },
}

/// A named material: a dispersion model with the range where its data hold and a citation.
///
/// ```
/// use stackwise::material::{Material, Model};
/// let m = Material::user("H", Model::Constant { n: 2.35, k: 0.0 });
/// assert_eq!(m.index_at(550.0).unwrap().re, 2.35);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Material {
    /// The name layers use to refer to it.
    pub name: String,
    /// How n and k depend on wavelength.
    pub model: Model,
    /// Wavelengths (nm) where the model is backed by data; `None` = no stated limit
    /// (tabulated models are always limited to their rows as well).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub range_nm: Option<(f64, f64)>,
    /// Where the data come from (citation), empty for a user's own material.
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub source: String,
}

impl Material {
    /// A user material with no stated range or source.
    #[must_use]
    pub fn user(name: &str, model: Model) -> Self {
        Self {
            name: name.to_owned(),
            model,
            range_nm: None,
            source: String::new(),
        }
    }

    /// Checks the model's coefficients and the stated range.
    pub fn validate(&self) -> Result<(), MaterialError> {
        if let Some((lo, hi)) = self.range_nm
            && !(lo.is_finite() && hi.is_finite() && lo > 0.0 && lo < hi)
        {
            return Err(MaterialError::BadModel {
                name: self.name.clone(),
                what: format!(
                    "valid range {lo}–{hi} nm is not an increasing pair of positive numbers"
                ),
            });
        }
        self.model.validate(&self.name)
    }

    /// The wavelengths (nm) where the data hold: the stated range, narrowed to the table's
    /// rows for tabulated models; `(0, ∞)` when nothing limits it.
    #[must_use]
    pub fn valid_range_nm(&self) -> (f64, f64) {
        let (mut lo, mut hi) = self.range_nm.unwrap_or((0.0, f64::INFINITY));
        if let Some((a, b)) = self.model.table_span_nm() {
            lo = lo.max(a);
            hi = hi.min(b);
        }
        (lo, hi)
    }

    /// Whether the data cover this wavelength.
    #[must_use]
    pub fn covers(&self, wavelength_nm: f64) -> bool {
        let (lo, hi) = self.valid_range_nm();
        (lo..=hi).contains(&wavelength_nm)
    }

    /// N = n + i k at a wavelength (nm). Outside the valid range the model is extrapolated
    /// (formulas evaluated, tables held at their end values); callers report that with a
    /// [`RangeWarning`]. An index outside [`MIN_N`] ≤ n ≤ [`MAX_N`], 0 ≤ k ≤ [`MAX_K`] (or not a
    /// number) is an error.
    pub fn index_at(&self, wavelength_nm: f64) -> Result<Complex64, MaterialError> {
        self.checked(self.model.index_at(wavelength_nm), wavelength_nm)
    }

    /// [`Material::index_at`] at each of `wavelengths_nm`, into `out` (same length).
    ///
    /// # Errors
    /// The position of the first wavelength without a usable index, and the error there.
    pub fn indices_at(
        &self,
        wavelengths_nm: &[f64],
        out: &mut [Complex64],
    ) -> Result<(), (usize, MaterialError)> {
        self.model.indices_at(wavelengths_nm, out);
        // The quick test first, over all of them without stopping (so it vectorises); a NaN
        // fails it. Only then the careful search for the first bad one.
        #[allow(
            clippy::needless_bitwise_bool,
            reason = "no short circuit, so the compiler can test many at once"
        )]
        let usable = out.iter().fold(true, |ok, n| {
            ok & (n.re >= MIN_N) & (n.re <= MAX_N) & (n.im >= 0.0) & (n.im <= MAX_K)
        });
        if usable {
            return Ok(());
        }
        for (i, (&n, &w)) in out.iter().zip(wavelengths_nm).enumerate() {
            self.checked(n, w).map_err(|e| (i, e))?;
        }
        Ok(())
    }

    /// `n` if it is a usable index at `wavelength_nm`, else the error that says why not.
    fn checked(&self, n: Complex64, wavelength_nm: f64) -> Result<Complex64, MaterialError> {
        if (MIN_N..=MAX_N).contains(&n.re) && (0.0..=MAX_K).contains(&n.im) {
            Ok(n)
        } else {
            let (min_nm, max_nm) = self.valid_range_nm();
            Err(MaterialError::NoIndex {
                name: self.name.clone(),
                wavelength_nm,
                n: n.re,
                k: n.im,
                min_nm,
                max_nm,
            })
        }
    }

    /// A warning if any of `wavelengths_nm` lies outside the valid range.
    #[must_use]
    pub fn range_warning(&self, wavelengths_nm: &[f64]) -> Option<RangeWarning> {
        let (lo, hi) = self.valid_range_nm();
        let mut outside = wavelengths_nm
            .iter()
            .copied()
            .filter(|w| !(lo..=hi).contains(w));
        let first = outside.next()?;
        let (from_nm, to_nm) = outside.fold((first, first), |(a, b), w| (a.min(w), b.max(w)));
        Some(RangeWarning {
            material: self.name.clone(),
            from_nm,
            to_nm,
            min_nm: lo,
            max_nm: hi,
        })
    }
}

/// A material evaluated outside the wavelengths its data cover.
#[derive(Clone, Debug, PartialEq)]
pub struct RangeWarning {
    /// Material name.
    pub material: String,
    /// Smallest requested wavelength outside the range (nm).
    pub from_nm: f64,
    /// Largest requested wavelength outside the range (nm).
    pub to_nm: f64,
    /// Start of the valid range (nm).
    pub min_nm: f64,
    /// End of the valid range (nm).
    pub max_nm: f64,
}

impl fmt::Display for RangeWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: data cover {}–{} nm; values from {} to {} nm are extrapolated",
            self.material,
            fmt_nm(self.min_nm),
            fmt_nm(self.max_nm),
            fmt_nm(self.from_nm),
            fmt_nm(self.to_nm)
        )
    }
}

fn fmt_nm(x: f64) -> String {
    if x.is_infinite() {
        "∞".into()
    } else {
        format!("{}", (x * 1000.0).round() / 1000.0)
    }
}

/// Resolves material names: a design's own materials first, then the built-in library.
#[derive(Clone, Copy, Debug)]
pub struct Catalog<'a> {
    user: &'a [Material],
}

impl<'a> Catalog<'a> {
    /// A catalogue of the built-ins plus `user` materials (which win on a name clash).
    #[must_use]
    pub fn new(user: &'a [Material]) -> Self {
        Self { user }
    }

    /// The material called `name`, or an error that suggests a near name.
    pub fn get(&self, name: &str) -> Result<&'a Material, MaterialError> {
        if let Some(m) = self.user.iter().find(|m| m.name == name) {
            return Ok(m);
        }
        if let Some(m) = find_builtin(name) {
            return Ok(m);
        }
        let hint = self
            .names()
            .find(|n| n.eq_ignore_ascii_case(name))
            .or_else(|| {
                let lower = name.to_lowercase();
                self.names()
                    .find(|n| !lower.is_empty() && n.to_lowercase().starts_with(&lower))
            })
            .map_or_else(
                || {
                    "; `stackwise materials` lists the built-in ones, or define it in the \
                     design's `materials` list"
                        .into()
                },
                |n| format!("; did you mean {n:?}?"),
            );
        Err(MaterialError::Unknown {
            name: name.to_owned(),
            hint,
        })
    }

    /// Every name the catalogue knows: the user's first, then the built-ins.
    pub fn names(&self) -> impl Iterator<Item = &'a str> {
        let user = self.user;
        user.iter().map(|m| m.name.as_str()).chain(
            builtin()
                .iter()
                .map(|m| m.name.as_str())
                .filter(move |n| !user.iter().any(|u| u.name == *n)),
        )
    }
}
