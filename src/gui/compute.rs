//! Sweeps for the views, cached per (design, settings) and moved to a worker thread when slow.
//!
//! All numbers come from [`crate::analysis::spectrum`] and [`crate::analysis::angle_scan`] on
//! [`Design::resolve`], the same calls the command line makes.

use std::sync::mpsc;
use std::time::{Duration, Instant};

use crate::analysis::{self, Curves};
use crate::design::Design;
use crate::optics::Side;

/// A compute slower than this moves to a worker thread.
pub const INLINE_LIMIT: Duration = Duration::from_millis(30);

/// What to sweep.
#[derive(Clone, Debug, PartialEq)]
pub enum Sweep {
    /// Over wavelength at one angle of incidence.
    Spectrum {
        /// First wavelength (nm).
        from_nm: f64,
        /// Last wavelength (nm).
        to_nm: f64,
        /// Step (nm).
        step_nm: f64,
        /// Angle of incidence (degrees).
        aoi_deg: f64,
        /// Side the light comes from.
        side: Side,
    },
    /// Over angle of incidence at one wavelength.
    Angles {
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

/// Runs `sweep` on `design` through the engine.
pub fn run_sweep(design: &Design, sweep: &Sweep) -> Result<SweepResult, String> {
    let start = Instant::now();
    let resolved = design.resolve().map_err(|e| e.to_string())?;
    let (x, curves, warnings) = match *sweep {
        Sweep::Spectrum {
            from_nm,
            to_nm,
            step_nm,
            aoi_deg,
            side,
        } => {
            let wl = analysis::wavelengths_nm(from_nm, to_nm, step_nm)
                .map_err(|e| format!("wavelength range: {e}"))?;
            let s = analysis::spectrum(&resolved, &wl, aoi_deg, side).map_err(|e| e.to_string())?;
            (s.wavelength_nm, s.curves, s.warnings)
        }
        Sweep::Angles {
            wavelength_nm,
            from_deg,
            to_deg,
            step_deg,
            side,
        } => {
            let a = analysis::angles_deg(from_deg, to_deg, step_deg)
                .map_err(|e| format!("angle range: {e}"))?;
            let s = analysis::angle_scan(&resolved, wavelength_nm, &a, side)
                .map_err(|e| e.to_string())?;
            (s.aoi_deg, s.curves, s.warnings)
        }
    };
    Ok(SweepResult {
        x,
        curves,
        warnings: warnings.iter().map(ToString::to_string).collect(),
        elapsed: start.elapsed(),
    })
}

type Key = (Design, Sweep);

struct Job {
    seq: u64,
    key: Key,
    rx: mpsc::Receiver<Result<SweepResult, String>>,
}

/// A cached sweep: the last result shown, and at most one job computing a newer one.
pub struct SweepCache {
    name: &'static str,
    key: Option<Key>,
    shown_seq: u64,
    next_seq: u64,
    result: Option<Result<SweepResult, String>>,
    job: Option<Job>,
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
            shown_seq: 0,
            next_seq: 0,
            result: None,
            job: None,
            slow: false,
            force_inline: false,
        }
    }

    /// The result on show (possibly for an older design while a newer one computes).
    #[must_use]
    pub fn result(&self) -> Option<&Result<SweepResult, String>> {
        self.result.as_ref()
    }

    /// A number that changes whenever a new result goes on show.
    #[must_use]
    pub fn generation(&self) -> u64 {
        self.shown_seq
    }

    /// Whether a worker is computing.
    #[must_use]
    pub fn busy(&self) -> bool {
        self.job.is_some()
    }

    /// Whether the result on show is for exactly this design and sweep.
    #[must_use]
    pub fn is_current(&self, design: &Design, sweep: &Sweep) -> bool {
        self.key
            .as_ref()
            .is_some_and(|(d, s)| d == design && s == sweep)
    }

