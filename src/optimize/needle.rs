//! Needle optimisation: insert infinitely thin layers where the merit's derivative says they
//! help most, refine, drop layers thinner than the minimum, merge neighbours of one material.
//!
//! The needle function — the derivative of MF² with respect to the thickness ε of a layer of
//! material m inserted at depth z (Tikhonravov, Trubetskov & DeBell, Appl. Opt. 35, 5493
//! (1996); Sullivan & Dobrowolski, Appl. Opt. 35, 5484 (1996)) — is computed exactly as a
//! layer derivative: the stack is rebuilt with zero-thickness layers of every allowed material
//! at every trial depth (a zero-thickness layer's matrix is the identity, so the stack is
//! unchanged), and [`crate::optics::solve_gradient`] gives the derivative for each of them in
//! one pass per wavelength.

use std::ops::ControlFlow;

use super::lsq::End;
use super::refine::{
    Refined, Work, check_free, check_options, refine_layers, stop_reason, to_design, work_layers,
};
use super::{Evaluator, OptimizeError, Options, Outcome, Progress, Stage, StopReason};
use crate::design::Design;

/// Thickness given to a new needle before refinement grows it (nm).
const NEEDLE_START_NM: f64 = 0.5;

/// Layers that refinement shrank below this are gone (nm).
const VANISHED_NM: f64 = 0.01;

/// Trial insertions tried per step, best needle values first.
const TRIALS_PER_STEP: usize = 4;

/// Where a needle goes: before layer `at` (a boundary; `at == len` is the top of the stack),
/// or inside layer `at`, `offset_nm` above its substrate side.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Place {
    at: usize,
    offset_nm: Option<f64>,
}

/// A candidate insertion: needle value ∂MF²/∂ε (per nm), place, material.
#[derive(Clone, Copy, Debug)]
struct Candidate {
    value: f64,
    place: Place,
    mat: usize,
}

/// Every candidate with a negative needle value, most negative first.
fn candidates(
    ev: &Evaluator,
    layers: &[Work],
    allowed: &[usize],
    sub_mat: Option<usize>,
    step_nm: f64,
    min_nm: f64,
) -> Vec<Candidate> {
    let mut aug: Vec<(usize, f64)> = Vec::new();
    let mut meta: Vec<Option<(Place, usize)>> = Vec::new();
    let needles = |aug: &mut Vec<(usize, f64)>,
                   meta: &mut Vec<Option<(Place, usize)>>,
                   place,
                   skip: &[usize]| {
        for &m in allowed {
            if !skip.contains(&m) {
                aug.push((m, 0.0));
                meta.push(Some((place, m)));
            }
        }
    };
    for (k, w) in layers.iter().enumerate() {
        // No needle of a neighbour's material at a boundary (it only thickens the neighbour),
        // nor of the substrate's own material on the substrate (it is more substrate).
        let below: Vec<usize> = if k > 0 {
            vec![layers[k - 1].mat, w.mat]
        } else {
            sub_mat.into_iter().chain([w.mat]).collect()
        };
        needles(
            &mut aug,
            &mut meta,
            Place {
                at: k,
                offset_nm: None,
            },
            &below,
        );
        let mut done = 0.0;
        // At most a few hundred trial depths per layer, however thick.
        let step_nm = step_nm.max(w.nm / 400.0);
        let mut z = min_nm.max(step_nm * 0.5);
        if !w.locked {
            while z <= w.nm - min_nm.max(step_nm * 0.5) {
                aug.push((w.mat, z - done));
                meta.push(None);
                done = z;
                needles(
                    &mut aug,
                    &mut meta,
                    Place {
                        at: k,
                        offset_nm: Some(z),
                    },
                    &[w.mat],
                );
                z += step_nm;
            }
        }
        aug.push((w.mat, w.nm - done));
        meta.push(None);
    }
    let top: Vec<usize> = layers.last().map(|w| vec![w.mat]).unwrap_or_default();
    needles(
        &mut aug,
        &mut meta,
        Place {
            at: layers.len(),
            offset_nm: None,
        },
        &top,
    );
    let mut grad = Vec::new();
    let merit = ev.merit_gradient(&aug, &mut grad);
    // Values this close to zero are rounding, not a direction (MF² changes by < 1e-9 of
    // itself per nm).
    let threshold = -1e-9 * merit * merit;
    let mut out: Vec<Candidate> = meta
        .iter()
        .zip(&grad)
        .filter_map(|(m, &value)| {
            let (place, mat) = (*m)?;
            (value < threshold).then_some(Candidate { value, place, mat })
        })
        .collect();
    out.sort_by(|a, b| a.value.total_cmp(&b.value));
    out
}

