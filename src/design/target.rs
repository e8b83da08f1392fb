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

/// What a target measures. [`Measure::Spectral`] (the default, and what every design file
/// without a `measure` field means) reads R, T or A at each sampled wavelength; the others read
/// a derived quantity of the reflected (`quantity: R`) or transmitted (`quantity: T`) light.
/// New kinds are new variants.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum Measure {
    /// R, T or A (fraction) at each wavelength; goal and tolerance are fractions.
    #[default]
    Spectral,
    /// Group-delay dispersion of r (`quantity: R`) or t (`quantity: T`) at each wavelength of
    /// the span (s, p or the mean of the two GDDs), as the phase view computes it; goal and
    /// tolerance in fs².
    Gdd,
    /// One CIE 1976 coordinate (L*, a* or b*) of the reflected (`quantity: R`) or transmitted
    /// (`quantity: T`) light at the target's angle, computed over the CIE range 360–780 nm as the
    /// colour view does; `from_nm`, `to_nm` and `step_nm` are ignored. Goal and tolerance are
    /// in CIELAB units. "a* equal 0 ± 2 and b* equal −5 ± 2" is two targets.
    Colour {
        /// Which coordinate.
        coordinate: ColourCoordinate,
        /// The light source.
        illuminant: ColourLight,
        /// The standard observer.
        observer: ColourObserver,
    },
}

impl Measure {
    /// Whether this is the plain R/T/A kind.
    #[must_use]
    pub fn is_spectral(self) -> bool {
        self == Measure::Spectral
    }

    /// The unit of goal and tolerance in words: "fraction", "fs²" or "CIELAB units".
    #[must_use]
    pub fn unit(self) -> &'static str {
        match self {
            Measure::Spectral => "fraction",
            Measure::Gdd => "fs²",
            Measure::Colour { .. } => "CIELAB units",
        }
    }
}

/// A CIE 1976 L*a*b* coordinate.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum ColourCoordinate {
    /// Lightness L* (0–100).
    L,
    /// Red–green a*.
    A,
    /// Yellow–blue b*.
    B,
}

impl ColourCoordinate {
    /// "L*", "a*" or "b*".
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self {
            ColourCoordinate::L => "L*",
            ColourCoordinate::A => "a*",
            ColourCoordinate::B => "b*",
        }
    }
}

/// A CIE standard illuminant for colour targets.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum ColourLight {
    /// Daylight D65.
    #[default]
    D65,
    /// Incandescent light A.
    A,
}

impl ColourLight {
    /// "D65" or "A".
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            ColourLight::D65 => "D65",
            ColourLight::A => "A",
        }
    }
}

/// A CIE standard observer for colour targets.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum ColourObserver {
    /// CIE 1931 2°.
    #[default]
    TwoDeg,
    /// CIE 1964 10°.
    TenDeg,
}

impl TargetKind {
    /// The sign people write for the kind: "=", "≤" or "≥".
    #[must_use]
    pub fn sign(self) -> &'static str {
        match self {
            TargetKind::Equal => "=",
            TargetKind::AtMost => "≤",
            TargetKind::AtLeast => "≥",
        }
    }
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
///     measure: stackwise::design::Measure::Spectral,
/// };
/// assert_eq!(t.wavelengths_nm().len(), 61);
/// ```
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Target {
    /// R, T or A; for GDD and colour targets R (reflected) or T (transmitted).
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
    /// Goal value: a fraction 0..=1, in fs² for GDD, in CIELAB units for colour.
    pub goal: f64,
    /// Allowed deviation from the goal (>= 0, in the goal's unit).
    pub tolerance: f64,
    /// Relative weight in the merit function (>= 0).
    pub weight: f64,
    /// What is measured; absent in a file = [`Measure::Spectral`] (files before GDD and
    /// colour targets load unchanged).
    #[serde(default, skip_serializing_if = "spectral")]
    pub measure: Measure,
}

