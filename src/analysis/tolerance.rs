//! Monte Carlo tolerances: how a design's spectrum spreads when the chamber misses the layer
//! thicknesses and indices by random amounts.
//!
//! Each run draws, from normal distributions with mean 0:
//! * one systematic relative thickness error shared by all layers (σ = `systematic_pct` %),
//! * one random relative thickness error per layer (σ = `thickness_pct` %),
//! * one relative error of n per layer material (σ = `index_pct` %), the same at every
//!   wavelength and in every layer of that material (k is left alone; the media and the
//!   substrate are taken as known).
//!
//! A coating on the back face of a thick substrate keeps its thicknesses (its materials take
//! the index errors of the run); the thickness errors concern the front layers, the ones the
//! run deposits.
//!
//! Layer j of run i is `d_j (1 + e_sys)(1 + e_j)` thick (0 if that comes out negative) and its
//! material has `n (1 + e_m)`. The result is the nominal curve and, at every wavelength, the
//! chosen percentiles of the runs (linear between order statistics, the common "type 7"
//! definition).
//!
//! When a judge is given ([`tolerance_judged`]), each run's drawn layers and index factors are
//! also handed to it and the envelope counts the runs it accepts ([`Envelope::passed`]). The
//! judge of the targets lives with the optimiser (`optimize::tolerance_with_yield`), so
//! targets are judged in one place; this module does not know what a target is.
//!
//! Run i draws from its own generator (PCG-64 MCG seeded from the seed and i), so a result
//! depends on the seed and the number of runs only — not on the number of threads or on
//! where a cancelled job stopped.
//!
//! ```
//! use stackwise::analysis::tolerance::{tolerance, ToleranceSettings};
//! use stackwise::design::{Design, Layer, Nm};
//! let mut d = Design::new_empty("AR");
//! d.layers.push(Layer::new("MgF2", Nm::new(99.6)?));
//! let settings = ToleranceSettings { runs: 200, ..ToleranceSettings::default() };
//! let wl = [450.0, 550.0, 650.0];
//! let env = tolerance(&d.resolve()?, &wl, &settings, |_| std::ops::ControlFlow::Continue(()))?;
//! assert_eq!(env.runs_done, 200);
//! assert!(env.bands[0][1] <= env.bands[2][1], "5 % below 95 %");
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use std::ops::ControlFlow;

use num_complex::Complex64;
use rand_distr::{Distribution as _, StandardNormal};
use rand_pcg::Pcg64Mcg;
use rand_pcg::rand_core::SeedableRng as _;
use rayon::prelude::*;

use super::grid::IndexGrid;
use super::{SweepError, Warning};
use crate::design::{Pol, Quantity, ResolvedDesign};
use crate::optics::Side;

/// Default σ of the random per-layer thickness error, %. Common practice, no single published
/// source.
pub const DEFAULT_THICKNESS_PCT: f64 = 1.0;

/// Default σ of the systematic thickness error shared by all layers, %. Common practice, no
/// single published source.
pub const DEFAULT_SYSTEMATIC_PCT: f64 = 1.0;

/// Default σ of the per-material index error, %. Common practice, no single published
/// source.
pub const DEFAULT_INDEX_PCT: f64 = 0.5;

/// Default percentiles of the envelope.
pub const DEFAULT_PERCENTILES: [f64; 3] = [5.0, 50.0, 95.0];

/// Largest σ accepted, %: beyond it the normal model of a deposition error means little.
pub const MAX_SIGMA_PCT: f64 = 30.0;

/// Most runs one analysis may have.
pub const MAX_RUNS: usize = 1_000_000;

/// Most stored values (runs × wavelengths) one analysis may keep.
pub const MAX_VALUES: usize = 20_000_000;

/// Runs between two progress reports.
const BATCH: usize = 250;