/// `layers` with a needle of `mat` inserted at `place`.
fn insert(layers: &[Work], place: Place, mat: usize) -> Vec<Work> {
    let mut out = layers.to_vec();
    let needle = Work {
        mat,
        nm: NEEDLE_START_NM,
        locked: false,
    };
    match place.offset_nm {
        None => out.insert(place.at, needle),
        Some(z) => {
            let host = out[place.at];
            out[place.at].nm = z;
            out.insert(place.at + 1, needle);
            out.insert(
                place.at + 2,
                Work {
                    nm: host.nm - z,
                    ..host
                },
            );
        }
    }
    out
}

/// Drops unlocked layers thinner than `min_nm` and merges unlocked neighbours of one material;
/// an unlocked layer of the substrate's own material (`sub_mat`) next to the substrate is
/// optically part of it and is dropped too.
fn tidy(layers: &[Work], min_nm: f64, sub_mat: Option<usize>) -> Vec<Work> {
    let mut out: Vec<Work> = Vec::with_capacity(layers.len());
    for w in layers.iter().filter(|w| w.locked || w.nm >= min_nm) {
        match out.last_mut() {
            Some(last) if last.mat == w.mat && !last.locked && !w.locked => last.nm += w.nm,
            None if Some(w.mat) == sub_mat && !w.locked => {}
            _ => out.push(*w),
        }
    }
    out
}

/// The stacks that gradual evolution tries when no needle helps: a quarter wave (`qw_nm`) of
/// one allowed material, or two quarter waves of two different ones, added at the substrate
/// side or on top — never next to a layer (or the substrate) of the same material.
fn grown_stacks(
    layers: &[Work],
    allowed: &[usize],
    sub_mat: Option<usize>,
    qw_nm: impl Fn(usize) -> f64,
) -> Vec<Vec<Work>> {
    let new = |mat| Work {
        mat,
        nm: qw_nm(mat),
        locked: false,
    };
    let below = layers.first().map(|w| w.mat);
    let above = layers.last().map(|w| w.mat);
    let mut out = Vec::new();
    // Runs of one or two new layers, listed from the substrate side; none may touch a layer of
    // its own material.
    let mut runs: Vec<Vec<usize>> = allowed.iter().map(|&m| vec![m]).collect();
    for &a in allowed {
        for &b in allowed {
            if a != b {
                runs.push(vec![a, b]);
            }
        }
    }
    for run in &runs {
        let (first, last) = (run[0], run[run.len() - 1]);
        if Some(first) != sub_mat && Some(last) != below {
            let mut g: Vec<Work> = run.iter().map(|&m| new(m)).collect();
            g.extend_from_slice(layers);
            out.push(g);
        }
        if Some(first) != above && !layers.is_empty() {
            let mut g = layers.to_vec();
            g.extend(run.iter().map(|&m| new(m)));
            out.push(g);
        }
    }
    out
}

/// Consecutive growth steps without a new best before the search gives up.
const MAX_GROWTHS: usize = 3;

/// Reports a new best design; returns whether the callback asked to stop.
fn report_best(
    on_progress: &mut dyn FnMut(&Progress<'_>) -> ControlFlow<()>,
    ev: &Evaluator,
    design: &Design,
    best: &[Work],
    merit: f64,
    counts: &Counts,
) -> bool {
    let shown = to_design(ev, design, best);
    on_progress(&Progress {
        stage: Stage::Needle,
        iteration: counts.iterations,
        insertions: counts.insertions,
        merit,
        layers: best.len(),
        best: &shown,
    })
    .is_break()
}

/// What the reporting refinement needs.
struct Ctx<'a> {
    ev: &'a Evaluator,
    design: &'a Design,
    max_iterations: usize,
}

