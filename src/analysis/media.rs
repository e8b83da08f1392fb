//! The analysis views' shared ground: their error type and a design's media tilted at one
//! wavelength and angle.

use num_complex::Complex64;

use super::{SweepError, Warning};
use crate::design::ResolvedDesign;
use crate::material::Material;
use crate::optics::Tilted;

/// What can go wrong in the analysis views (phase, field, admittance, colour, map).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ViewError {
    /// A bad range, angle or wavelength, or a material without a usable index.
    #[error(transparent)]
    Sweep(#[from] SweepError),
    /// The view needs at least one layer.
    #[error("the design has no layers, so there is no {view} to show; add a layer first")]
    NoLayers {
        /// Which view, e.g. "field profile".
        view: &'static str,
    },
    /// A sampling step that is not a positive number.
    #[error("the depth step must be a positive number of nm, got {step_nm}")]
    BadStep {
        /// The step given.
        step_nm: f64,
    },
    /// More samples than one view may hold.
    #[error("{what} would need {points} points, more than the {max} allowed; use a larger step")]
    TooManyPoints {
        /// Which view.
        what: &'static str,
        /// How many the request would give.
        points: u64,
        /// The most allowed.
        max: u64,
    },
    /// A wavelength × angle map that would take too long.
    #[error(
        "the map would solve {points} points × {layers} layers ≈ {seconds:.0} s of work on \
         one core, more than the {max_seconds} s allowed; use larger wavelength or angle steps"
    )]
    TooMuchWork {
        /// Wavelengths × angles.
        points: u64,
        /// Layers in the design.
        layers: usize,
        /// The estimated time on one core.
        seconds: f64,
        /// The limit.
        max_seconds: u64,
    },
    /// An illuminant name the program does not know.
    #[error("unknown illuminant {given:?}; use D65 or A")]
    UnknownIlluminant {
        /// The name given.
        given: String,
    },
    /// An observer the program does not know.
    #[error("unknown observer {given:?}; use 2 (CIE 1931 2°) or 10 (CIE 1964 10°)")]
    UnknownObserver {
        /// The name given.
        given: String,
    },
    /// The embedded colorimetric table is damaged (a broken build).
    #[error("the embedded CIE table is damaged ({0}); the program's build is broken")]
    Table(String),
}

/// A design's media at one wavelength and angle, tilted for the front (coherent) problem.
#[derive(Clone, Debug)]
pub(crate) struct MediaAt {
    /// The incident medium (its real index; the solver ignores its k).
    pub incident: Tilted,
    /// The substrate as the coherent problem sees it (real index when thick).
    pub substrate: Tilted,
    /// The layers, layer 1 first: (medium, nm).
    pub layers: Vec<(Tilted, f64)>,
    /// The Snell invariant n₀ sin θ₀.
    pub snell: f64,
    /// cos θ₀.
    pub cos0: f64,
    /// Materials evaluated outside their data.
    pub warnings: Vec<Warning>,
}

/// Checks a wavelength (positive, finite) and an angle (0 ≤ θ < 90°).
pub(crate) fn check_point(wavelength_nm: f64, aoi_deg: f64) -> Result<(), SweepError> {
    if !(wavelength_nm.is_finite() && wavelength_nm > 0.0) {
        return Err(SweepError::BadWavelength { wavelength_nm });
    }
    if !(aoi_deg.is_finite() && (0.0..90.0).contains(&aoi_deg)) {
        return Err(SweepError::BadAngle { aoi_deg });
    }
    Ok(())
}

fn warn(m: &Material, wavelength_nm: f64, out: &mut Vec<Warning>) {
    if let Some(w) = m.range_warning(&[wavelength_nm])
        && !out
            .iter()
            .any(|o| matches!(o, Warning::Extrapolated(x) if x.material == w.material))
    {
        out.push(Warning::Extrapolated(w));
    }
}

impl MediaAt {
    /// Evaluates every medium of `d` at `wavelength_nm` and tilts it for `aoi_deg` (in the
    /// incident medium).
    pub(crate) fn new(
        d: &ResolvedDesign,
        wavelength_nm: f64,
        aoi_deg: f64,
    ) -> Result<Self, SweepError> {
        check_point(wavelength_nm, aoi_deg)?;
        let mut warnings = Vec::new();
        let mut at = |m: &Material| {
            warn(m, wavelength_nm, &mut warnings);
            m.index_at(wavelength_nm)
        };
        let n0 = Complex64::new(at(&d.incident)?.re, 0.0);
        let mut ns = at(&d.substrate)?;
        if d.substrate_mm.is_some() {
            ns.im = 0.0;
        }
        let mats = d
            .materials
            .iter()
            .map(&mut at)
            .collect::<Result<Vec<_>, _>>()?;
        let aoi = aoi_deg.to_radians();
        let snell = n0.re * aoi.sin();
        let layers = d
            .layers
            .iter()
            .map(|&(m, nm)| (Tilted::new(mats[m], snell), nm))
            .collect();
        Ok(Self {
            incident: Tilted::new(n0, snell),
            substrate: Tilted::new(ns, snell),
            layers,
            snell,
            cos0: aoi.cos(),
            warnings,
        })
    }

    /// Total thickness of the layers (nm).
    pub(crate) fn total_nm(&self) -> f64 {
        self.layers.iter().map(|l| l.1).sum()
    }
}

/// Intervals to split `length_nm` into so that none is longer than `step_nm` (at least `min`).
pub(crate) fn intervals(length_nm: f64, step_nm: f64, min: usize) -> usize {
    ((length_nm / step_nm).ceil() as usize).max(min)
}

/// Checks a sampling step and the number of samples it gives over `length_nm`.
pub(crate) fn check_step(
    what: &'static str,
    length_nm: f64,
    step_nm: f64,
    max: u64,
) -> Result<(), ViewError> {
    if !(step_nm.is_finite() && step_nm > 0.0) {
        return Err(ViewError::BadStep { step_nm });
    }
    let points = (length_nm / step_nm).ceil();
    if points > max as f64 {
        return Err(ViewError::TooManyPoints {
            what,
            points: points as u64,
            max,
        });
    }
    Ok(())
}