/// What the analysis varies and reports.
#[derive(Clone, Debug, PartialEq)]
pub struct ToleranceSettings {
    /// Number of runs (at least 1).
    pub runs: usize,
    /// Seed of the random draws; the same seed gives the same result.
    pub seed: u64,
    /// σ of the random relative thickness error of each layer, %.
    pub thickness_pct: f64,
    /// σ of the relative thickness error shared by all layers, %.
    pub systematic_pct: f64,
    /// σ of the relative error of n of each layer material, %.
    pub index_pct: f64,
    /// Percentiles of the envelope, each 0 to 100.
    pub percentiles: Vec<f64>,
    /// R, T or A.
    pub quantity: Quantity,
    /// s, p or their mean.
    pub pol: Pol,
    /// Angle of incidence in the incident medium, degrees.
    pub aoi_deg: f64,
}

impl Default for ToleranceSettings {
    fn default() -> Self {
        Self {
            runs: 1000,
            seed: 1,
            thickness_pct: DEFAULT_THICKNESS_PCT,
            systematic_pct: DEFAULT_SYSTEMATIC_PCT,
            index_pct: DEFAULT_INDEX_PCT,
            percentiles: DEFAULT_PERCENTILES.to_vec(),
            quantity: Quantity::R,
            pol: Pol::Mean,
            aoi_deg: 0.0,
        }
    }
}

/// How far a running analysis has come.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ToleranceProgress {
    /// Runs finished.
    pub runs_done: usize,
    /// Runs asked for.
    pub runs: usize,
}

/// Why the analysis stopped.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ToleranceStop {
    /// Every run was done.
    Completed,
    /// The progress callback asked to stop; the envelope holds the runs done so far.
    Cancelled,
}

/// The result: nominal curve and percentile envelope over wavelength (plain data to plot).
#[derive(Clone, Debug, PartialEq)]
pub struct Envelope {
    /// Wavelengths (nm).
    pub wavelength_nm: Vec<f64>,
    /// The design as designed (fractions).
    pub nominal: Vec<f64>,
    /// The percentiles, as asked for.
    pub percentiles: Vec<f64>,
    /// `bands[i][w]`: percentile `percentiles[i]` of the runs at `wavelength_nm[w]`.
    pub bands: Vec<Vec<f64>>,
    /// Runs the envelope is made of.
    pub runs_done: usize,
    /// Whether all runs were done.
    pub stop: ToleranceStop,
    /// Things to tell the user (e.g. extrapolated materials).
    pub warnings: Vec<Warning>,
    /// Runs the judge accepted, when there was one ([`tolerance_judged`]); `None` otherwise.
    pub passed: Option<usize>,
}

impl Envelope {
    /// The share of runs the judge accepted (0 to 1), when there was a judge and a run.
    #[must_use]
    pub fn yield_fraction(&self) -> Option<f64> {
        let passed = self.passed?;
        (self.runs_done > 0).then(|| passed as f64 / self.runs_done as f64)
    }
}

/// One run's draw as a judge sees it.
#[derive(Clone, Copy, Debug)]
pub struct Draw<'a> {
    /// The run's layers, (material, nm): material positions as in
    /// [`ResolvedDesign::materials`], thicknesses with the run's errors.
    pub layers: &'a [(usize, f64)],
    /// The run's factor on n of each material of [`ResolvedDesign::materials`].
    pub index_scales: &'a [f64],
}

/// Decides whether one run is good (e.g. meets the design's targets). Called from several
/// threads at once.
pub type Judge<'j> = dyn Fn(&Draw<'_>) -> bool + Sync + 'j;

