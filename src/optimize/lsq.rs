//! Bounded damped least squares over any residual vector with a Jacobian: the engine of
//! [`super::refine`], usable for other fits (a measured run, say) by implementing
//! [`Residuals`].
//!
//! The steps come from the `levenberg-marquardt` crate (a port of MINPACK's trust-region
//! Levenberg–Marquardt, robust on rank-deficient problems such as layers whose thickness barely
//! matters). Bounds are kept by projection: the residuals are evaluated at the parameters
//! clamped into [lower, upper], a parameter pushed past a bound gets a zero Jacobian column
//! (the clamped function does not change along it), and when the solver stops the parameters
//! are clamped and the solver restarted, so a parameter can leave the bound again if the
//! merit prefers it. The best point evaluated is always what is returned.

use std::cell::RefCell;
use std::ops::ControlFlow;

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::storage::Owned;
use nalgebra::{DMatrix, DVector, Dyn};

/// A least-squares problem: residuals and their Jacobian for a parameter vector.
pub trait Residuals {
    /// Number of residuals.
    fn residual_count(&self) -> usize;

    /// Residuals at `x` into `out` (length [`Residuals::residual_count`]).
    fn residuals(&mut self, x: &[f64], out: &mut [f64]);

    /// Residuals at `x` into `out` and their Jacobian into `jac` (rows: residuals, columns:
    /// parameters; already sized).
    fn jacobian(&mut self, x: &[f64], out: &mut [f64], jac: &mut DMatrix<f64>);
}

/// Limits of a minimisation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Settings {
    /// Most Jacobian evaluations (iterations).
    pub max_iterations: usize,
    /// Relative change of the residual norm (and of the parameters) below which the solver
    /// stops.
    pub tolerance: f64,
}

impl Default for Settings {
    fn default() -> Self {
        Self {
            max_iterations: 200,
            tolerance: 1e-10,
        }
    }
}

/// Progress of a minimisation, reported at every iteration.
#[derive(Clone, Copy, Debug)]
pub struct Step<'a> {
    /// Iterations (Jacobian evaluations) so far.
    pub iteration: usize,
    /// Residual evaluations so far.
    pub evaluations: usize,
    /// The smallest residual norm so far.
    pub norm: f64,
    /// The parameters that gave it.
    pub x: &'a [f64],
}

/// How a minimisation ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum End {
    /// The residuals are all zero.
    Zero,
    /// No further progress: a local minimum within the bounds.
    Converged,
    /// The iteration limit was reached.
    MaxIterations,
    /// The step callback asked to stop.
    Cancelled,
}

/// The result of a minimisation: the best point evaluated.
#[derive(Clone, Debug, PartialEq)]
pub struct Solution {
    /// Best parameters (within the bounds).
    pub x: Vec<f64>,
    /// Their residual norm.
    pub norm: f64,
    /// How it ended.
    pub end: End,
    /// Iterations (Jacobian evaluations).
    pub iterations: usize,
    /// Residual evaluations.
    pub evaluations: usize,
}

struct Shared<'a, P> {
    problem: &'a mut P,
    on_step: &'a mut (dyn FnMut(&Step<'_>) -> ControlFlow<()> + 'a),
    best: Vec<f64>,
    best_norm: f64,
    iterations: usize,
    evaluations: usize,
    max_iterations: usize,
    stop: Option<End>,
    clamped: Vec<f64>,
}

struct Adapter<'a, 'b, P> {
    shared: &'b RefCell<Shared<'a, P>>,
    lower: &'b [f64],
    upper: &'b [f64],
    x: DVector<f64>,
    residuals: DVector<f64>,
}

fn clamp_into(x: &DVector<f64>, lower: &[f64], upper: &[f64], out: &mut Vec<f64>) {
    out.clear();
    out.extend(
        x.iter()
            .zip(lower.iter().zip(upper))
            .map(|(&v, (&lo, &hi))| v.clamp(lo, hi)),
    );
}

impl<P: Residuals> Adapter<'_, '_, P> {
    fn evaluate(&mut self) {
        let mut s = self.shared.borrow_mut();
        if s.stop.is_some() {
            return;
        }
        let s = &mut *s;
        clamp_into(&self.x, self.lower, self.upper, &mut s.clamped);
        s.problem
            .residuals(&s.clamped, self.residuals.as_mut_slice());
        s.evaluations += 1;
        let norm = self.residuals.norm();
        if norm.is_finite() && norm < s.best_norm {
            s.best_norm = norm;
            s.best.clone_from(&s.clamped);
        }
    }
}

