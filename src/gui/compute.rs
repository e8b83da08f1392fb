//! Sweeps for the views, cached per design revision and sweep, and moved to a worker job when
//! slow.
//!
//! All numbers come from [`crate::analysis::run_sweep`] on [`Design::resolve`], the call the
//! command line and the export window make.

use std::time::{Duration, Instant};

use crate::analysis::{self, Curves, Sweep};
use crate::design::Design;

use super::jobs::{Job, JobEnd, Waker};

/// A compute slower than this moves to a worker thread.
pub const INLINE_LIMIT: Duration = Duration::from_millis(30);

/// The outcome of one sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepResult {
    /// The swept variable: wavelengths (nm) or angles (degrees).
    pub x: Vec<f64>,
    /// R, T, A for s, p and mean at each x.
    pub curves: Curves,
    /// Warnings from the engine, as text.
    pub warnings: Vec<String>,
    /// Wall time of the computation.
    pub elapsed: Duration,
}

/// Runs `sweep` on `design` through the engine; errors as the window shows them.
pub fn run_sweep(design: &Design, sweep: &Sweep) -> Result<SweepResult, String> {
    let start = Instant::now();
    let resolved = design.resolve().map_err(|e| e.to_string())?;
    sweep
        .points()
        .map_err(|e| format!("{}: {e}", sweep.range_name()))?;
    let data = analysis::run_sweep(&resolved, sweep).map_err(|e| e.to_string())?;
    Ok(SweepResult {
        x: data.x().to_vec(),
        curves: data.curves().clone(),
        warnings: data.warnings().iter().map(ToString::to_string).collect(),
        elapsed: start.elapsed(),
    })
}

/// What a cached result was computed from: the design's revision and the sweep.
type Key = (u64, Sweep);

/// A cached sweep: the last result shown, and at most one job computing a newer one.
pub struct SweepCache {
    name: &'static str,
    key: Option<Key>,
    result: Option<Result<SweepResult, String>>,
    /// Sequence number of the result on show; later starts get higher numbers.
    generation: u64,
    next_seq: u64,
    job: Option<(Key, Job<(), SweepResult, String>)>,
    slow: bool,
    /// Always compute inline (tests, and screenshots that must show a result at once).
    pub force_inline: bool,
}

impl SweepCache {
    /// An empty cache; `name` names its worker thread.
    #[must_use]
    pub fn new(name: &'static str) -> Self {
        Self {
            name,
            key: None,
            result: None,
            generation: 0,
            next_seq: 0,
            job: None,
            slow: false,
            force_inline: false,
        }
    }

    /// The result on show (possibly for an older revision while a newer one computes).
    #[must_use]
    pub fn result(&self) -> Option<&Result<SweepResult, String>> {
        self.result.as_ref()
    }

