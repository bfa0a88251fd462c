//! The spread view's background job: the Monte Carlo of the edited stage
//! runs on its own thread after a change, so keys stay responsive; a new
//! change cancels the running job, waits for it to stop (a few
//! milliseconds: it skips its remaining trials) and drops what it held, so
//! at most one job runs. The workbench runs at most [`WORKBENCH_TRIALS`]
//! trials; `loopwright spread` runs them all.

use crate::model::Scenario;
use crate::study::spread::{spread, spread_in, trials_of, Run, SpreadResult};
use std::collections::HashSet;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc::{channel, Receiver};
use std::sync::{Arc, Mutex};
use std::thread::{JoinHandle, ThreadId};

/// The most trials the spread view runs (the statistics' memory does not
/// depend on it; the cap keeps a job's time to seconds); a larger
/// `spread.trials` is capped here and the view's title says so.
pub const WORKBENCH_TRIALS: usize = 100_000;

/// One running (or finished) spread of one scenario.
#[derive(Default)]
pub struct SpreadJob {
    /// The scenario the job is for.
    for_scenario: Option<Scenario>,
    /// Its result, once finished.
    pub result: Option<SpreadResult>,
    /// Trials done and in all.
    done: Arc<AtomicUsize>,
    pub total: usize,
    /// The scenario's trials when more than [`WORKBENCH_TRIALS`].
    pub capped_from: Option<usize>,
    cancel: Arc<AtomicBool>,
    rx: Option<Receiver<SpreadResult>>,
    /// Trials done at the last poll (to redraw only on progress).
    seen: usize,
    /// The job's thread, joined before the next one starts.
    thread: Option<JoinHandle<()>>,
    /// The trials' thread pool, made by the first job and kept for every
    /// later one: jobs start no worker threads of their own, so thousands
    /// of jobs leave the memory as they found it (new threads each time
    /// left the allocator's per-thread heaps growing).
    pool: Option<Arc<rayon::ThreadPool>>,
    /// For tests: every thread that has run a trial of this workbench's
    /// jobs (one pool keeps it at the pool's size however many jobs run),
    /// and the jobs whose threads are alive (at most one).
    workers: Arc<Mutex<HashSet<ThreadId>>>,
    alive: Arc<AtomicUsize>,
}

/// Counts a job's thread as alive from its start to its end, whatever
/// way it ends.
struct Alive(Arc<AtomicUsize>);

impl Alive {
    fn new(count: &Arc<AtomicUsize>) -> Alive {
        count.fetch_add(1, Ordering::SeqCst);
        Alive(Arc::clone(count))
    }
}

impl Drop for Alive {
    fn drop(&mut self) {
        self.0.fetch_sub(1, Ordering::SeqCst);
    }
}

impl SpreadJob {
    /// Make sure the job is for `s`: a different stage cancels the running
    /// job and starts a new one.
    pub fn follow(&mut self, s: &Scenario) {
        if self.for_scenario.as_ref() == Some(s) {
            return;
        }
        self.halt();
        self.result = None;
        self.for_scenario = Some(s.clone());
        let all = trials_of(s, None);
        self.total = all.min(WORKBENCH_TRIALS);
        self.capped_from = (all > WORKBENCH_TRIALS).then_some(all);
        self.seen = 0;
        let (done, cancel) = (
            Arc::new(AtomicUsize::new(0)),
            Arc::new(AtomicBool::new(false)),
        );
        (self.done, self.cancel) = (Arc::clone(&done), Arc::clone(&cancel));
        let (tx, rx) = channel();
        self.rx = Some(rx);
        let s = s.clone();
        let trials = Some(self.total as u32);
        if self.pool.is_none() {
            self.pool = rayon::ThreadPoolBuilder::new().build().ok().map(Arc::new);
        }
        let pool = self.pool.clone();
        let (workers, alive) = (Arc::clone(&self.workers), Arc::clone(&self.alive));
        self.thread = Some(std::thread::spawn(move || {
            let _alive = Alive::new(&alive);
            let progress = |n: usize| {
                if let Ok(mut w) = workers.lock() {
                    w.insert(std::thread::current().id());
                }
                done.store(n, Ordering::Relaxed);
            };
            let run = Run {
                trials,
                progress: Some(&progress),
                cancel: Some(&cancel),
                ..Run::default()
            };
            // Without a pool of our own (no threads could be started), the
            // spread finds its own way, down to this thread alone.
            let r = match &pool {
                Some(pool) => spread_in(pool, &s, &run),
                None => spread(&s, &run),
            };
            if !cancel.load(Ordering::Relaxed) {
                let _ = tx.send(r);
            }
        }));
    }

    /// Cancel the running job and wait for its thread to end: it skips
    /// its remaining trials, so this takes milliseconds.
    fn halt(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
        self.rx = None;
        if let Some(t) = self.thread.take() {
            let _ = t.join();
            give_back();
        }
    }

    /// Take a finished result; true when the screen should be redrawn
    /// (a result arrived or the trials moved on).
    pub fn poll(&mut self) -> bool {
        if let Some(r) = self.rx.as_ref().and_then(|rx| rx.try_recv().ok()) {
            self.result = Some(r);
            self.rx = None;
            give_back();
            return true;
        }
        let n = self.done();
        let moved = n != self.seen;
        self.seen = n;
        moved
    }

    /// Cancel a running job; the next [`SpreadJob::follow`] starts anew.
    pub fn stop(&mut self) {
        if self.rx.is_some() {
            self.halt();
            self.for_scenario = None;
        }
    }

    /// Whether a job is still running.
    pub fn running(&self) -> bool {
        self.rx.is_some()
    }

    /// Trials finished so far.
    pub fn done(&self) -> usize {
        self.done.load(Ordering::Relaxed)
    }

    /// How many different threads have run this workbench's trials, over
    /// all its jobs (for tests: the pool's size when one pool serves them).
    pub fn worker_threads(&self) -> usize {
        self.workers.lock().map_or(0, |w| w.len())
    }

    /// How many jobs' threads are alive (for tests: at most one).
    pub fn jobs_alive(&self) -> usize {
        self.alive.load(Ordering::SeqCst)
    }
}

/// Hand the memory a finished or cancelled job freed back to the system.
/// The allocator keeps freed memory in the heap of the thread that used
/// it, and the job's threads each have one: without this, thousands of
/// jobs left the workbench's resident size growing (6.7 to 16.8 MB over
/// 20,000 keys) though what it holds stayed under 1 MB.
fn give_back() {
    #[cfg(all(target_os = "linux", target_env = "gnu"))]
    // SAFETY: malloc_trim only releases free pages; it takes no pointers.
    unsafe {
        libc::malloc_trim(0);
    }
}

impl Drop for SpreadJob {
    fn drop(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
    }
}
