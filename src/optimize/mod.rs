//! Targets and optimisation: the merit function, target evaluation, refinement of thicknesses
//! by damped least squares, and needle insertion of new layers.
//!
//! # Merit function
//!
//! Every target samples its wavelengths λ (one, or `from_nm` to `to_nm` by `step_nm`) at its
//! angle of incidence; at each sample the computed value v (R, T or A, s, p or their mean; a
//! thick substrate counts through the incoherent combination of both its surfaces, exactly as
//! the spectrum shows it) is compared with the goal g within the tolerance δ. The deviation
//! beyond tolerance is
//!
//! ```text
//!            ⎧ v − (g + δ)   if v > g + δ and the kind is Equal or AtMost
//!   e(λ)  =  ⎨ v − (g − δ)   if v < g − δ and the kind is Equal or AtLeast
//!            ⎩ 0             otherwise (within tolerance, or on the allowed side)
//! ```
//!
//! so a one-sided target counts only on its wrong side. With w the target's weight, the merit
//! is the root mean square of the weighted deviations over all samples of all targets:
//!
//! ```text
//!   MF = √( Σ w·e² / Σ w )
//! ```
//!
//! It is a fraction like R and T (0.001 = 0.1 %), zero exactly when every target is met, and
//! equal to the rms reflectance for a single "R at most 0" target. The residuals handed to the
//! least-squares solver are √(w/Σw)·e, whose squared norm is MF². A target passes when every
//! one of its samples has e = 0.
//!
//! GDD targets (one sample per wavelength, value in fs²) and colour targets (one sample, a
//! CIE 1976 L*, a* or b* over 360–780 nm; the span is ignored) enter the same sums: their
//! deviation is taken in their own unit and multiplied by 0.01 / unit scale, with
//! [`GDD_SCALE_FS2`] = 100 fs² and [`COLOUR_SCALE`] = 1 CIELAB unit, so 100 fs² of GDD or one
//! unit of a* beyond tolerance weighs as much as 1 % of R. Their derivatives are central
//! differences on the thicknesses ([`SPECIAL_STEP_NM`]); see the `special` module's source
//! doc.
//!
//! # Algorithms
//!
//! * [`evaluate_targets`] / [`Evaluator`]: values, deviations and pass/fail per target, and
//!   the merit — what the window's status line and the tolerance analysis use.
//! * [`refine`]: damped least squares (Levenberg–Marquardt, from the `levenberg-marquardt`
//!   crate, in [`lsq`]) over the unlocked thicknesses, never below the minimum thickness, with
//!   analytic derivatives from [`crate::optics::solve_gradient`].
//! * [`needle`]: needle optimisation (A. V. Tikhonravov, M. K. Trubetskov and G. W. DeBell,
//!   Appl. Opt. 35, 5493 (1996); B. T. Sullivan and J. A. Dobrowolski, Appl. Opt. 35, 5484
//!   (1996)): the merit's derivative for an infinitely thin layer of each allowed material at
//!   each depth, insertion where it helps most, refinement, removal of layers thinner than the
//!   minimum and merging of neighbours of the same material, until nothing helps or a limit is
//!   reached.
//!
//! Long runs report each step through a callback returning [`std::ops::ControlFlow`]; breaking stops
//! the run, which still returns `Ok` with the best design so far and
//! [`StopReason::Cancelled`]. Only unusable input is an error, and the design passed in is
//! never changed.

mod evaluate;
pub mod fit;
pub mod lsq;
mod needle;
mod problem;
mod production;
mod refine;
mod special;

use crate::design::{Design, DesignError};
use crate::material::MaterialError;

pub use evaluate::{Evaluation, TargetResult, evaluate_targets};
pub use needle::needle;
pub use problem::Evaluator;
pub use production::{MeritSensitivity, YieldError, merit_sensitivity, tolerance_with_yield};
pub use refine::refine;
pub use special::{COLOUR_SCALE, GDD_SCALE_FS2, STEP_NM as SPECIAL_STEP_NM};

/// Why an optimisation stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum StopReason {
    /// Every target is met (merit zero).
    TargetsMet,
    /// The merit stopped improving: a local minimum for the current layers.
    Converged,
    /// The iteration limit was reached.
    MaxIterations,
    /// The progress callback asked to stop.
    Cancelled,
    /// Needle insertion: no thin layer of any allowed material, at any depth, lowers the merit.
    NoInsertionHelps,
    /// Needle insertion: another layer would exceed the layer-count limit.
    LayerLimit,
    /// Needle insertion: the design reached the total-thickness limit.
    ThicknessLimit,
}

impl std::fmt::Display for StopReason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            StopReason::TargetsMet => "every target is met",
            StopReason::Converged => "converged: the merit no longer improves",
            StopReason::MaxIterations => "iteration limit reached",
            StopReason::Cancelled => "cancelled",
            StopReason::NoInsertionHelps => "no further layer insertion lowers the merit",
            StopReason::LayerLimit => "layer-count limit reached",
            StopReason::ThicknessLimit => "total-thickness limit reached",
        })
    }
}