/// Why the analysis could not run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ToleranceError {
    /// Zero runs, or more than [`MAX_RUNS`].
    #[error("{runs} runs: give at least 1 and at most {MAX_RUNS}")]
    BadRuns {
        /// The number given.
        runs: usize,
    },
    /// A σ that is negative, not a number or above [`MAX_SIGMA_PCT`].
    #[error("{what} σ of {value} % is not allowed: give a number from 0 to {MAX_SIGMA_PCT} %")]
    BadSigma {
        /// Which σ ("thickness", "systematic", "index").
        what: &'static str,
        /// The value given.
        value: f64,
    },
    /// A percentile outside 0–100, or none at all.
    #[error("percentile {value} is not allowed: give numbers from 0 to 100")]
    BadPercentile {
        /// The value given (NaN when none was given).
        value: f64,
    },
    /// Too many values to keep.
    #[error(
        "{runs} runs × {points} wavelengths = {values} values is more than the {MAX_VALUES} \
         one analysis keeps; use fewer runs or a larger wavelength step"
    )]
    TooLarge {
        /// Runs asked for.
        runs: usize,
        /// Wavelengths asked for.
        points: usize,
        /// Their product.
        values: usize,
    },
    /// The sweep itself is impossible (wavelengths, angle, a material).
    #[error(transparent)]
    Sweep(#[from] SweepError),
}

fn check(settings: &ToleranceSettings, points: usize) -> Result<(), ToleranceError> {
    let runs = settings.runs;
    if runs == 0 || runs > MAX_RUNS {
        return Err(ToleranceError::BadRuns { runs });
    }
    for (what, value) in [
        ("thickness", settings.thickness_pct),
        ("systematic", settings.systematic_pct),
        ("index", settings.index_pct),
    ] {
        if !(0.0..=MAX_SIGMA_PCT).contains(&value) {
            return Err(ToleranceError::BadSigma { what, value });
        }
    }
    if settings.percentiles.is_empty() {
        return Err(ToleranceError::BadPercentile { value: f64::NAN });
    }
    if let Some(&value) = settings
        .percentiles
        .iter()
        .find(|p| !(0.0..=100.0).contains(*p))
    {
        return Err(ToleranceError::BadPercentile { value });
    }
    let values = runs.saturating_mul(points);
    if values > MAX_VALUES {
        return Err(ToleranceError::TooLarge {
            runs,
            points,
            values,
        });
    }
    Ok(())
}

/// The generator of run `run`: seeded from the seed and the run's number only.
fn run_rng(seed: u64, run: usize) -> Pcg64Mcg {
    // Distinct runs get distinct seeds; the generator's own seeding spreads them out.
    Pcg64Mcg::seed_from_u64(seed ^ (run as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15))
}

/// One run: perturbed thicknesses and indices, then the curve and the judge's verdict.
fn one_run(
    grid: &IndexGrid<'_>,
    s: &ToleranceSettings,
    judge: Option<&Judge<'_>>,
    run: usize,
    layers: &mut Vec<(usize, f64)>,
    table: &mut Vec<Complex64>,
) -> (Vec<f64>, bool) {
    let mut rng = run_rng(s.seed, run);
    let mut normal = || -> f64 { StandardNormal.sample(&mut rng) };
    let systematic = 1.0 + 0.01 * s.systematic_pct * normal();
    layers.clear();
    layers.extend(grid.layers().iter().map(|&(m, nm)| {
        let factor = systematic * (1.0 + 0.01 * s.thickness_pct * normal());
        (m, (nm * factor).max(0.0))
    }));
    let width = grid.width();
    let materials = width - 3;
    let scales: Vec<f64> = (0..materials)
        .map(|_| (1.0 + 0.01 * s.index_pct * normal()).max(1e-3))
        .collect();
    table.clear();
    table.extend_from_slice(grid.table());
    for row in table.chunks_mut(width) {
        for (n, scale) in row.iter_mut().zip(&scales) {
            n.re *= scale;
        }
    }
    let good = judge.is_some_and(|j| {
        j(&Draw {
            layers,
            index_scales: &scales,
        })
    });
    (grid.curve_with(table, layers, s.quantity, s.pol), good)
}

/// Percentile `p` (0–100) of sorted values, linear between order statistics.
fn percentile(sorted: &[f64], p: f64) -> f64 {
    let Some(&last) = sorted.last() else {
        return f64::NAN;
    };
    let rank = p / 100.0 * (sorted.len() - 1) as f64;
    let lo = rank.floor() as usize;
    match sorted.get(lo + 1) {
        Some(&next) => sorted[lo] + (rank - lo as f64) * (next - sorted[lo]),
        None => last,
    }
}

