//! Progress and cancellation of long work, one protocol for every planner
//! (pass search, screening, the network plan) and every caller (the command
//! line's progress bar, the window's worker threads, tests).
//!
//! A computation calls [`Progress::report`] with the fraction done (0–1) and
//! polls [`Progress::cancelled`] between units of work; when cancelled it
//! returns what it has, marked as cancelled. Implementations must be cheap:
//! they are called from worker threads, many times.

use std::sync::atomic::{AtomicBool, Ordering};

/// Progress reporting and cancellation for long computations.
pub trait Progress: Sync {
    /// Called with the fraction done (0–1).
    fn report(&self, _fraction: f64) {}
    /// Whether the caller wants the computation to stop.
    fn cancelled(&self) -> bool {
        false
    }
}

/// No progress reporting, never cancelled.
pub struct Silent;
impl Progress for Silent {}

/// A cancel flag usable from another thread.
impl Progress for AtomicBool {
    fn cancelled(&self) -> bool {
        self.load(Ordering::Relaxed)
    }
}

/// One stage of a longer job: reports fractions of the stage as the part
/// `[offset, offset + share]` of the whole, and forwards cancellation.
pub struct Stage<'a> {
    parent: &'a dyn Progress,
    offset: f64,
    share: f64,
}

impl<'a> Stage<'a> {
    pub fn new(parent: &'a dyn Progress, offset: f64, share: f64) -> Self {
        Stage {
            parent,
            offset,
            share,
        }
    }
}

impl Progress for Stage<'_> {
    fn report(&self, fraction: f64) {
        self.parent
            .report(self.offset + self.share * fraction.clamp(0.0, 1.0));
    }
    fn cancelled(&self) -> bool {
        self.parent.cancelled()
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use std::sync::Mutex;

    struct Log(Mutex<Vec<f64>>, AtomicBool);
    impl Progress for Log {
        fn report(&self, f: f64) {
            if let Ok(mut v) = self.0.lock() {
                v.push(f);
            }
        }
        fn cancelled(&self) -> bool {
            self.1.load(Ordering::Relaxed)
        }
    }

    #[test]
    fn a_stage_maps_its_fractions_into_the_whole_and_forwards_cancel() {
        let log = Log(Mutex::new(Vec::new()), AtomicBool::new(false));
        let stage = Stage::new(&log, 0.9, 0.1);
        stage.report(0.0);
        stage.report(0.5);
        stage.report(2.0);
        let got = log.0.lock().unwrap().clone();
        let want = [0.9, 0.95, 1.0];
        assert_eq!(got.len(), want.len());
        for (g, w) in got.iter().zip(want) {
            assert!((g - w).abs() < 1e-12, "{got:?}");
        }
        assert!(!stage.cancelled());
        log.1.store(true, Ordering::Relaxed);
        assert!(stage.cancelled());
    }
}
