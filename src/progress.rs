//! Progress reporting and cancellation for long work.
//!
//! Every long engine call (training, cross-fitting, bootstrap) takes a `&dyn Progress` and a
//! `&Cancel`, so the dashboard can run it on a worker thread and the CLI can draw a progress
//! line with the same engine code.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

/// Receives progress reports: a stage name and the fraction of that stage done (0..=1).
pub trait Progress: Sync {
    /// Report that `fraction` (0..=1) of `stage` is done.
    fn report(&self, stage: &str, fraction: f64);
}

/// A progress sink that ignores every report.
#[derive(Debug, Clone, Copy, Default)]
pub struct NoProgress;

impl Progress for NoProgress {
    fn report(&self, _stage: &str, _fraction: f64) {}
}

/// A shared cancel flag; cloning shares the same flag.
#[derive(Debug, Clone, Default)]
pub struct Cancel(Arc<AtomicBool>);

impl Cancel {
    /// A new flag, not cancelled.
    pub fn new() -> Self {
        Self::default()
    }
    /// Ask the work to stop as soon as it can.
    pub fn cancel(&self) {
        self.0.store(true, Ordering::SeqCst);
    }
    /// Whether a cancel was asked for.
    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }
    /// `Err(Cancelled)` when a cancel was asked for, so work can stop with `?`.
    pub fn check(&self) -> Result<(), Cancelled> {
        if self.is_cancelled() {
            Err(Cancelled)
        } else {
            Ok(())
        }
    }
}

/// The work stopped because a cancel was asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, thiserror::Error)]
#[error("cancelled")]
pub struct Cancelled;
