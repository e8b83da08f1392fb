//! Work that takes longer than a frame: each job runs on a named thread with a cancel flag,
//! sends progress through a channel that wakes the window, and ends in a typed state.
//!
//! ```
//! use stackwise::gui::jobs::{Job, JobEnd};
//! let mut job = Job::spawn("count", 7, std::sync::Arc::new(|| {}), |r| {
//!     for i in 0..3 {
//!         if r.progress(i).is_break() {
//!             return Err("stopped");
//!         }
//!     }
//!     Ok::<_, &str>(42)
//! })
//! .unwrap();
//! let end = loop {
//!     if let Some(end) = job.poll() {
//!         break end;
//!     }
//!     std::thread::yield_now();
//! };
//! assert!(matches!(end, JobEnd::Done(42)));
//! assert_eq!(job.tag(), 7);
//! ```
//!
//! The library's long computations know nothing of threads: they take a progress callback
//! that returns [`ControlFlow`], which [`Reporter::progress`] provides. What a finished job
//! means for a design is decided by the window, which compares [`Job::tag`] (the design's
//! revision when the job started) with the design's revision now.

use std::ops::ControlFlow;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, mpsc};
use std::time::{Duration, Instant};

/// Wakes the window (requests a repaint); called from the job's thread.
pub type Waker = Arc<dyn Fn() + Send + Sync>;

/// Progress is sent at most this often (the window cannot show more).
pub const PROGRESS_INTERVAL: Duration = Duration::from_millis(100);

/// How a job ended.
#[derive(Debug, PartialEq)]
pub enum JobEnd<T, E> {
    /// The work finished and returned this (which may itself say it stopped early, e.g. an
    /// optimisation cancelled with its best design so far).
    Done(T),
    /// The work gave up because it was asked to stop.
    Cancelled,
    /// The work failed.
    Failed(JobFailure<E>),
}

/// Why a job failed.
#[derive(Debug, PartialEq, thiserror::Error)]
pub enum JobFailure<E> {
    /// The work returned this error.
    #[error("{0}")]
    Error(E),
    /// The thread ended without an answer (a bug: it panicked).
    #[error("the {0} job stopped unexpectedly")]
    Lost(String),
}

/// What the work sees of its job: progress reporting and the cancel flag.
pub struct Reporter<P> {
    tx: mpsc::Sender<P>,
    cancel: Arc<AtomicBool>,
    wake: Waker,
    last_sent: Option<Instant>,
}

impl<P> Reporter<P> {
    /// Whether the job was asked to stop.
    #[must_use]
    pub fn is_cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }

    /// `Break` once the job was asked to stop.
    pub fn flow(&self) -> ControlFlow<()> {
        if self.is_cancelled() {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    }

    /// Sends `p` to the window (at most every [`PROGRESS_INTERVAL`]; others are dropped) and
    /// says whether to go on: the callback a library computation takes.
    pub fn progress(&mut self, p: P) -> ControlFlow<()> {
        let due = self
            .last_sent
            .is_none_or(|t| t.elapsed() >= PROGRESS_INTERVAL);
        if due {
            // The window may have gone; the work then simply finishes unseen.
            self.tx.send(p).ok();
            (self.wake)();
            self.last_sent = Some(Instant::now());
        }
        self.flow()
    }
}

/// A job running (or finished) on its own named thread.
pub struct Job<P, T, E> {
    name: String,
    tag: u64,
    cancel: Arc<AtomicBool>,
    progress_rx: mpsc::Receiver<P>,
    end_rx: mpsc::Receiver<Result<T, E>>,
    latest: Option<P>,
    started: Instant,
    ended: bool,
}

impl<P, T, E> Job<P, T, E>
where
    P: Send + 'static,
    T: Send + 'static,
    E: Send + 'static,
{
    /// Starts `work` on a thread named `name`. `tag` is the caller's: usually the revision
    /// of the design the work reads. `wake` is called whenever there is news.
    pub fn spawn(
        name: &str,
        tag: u64,
        wake: Waker,
        work: impl FnOnce(&mut Reporter<P>) -> Result<T, E> + Send + 'static,
    ) -> std::io::Result<Self> {
        let cancel = Arc::new(AtomicBool::new(false));
        let (progress_tx, progress_rx) = mpsc::channel();
        let (end_tx, end_rx) = mpsc::channel();
        let mut reporter = Reporter {
            tx: progress_tx,
            cancel: Arc::clone(&cancel),
            wake: Arc::clone(&wake),
            last_sent: None,
        };
        std::thread::Builder::new()
            .name(name.to_owned())
            .spawn(move || {
                let r = work(&mut reporter);
                // Nobody may be waiting any more (the window closed): nothing to do then.
                end_tx.send(r).ok();
                wake();
            })?;
        Ok(Self {
            name: name.to_owned(),
            tag,
            cancel,
            progress_rx,
            end_rx,
            latest: None,
            started: Instant::now(),
            ended: false,
        })
    }
}