/// Runs the Monte Carlo analysis of `design` over `wavelengths_nm`.
///
/// `on_progress` is called on the calling thread after every batch of runs; returning
/// `ControlFlow::Break(())` stops the analysis, which then returns the envelope of the runs
/// done so far with [`ToleranceStop::Cancelled`]. The runs themselves are spread over all
/// cores.
pub fn tolerance(
    design: &ResolvedDesign,
    wavelengths_nm: &[f64],
    settings: &ToleranceSettings,
    on_progress: impl FnMut(&ToleranceProgress) -> ControlFlow<()>,
) -> Result<Envelope, ToleranceError> {
    tolerance_judged(design, wavelengths_nm, settings, None, on_progress)
}

/// [`tolerance`], with every run also handed to `judge` (when given); the envelope then
/// counts the accepted runs in [`Envelope::passed`]. The verdicts, like the curves, depend on
/// the seed and the number of runs only.
pub fn tolerance_judged(
    design: &ResolvedDesign,
    wavelengths_nm: &[f64],
    settings: &ToleranceSettings,
    judge: Option<&Judge<'_>>,
    mut on_progress: impl FnMut(&ToleranceProgress) -> ControlFlow<()>,
) -> Result<Envelope, ToleranceError> {
    check(settings, wavelengths_nm.len())?;
    let grid = IndexGrid::new(design, wavelengths_nm, settings.aoi_deg, Side::Front)?;
    let (quantity, pol) = (settings.quantity, settings.pol);
    let nominal = grid.curve_with(grid.table(), grid.layers(), quantity, pol);
    let points = wavelengths_nm.len();
    let mut values: Vec<f64> = Vec::with_capacity(settings.runs * points);
    let mut stop = ToleranceStop::Completed;
    let mut done = 0;
    let mut passed = 0;
    while done < settings.runs {
        let end = (done + BATCH).min(settings.runs);
        let batch: Vec<(Vec<f64>, bool)> = (done..end)
            .into_par_iter()
            .map_init(
                || (Vec::new(), Vec::new()),
                |(layers, table), run| one_run(&grid, settings, judge, run, layers, table),
            )
            .collect();
        for (curve, good) in batch {
            values.extend(curve);
            passed += usize::from(good);
        }
        done = end;
        let progress = ToleranceProgress {
            runs_done: done,
            runs: settings.runs,
        };
        if on_progress(&progress).is_break() && done < settings.runs {
            stop = ToleranceStop::Cancelled;
            break;
        }
    }
    let columns: Vec<Vec<f64>> = (0..points)
        .into_par_iter()
        .map(|w| {
            let mut column: Vec<f64> = values.iter().skip(w).step_by(points).copied().collect();
            column.sort_unstable_by(f64::total_cmp);
            settings
                .percentiles
                .iter()
                .map(|&p| percentile(&column, p))
                .collect()
        })
        .collect();
    let bands: Vec<Vec<f64>> = (0..settings.percentiles.len())
        .map(|i| columns.iter().map(|c| c[i]).collect())
        .collect();
    Ok(Envelope {
        wavelength_nm: wavelengths_nm.to_vec(),
        nominal,
        percentiles: settings.percentiles.clone(),
        bands,
        runs_done: done,
        stop,
        warnings: grid.warnings().to_vec(),
        passed: judge.map(|_| passed),
    })
}

#[cfg(test)]
#[allow(
    clippy::float_cmp,
    reason = "these results must be exact, not merely close"
)]
mod tests {
    use super::*;
    use crate::design::{Design, Layer, Nm};
    use crate::material::{Material, Model};

