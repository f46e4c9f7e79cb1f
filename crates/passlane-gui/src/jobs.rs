//! Long computations on worker threads. The UI thread starts a [`Job`], polls
//! it once per frame for its fraction done and, when it has finished, takes the
//! result; it never waits on one. Cancelling sets a flag the library checks
//! between satellites, so a cancelled job ends quickly and hands back what it did.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::time::Instant;

use eframe::egui;
use passlane_plan::Progress;

/// Fraction done and cancel flag, shared between the UI and a worker.
#[derive(Default)]
pub struct JobProgress {
    cancel: AtomicBool,
    fraction_bits: AtomicU64,
    /// Set by the worker's caller so the UI wakes up to show progress.
    repaint: Option<egui::Context>,
}

impl JobProgress {
    pub fn fraction(&self) -> f64 {
        f64::from_bits(self.fraction_bits.load(Ordering::Relaxed))
    }
    pub fn cancel(&self) {
        self.cancel.store(true, Ordering::Relaxed);
    }
}

impl Progress for JobProgress {
    fn report(&self, fraction: f64) {
        self.fraction_bits
            .store(fraction.clamp(0.0, 1.0).to_bits(), Ordering::Relaxed);
        if let Some(ctx) = &self.repaint {
            ctx.request_repaint();
        }
    }
    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }
}

/// A computation running on its own thread.
pub struct Job<T> {
    pub label: String,
    pub progress: Arc<JobProgress>,
    pub started: Instant,
    /// Which document revision the job was started for.
    pub revision: u64,
    rx: Receiver<T>,
}

/// What polling a job found.
pub enum Poll<T> {
    Running,
    Done(T),
    /// The worker ended without a result (it panicked): reported, not propagated.
    Lost,
}

impl<T: Send + 'static> Job<T> {
    /// Starts `work` on a new thread; `ctx` (when given) is woken on progress and at the end.
    pub fn spawn(
        label: &str,
        revision: u64,
        ctx: Option<egui::Context>,
        work: impl FnOnce(&JobProgress) -> T + Send + 'static,
    ) -> Self {
        let progress = Arc::new(JobProgress {
            repaint: ctx.clone(),
            ..JobProgress::default()
        });
        let (tx, rx) = channel();
        let worker_progress = Arc::clone(&progress);
        let spawned = std::thread::Builder::new()
            .name(format!("passlane {label}"))
            .spawn(move || {
                let result = work(&worker_progress);
                // The receiver is gone when the job was replaced; nothing to do then.
                let _ = tx.send(result);
                if let Some(ctx) = &worker_progress.repaint {
                    ctx.request_repaint();
                }
            });
        // If no thread could be started the job reports itself lost on the first poll.
        drop(spawned);
        Job {
            label: label.to_string(),
            progress,
            started: Instant::now(),
            revision,
            rx,
        }
    }

    pub fn poll(&self) -> Poll<T> {
        match self.rx.try_recv() {
            Ok(v) => Poll::Done(v),
            Err(TryRecvError::Empty) => Poll::Running,
            Err(TryRecvError::Disconnected) => Poll::Lost,
        }
    }

    /// Blocks until the job ends (tests and the command-line comparison only).
    pub fn wait(self) -> Option<T> {
        self.rx.recv().ok()
    }
}

/// Draws a job's progress bar and cancel button; returns true when cancel was clicked.
pub fn progress_ui(
    ui: &mut egui::Ui,
    label: &str,
    progress: &JobProgress,
    started: Instant,
) -> bool {
    let fraction = progress.fraction() as f32;
    ui.add(
        egui::ProgressBar::new(fraction)
            .desired_width(160.0)
            .text(format!(
                "{label}: {:.0}% ({:.1} s)",
                fraction * 100.0,
                started.elapsed().as_secs_f32()
            )),
    );
    ui.button("Cancel")
        .on_hover_text("Stop this computation and keep what it has found")
        .clicked()
}
