//! `T`'s search on its own thread: the tolerance search verifies each
//! option by a Monte Carlo (seconds on a large stage), so it runs beside
//! the keys. An edit of the stage, a second `T` or Esc cancels it; the
//! thread stops at its next verification and what it found is dropped.

use crate::model::Scenario;
use crate::study::tighten::{tighten, Tightening, MAX_RUNS};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::mpsc::{channel, Receiver};
use std::sync::Arc;
use std::thread::JoinHandle;

/// One running tolerance search.
#[derive(Default)]
pub struct TightenJob {
    /// The stage searched (an edit of it cancels the search).
    pub for_scenario: Option<Scenario>,
    rx: Option<Receiver<Tightening>>,
    cancel: Arc<AtomicBool>,
    /// Verifications made so far.
    runs: Arc<AtomicUsize>,
    seen: usize,
    thread: Option<JoinHandle<()>>,
}

impl TightenJob {
    /// Start a search of `s`, cancelling any running one.
    pub fn start(&mut self, s: &Scenario) {
        self.stop();
        let (cancel, runs) = (
            Arc::new(AtomicBool::new(false)),
            Arc::new(AtomicUsize::new(0)),
        );
        (self.cancel, self.runs, self.seen) = (Arc::clone(&cancel), Arc::clone(&runs), 0);
        let (tx, rx) = channel();
        self.rx = Some(rx);
        self.for_scenario = Some(s.clone());
        let s = s.clone();
        self.thread = Some(std::thread::spawn(move || {
            let progress = |n: usize| runs.store(n, Ordering::Relaxed);
            let t = tighten(&s, Some(&progress), Some(&cancel));
            if !cancel.load(Ordering::Relaxed) {
                let _ = tx.send(t);
            }
        }));
    }

    /// Cancel a running search and wait for its thread (it stops at its
    /// next verification).
    pub fn stop(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
        self.rx = None;
        self.for_scenario = None;
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }

    /// Whether a search is running.
    pub fn running(&self) -> bool {
        self.rx.is_some()
    }

    /// The finished search, once; `Err(true)` when the count of
    /// verifications moved (a redraw of the progress), `Err(false)` else.
    pub fn poll(&mut self) -> Result<Tightening, bool> {
        let Some(rx) = self.rx.as_ref() else {
            return Err(false);
        };
        if let Ok(t) = rx.try_recv() {
            self.rx = None;
            self.for_scenario = None;
            if let Some(th) = self.thread.take() {
                let _ = th.join();
            }
            return Ok(t);
        }
        let n = self.runs.load(Ordering::Relaxed);
        let moved = n != self.seen;
        self.seen = n;
        Err(moved)
    }

    /// "12 of at most 64 verifications".
    pub fn progress(&self) -> String {
        format!(
            "{} of at most {MAX_RUNS} verifications",
            self.runs.load(Ordering::Relaxed)
        )
    }
}

impl Drop for TightenJob {
    fn drop(&mut self) {
        self.cancel.store(true, Ordering::Relaxed);
    }
}
