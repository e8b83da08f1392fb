//! Target evaluation: values, deviations and pass/fail per target, and the merit.

use crate::design::{Design, Pol, Quantity, TargetKind};

use super::problem::{Point, deviation, value};
use super::{Evaluator, OptimizeError};

/// One target's result.
#[derive(Clone, Debug, PartialEq)]
pub struct TargetResult {
    /// The wavelengths it samples (nm).
    pub wavelength_nm: Vec<f64>,
    /// The computed value at each (a fraction; fs² for GDD; CIELAB units for colour, one value
    /// and no wavelength).
    pub values: Vec<f64>,
    /// The deviation beyond tolerance at each: 0 where met, signed otherwise (fraction).
    pub deviations: Vec<f64>,
    /// Whether every sample is met.
    pub pass: bool,
    /// The largest |deviation|.
    pub worst: f64,
}

/// Every target's result and the merit (module doc of [`crate::optimize`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Evaluation {
    /// Per target, in the design's order.
    pub targets: Vec<TargetResult>,
    /// The merit: √(Σ w e² / Σ w).
    pub merit: f64,
    /// Σ w |e| / Σ w: the weighted mean deviation beyond tolerance (for a single "R at most
    /// 0" target, the mean reflectance).
    pub mean_deviation: f64,
    /// How many targets pass.
    pub passed: usize,
}

/// Evaluates `design`'s targets: values, deviations, pass/fail per target and the merit.
///
/// ```
/// use stackwise::design::{Design, Pol, Quantity, Target, TargetKind};
/// use stackwise::material::{Material, Model};
/// let mut d = Design::new_empty("bare glass");
/// d.substrate = "G".into();
/// d.materials = vec![Material::user("G", Model::Constant { n: 1.5, k: 0.0 })];
/// d.targets = vec![Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0, from_nm: 500.0, to_nm: 600.0,
///     step_nm: 50.0, kind: TargetKind::AtMost, goal: 0.0, tolerance: 0.0, weight: 1.0,
///     measure: stackwise::design::Measure::Spectral,
/// }];
/// let e = stackwise::optimize::evaluate_targets(&d)?;
/// // Bare 1.5 glass: R = ((1.5 − 1)/(1.5 + 1))² = 0.04 (Fresnel, normal incidence)
/// assert!((e.merit - 0.04).abs() < 1e-12 && !e.targets[0].pass);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn evaluate_targets(design: &Design) -> Result<Evaluation, OptimizeError> {
    let ev = Evaluator::new(design, &[])?;
    Ok(ev.evaluate(&ev.layers_of(design)))
}

impl Evaluator {
    /// Evaluates the targets for a layer list (see [`Evaluator::layers_of`]).
    #[must_use]
    pub fn evaluate(&self, layers: &[(usize, f64)]) -> Evaluation {
        let mut buf = Vec::new();
        self.responses(layers, &mut buf);
        let mut sum2 = 0.0;
        let mut sum1 = 0.0;
        let mut targets = Vec::with_capacity(self.target_points.len());
        for idx in &self.target_points {
            let mut t = TargetResult {
                wavelength_nm: Vec::with_capacity(idx.len()),
                values: Vec::with_capacity(idx.len()),
                deviations: Vec::with_capacity(idx.len()),
                pass: true,
                worst: 0.0,
            };
            for &i in idx {
                let p = &self.points[i];
                let v = value(&buf[p.group], p.quantity, p.pol);
                let e = deviation(p, v);
                t.wavelength_nm.push(self.group_wavelength(p.group));
                t.values.push(v);
                t.deviations.push(e);
                t.pass &= e == 0.0;
                t.worst = t.worst.max(e.abs());
                sum2 += (p.scale * e).powi(2);
                sum1 += p.scale * p.scale * e.abs();
            }
            targets.push(t);
        }
        let (special, special2, special1) = self.special.results(layers);
        for (ti, t) in special {
            targets[ti] = t;
        }
        sum2 += special2;
        sum1 += special1;
        let passed = targets.iter().filter(|t| t.pass).count();
        Evaluation {
            targets,
            merit: sum2.sqrt(),
            mean_deviation: sum1,
            passed,
        }
    }
}

/// The acceptable interval of a target: [lo, hi].
fn interval(kind: TargetKind, goal: f64, tol: f64) -> (f64, f64) {
    match kind {
        TargetKind::Equal => (goal - tol, goal + tol),
        TargetKind::AtMost => (f64::NEG_INFINITY, goal + tol),
        TargetKind::AtLeast => (goal - tol, f64::INFINITY),
    }
}

/// Refuses targets that cannot all be met at one (angle, wavelength): two targets on the same
/// quantity and polarisation whose acceptable intervals do not overlap, or lower bounds on R,
/// T and A of one polarisation that add up to more than 1 (R + T + A = 1).
pub(crate) fn check_contradictions(
    design: &Design,
    points: &[Point],
    groups: &[(f64, f64)],
) -> Result<(), OptimizeError> {
    let mut by_group: Vec<Vec<&Point>> = vec![Vec::new(); groups.len()];
    for p in points {
        if design.targets[p.target].weight > 0.0 {
            by_group[p.group].push(p);
        }
    }
    for (g, pts) in by_group.iter().enumerate() {
        let wavelength_nm = groups[g].0;
        for (i, a) in pts.iter().enumerate() {
            let (alo, ahi) = interval(a.kind, a.goal, a.tolerance);
            for b in &pts[i + 1..] {
                if a.target == b.target || a.quantity != b.quantity || a.pol != b.pol {
                    continue;
                }
                let (blo, bhi) = interval(b.kind, b.goal, b.tolerance);
                if alo.max(blo) > ahi.min(bhi) {
                    return Err(OptimizeError::Contradictory {
                        first: a.target + 1,
                        second: b.target + 1,
                        wavelength_nm,
                        what: format!(
                            "no value of {:?} ({:?}) lies in both acceptable ranges",
                            a.quantity, a.pol
                        ),
                    });
                }
            }
        }
        for pol in [Pol::S, Pol::P, Pol::Mean] {
            let mut lows = [(0.0, 0); 3];
            for p in pts.iter().filter(|p| p.pol == pol) {
                let q = match p.quantity {
                    Quantity::R => 0,
                    Quantity::T => 1,
                    Quantity::A => 2,
                };
                let lo = interval(p.kind, p.goal, p.tolerance).0.max(0.0);
                if lo > lows[q].0 {
                    lows[q] = (lo, p.target + 1);
                }
            }
            let sum: f64 = lows.iter().map(|l| l.0).sum();
            if sum > 1.0 + 1e-12 {
                let mut named: Vec<usize> = lows.iter().filter(|l| l.1 > 0).map(|l| l.1).collect();
                named.sort_unstable();
                return Err(OptimizeError::Contradictory {
                    first: named[0],
                    second: *named.last().unwrap_or(&named[0]),
                    wavelength_nm,
                    what: format!(
                        "their lower bounds on R, T and A add up to {sum:.4}, but R + T + A = 1"
                    ),
                });
            }
        }
    }
    Ok(())
}