    /// A quarter-wave mirror (HL)^4 H at 550 nm of constant indices 2.35 / 1.46 on glass.
    fn mirror() -> ResolvedDesign {
        let mut d = Design::new_empty("Mirror");
        d.substrate = "G".into();
        d.materials = vec![
            Material::user("H", Model::Constant { n: 2.35, k: 0.0 }),
            Material::user("L", Model::Constant { n: 1.46, k: 0.0 }),
            Material::user("G", Model::Constant { n: 1.52, k: 0.0 }),
        ];
        for i in 0..9 {
            let (m, n) = if i % 2 == 0 { ("H", 2.35) } else { ("L", 1.46) };
            d.layers
                .push(Layer::new(m, Nm::new(550.0 / (4.0 * n)).unwrap()));
        }
        d.resolve().unwrap()
    }

    fn wavelengths() -> Vec<f64> {
        (0..=60).map(|i| 450.0 + 5.0 * f64::from(i)).collect()
    }

    fn run(settings: &ToleranceSettings) -> Envelope {
        tolerance(&mirror(), &wavelengths(), settings, |_| {
            ControlFlow::Continue(())
        })
        .unwrap()
    }

    #[test]
    fn zero_errors_reproduce_the_nominal_curve_in_every_percentile() {
        let s = ToleranceSettings {
            runs: 50,
            thickness_pct: 0.0,
            systematic_pct: 0.0,
            index_pct: 0.0,
            percentiles: vec![0.0, 5.0, 50.0, 95.0, 100.0],
            ..ToleranceSettings::default()
        };
        let e = run(&s);
        for band in &e.bands {
            assert_eq!(band, &e.nominal, "exactly the nominal curve");
        }
        assert_eq!(e.stop, ToleranceStop::Completed, "all runs");
        // The nominal curve is the design's spectrum.
        let spectrum = super::super::spectrum(&mirror(), &wavelengths(), 0.0, Side::Front).unwrap();
        assert_eq!(e.nominal, spectrum.curves.r, "nominal = spectrum");
    }

    #[test]
    fn the_same_seed_gives_the_same_envelope_and_another_seed_does_not() {
        let s = ToleranceSettings {
            runs: 300,
            seed: 7,
            ..ToleranceSettings::default()
        };
        let a = run(&s);
        let b = run(&s);
        assert_eq!(a, b, "same seed, same result");
        let one_thread = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(|| run(&s));
        assert_eq!(a, one_thread, "independent of the thread count");
        let c = run(&ToleranceSettings { seed: 8, ..s });
        assert_ne!(a.bands, c.bands, "another seed, other draws");
    }

    #[test]
    fn the_envelope_widens_with_sigma() {
        let width = |sigma: f64| {
            let e = run(&ToleranceSettings {
                runs: 400,
                thickness_pct: sigma,
                systematic_pct: sigma,
                index_pct: sigma / 2.0,
                ..ToleranceSettings::default()
            });
            e.bands[2]
                .iter()
                .zip(&e.bands[0])
                .map(|(hi, lo)| hi - lo)
                .sum::<f64>()
        };
        let (w1, w2, w4) = (width(0.5), width(1.0), width(2.0));
        assert!(w1 > 0.0, "errors spread the runs: {w1}");
        assert!(w1 < w2 && w2 < w4, "wider with σ: {w1} {w2} {w4}");
    }

    #[test]
    fn percentiles_are_ordered_and_bracket_the_median() {
        let e = run(&ToleranceSettings {
            runs: 400,
            ..ToleranceSettings::default()
        });
        for w in 0..e.wavelength_nm.len() {
            assert!(
                e.bands[0][w] <= e.bands[1][w] && e.bands[1][w] <= e.bands[2][w],
                "p05 ≤ p50 ≤ p95 at {} nm",
                e.wavelength_nm[w]
            );
        }
    }

