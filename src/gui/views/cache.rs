//! One cached result per analysis view: kept while its key (design, revision, settings) holds,
//! recomputed inline when cheap, on a [`Job`] when the last compute was slow or the caller
//! says the work is heavy.

use std::ops::ControlFlow;
use std::time::{Duration, Instant};

use super::Runner;
use crate::gui::jobs::{Job, JobEnd};

/// A compute slower than this moves to a worker thread next time (as for the sweeps).
pub const INLINE_LIMIT: Duration = crate::gui::compute::INLINE_LIMIT;

/// The progress callback a view's work receives: `Break` asks it to stop.
pub type Progress<'a, P> = &'a mut dyn FnMut(P) -> ControlFlow<()>;

/// A cached view result and at most one job computing a newer one.
pub struct ViewCache<K, T, P = ()> {
    name: &'static str,
    key: Option<K>,
    result: Option<Result<T, String>>,
    generation: u64,
    job: Option<(K, Job<P, T, String>)>,
    slow: bool,
}

impl<K, T, P> ViewCache<K, T, P>
where
    K: Clone + PartialEq,
    T: Send + 'static,
    P: Send + 'static,
{
    /// An empty cache; `name` names its worker thread.
    #[must_use]
    pub fn new(name: &'static str) -> Self {
        Self {
            name,
            key: None,
            result: None,
            generation: 0,
            job: None,
            slow: false,
        }
    }

    /// The result on show (possibly for an older key while a newer one computes).
    #[must_use]
    pub fn result(&self) -> Option<&Result<T, String>> {
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

    /// The latest progress of the worker, if any.
    #[must_use]
    pub fn progress(&self) -> Option<&P> {
        self.job.as_ref().and_then(|(_, j)| j.latest())
    }

    /// Asks the worker to stop; what it returns then (if anything) is kept.
    pub fn cancel(&self) {
        if let Some((_, j)) = &self.job {
            j.cancel();
        }
    }

    /// Forgets the result's key, so the next [`ViewCache::update`] computes again.
    pub fn invalidate(&mut self) {
        self.key = None;
    }

    /// Brings the cache up to date with `key`: nothing when it already is; otherwise runs
    /// `make()`'s work inline, or as a job when `heavy` or the last compute was slow (never
    /// when `run.inline`, for tests and screenshots). A job for an older key is cancelled.
    pub fn update<W>(&mut self, key: &K, heavy: bool, run: &Runner, make: impl FnOnce() -> W)
    where
        W: FnOnce(Progress<'_, P>) -> Result<T, String> + Send + 'static,
    {
        self.poll();
        if self.key.as_ref() == Some(key) {
            return;
        }
        if let Some((running, job)) = &self.job {
            if running == key {
                return;
            }
            // The design or the settings changed: that result would be stale.
            job.cancel();
            self.job = None;
        }
        let work = make();
        if run.inline || !(heavy || self.slow) {
            let start = Instant::now();
            let r = work(&mut |_| ControlFlow::Continue(()));
            self.slow = start.elapsed() > INLINE_LIMIT;
            self.accept(key.clone(), r);
            return;
        }
        let next = self.generation + 1;
        match Job::spawn(self.name, next, run.wake.clone(), move |rep| {
            work(&mut |p| rep.progress(p))
        }) {
            Ok(job) => self.job = Some((key.clone(), job)),
            Err(e) => {
                let msg = format!("cannot start the {} thread: {e}", self.name);
                log::error!("{msg}");
                self.accept(key.clone(), Err(msg));
            }
        }
    }

    /// Takes a finished worker result, if any.
    pub fn poll(&mut self) {
        let Some((_, job)) = &mut self.job else {
            return;
        };
        let Some(end) = job.poll() else { return };
        let elapsed = job.elapsed();
        let Some((key, _)) = self.job.take() else {
            return;
        };
        self.slow = elapsed > INLINE_LIMIT;
        match end {
            JobEnd::Done(r) => self.accept(key, Ok(r)),
            JobEnd::Failed(e) => self.accept(key, Err(e.to_string())),
            JobEnd::Cancelled => {}
        }
    }

    fn accept(&mut self, key: K, r: Result<T, String>) {
        self.generation += 1;
        self.key = Some(key);
        self.result = Some(r);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::Arc;

    fn runner(inline: bool) -> Runner {
        Runner {
            inline,
            wake: Arc::new(|| {}),
        }
    }

    #[test]
    fn computes_once_per_key_and_again_on_a_new_key() {
        let mut c: ViewCache<u64, u64> = ViewCache::new("test-view");
        let mut runs = 0;
        for key in [1, 1, 2, 2] {
            c.update(&key, false, &runner(true), || {
                runs += 1;
                move |_: Progress<'_, ()>| Ok(key * 10)
            });
        }
        assert_eq!(runs, 2, "one compute per key");
        assert_eq!(c.result(), Some(&Ok(20)), "the newest key's result");
    }

    #[test]
    fn heavy_work_runs_as_a_job_and_can_be_cancelled() {
        let mut c: ViewCache<u64, usize, usize> = ViewCache::new("test-view");
        c.update(&1, true, &runner(false), || {
            |p: Progress<'_, usize>| {
                for i in 0..10_000 {
                    if p(i).is_break() {
                        return Ok(i);
                    }
                    std::thread::sleep(Duration::from_millis(1));
                }
                Ok(10_000)
            }
        });
        assert!(c.busy(), "a job started");
        c.cancel();
        for _ in 0..1000 {
            c.poll();
            if !c.busy() {
                break;
            }
            std::thread::sleep(Duration::from_millis(5));
        }
        let stopped_at = *c.result().unwrap().as_ref().unwrap();
        assert!(stopped_at < 10_000, "stopped early at {stopped_at}");
    }
}
