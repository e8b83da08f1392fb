//! Refinement: damped least squares over the unlocked thicknesses, never below the minimum.

use std::ops::ControlFlow;

use nalgebra::DMatrix;

use crate::design::{Design, Layer, Nm};
use crate::optics::Response;

use super::lsq::{self, End, Residuals};
use super::problem::GradientWork;
use super::{Evaluator, OptimizeError, Options, Outcome, Progress, Stage, StopReason};

/// A layer of the working design: palette material, thickness, lock.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Work {
    pub mat: usize,
    pub nm: f64,
    pub locked: bool,
}

/// The least-squares view of a design: the free thicknesses are the parameters.
struct Thicknesses<'a> {
    ev: &'a Evaluator,
    layers: Vec<(usize, f64)>,
    free: Vec<usize>,
    buf: Vec<Response>,
    work: GradientWork,
}

impl Thicknesses<'_> {
    fn set(&mut self, x: &[f64]) {
        for (&k, &v) in self.free.iter().zip(x) {
            self.layers[k].1 = v;
        }
    }
}

impl Residuals for Thicknesses<'_> {
    fn residual_count(&self) -> usize {
        self.ev.residual_count()
    }

    fn residuals(&mut self, x: &[f64], out: &mut [f64]) {
        self.set(x);
        self.ev.residuals(&self.layers, &mut self.buf, out);
    }

    fn jacobian(&mut self, x: &[f64], out: &mut [f64], jac: &mut DMatrix<f64>) {
        self.set(x);
        self.ev
            .jacobian(&self.layers, &self.free, out, jac, &mut self.work);
    }
}

/// Checks the options that every run shares.
pub(crate) fn check_options(o: &Options) -> Result<(), OptimizeError> {
    if !(o.min_nm.is_finite() && o.min_nm >= 0.0) {
        return Err(OptimizeError::BadOption(format!(
            "the minimum thickness must be 0 nm or more, got {} nm",
            o.min_nm
        )));
    }
    if o.max_iterations == 0 {
        return Err(OptimizeError::BadOption(
            "the iteration limit must be at least 1".into(),
        ));
    }
    Ok(())
}

/// The working layers of `design` over the evaluator's palette.
pub(crate) fn work_layers(ev: &Evaluator, design: &Design) -> Vec<Work> {
    design
        .layers
        .iter()
        .zip(ev.layers_of(design))
        .map(|(l, (mat, nm))| Work {
            mat,
            nm,
            locked: l.locked,
        })
        .collect()
}

/// `design` with `layers` in place of its layers.
pub(crate) fn to_design(ev: &Evaluator, design: &Design, layers: &[Work]) -> Design {
    let mut d = design.clone();
    d.layers = layers
        .iter()
        .map(|w| Layer {
            material: ev.palette()[w.mat].name.clone(),
            nm: Nm::new(w.nm).unwrap_or(Nm::ZERO),
            locked: w.locked,
        })
        .collect();
    d
}

/// A refinement's per-iteration report: (iteration, merit, best layers) → go on or stop.
pub(crate) type StepFn<'a> = dyn FnMut(usize, f64, &[Work]) -> ControlFlow<()> + 'a;

/// What one refinement of a working layer list found.
pub(crate) struct Refined {
    pub layers: Vec<Work>,
    pub merit: f64,
    pub end: End,
    pub iterations: usize,
    pub evaluations: usize,
}