    /// A number that changes whenever a new result goes on show.
    #[must_use]
    pub fn generation(&self) -> u64 {
        self.generation
    }

    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.job.is_some()
    }

    /// Whether the result on show is for exactly this design revision and sweep.
    #[must_use]
    pub fn is_current(&self, revision: u64, sweep: &Sweep) -> bool {
        self.key
            .as_ref()
            .is_some_and(|(r, s)| *r == revision && s == sweep)
    }

    /// Brings the cache up to date with `design` at `revision` and `sweep`: nothing when it
    /// already is; otherwise computes inline, or (when the last compute was slow) as a job,
    /// calling `wake` when the job is done.
    pub fn update(&mut self, design: &Design, revision: u64, sweep: &Sweep, wake: &Waker) {
        self.poll();
        if self.is_current(revision, sweep) {
            return;
        }
        let key = (revision, *sweep);
        if let Some((running, _)) = &self.job {
            if *running == key {
                return; // already computing exactly this
            }
            if !self.force_inline {
                return; // one job at a time; the next starts when it is done
            }
        }
        self.next_seq += 1;
        let seq = self.next_seq;
        if self.force_inline || !self.slow {
            let r = run_sweep(design, sweep);
            self.accept(seq, key, r);
            return;
        }
        let d = design.clone();
        let s = *sweep;
        match Job::spawn(self.name, seq, wake.clone(), move |_| run_sweep(&d, &s)) {
            Ok(job) => self.job = Some((key, job)),
            Err(e) => {
                log::error!(
                    "cannot start the {} thread: {e}; computing inline",
                    self.name
                );
                let r = run_sweep(design, sweep);
                self.accept(seq, key, r);
            }
        }
    }

    /// Takes a finished worker result, if any.
    pub fn poll(&mut self) {
        let Some((_, job)) = &mut self.job else {
            return;
        };
        let Some(end) = job.poll() else { return };
        let Some((key, job)) = self.job.take() else {
            return;
        };
        let r = match end {
            JobEnd::Done(r) => Ok(r),
            JobEnd::Failed(e) => Err(e.to_string()),
            JobEnd::Cancelled => return,
        };
        self.accept(job.tag(), key, r);
    }

    fn accept(&mut self, seq: u64, key: Key, r: Result<SweepResult, String>) {
        if seq < self.generation {
            return; // stale: a newer result is already on show
        }
        if let Ok(res) = &r {
            self.slow = res.elapsed > INLINE_LIMIT;
        }
        self.generation = seq;
        self.key = Some(key);
        self.result = Some(r);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Layer, Nm};
    use crate::optics::Side;
    use std::sync::Arc;

    fn nothing() -> Waker {
        Arc::new(|| {})
    }

    fn design() -> Design {
        let mut d = Design::new_empty("t");
        d.layers.push(Layer::new("MgF2", Nm::new(99.6).unwrap()));
        d
    }

    fn spectrum() -> Sweep {
        Sweep::Wavelength {
            from_nm: 400.0,
            to_nm: 700.0,
            step_nm: 10.0,
            aoi_deg: 0.0,
            side: Side::Front,
        }
    }

    #[test]
    fn cache_matches_the_engine_and_recomputes_only_on_change() {
        let mut c = SweepCache::new("test-sweep");
        let d = design();
        c.update(&d, 0, &spectrum(), &nothing());
        let r = c.result().unwrap().as_ref().unwrap().clone();
        let wl = analysis::wavelengths_nm(400.0, 700.0, 10.0).unwrap();
        let direct = analysis::spectrum(&d.resolve().unwrap(), &wl, 0.0, Side::Front).unwrap();
        assert_eq!(r.curves, direct.curves, "same engine, same numbers");
        assert!(c.is_current(0, &spectrum()), "cached");
        assert!(
            !c.is_current(1, &spectrum()),
            "a new revision is not cached"
        );
        let mut d2 = d.clone();
        d2.layers[0].nm = Nm::new(120.0).unwrap();
        c.update(&d2, 1, &spectrum(), &nothing());
        let r2 = c.result().unwrap().as_ref().unwrap();
        assert_ne!(r2.curves, r.curves, "the new revision was computed");
    }

    #[test]
    fn slow_computes_move_to_a_worker() {
        let mut c = SweepCache::new("test-sweep");
        c.slow = true;
        let d = design();
        c.update(&d, 0, &spectrum(), &nothing());
        assert!(c.busy(), "worker started");
        for _ in 0..500 {
            c.poll();
            if !c.busy() {
                break;
            }
            std::thread::sleep(Duration::from_millis(10));
        }
        assert!(c.is_current(0, &spectrum()), "worker result accepted");
    }

    #[test]
    fn errors_name_the_culprit() {
        let mut c = SweepCache::new("test-sweep");
        let mut d = design();
        d.layers[0].material = "Kryptonite".into();
        c.update(&d, 0, &spectrum(), &nothing());
        let e = c.result().unwrap().as_ref().unwrap_err();
        assert!(e.contains("Kryptonite"), "{e}");
    }
}