impl Target {
    /// The target in words, as the window and `stackwise info` show it:
    ///
    /// ```
    /// use stackwise::design::{ColourCoordinate, ColourLight, ColourObserver, Measure, Pol,
    ///     Quantity, Target, TargetKind};
    /// let mut t = Target {
    ///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0,
    ///     from_nm: 420.0, to_nm: 680.0, step_nm: 5.0,
    ///     kind: TargetKind::AtMost, goal: 0.005, tolerance: 0.0, weight: 1.0,
    ///     measure: Measure::Spectral,
    /// };
    /// assert_eq!(t.describe(), "R (mean) ≤ 0.5 % at 0°, 420–680 nm");
    /// (t.measure, t.kind, t.goal, t.tolerance) = (Measure::Gdd, TargetKind::Equal, -50.0, 20.0);
    /// assert_eq!(t.describe(), "GDD of R (mean) = -50 ± 20 fs² at 0°, 420–680 nm");
    /// t.measure = Measure::Colour {
    ///     coordinate: ColourCoordinate::B,
    ///     illuminant: ColourLight::D65,
    ///     observer: ColourObserver::TenDeg,
    /// };
    /// (t.goal, t.tolerance) = (-5.0, 2.0);
    /// assert_eq!(t.describe(), "reflected b* (mean) = -5 ± 2 (D65, 10°) at 0°, 360–780 nm");
    /// ```
    #[must_use]
    pub fn describe(&self) -> String {
        let pol = match self.pol {
            Pol::S => "s",
            Pol::P => "p",
            Pol::Mean => "mean",
        };
        let span = if self.to_nm <= self.from_nm {
            format!("{} nm", self.from_nm)
        } else {
            format!("{}–{} nm", self.from_nm, self.to_nm)
        };
        let tol = |unit: &str| {
            if self.tolerance > 0.0 {
                format!(" ± {}{unit}", round4(self.tolerance))
            } else {
                String::new()
            }
        };
        let (sign, q, angle) = (self.kind.sign(), self.quantity.symbol(), self.aoi_deg);
        match self.measure {
            Measure::Spectral => format!(
                "{q} ({pol}) {sign} {} %{} at {angle}°, {span}",
                round4(self.goal * 100.0),
                if self.tolerance > 0.0 {
                    format!(" ± {} %", round4(self.tolerance * 100.0))
                } else {
                    String::new()
                }
            ),
            Measure::Gdd => format!(
                "GDD of {q} ({pol}) {sign} {}{} fs² at {angle}°, {span}",
                round4(self.goal),
                tol("")
            ),
            Measure::Colour {
                coordinate,
                illuminant,
                observer,
            } => format!(
                "{} {} ({pol}) {sign} {}{} ({}, {}) at {angle}°, 360–780 nm",
                if self.quantity == Quantity::T {
                    "transmitted"
                } else {
                    "reflected"
                },
                coordinate.symbol(),
                round4(self.goal),
                tol(""),
                illuminant.name(),
                observer.name()
            ),
        }
    }

    /// How many residuals the target adds to the merit: one per wavelength, one for colour.
    #[must_use]
    pub fn sample_count(&self) -> usize {
        match self.measure {
            Measure::Colour { .. } => 1,
            Measure::Spectral | Measure::Gdd => self.wavelengths_nm().len(),
        }
    }

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

impl ColourObserver {
    /// "2°" or "10°".
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            ColourObserver::TwoDeg => "2°",
            ColourObserver::TenDeg => "10°",
        }
    }
}

fn round4(x: f64) -> f64 {
    (x * 1e4).round() / 1e4
}

#[expect(
    clippy::trivially_copy_pass_by_ref,
    reason = "serde's skip_serializing_if signature"
)]
fn spectral(m: &Measure) -> bool {
    m.is_spectral()
}

/// Most wavelengths one target may sample.
pub(crate) const MAX_TARGET_POINTS: u32 = 1_000_000;