impl<P, T, E> Job<P, T, E> {
    /// The thread's name.
    #[must_use]
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The caller's tag given at the start.
    #[must_use]
    pub fn tag(&self) -> u64 {
        self.tag
    }

    /// How long the job has been running.
    #[must_use]
    pub fn elapsed(&self) -> Duration {
        self.started.elapsed()
    }

    /// Asks the work to stop; it ends at its next check.
    pub fn cancel(&self) {
        self.cancel.store(true, Ordering::Relaxed);
    }

    /// Whether [`Job::cancel`] was called.
    #[must_use]
    pub fn is_cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }

    /// The latest progress received (after [`Job::poll`]).
    #[must_use]
    pub fn latest(&self) -> Option<&P> {
        self.latest.as_ref()
    }

    /// Takes in any progress and, once, the end. Call every frame until it returns `Some`.
    pub fn poll(&mut self) -> Option<JobEnd<T, E>> {
        while let Ok(p) = self.progress_rx.try_recv() {
            self.latest = Some(p);
        }
        if self.ended {
            return None;
        }
        let end = match self.end_rx.try_recv() {
            Ok(Ok(t)) => JobEnd::Done(t),
            Ok(Err(_)) if self.is_cancelled() => JobEnd::Cancelled,
            Ok(Err(e)) => JobEnd::Failed(JobFailure::Error(e)),
            Err(mpsc::TryRecvError::Empty) => return None,
            Err(mpsc::TryRecvError::Disconnected) => {
                JobEnd::Failed(JobFailure::Lost(self.name.clone()))
            }
        };
        self.ended = true;
        Some(end)
    }
}

impl<P, T, E> Drop for Job<P, T, E> {
    /// A job nobody holds any more has no one to report to: ask it to stop.
    fn drop(&mut self) {
        self.cancel();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn wait<P, T, E>(job: &mut Job<P, T, E>) -> JobEnd<T, E> {
        for _ in 0..1000 {
            if let Some(end) = job.poll() {
                return end;
            }
            std::thread::sleep(Duration::from_millis(5));
        }
        panic!("the job did not end within 5 s");
    }

    fn nothing() -> Waker {
        Arc::new(|| {})
    }

    #[test]
    fn a_job_runs_on_a_thread_of_its_name_and_reports_its_result() {
        let mut job = Job::spawn("test-named", 3, nothing(), |_: &mut Reporter<()>| {
            Ok::<_, String>(std::thread::current().name().map(str::to_owned))
        })
        .unwrap();
        assert_eq!(
            wait(&mut job),
            JobEnd::Done(Some("test-named".to_owned())),
            "the work ran on the named thread"
        );
        assert!(job.poll().is_none(), "the end is given once");
    }

    #[test]
    fn cancel_stops_the_work_at_its_next_check() {
        let (go_tx, go_rx) = mpsc::channel::<()>();
        let mut job = Job::spawn("test-cancel", 0, nothing(), move |r: &mut Reporter<u32>| {
            go_rx.recv().ok();
            for i in 0.. {
                if r.progress(i).is_break() {
                    return Err("asked to stop");
                }
            }
            Ok(())
        })
        .unwrap();
        job.cancel();
        go_tx.send(()).unwrap();
        assert_eq!(wait(&mut job), JobEnd::Cancelled, "cancelled, not failed");
    }

    #[test]
    fn errors_and_lost_threads_are_failures() {
        let mut job = Job::spawn("test-fail", 0, nothing(), |_: &mut Reporter<()>| {
            Err::<(), _>("no data at 90 nm")
        })
        .unwrap();
        assert_eq!(
            wait(&mut job),
            JobEnd::Failed(JobFailure::Error("no data at 90 nm"))
        );
        let mut job = Job::spawn("test-lost", 0, nothing(), |_: &mut Reporter<()>| {
            let v: Vec<u8> = Vec::new();
            // An out-of-bounds index panics the thread on purpose.
            Ok::<u8, ()>(v[std::hint::black_box(1)])
        })
        .unwrap();
        let end = wait(&mut job);
        assert_eq!(
            end,
            JobEnd::Failed(JobFailure::Lost("test-lost".into())),
            "a panicked thread is reported, not waited for forever"
        );
    }

    #[test]
    fn progress_reaches_the_window_and_wakes_it() {
        let woken = Arc::new(AtomicBool::new(false));
        let w = Arc::clone(&woken);
        let mut job = Job::spawn(
            "test-progress",
            0,
            Arc::new(move || w.store(true, Ordering::Relaxed)),
            |r: &mut Reporter<&str>| r.progress("half way").is_continue().then_some(()).ok_or(()),
        )
        .unwrap();
        assert_eq!(wait(&mut job), JobEnd::Done(()));
        assert_eq!(job.latest(), Some(&"half way"), "the progress arrived");
        assert!(woken.load(Ordering::Relaxed), "the window was woken");
    }
}
