//! Optimisation targets as stored in a design (the optimiser reads them; here they are data).

use serde::{Deserialize, Serialize};

use super::quantity::{Pol, Quantity};

/// How the computed value is compared with the goal.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum TargetKind {
    /// Value should equal the goal (within the tolerance).
    Equal,
    /// Value should not exceed the goal.
    AtMost,
    /// Value should not fall below the goal.
    AtLeast,
}

/// One optimisation target over a wavelength range (a single wavelength when
/// `from_nm == to_nm`).
///
/// ```
/// use stackwise::design::{Pol, Quantity, Target, TargetKind};
/// let t = Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0,
///     from_nm: 400.0, to_nm: 700.0, step_nm: 5.0,
///     kind: TargetKind::AtMost, goal: 0.005, tolerance: 0.0, weight: 1.0,
/// };
/// assert_eq!(t.wavelengths_nm().len(), 61);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Target {
    /// R, T or A.
    pub quantity: Quantity,
    /// s, p or their mean.
    pub pol: Pol,
    /// Angle of incidence in the incident medium (degrees, 0 ≤ θ < 90).
    pub aoi_deg: f64,
    /// First wavelength (nm).
    pub from_nm: f64,
    /// Last wavelength (nm), >= `from_nm`.
    pub to_nm: f64,
    /// Wavelength step (nm), > 0 unless `from_nm == to_nm`.
    pub step_nm: f64,
    /// Equal, at most or at least.
    pub kind: TargetKind,
    /// Goal value, a fraction 0..=1.
    pub goal: f64,
    /// Allowed deviation from the goal (fraction, >= 0).
    pub tolerance: f64,
    /// Relative weight in the merit function (>= 0).
    pub weight: f64,
}

impl Target {
    /// The wavelengths (nm) this target samples: `from_nm`, `from_nm + step_nm`, … up to
    /// `to_nm` (included when the step lands on it within a millionth of a step). Empty for a
    /// target that fails [`crate::design::Design::validate`].
    #[must_use]
    pub fn wavelengths_nm(&self) -> Vec<f64> {
        let (a, b, s) = (self.from_nm, self.to_nm, self.step_nm);
        if !(a.is_finite() && b.is_finite() && a <= b) {
            return Vec::new();
        }
        if b <= a {
            // a <= b holds here, so this is a single wavelength (from_nm == to_nm).
            return vec![a];
        }
        if !(s.is_finite() && s > 0.0) {
            return Vec::new();
        }
        let count = ((b - a) / s + 1e-6).floor();
        // Validation bounds the count; stay safe anyway for unvalidated data.
        if count > f64::from(MAX_TARGET_POINTS) {
            return Vec::new();
        }
        (0..=count as u32).map(|i| a + f64::from(i) * s).collect()
    }
}

/// Most wavelengths one target may sample.
pub(crate) const MAX_TARGET_POINTS: u32 = 1_000_000;
