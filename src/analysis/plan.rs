//! One description of a sweep — what the spectrum and angle views show, what the export window
//! writes and what the command line computes — and the one function that runs it.
//!
//! Keeping the description in one type means a setting the views use (the side the light
//! comes from, the angle, the range) cannot be forgotten by an export: both hand the same
//! [`Sweep`] to [`run_sweep`].

use std::fmt;

use crate::design::ResolvedDesign;
use crate::optics::Side;

use super::sweep::{
    AngleScan, Curves, Spectrum, SweepError, Warning, angle_scan, angles_deg, spectrum,
    wavelengths_nm,
};

/// First angle of an angle sweep over the whole useful range (degrees).
pub const FULL_ANGLE_FROM_DEG: f64 = 0.0;
/// Last angle of an angle sweep over the whole useful range (degrees): grazing incidence
/// itself (90°) has no transmitted wave to speak of.
pub const FULL_ANGLE_TO_DEG: f64 = 89.0;
/// Steps a default wavelength range is divided into.
pub const DEFAULT_STEPS: f64 = 400.0;

/// What to sweep, and under which conditions.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Sweep {
    /// Over wavelength at one angle of incidence.
    Wavelength {
        /// First wavelength (nm).
        from_nm: f64,
        /// Last wavelength (nm).
        to_nm: f64,
        /// Step (nm).
        step_nm: f64,
        /// Angle of incidence (degrees, in the medium the light comes from).
        aoi_deg: f64,
        /// Side the light comes from.
        side: Side,
    },
    /// Over the angle of incidence at one wavelength.
    Angle {
        /// The wavelength (nm).
        wavelength_nm: f64,
        /// First angle (degrees).
        from_deg: f64,
        /// Last angle (degrees).
        to_deg: f64,
        /// Step (degrees).
        step_deg: f64,
        /// Side the light comes from.
        side: Side,
    },
}

impl Sweep {
    /// The reference wavelength to centre default sweeps on: the design's, or 550 nm when
    /// that is not a usable number.
    #[must_use]
    pub fn centre_nm(reference_nm: f64) -> f64 {
        if reference_nm.is_finite() && reference_nm > 0.0 {
            reference_nm
        } else {
            550.0
        }
    }

    /// The default wavelength span for a design with this reference wavelength: 0.7 to 1.5 ×
    /// the reference (see [`Sweep::centre_nm`]).
    #[must_use]
    pub fn default_span_nm(reference_nm: f64) -> (f64, f64) {
        let r = Self::centre_nm(reference_nm);
        (0.7 * r, 1.5 * r)
    }

    /// A wavelength sweep from `from_nm` to `to_nm` in [`DEFAULT_STEPS`] steps.
    #[must_use]
    pub fn wavelengths_in_default_steps(
        from_nm: f64,
        to_nm: f64,
        aoi_deg: f64,
        side: Side,
    ) -> Self {
        Sweep::Wavelength {
            from_nm,
            to_nm,
            step_nm: ((to_nm - from_nm) / DEFAULT_STEPS).max(f64::MIN_POSITIVE),
            aoi_deg,
            side,
        }
    }

    /// An angle sweep over 0–89° at one wavelength.
    ///
    /// ```
    /// use stackwise::analysis::Sweep;
    /// use stackwise::optics::Side;
    /// let s = Sweep::full_angles(550.0, 1.0, Side::Front);
    /// assert_eq!(s.points().unwrap().len(), 90);
    /// ```
    #[must_use]
    pub fn full_angles(wavelength_nm: f64, step_deg: f64, side: Side) -> Self {
        Sweep::Angle {
            wavelength_nm,
            from_deg: FULL_ANGLE_FROM_DEG,
            to_deg: FULL_ANGLE_TO_DEG,
            step_deg,
            side,
        }
    }

    /// The side the light comes from.
    #[must_use]
    pub fn side(&self) -> Side {
        match *self {
            Sweep::Wavelength { side, .. } | Sweep::Angle { side, .. } => side,
        }
    }

    /// What the swept variable is, for messages: "wavelength range" or "angle range".
    #[must_use]
    pub fn range_name(&self) -> &'static str {
        match self {
            Sweep::Wavelength { .. } => "wavelength range",
            Sweep::Angle { .. } => "angle range",
        }
    }

    /// The swept values: wavelengths (nm) or angles (degrees), checked for sense.
    pub fn points(&self) -> Result<Vec<f64>, SweepError> {
        match *self {
            Sweep::Wavelength {
                from_nm,
                to_nm,
                step_nm,
                ..
            } => wavelengths_nm(from_nm, to_nm, step_nm),
            Sweep::Angle {
                from_deg,
                to_deg,
                step_deg,
                ..
            } => angles_deg(from_deg, to_deg, step_deg),
        }
    }
}

impl fmt::Display for Sweep {
    /// The conditions in words, e.g. "400 to 700 nm in steps of 1 nm at 0° incidence, light
    /// from the front".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Sweep::Wavelength {
                from_nm,
                to_nm,
                step_nm,
                aoi_deg,
                side,
            } => write!(
                f,
                "{} to {} nm in steps of {} nm at {}° incidence, light from the {}",
                short(from_nm),
                short(to_nm),
                short(step_nm),
                short(aoi_deg),
                side_text(side)
            ),
            Sweep::Angle {
                wavelength_nm,
                from_deg,
                to_deg,
                step_deg,
                side,
            } => write!(
                f,
                "{}° to {}° in steps of {}° at {} nm, light from the {}",
                short(from_deg),
                short(to_deg),
                short(step_deg),
                short(wavelength_nm),
                side_text(side)
            ),
        }
    }
}