    #[test]
    fn percentile_is_linear_between_order_statistics() {
        // Type 7 (numpy's default): rank p/100 · (n − 1).
        let x = [1.0, 2.0, 4.0, 8.0];
        assert_eq!(percentile(&x, 0.0), 1.0, "minimum");
        assert_eq!(percentile(&x, 100.0), 8.0, "maximum");
        assert_eq!(percentile(&x, 50.0), 3.0, "rank 1.5");
        assert!((percentile(&x, 90.0) - 6.8).abs() < 1e-12, "rank 2.7");
    }

    #[test]
    fn cancel_returns_the_runs_done_so_far() {
        let s = ToleranceSettings {
            runs: 2000,
            ..ToleranceSettings::default()
        };
        let mut calls = 0;
        let e = tolerance(&mirror(), &wavelengths(), &s, |p| {
            calls += 1;
            assert_eq!(p.runs, 2000, "total");
            ControlFlow::Break(())
        })
        .unwrap();
        assert_eq!((calls, e.runs_done), (1, BATCH), "stopped after one batch");
        assert_eq!(e.stop, ToleranceStop::Cancelled, "typed stop reason");
        // The first runs are the same as in a full analysis of as many runs.
        let same = run(&ToleranceSettings { runs: BATCH, ..s });
        assert_eq!(e.bands, same.bands, "runs depend on seed and number only");
    }

    #[test]
    fn a_judge_counts_the_runs_it_accepts() {
        // Only the random thickness error: layer 1 is d (1 + 0.01 z), z standard normal, so
        // "within 1 % of nominal" means |z| < 1, probability 0.6827 (standard normal table,
        // e.g. Abramowitz & Stegun 26.2). 2000 runs: binomial σ ≈ 0.0104; allow 4σ.
        let s = ToleranceSettings {
            runs: 2000,
            systematic_pct: 0.0,
            index_pct: 0.0,
            ..ToleranceSettings::default()
        };
        let nominal = mirror().layers[0].1;
        let judge = |d: &Draw<'_>| {
            assert!(
                d.index_scales.iter().all(|&k| k == 1.0),
                "no index errors drawn"
            );
            (d.layers[0].1 / nominal - 1.0).abs() < 0.01
        };
        let go = || {
            tolerance_judged(&mirror(), &wavelengths(), &s, Some(&judge), |_| {
                ControlFlow::Continue(())
            })
            .unwrap()
        };
        let e = go();
        let y = e.yield_fraction().unwrap();
        assert!((y - 0.6827).abs() < 0.042, "yield {y}");
        let one_thread = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap()
            .install(go);
        assert_eq!(
            e.passed, one_thread.passed,
            "verdicts independent of threads"
        );
        assert_eq!(run(&s).passed, None, "no judge, no count");
        assert_eq!(
            run(&s).bands,
            e.bands,
            "the judge does not change the envelope"
        );
    }

    #[test]
    fn bad_settings_are_refused_with_the_culprit() {
        let d = mirror();
        let wl = wavelengths();
        let go = |s: ToleranceSettings| {
            tolerance(&d, &wl, &s, |_| ControlFlow::Continue(()))
                .unwrap_err()
                .to_string()
        };
        let base = ToleranceSettings::default();
        let e = go(ToleranceSettings {
            runs: 0,
            ..base.clone()
        });
        assert!(e.contains("0 runs"), "{e}");
        let e = go(ToleranceSettings {
            thickness_pct: -1.0,
            ..base.clone()
        });
        assert!(e.contains("thickness σ of -1 %"), "{e}");
        let e = go(ToleranceSettings {
            index_pct: f64::NAN,
            ..base.clone()
        });
        assert!(e.contains("index σ"), "{e}");
        let e = go(ToleranceSettings {
            percentiles: vec![50.0, 101.0],
            ..base.clone()
        });
        assert!(e.contains("percentile 101"), "{e}");
        let e = go(ToleranceSettings {
            runs: MAX_RUNS,
            ..base.clone()
        });
        assert!(e.contains("fewer runs"), "{e}");
        let e = go(ToleranceSettings {
            aoi_deg: 95.0,
            ..base
        });
        assert!(e.contains("95"), "{e}");
    }
}
