//! Production analyses that judge a design by its targets: the yield of a tolerance run and
//! the sensitivity of the merit to each layer.
//!
//! # Yield
//!
//! A run *meets the targets* when its merit is exactly 0, i.e. every sample of every target
//! of positive weight lies within its tolerance (or on the allowed side of a one-sided
//! target) — the same test as the targets panel's "met" and the optimiser's
//! [`StopReason::TargetsMet`](super::StopReason::TargetsMet). Targets of weight 0 do not
//! count, as in optimisation. Each run is judged with its own thicknesses and its own index
//! errors (n of each layer material scaled as the tolerance run drew it, at the targets'
//! wavelengths and angles, which need not be the envelope's). The yield is the share of runs
//! that meet the targets.
//!
//! # Sensitivity of the merit
//!
//! For layer j, the larger of |MF(1.01 d_j) − MF(d_j)| and |MF(0.99 d_j) − MF(d_j)|: how much
//! the merit moves when that one layer is 1 % off, in the worse direction (a fraction, like
//! the merit). The larger one-sided change is used rather than a central difference because
//! at an optimum the merit's slope is zero and a central difference would call every layer
//! harmless. A layer of zero thickness has sensitivity 0.

use std::ops::ControlFlow;

use rayon::prelude::*;

use super::{Evaluator, OptimizeError};
use crate::analysis::sensitivity::LayerSensitivity;
use crate::analysis::tolerance::{
    Draw, Envelope, ToleranceError, ToleranceProgress, ToleranceSettings, tolerance_judged,
};
use crate::design::{Design, DesignError};

/// Relative thickness change of the merit sensitivity (1 %).
const STEP: f64 = 0.01;