/// Refines the unlocked thicknesses of `layers`, each kept at or above `min_nm`.
/// `on_step(iteration, merit, best layers)` is called every iteration.
pub(crate) fn refine_layers(
    ev: &Evaluator,
    layers: &[Work],
    min_nm: f64,
    max_iterations: usize,
    on_step: &mut StepFn<'_>,
) -> Refined {
    let free: Vec<usize> = (0..layers.len()).filter(|&k| !layers[k].locked).collect();
    let x0: Vec<f64> = free.iter().map(|&k| layers[k].nm.max(min_nm)).collect();
    let lower = vec![min_nm; free.len()];
    // No layer needs to be thicker than a few of the longest target wavelengths: beyond that a
    // lossless layer only repeats itself (period λ/2n), and a bound keeps the search finite.
    let cap = (8.0 * ev.longest_nm()).max(x0.iter().copied().fold(0.0, f64::max));
    let upper = vec![cap; free.len()];
    let mut problem = Thicknesses {
        ev,
        layers: layers.iter().map(|w| (w.mat, w.nm)).collect(),
        free: free.clone(),
        buf: Vec::new(),
        work: GradientWork::default(),
    };
    let mut best = layers.to_vec();
    let with = |best: &mut Vec<Work>, x: &[f64]| {
        for (&k, &v) in free.iter().zip(x) {
            best[k].nm = v;
        }
    };
    let mut step = |s: &lsq::Step<'_>| {
        with(&mut best, s.x);
        on_step(s.iteration, s.norm, &best)
    };
    let settings = lsq::Settings {
        max_iterations,
        ..lsq::Settings::default()
    };
    let sol = lsq::minimize(&mut problem, &x0, &lower, &upper, &settings, &mut step);
    let mut out = layers.to_vec();
    with(&mut out, &sol.x);
    Refined {
        layers: out,
        merit: sol.norm,
        end: sol.end,
        iterations: sol.iterations,
        evaluations: sol.evaluations,
    }
}

pub(crate) fn stop_reason(end: End) -> StopReason {
    match end {
        End::Zero => StopReason::TargetsMet,
        End::Converged => StopReason::Converged,
        End::MaxIterations => StopReason::MaxIterations,
        End::Cancelled => StopReason::Cancelled,
    }
}

/// Refines the unlocked layer thicknesses of `design` to lower the merit, by damped least
/// squares with analytic derivatives; no unlocked layer ends below `options.min_nm` (layers
/// that start thinner are raised to it), locked layers are untouched. Reports every iteration;
/// a break from `on_progress` returns `Ok` with the best design so far.
///
/// ```
/// use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
/// use stackwise::material::{Material, Model};
/// use stackwise::optimize::{Options, refine};
/// let mut d = Design::new_empty("AR");
/// d.substrate = "G".into();
/// d.materials = vec![
///     Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
///     Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
/// ];
/// d.layers = vec![Layer::new("L", Nm::new(80.0)?)];
/// d.targets = vec![Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0, from_nm: 550.0, to_nm: 550.0,
///     step_nm: 0.0, kind: TargetKind::AtMost, goal: 0.0, tolerance: 0.0, weight: 1.0,
///     measure: stackwise::design::Measure::Spectral,
/// }];
/// let out = refine(&d, &Options::default(), |_| std::ops::ControlFlow::Continue(()))?;
/// // The single-layer minimum is the quarter wave, 550 / (4 · 1.38) = 99.64 nm.
/// assert!((out.design.layers[0].nm.get() - 99.637).abs() < 0.01);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn refine(
    design: &Design,
    options: &Options,
    mut on_progress: impl FnMut(&Progress<'_>) -> ControlFlow<()>,
) -> Result<Outcome, OptimizeError> {
    check_options(options)?;
    let ev = Evaluator::new(design, &[])?;
    let layers = work_layers(&ev, design);
    check_free(&layers, options.min_nm)?;
    let start_merit = ev.merit(&ev.layers_of(design));
    let mut report = |iteration: usize, merit: f64, best: &[Work]| {
        let best = to_design(&ev, design, best);
        on_progress(&Progress {
            stage: Stage::Refine,
            iteration,
            insertions: 0,
            merit,
            layers: best.layers.len(),
            best: &best,
        })
    };
    let r = refine_layers(
        &ev,
        &layers,
        options.min_nm,
        options.max_iterations,
        &mut report,
    );
    Ok(Outcome {
        design: to_design(&ev, design, &r.layers),
        merit: r.merit,
        start_merit,
        reason: stop_reason(r.end),
        iterations: r.iterations,
        evaluations: r.evaluations,
        insertions: 0,
    })
}

/// Refuses a design with no layer that refinement may change.
pub(crate) fn check_free(layers: &[Work], min_nm: f64) -> Result<(), OptimizeError> {
    if layers.is_empty() {
        return Err(OptimizeError::NoLayers);
    }
    let free: Vec<f64> = layers.iter().filter(|w| !w.locked).map(|w| w.nm).collect();
    if free.is_empty() {
        return Err(OptimizeError::AllLocked);
    }
    let thickest_nm = free.iter().copied().fold(0.0, f64::max);
    if thickest_nm < min_nm {
        return Err(OptimizeError::MinAboveEveryLayer {
            min_nm,
            thickest_nm,
        });
    }
    Ok(())
}