/// Which stage a progress report comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Stage {
    /// Refining thicknesses.
    Refine,
    /// A needle insertion was accepted.
    Needle,
}

/// One progress report.
#[derive(Clone, Copy, Debug)]
pub struct Progress<'a> {
    /// Stage of the run.
    pub stage: Stage,
    /// Refinement iterations so far (whole run).
    pub iteration: usize,
    /// Needle insertions accepted so far.
    pub insertions: usize,
    /// Best merit so far.
    pub merit: f64,
    /// Layer count of the best design so far.
    pub layers: usize,
    /// The best design so far (for a live preview).
    pub best: &'a Design,
}

/// Settings of a run. `Default` gives the usual values.
#[derive(Clone, Debug, PartialEq)]
pub struct Options {
    /// No unlocked layer may end thinner than this (nm); 5 nm is the usual limit for a layer a
    /// chamber can make (common practice).
    pub min_nm: f64,
    /// Most refinement iterations (Jacobian evaluations) in one refinement.
    pub max_iterations: usize,
    /// Materials needle insertion may use; empty = those already in the design's layers.
    pub materials: Vec<String>,
    /// Most layers needle insertion may reach.
    pub max_layers: usize,
    /// Most total physical thickness needle insertion may reach (nm).
    pub max_total_nm: f64,
    /// Spacing of the trial depths for needle insertion (nm).
    pub needle_step_nm: f64,
    /// Most accepted needle insertions.
    pub max_insertions: usize,
}

impl Default for Options {
    fn default() -> Self {
        Self {
            min_nm: 5.0,
            max_iterations: 200,
            materials: Vec::new(),
            max_layers: 100,
            max_total_nm: f64::INFINITY,
            needle_step_nm: 2.0,
            max_insertions: 50,
        }
    }
}

/// The result of a run: the best design found and how the run ended.
#[derive(Clone, Debug)]
pub struct Outcome {
    /// The best design (a copy of the input with new layers or thicknesses).
    pub design: Design,
    /// Its merit.
    pub merit: f64,
    /// The merit of the input design.
    pub start_merit: f64,
    /// Why the run stopped.
    pub reason: StopReason,
    /// Refinement iterations (Jacobian evaluations).
    pub iterations: usize,
    /// Merit evaluations.
    pub evaluations: usize,
    /// Needle insertions accepted.
    pub insertions: usize,
}

/// What can make an optimisation impossible. The design is untouched in every case.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum OptimizeError {
    /// The design itself is invalid.
    #[error(transparent)]
    Design(#[from] DesignError),
    /// A material cannot be evaluated where a target needs it.
    #[error("{0}")]
    Material(#[from] MaterialError),
    /// There is nothing to aim at.
    #[error("the design has no targets; add at least one target before optimising")]
    NoTargets,
    /// Every target has weight zero.
    #[error("every target has weight 0; give at least one target a positive weight")]
    ZeroWeight,
    /// Two targets cannot both be met.
    #[error(
        "targets {first} and {second} contradict each other at {wavelength_nm} nm: {what}; \
         relax or remove one of them"
    )]
    Contradictory {
        /// 1-based number of the first target.
        first: usize,
        /// 1-based number of the second target.
        second: usize,
        /// A wavelength where both apply.
        wavelength_nm: f64,
        /// Why they contradict.
        what: String,
    },
    /// A target samples wavelengths outside a material's data.
    #[error(
        "target {target} samples {from_nm}–{to_nm} nm, but material {material:?} has data only \
         for {min_nm}–{max_nm} nm; narrow the target to that range"
    )]
    OutsideData {
        /// 1-based target number.
        target: usize,
        /// The material.
        material: String,
        /// Target's first wavelength.
        from_nm: f64,
        /// Target's last wavelength.
        to_nm: f64,
        /// Start of the material's data.
        min_nm: f64,
        /// End of the material's data.
        max_nm: f64,
    },
    /// A GDD or colour target cannot be computed for the design.
    #[error("target {target} cannot be computed: {what}")]
    TargetComputation {
        /// 1-based target number.
        target: usize,
        /// Why.
        what: String,
    },
    /// No thickness may change.
    #[error("every layer is locked; unlock at least one layer to optimise")]
    AllLocked,
    /// Nothing to refine.
    #[error(
        "the design has no layers to refine; add a starting layer (needle insertion also needs one)"
    )]
    NoLayers,
    /// The minimum thickness rules out every layer.
    #[error(
        "the minimum thickness {min_nm} nm is larger than every unlocked layer (thickest \
         {thickest_nm} nm); lower the minimum thickness"
    )]
    MinAboveEveryLayer {
        /// The minimum asked for.
        min_nm: f64,
        /// The thickest unlocked layer.
        thickest_nm: f64,
    },
    /// An option is out of range.
    #[error("{0}")]
    BadOption(String),
}