impl<P: Residuals> LeastSquaresProblem<f64, Dyn, Dyn> for Adapter<'_, '_, P> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        self.x.copy_from(x);
        self.evaluate();
    }

    fn params(&self) -> DVector<f64> {
        self.x.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        let s = self.shared.borrow();
        (s.stop.is_none() && self.residuals.iter().all(|r| r.is_finite()))
            .then(|| self.residuals.clone())
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        let mut s = self.shared.borrow_mut();
        let s = &mut *s;
        if s.stop.is_some() {
            return None;
        }
        if s.iterations >= s.max_iterations {
            s.stop = Some(End::MaxIterations);
            return None;
        }
        s.iterations += 1;
        let step = Step {
            iteration: s.iterations,
            evaluations: s.evaluations,
            norm: s.best_norm,
            x: &s.best,
        };
        if (s.on_step)(&step).is_break() {
            s.stop = Some(End::Cancelled);
            return None;
        }
        let (m, n) = (self.residuals.len(), self.x.len());
        let mut jac = DMatrix::zeros(m, n);
        let mut r = vec![0.0; m];
        clamp_into(&self.x, self.lower, self.upper, &mut s.clamped);
        s.problem.jacobian(&s.clamped, &mut r, &mut jac);
        for (c, &v) in self.x.iter().enumerate() {
            if v < self.lower[c] || v > self.upper[c] {
                jac.column_mut(c).fill(0.0);
            }
        }
        jac.iter().all(|v| v.is_finite()).then_some(jac)
    }
}

/// Minimises the residual norm of `problem` from `x0` within `lower ≤ x ≤ upper` (x0 is
/// clamped first). `on_step` is called at every iteration with the best point so far;
/// breaking stops with [`End::Cancelled`] and still returns that best point.
///
/// ```
/// use nalgebra::DMatrix;
/// use stackwise::optimize::lsq::{End, Residuals, Settings, minimize};
/// // Fit y = a·x to three points, a bounded to at most 1.5 (the free optimum is 2).
/// struct Line;
/// impl Residuals for Line {
///     fn residual_count(&self) -> usize { 3 }
///     fn residuals(&mut self, x: &[f64], out: &mut [f64]) {
///         for (i, o) in out.iter_mut().enumerate() { *o = x[0] * i as f64 - 2.0 * i as f64; }
///     }
///     fn jacobian(&mut self, x: &[f64], out: &mut [f64], jac: &mut DMatrix<f64>) {
///         self.residuals(x, out);
///         for i in 0..3 { jac[(i, 0)] = i as f64; }
///     }
/// }
/// let s = minimize(&mut Line, &[0.0], &[0.0], &[1.5], &Settings::default(), &mut |_| {
///     std::ops::ControlFlow::Continue(())
/// });
/// assert_eq!(s.x, vec![1.5]);
/// assert_eq!(s.end, End::Converged);
/// ```
pub fn minimize<'a, P: Residuals>(
    problem: &'a mut P,
    x0: &[f64],
    lower: &[f64],
    upper: &[f64],
    settings: &Settings,
    on_step: &'a mut (dyn FnMut(&Step<'_>) -> ControlFlow<()> + 'a),
) -> Solution {
    let m = problem.residual_count();
    let start = DVector::from_column_slice(x0);
    let mut first = Vec::new();
    clamp_into(&start, lower, upper, &mut first);
    let shared = RefCell::new(Shared {
        problem,
        on_step,
        best: first.clone(),
        best_norm: f64::INFINITY,
        iterations: 0,
        evaluations: 0,
        max_iterations: settings.max_iterations,
        stop: None,
        clamped: Vec::new(),
    });
    let solver = LevenbergMarquardt::new()
        .with_ftol(settings.tolerance)
        .with_xtol(settings.tolerance)
        .with_gtol(settings.tolerance * 1e-3)
        .with_patience(settings.max_iterations.max(1));
    let mut x = first;
    let mut end = End::Converged;
    // Each round restarts the solver from the clamped best point; a round that gains nothing
    // ends the search.
    for _round in 0..20 {
        let before = shared.borrow().best_norm;
        let mut adapter = Adapter {
            shared: &shared,
            lower,
            upper,
            x: DVector::from_column_slice(&x),
            residuals: DVector::zeros(m),
        };
        adapter.evaluate();
        if x.is_empty() || m == 0 {
            break;
        }
        let (_adapter, _report) = solver.minimize(adapter);
        let s = shared.borrow();
        if let Some(stop) = s.stop {
            end = stop;
            break;
        }
        if s.best_norm == 0.0 {
            end = End::Zero;
            break;
        }
        if s.best_norm >= before * (1.0 - settings.tolerance) {
            break;
        }
        x.clone_from(&s.best);
    }
    let s = shared.into_inner();
    if s.best_norm == 0.0 {
        end = End::Zero;
    }
    Solution {
        x: s.best,
        norm: s.best_norm,
        end,
        iterations: s.iterations,
        evaluations: s.evaluations,
    }
}