impl Ctx<'_> {
    /// Refines `layers`; progress shows the accepted design `best` (merit `best_merit`), or the
    /// refinement's own best while nothing has been accepted yet.
    fn refine(
        &self,
        on_progress: &mut dyn FnMut(&Progress<'_>) -> ControlFlow<()>,
        layers: &[Work],
        min_nm: f64,
        best: &[Work],
        best_merit: f64,
        counts: &Counts,
    ) -> Refined {
        let shown = to_design(self.ev, self.design, best);
        let mut step = |it: usize, m: f64, trial: &[Work]| {
            let own = (!best_merit.is_finite()).then(|| to_design(self.ev, self.design, trial));
            let d = own.as_ref().unwrap_or(&shown);
            on_progress(&Progress {
                stage: Stage::Refine,
                iteration: counts.iterations + it,
                insertions: counts.insertions,
                merit: if own.is_some() { m } else { best_merit },
                layers: d.layers.len(),
                best: d,
            })
        };
        refine_layers(self.ev, layers, min_nm, self.max_iterations, &mut step)
    }

    /// The best design that keeps every unlocked layer at `min_nm` or more, made from
    /// `layers`: the thinner layers dropped (and neighbours merged), or raised to the minimum,
    /// each refined; the better of the two.
    #[allow(clippy::too_many_arguments)]
    fn feasible(
        &self,
        on_progress: &mut dyn FnMut(&Progress<'_>) -> ControlFlow<()>,
        layers: &[Work],
        min_nm: f64,
        sub_mat: Option<usize>,
        best: &[Work],
        best_merit: f64,
        counts: &mut Counts,
    ) -> Refined {
        let dropped = tidy(layers, min_nm, sub_mat);
        let mut out = self.refine(on_progress, layers, min_nm, best, best_merit, counts);
        counts.add(&out);
        if out.end != End::Cancelled
            && dropped.len() < layers.len()
            && dropped.iter().any(|w| !w.locked)
        {
            let r = self.refine(on_progress, &dropped, min_nm, best, best_merit, counts);
            counts.add(&r);
            if r.merit < out.merit || r.end == End::Cancelled {
                out = r;
            }
        }
        out
    }
}

/// Work done so far in a run.
#[derive(Debug, Default)]
struct Counts {
    iterations: usize,
    evaluations: usize,
    insertions: usize,
}

impl Counts {
    fn add(&mut self, r: &Refined) {
        self.iterations += r.iterations;
        self.evaluations += r.evaluations;
    }
}

/// The (material, thickness) pairs the evaluator takes.
fn pairs(layers: &[Work]) -> Vec<(usize, f64)> {
    layers.iter().map(|w| (w.mat, w.nm)).collect()
}

/// Needle optimisation of `design`: refine, then repeatedly insert a thin layer of one of
/// `options.materials` (default: the materials of the design's layers) where the needle
/// function is most negative, refine, drop layers thinner than `options.min_nm` and merge
/// neighbours of one material; an insertion is kept only if the merit improves, so the result
/// is never worse than the refined start. Stops when no insertion helps or at a limit
/// (`max_layers`, `max_total_nm`, `max_insertions`). Locked layers stay as they are (no needle
/// goes inside them).
#[expect(
    clippy::too_many_lines,
    reason = "one loop: insertion trials, then growth, sharing the run's counters"
)]
pub fn needle(
    design: &Design,
    options: &Options,
    mut on_progress: impl FnMut(&Progress<'_>) -> ControlFlow<()>,
) -> Result<Outcome, OptimizeError> {
    check_options(options)?;
    if !(options.needle_step_nm.is_finite() && options.needle_step_nm > 0.0) {
        return Err(OptimizeError::BadOption(format!(
            "the needle depth step must be a positive number of nm, got {}",
            options.needle_step_nm
        )));
    }
    if options.max_layers == 0 {
        return Err(OptimizeError::BadOption(
            "the layer limit must be at least 1".into(),
        ));
    }
    if options.max_total_nm.is_nan() || options.max_total_nm <= 0.0 {
        return Err(OptimizeError::BadOption(format!(
            "the total-thickness limit must be positive, got {} nm",
            options.max_total_nm
        )));
    }
    let names: Vec<String> = if options.materials.is_empty() {
        let mut v: Vec<String> = Vec::new();
        for l in &design.layers {
            if !v.contains(&l.material) {
                v.push(l.material.clone());
            }
        }
        v
    } else {
        options.materials.clone()
    };
    let ev = Evaluator::new(design, &names)?;
    let allowed: Vec<usize> = names.iter().filter_map(|n| ev.palette_index(n)).collect();
    let start = work_layers(&ev, design);
    check_free(&start, options.min_nm)?;
    let start_merit = ev.merit(&ev.layers_of(design));

    let sub_mat = ev.palette_index(&design.substrate);
    let mut current = start;
    let mut merit = f64::INFINITY;
    let mut reason;
    let mut cancelled = false;
    let on_progress: &mut dyn FnMut(&Progress<'_>) -> ControlFlow<()> = &mut on_progress;
    let ctx = Ctx {
        ev: &ev,
        design,
        max_iterations: options.max_iterations,
    };
    let mut counts = Counts::default();
    let first = ctx.refine(
        on_progress,
        &current,
        options.min_nm,
        &current,
        merit,
        &counts,
    );
    counts.add(&first);
    current = first.layers;
    merit = first.merit;
    // `current` always respects the minimum thickness; gradual evolution may make it worse
    // for a while, so `best` is what the run returns — never worse than the refined start.
    let mut best = current.clone();
    let mut best_merit = merit;
    let mut growths = 0;
    reason = stop_reason(first.end);
    if reason == StopReason::Cancelled {
        cancelled = true;
    }
    while !cancelled {
        if best_merit == 0.0 {
            reason = StopReason::TargetsMet;
            break;
        }
        if counts.insertions >= options.max_insertions {
            reason = StopReason::MaxIterations;
            break;
        }
        if current.len() >= options.max_layers {
            reason = StopReason::LayerLimit;
            break;
        }
        let found = candidates(
            &ev,
            &current,
            &allowed,
            sub_mat,
            options.needle_step_nm,
            options.min_nm,
        );
        reason = StopReason::NoInsertionHelps;
        let mut tried: Vec<Place> = Vec::new();
        let mut accepted = None;
        for c in found {
            if tried.len() >= TRIALS_PER_STEP {
                break;
            }
            if tried.contains(&c.place) {
                continue;
            }
            tried.push(c.place);
            let trial = insert(&current, c.place, c.mat);
            if trial.len() > options.max_layers {
                reason = StopReason::LayerLimit;
                continue;
            }
            // Every layer may shrink to nothing (the needle grows from zero); what vanished is
            // dropped; then the design a chamber could make from it.
            let loose = ctx.refine(on_progress, &trial, 0.0, &best, best_merit, &counts);
            counts.add(&loose);
            if loose.end == End::Cancelled {
                cancelled = true;
                break;
            }
            let tidied = tidy(&loose.layers, VANISHED_NM, sub_mat);
            if tidied.is_empty() || tidied.iter().all(|w| w.locked) {
                continue;
            }
            let f = ctx.feasible(
                on_progress,
                &tidied,
                options.min_nm,
                sub_mat,
                &best,
                best_merit,
                &mut counts,
            );
            if f.end == End::Cancelled {
                cancelled = true;
                break;
            }
            if f.merit < merit * (1.0 - 1e-9) && f.layers.len() <= options.max_layers {
                if f.layers.iter().map(|w| w.nm).sum::<f64>() > options.max_total_nm {
                    reason = StopReason::ThicknessLimit;
                    continue;
                }
                accepted = Some((f.layers, f.merit));
                break;
            }
        }
        if cancelled {
            break;
        }
        if let Some((layers, m)) = accepted {
            current = layers;
            merit = m;
            counts.insertions += 1;
        } else {
            // Gradual evolution: when no needle helps, thicken the design with a quarter wave
            // (at the reference wavelength) of another allowed material at either end and go
            // on from the best of these; the best design seen is what is returned, so this
            // never makes the result worse.
            if growths >= MAX_GROWTHS {
                break;
            }
            let mut pick: Option<Refined> = None;
            let mut too_thick = false;
            let qw_nm = |m: usize| {
                let n = ev.palette()[m]
                    .index_at(design.reference_nm)
                    .map_or(1.5, |n| n.re);
                design.reference_nm / (4.0 * n)
            };
            for grown in grown_stacks(&current, &allowed, sub_mat, qw_nm) {
                if grown.len() > options.max_layers || cancelled {
                    continue;
                }
                // The new layers keep at least the minimum, so they are not simply undone.
                let r = ctx.refine(
                    on_progress,
                    &grown,
                    options.min_nm,
                    &best,
                    best_merit,
                    &counts,
                );
                counts.add(&r);
                if r.end == End::Cancelled {
                    cancelled = true;
                }
                if r.layers.iter().map(|w| w.nm).sum::<f64>() > options.max_total_nm {
                    too_thick = true;
                } else if pick.as_ref().is_none_or(|p| r.merit < p.merit) {
                    pick = Some(r);
                }
            }
            if cancelled {
                break;
            }
            let Some(r) = pick else {
                // No growth was possible: say which limit stopped it, if one did.
                reason = if current.len() + 1 >= options.max_layers {
                    StopReason::LayerLimit
                } else if too_thick {
                    StopReason::ThicknessLimit
                } else {
                    StopReason::NoInsertionHelps
                };
                break;
            };
            growths += 1;
            merit = ev.merit(&pairs(&r.layers));
            current = r.layers;
        }
        if merit < best_merit * (1.0 - 1e-9) {
            best.clone_from(&current);
            best_merit = merit;
            growths = 0;
            cancelled |= report_best(on_progress, &ev, design, &best, best_merit, &counts);
        }
    }
    if cancelled {
        reason = StopReason::Cancelled;
    }
    Ok(Outcome {
        design: to_design(&ev, design, &best),
        merit: best_merit,
        start_merit,
        reason,
        iterations: counts.iterations,
        evaluations: counts.evaluations,
        insertions: counts.insertions,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tidy_drops_thin_layers_and_merges_neighbours() {
        let w = |mat, nm| Work {
            mat,
            nm,
            locked: false,
        };
        let out = tidy(&[w(0, 50.0), w(1, 2.0), w(0, 30.0), w(1, 40.0)], 5.0, None);
        assert_eq!(out, vec![w(0, 80.0), w(1, 40.0)], "dropped and merged");
        let mut locked = w(1, 2.0);
        locked.locked = true;
        let out = tidy(&[w(0, 50.0), locked, w(0, 30.0)], 5.0, None);
        assert_eq!(out.len(), 3, "a locked layer is never dropped");
        let out = tidy(&[w(2, 80.0), w(0, 50.0), w(2, 30.0)], 5.0, Some(2));
        assert_eq!(
            out,
            vec![w(0, 50.0), w(2, 30.0)],
            "a layer of the substrate's material on the substrate is dropped, not one above"
        );
    }

    #[test]
    fn growth_never_touches_its_own_material() {
        let w = |mat, nm| Work {
            mat,
            nm,
            locked: false,
        };
        // Materials 0 and 1 allowed; the substrate is material 1; the stack is 0 | 1.
        let stacks = grown_stacks(&[w(0, 10.0), w(1, 90.0)], &[0, 1], Some(1), |m| {
            [60.0, 95.0][m]
        });
        let as_mats = |s: &Vec<Work>| s.iter().map(|w| w.mat).collect::<Vec<_>>();
        let mats: Vec<Vec<usize>> = stacks.iter().map(as_mats).collect();
        // Below, a run must not start with the substrate's material (1) nor end with the first
        // layer's (0); on top it must not start with the top layer's (1). What is left: 0 on
        // top, (0, 1) below and (0, 1) on top.
        assert_eq!(
            mats,
            vec![vec![0, 1, 0], vec![0, 1, 0, 1], vec![0, 1, 0, 1]],
            "the allowed growths"
        );
        assert!(
            stacks
                .iter()
                .all(|s| s.windows(2).all(|p| p[0].mat != p[1].mat)),
            "no two neighbours of one material"
        );
        assert!(
            (stacks[0][2].nm - 60.0).abs() < 1e-12,
            "a quarter wave of the new material"
        );
    }

    #[test]
    fn insert_splits_the_host() {
        let w = |mat, nm| Work {
            mat,
            nm,
            locked: false,
        };
        let out = insert(
            &[w(0, 100.0)],
            Place {
                at: 0,
                offset_nm: Some(30.0),
            },
            1,
        );
        assert_eq!(
            out,
            vec![w(0, 30.0), w(1, NEEDLE_START_NM), w(0, 70.0)],
            "host split around the needle"
        );
    }
}