/// "front" or "back".
fn side_text(side: Side) -> &'static str {
    match side {
        Side::Front => "front",
        Side::Back => "back",
    }
}

/// A number as people write it: at most four decimals, no trailing zeros.
fn short(x: f64) -> String {
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_owned()
}

/// The outcome of a [`Sweep`].
#[derive(Clone, Debug, PartialEq)]
pub enum SweepData {
    /// Over wavelength.
    Spectrum(Spectrum),
    /// Over angle.
    Angles(AngleScan),
}

impl SweepData {
    /// The swept values: wavelengths (nm) or angles (degrees).
    #[must_use]
    pub fn x(&self) -> &[f64] {
        match self {
            SweepData::Spectrum(s) => &s.wavelength_nm,
            SweepData::Angles(a) => &a.aoi_deg,
        }
    }

    /// R, T, A for s, p and mean at each point.
    #[must_use]
    pub fn curves(&self) -> &Curves {
        match self {
            SweepData::Spectrum(s) => &s.curves,
            SweepData::Angles(a) => &a.curves,
        }
    }

    /// Things to tell the user about the result.
    #[must_use]
    pub fn warnings(&self) -> &[Warning] {
        match self {
            SweepData::Spectrum(s) => &s.warnings,
            SweepData::Angles(a) => &a.warnings,
        }
    }
}

/// Runs `sweep` on the design: the function behind the views, the export window and the
/// command line.
///
/// ```
/// use stackwise::analysis::{Sweep, SweepData, run_sweep};
/// use stackwise::design::{Design, Layer, Nm};
/// use stackwise::optics::Side;
/// let mut d = Design::new_empty("single layer");
/// d.layers.push(Layer::new("MgF2", Nm::new(99.6).unwrap()));
/// let sweep = Sweep::Wavelength { from_nm: 400.0, to_nm: 700.0, step_nm: 100.0, aoi_deg: 0.0,
///                                 side: Side::Front };
/// let out = run_sweep(&d.resolve().unwrap(), &sweep).unwrap();
/// assert_eq!(out.x(), &[400.0, 500.0, 600.0, 700.0]);
/// assert!(matches!(out, SweepData::Spectrum(_)));
/// ```
pub fn run_sweep(design: &ResolvedDesign, sweep: &Sweep) -> Result<SweepData, SweepError> {
    let points = sweep.points()?;
    match *sweep {
        Sweep::Wavelength { aoi_deg, side, .. } => {
            spectrum(design, &points, aoi_deg, side).map(SweepData::Spectrum)
        }
        Sweep::Angle {
            wavelength_nm,
            side,
            ..
        } => angle_scan(design, wavelength_nm, &points, side).map(SweepData::Angles),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};

    fn design() -> ResolvedDesign {
        let mut d = Design::new_empty("t");
        d.layers.push(Layer::new("MgF2", Nm::new(99.6).unwrap()));
        d.resolve().unwrap()
    }

    #[test]
    fn the_side_reaches_the_engine() {
        let mut d = Design::new_empty("t");
        d.layers.push(Layer::new("TiO2", Nm::new(60.0).unwrap()));
        d.substrate_mm = Some(1.0);
        let d = d.resolve().unwrap();
        let front = Sweep::Wavelength {
            from_nm: 500.0,
            to_nm: 600.0,
            step_nm: 50.0,
            aoi_deg: 30.0,
            side: Side::Front,
        };
        let back = Sweep::Wavelength {
            from_nm: 500.0,
            to_nm: 600.0,
            step_nm: 50.0,
            aoi_deg: 30.0,
            side: Side::Back,
        };
        let (f, b) = (
            run_sweep(&d, &front).unwrap(),
            run_sweep(&d, &back).unwrap(),
        );
        let direct = spectrum(&d, &[500.0, 550.0, 600.0], 30.0, Side::Back).unwrap();
        assert_eq!(b, SweepData::Spectrum(direct), "same call as the engine's");
        assert_ne!(
            f.curves().r,
            b.curves().r,
            "an asymmetric coating reflects differently from the two sides"
        );
    }

    #[test]
    fn full_angles_cover_0_to_89_degrees() {
        let s = Sweep::full_angles(550.0, 0.5, Side::Front);
        let out = run_sweep(&design(), &s).unwrap();
        assert_eq!(out.x().first(), Some(&0.0), "starts at normal incidence");
        assert_eq!(out.x().last(), Some(&89.0), "ends at 89°");
        assert_eq!(out.x().len(), 179, "0.5° steps");
    }

    #[test]
    fn bad_ranges_are_refused_before_computing() {
        let s = Sweep::Wavelength {
            from_nm: 700.0,
            to_nm: 400.0,
            step_nm: 1.0,
            aoi_deg: 0.0,
            side: Side::Front,
        };
        assert!(matches!(
            run_sweep(&design(), &s),
            Err(SweepError::Inverted { .. })
        ));
        assert_eq!(s.range_name(), "wavelength range");
    }

    #[test]
    fn conditions_read_as_text() {
        let s = Sweep::Wavelength {
            from_nm: 400.0,
            to_nm: 700.0,
            step_nm: 0.75,
            aoi_deg: 45.0,
            side: Side::Back,
        };
        assert_eq!(
            s.to_string(),
            "400 to 700 nm in steps of 0.75 nm at 45° incidence, light from the back"
        );
    }
}