    /// Brings the cache up to date with `design` and `sweep`: nothing when it already is;
    /// otherwise computes inline, or (when the last compute was slow) on a named worker
    /// thread, calling `wake` when the worker is done.
    pub fn update(&mut self, design: &Design, sweep: &Sweep, wake: impl Fn() + Send + 'static) {
        self.poll();
        if self.is_current(design, sweep) {
            return;
        }
        if let Some(job) = &self.job {
            if job.key.0 == *design && job.key.1 == *sweep {
                return; // already computing exactly this
            }
            if !self.force_inline {
                return; // one job at a time; the next starts when it is done
            }
        }
        self.next_seq += 1;
        let seq = self.next_seq;
        let key = (design.clone(), sweep.clone());
        if self.force_inline || !self.slow {
            let r = run_sweep(design, sweep);
            self.accept(seq, key, r);
            return;
        }
        let (tx, rx) = mpsc::channel();
        let (d, s) = key.clone();
        let spawned = std::thread::Builder::new()
            .name(self.name.into())
            .spawn(move || {
                // The receiver may be gone (window closed): nothing to report to then.
                tx.send(run_sweep(&d, &s)).ok();
                wake();
            });
        match spawned {
            Ok(_) => self.job = Some(Job { seq, key, rx }),
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
        let Some(job) = &self.job else { return };
        match job.rx.try_recv() {
            Ok(r) => {
                if let Some(job) = self.job.take() {
                    self.accept(job.seq, job.key, r);
                }
            }
            Err(mpsc::TryRecvError::Empty) => {}
            Err(mpsc::TryRecvError::Disconnected) => {
                self.job = None;
                self.result = Some(Err("the computation stopped unexpectedly".into()));
            }
        }
    }

    fn accept(&mut self, seq: u64, key: Key, r: Result<SweepResult, String>) {
        if seq < self.shown_seq {
            return; // stale: a newer result is already on show
        }
        if let Ok(res) = &r {
            self.slow = res.elapsed > INLINE_LIMIT;
        }
        self.shown_seq = seq;
        self.key = Some(key);
        self.result = Some(r);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::{Layer, Nm};

    fn design() -> Design {
        let mut d = Design::new_empty("t");
        d.layers.push(Layer::new("MgF2", Nm::new(99.6).unwrap()));
        d
    }

    fn spectrum() -> Sweep {
        Sweep::Spectrum {
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
        c.update(&d, &spectrum(), || {});
        let r = c.result().unwrap().as_ref().unwrap().clone();
        let wl = analysis::wavelengths_nm(400.0, 700.0, 10.0).unwrap();
        let direct = analysis::spectrum(&d.resolve().unwrap(), &wl, 0.0, Side::Front).unwrap();
        assert_eq!(r.curves, direct.curves, "same engine, same numbers");
        assert!(c.is_current(&d, &spectrum()), "cached");
        let mut d2 = d.clone();
        d2.layers[0].nm = Nm::new(120.0).unwrap();
        assert!(
            !c.is_current(&d2, &spectrum()),
            "a new design is not cached"
        );
    }

    #[test]
    fn slow_computes_move_to_a_worker() {
        let mut c = SweepCache::new("test-sweep");
        c.slow = true;
        let d = design();
        c.update(&d, &spectrum(), || {});
        assert!(c.busy(), "worker started");
        for _ in 0..500 {
            c.poll();
            if !c.busy() {
                break;
            }
            std::thread::sleep(Duration::from_millis(10));
        }
        assert!(c.is_current(&d, &spectrum()), "worker result accepted");
    }

    #[test]
    fn errors_name_the_culprit() {
        let mut c = SweepCache::new("test-sweep");
        let mut d = design();
        d.layers[0].material = "Kryptonite".into();
        c.update(&d, &spectrum(), || {});
        let e = c.result().unwrap().as_ref().unwrap_err();
        assert!(e.contains("Kryptonite"), "{e}");
    }
}
