//! The spread view's background job: the Monte Carlo of the edited stage
//! runs on its own thread after a change, so keys stay responsive; a new
//! change cancels the running job and its result is dropped.

use crate::model::Scenario;
use crate::study::spread::{spread, trials_of, Run, SpreadResult};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc::{channel, Receiver};
use std::sync::Arc;

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
    cancel: Arc<AtomicBool>,
    rx: Option<Receiver<SpreadResult>>,
    /// Trials done at the last poll (to redraw only on progress).
    seen: usize,
}

impl SpreadJob {
    /// Make sure the job is for `s`: a different stage cancels the running
    /// job and starts a new one.
    pub fn follow(&mut self, s: &Scenario) {
        if self.for_scenario.as_ref() == Some(s) {
            return;
        }
        self.cancel.store(true, Ordering::Relaxed);
        self.result = None;
        self.for_scenario = Some(s.clone());
        self.total = trials_of(s, None);
        self.seen = 0;
        let (done, cancel) = (
            Arc::new(AtomicUsize::new(0)),
            Arc::new(AtomicBool::new(false)),
        );
        (self.done, self.cancel) = (Arc::clone(&done), Arc::clone(&cancel));
        let (tx, rx) = channel();
        self.rx = Some(rx);
        let s = s.clone();
        std::thread::spawn(move || {
            let progress = |n: usize| done.store(n, Ordering::Relaxed);
            let r = spread(
                &s,
                &Run {
                    progress: Some(&progress),
                    cancel: Some(&cancel),
                    ..Run::default()
                },
            );
            if !cancel.load(Ordering::Relaxed) {
                let _ = tx.send(r);
            }
        });
    }

    /// Take a finished result; true when the screen should be redrawn
    /// (a result arrived or the trials moved on).
    pub fn poll(&mut self) -> bool {
        if let Some(r) = self.rx.as_ref().and_then(|rx| rx.try_recv().ok()) {
            self.result = Some(r);
            self.rx = None;
            return true;
        }
        let n = self.done();
        let moved = n != self.seen;
        self.seen = n;
        moved
    }

    /// Cancel a running job; the next [`SpreadJob::follow`] starts anew.
    pub fn stop(&mut self) {
        if self.rx.take().is_some() {
            self.cancel.store(true, Ordering::Relaxed);
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
}

impl Drop for SpreadJob {
    fn drop(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
    }
}