/// Why a tolerance run with yield could not run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum YieldError {
    /// The design itself is invalid.
    #[error(transparent)]
    Design(#[from] DesignError),
    /// The targets cannot be evaluated (e.g. outside a material's data).
    #[error("targets: {0}")]
    Targets(#[from] OptimizeError),
    /// The tolerance settings or the sweep are impossible.
    #[error(transparent)]
    Tolerance(#[from] ToleranceError),
}

/// The Monte Carlo envelope of `design` ([`crate::analysis::tolerance`]) and, when the
/// design has targets, the runs that meet them in [`Envelope::passed`] (module doc).
///
/// ```
/// use stackwise::analysis::tolerance::ToleranceSettings;
/// use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
/// let mut d = Design::new_empty("AR");
/// d.layers.push(Layer::new("MgF2", Nm::new(99.6)?));
/// d.targets.push(Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0, from_nm: 550.0, to_nm: 550.0,
///     step_nm: 0.0, kind: TargetKind::AtMost, goal: 0.05, tolerance: 0.0, weight: 1.0,
///     measure: stackwise::design::Measure::Spectral,
/// });
/// let s = ToleranceSettings { runs: 100, ..ToleranceSettings::default() };
/// let e = stackwise::optimize::tolerance_with_yield(&d, &[500.0, 550.0], &s, |_| {
///     std::ops::ControlFlow::Continue(())
/// })?;
/// // A quarter wave of MgF2 on the default substrate stays far below 5 % at 550 nm in every run.
/// assert_eq!(e.yield_fraction(), Some(1.0));
/// // An impossible goal: no run meets it.
/// d.targets[0].goal = 0.0;
/// let e = stackwise::optimize::tolerance_with_yield(&d, &[550.0], &s, |_| {
///     std::ops::ControlFlow::Continue(())
/// })?;
/// assert_eq!((e.passed, e.runs_done), (Some(0), 100));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn tolerance_with_yield(
    design: &Design,
    wavelengths_nm: &[f64],
    settings: &ToleranceSettings,
    on_progress: impl FnMut(&ToleranceProgress) -> ControlFlow<()>,
) -> Result<Envelope, YieldError> {
    let resolved = design.resolve()?;
    let evaluator = if design.targets.is_empty() {
        None
    } else {
        Some(Evaluator::new(design, &[])?)
    };
    let judge = evaluator
        .as_ref()
        .map(|ev| move |d: &Draw<'_>| ev.with_index_scales(d.index_scales).merit(d.layers) == 0.0);
    let judge_ref = judge
        .as_ref()
        .map(|j| j as &crate::analysis::tolerance::Judge<'_>);
    Ok(tolerance_judged(
        &resolved,
        wavelengths_nm,
        settings,
        judge_ref,
        on_progress,
    )?)
}

/// Each layer's sensitivity of the merit (module doc), in layer order, with the merit of the
/// design as it is.
#[derive(Clone, Debug, PartialEq)]
pub struct MeritSensitivity {
    /// The design's merit.
    pub merit: f64,
    /// One entry per layer, layer 1 first; `sensitivity` is a change of merit (fraction).
    pub layers: Vec<LayerSensitivity>,
}

impl MeritSensitivity {
    /// The layers, most sensitive first (equal values keep layer order).
    #[must_use]
    pub fn ranked(&self) -> Vec<&LayerSensitivity> {
        crate::analysis::sensitivity::rank(&self.layers)
    }
}

/// The sensitivity of the merit of `design` to each layer's thickness (module doc). Needs
/// targets.
///
/// ```
/// use stackwise::design::{Design, Layer, Nm, Pol, Quantity, Target, TargetKind};
/// let mut d = Design::new_empty("AR");
/// d.layers = vec![Layer::new("TiO2", Nm::new(20.0)?), Layer::new("MgF2", Nm::new(99.6)?)];
/// d.targets.push(Target {
///     quantity: Quantity::R, pol: Pol::Mean, aoi_deg: 0.0, from_nm: 450.0, to_nm: 650.0,
///     step_nm: 10.0, kind: TargetKind::AtMost, goal: 0.0, tolerance: 0.0, weight: 1.0,
///     measure: stackwise::design::Measure::Spectral,
/// });
/// let s = stackwise::optimize::merit_sensitivity(&d)?;
/// assert!(s.merit > 0.0 && s.layers.iter().all(|l| l.sensitivity > 0.0));
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn merit_sensitivity(design: &Design) -> Result<MeritSensitivity, OptimizeError> {
    let ev = Evaluator::new(design, &[])?;
    let nominal = ev.layers_of(design);
    let merit = ev.merit(&nominal);
    let values: Vec<f64> = (0..nominal.len())
        .into_par_iter()
        .map(|j| {
            let (m, nm) = nominal[j];
            if nm == 0.0 {
                return 0.0;
            }
            let mut layers = nominal.clone();
            let mut change = |factor: f64| {
                layers[j] = (m, nm * factor);
                (ev.merit(&layers) - merit).abs()
            };
            change(1.0 + STEP).max(change(1.0 - STEP))
        })
        .collect();
    let layers = design
        .layers
        .iter()
        .zip(values)
        .enumerate()
        .map(|(i, (l, sensitivity))| LayerSensitivity {
            layer: i + 1,
            material: l.material.clone(),
            nm: l.nm.get(),
            sensitivity,
        })
        .collect();
    Ok(MeritSensitivity { merit, layers })
}

#[cfg(test)]
#[allow(
    clippy::float_cmp,
    reason = "these results must be exact, not merely close"
)]
mod tests {
    use super::*;
    use crate::design::{Layer, Nm, Pol, Quantity, Target, TargetKind};
    use crate::material::{Material, Model};

    /// One layer of n = 1.38, a quarter wave at 550 nm, on n = 1.52: at 550 nm
    /// R = ((n0 n2 − n1²)/(n0 n2 + n1²))² = ((1.52 − 1.9044)/(1.52 + 1.9044))² = 0.0126007
    /// (quarter-wave layer, Macleod, Thin-Film Optical Filters, ch. 3).
    fn quarter_wave(goal: f64) -> Design {
        let mut d = Design::new_empty("QW");
        d.substrate = "G".into();
        d.materials = vec![
            Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
            Material::user("L", Model::Constant { n: 1.38, k: 0.0 }),
        ];
        d.layers = vec![Layer::new("L", Nm::new(550.0 / 4.0 / 1.38).unwrap())];
        d.targets = vec![Target {
            quantity: Quantity::R,
            pol: Pol::Mean,
            aoi_deg: 0.0,
            from_nm: 550.0,
            to_nm: 550.0,
            step_nm: 0.0,
            kind: TargetKind::AtMost,
            goal,
            tolerance: 0.0,
            weight: 1.0,
            measure: crate::design::Measure::Spectral,
        }];
        d
    }

    fn go(d: &Design, s: &ToleranceSettings) -> Envelope {
        tolerance_with_yield(d, &[500.0, 550.0, 600.0], s, |_| ControlFlow::Continue(())).unwrap()
    }

    #[test]
    fn yield_counts_runs_within_the_target() {
        // The quarter wave is a minimum of R at 550 nm, so thickness errors only raise R;
        // the index error moves it too (n² against n0 n2). Goal just above the nominal
        // 1.2601 %: some runs meet it, some do not.
        let s = ToleranceSettings {
            runs: 400,
            ..ToleranceSettings::default()
        };
        let e = go(&quarter_wave(0.0127), &s);
        let y = e.yield_fraction().unwrap();
        assert!(y > 0.05 && y < 0.95, "partial yield {y}");
        // Recount by hand: the same draws are re-made with the same seed; with only the
        // index error (thickness σ 0) a run meets R ≤ 1.27 % exactly when the closed form
        // with n1 = 1.38·k does.
        let s = ToleranceSettings {
            runs: 400,
            thickness_pct: 0.0,
            systematic_pct: 0.0,
            index_pct: 1.0,
            ..ToleranceSettings::default()
        };
        let e = go(&quarter_wave(0.0127), &s);
        let resolved = quarter_wave(0.0).resolve().unwrap();
        let judge = |d: &Draw<'_>| {
            let n1 = 1.38 * d.index_scales[resolved.layers[0].0];
            let d_nm = d.layers[0].1;
            // Single layer at normal incidence, Airy sum (Born & Wolf §1.6.4).
            let delta = 2.0 * std::f64::consts::PI * n1 * d_nm / 550.0;
            let r01 = (1.0 - n1) / (1.0 + n1);
            let r12 = (n1 - 1.52) / (n1 + 1.52);
            let e2 = num_complex::Complex64::from_polar(1.0, 2.0 * delta);
            let r = (r01 + r12 * e2) / (1.0 + r01 * r12 * e2);
            r.norm_sqr() <= 0.0127
        };
        let by_hand = tolerance_judged(&resolved, &[550.0], &s, Some(&judge), |_| {
            ControlFlow::Continue(())
        })
        .unwrap();
        let count = by_hand.passed.unwrap();
        assert_eq!(
            e.passed,
            Some(count),
            "the evaluator's verdicts = closed form"
        );
        assert!(count > 0 && count < 400, "partial: {count}");
    }

    #[test]
    fn no_targets_no_yield_and_loose_targets_full_yield() {
        let s = ToleranceSettings {
            runs: 50,
            ..ToleranceSettings::default()
        };
        let mut d = quarter_wave(0.05);
        assert_eq!(go(&d, &s).yield_fraction(), Some(1.0), "R ≤ 5 % always met");
        d.targets.clear();
        assert_eq!(go(&d, &s).passed, None, "nothing to judge");
    }

    #[test]
    fn bad_targets_and_settings_are_typed_errors() {
        let mut d = quarter_wave(0.01);
        d.targets[0].weight = 0.0;
        let e = tolerance_with_yield(&d, &[550.0], &ToleranceSettings::default(), |_| {
            ControlFlow::Continue(())
        });
        assert!(
            matches!(e, Err(YieldError::Targets(OptimizeError::ZeroWeight))),
            "{e:?}"
        );
        let d = quarter_wave(0.01);
        let s = ToleranceSettings {
            runs: 0,
            ..ToleranceSettings::default()
        };
        let e = tolerance_with_yield(&d, &[550.0], &s, |_| ControlFlow::Continue(()));
        assert!(
            matches!(
                e,
                Err(YieldError::Tolerance(ToleranceError::BadRuns { runs: 0 }))
            ),
            "{e:?}"
        );
    }

    #[test]
    fn merit_sensitivity_is_the_worse_one_sided_change() {
        let mut d = quarter_wave(0.0);
        d.layers.push(Layer::new("L", Nm::ZERO));
        let s = merit_sensitivity(&d).unwrap();
        let ev = Evaluator::new(&d, &[]).unwrap();
        let base = ev.layers_of(&d);
        let mf = |f: f64| {
            let mut l = base.clone();
            l[0].1 *= f;
            ev.merit(&l)
        };
        let want = (mf(1.01) - mf(1.0)).abs().max((mf(0.99) - mf(1.0)).abs());
        assert_eq!(s.layers[0].sensitivity, want, "definition");
        // At the quarter wave R is at its minimum: both sides rise, by about
        // ½ R'' (0.01 d)², not zero.
        assert!(want > 1e-7, "{want}");
        assert!((s.merit - 0.012_600_7).abs() < 1e-6, "merit {}", s.merit);
        assert_eq!(s.layers[1].sensitivity, 0.0, "zero thickness");
        assert_eq!(s.ranked()[0].layer, 1, "ranked");
    }
}
