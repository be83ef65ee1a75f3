//! Work off the UI thread: a worker with a progress cell the window reads each frame, a cancel
//! flag, and a result channel. A panic in the work becomes an error message, never a crash.

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::sync::{Arc, Mutex, OnceLock};
use std::time::{Duration, Instant};
use tellturn::progress::{Cancel, Progress};

/// What a job that stopped because it was asked to reports.
pub const CANCELLED: &str = "cancelled";

/// The latest stage and fraction reported by a worker.
#[derive(Debug, Clone, Default)]
pub struct Stage {
    /// What the worker is doing, in the engine's words.
    pub name: String,
    /// Share of the stage done (0..=1).
    pub fraction: f32,
}

/// A progress sink the worker writes and the window reads; each report asks for a repaint,
/// at most about 30 times a second so a chatty engine cannot flood the UI thread.
pub struct ProgressCell {
    stage: Mutex<Stage>,
    last_repaint: Mutex<Instant>,
    ctx: egui::Context,
}

impl ProgressCell {
    fn new(ctx: egui::Context) -> Self {
        Self {
            stage: Mutex::new(Stage {
                name: "starting".into(),
                fraction: 0.0,
            }),
            last_repaint: Mutex::new(Instant::now()),
            ctx,
        }
    }
    /// The latest report.
    pub fn get(&self) -> Stage {
        self.stage.lock().map(|s| s.clone()).unwrap_or_default()
    }
}

impl Progress for ProgressCell {
    fn report(&self, stage: &str, fraction: f64) {
        if let Ok(mut s) = self.stage.lock() {
            if s.name != stage {
                s.name = stage.to_string();
            }
            s.fraction = fraction.clamp(0.0, 1.0) as f32;
        }
        if let Ok(mut last) = self.last_repaint.lock()
            && last.elapsed() >= Duration::from_millis(33)
        {
            *last = Instant::now();
            self.ctx.request_repaint();
        }
    }
}

/// The thread pool long work runs in: one thread fewer than the machine has (at least one),
/// so the window always keeps a core. Engine results do not depend on the thread count.
fn pool() -> &'static rayon::ThreadPool {
    static POOL: OnceLock<rayon::ThreadPool> = OnceLock::new();
    POOL.get_or_init(|| {
        let cores = std::thread::available_parallelism().map_or(2, |n| n.get());
        rayon::ThreadPoolBuilder::new()
            .num_threads(cores.saturating_sub(1).max(1))
            .thread_name(|i| format!("tellturn-work-{i}"))
            .build()
            .expect("a thread pool with at least one thread can always be built")
    })
}

/// One piece of background work producing a `T`.
pub struct Job<T> {
    rx: Receiver<Result<T, String>>,
    progress: Arc<ProgressCell>,
    cancel: Cancel,
    started: Instant,
    /// What the job is, for the progress line ("training on varA").
    pub title: String,
}

impl<T: Send + 'static> Job<T> {
    /// Start `work` on the work pool. Its `Err` and any panic arrive as an error message.
    pub fn spawn(
        ctx: &egui::Context,
        title: impl Into<String>,
        work: impl FnOnce(&dyn Progress, &Cancel) -> Result<T, String> + Send + 'static,
    ) -> Self {
        Self::start(ctx, title, work, true)
    }

    /// Start short work (re-reading a live log) on its own thread, so it never queues behind
    /// a training run in the work pool.
    pub fn spawn_quick(
        ctx: &egui::Context,
        title: impl Into<String>,
        work: impl FnOnce(&dyn Progress, &Cancel) -> Result<T, String> + Send + 'static,
    ) -> Self {
        Self::start(ctx, title, work, false)
    }

    fn start(
        ctx: &egui::Context,
        title: impl Into<String>,
        work: impl FnOnce(&dyn Progress, &Cancel) -> Result<T, String> + Send + 'static,
        in_pool: bool,
    ) -> Self {
        let (tx, rx) = channel();
        let progress = Arc::new(ProgressCell::new(ctx.clone()));
        let cancel = Cancel::new();
        let (p, c, ctx2) = (progress.clone(), cancel.clone(), ctx.clone());
        let run = move || {
            let out = catch_unwind(AssertUnwindSafe(|| work(&*p, &c)));
            let msg = match out {
                Ok(r) => r,
                Err(panic) => Err(format!(
                    "the background work stopped unexpectedly ({}); the window keeps running — please report this with the set that caused it",
                    panic_text(&panic)
                )),
            };
            let _ = tx.send(msg);
            ctx2.request_repaint();
        };
        if in_pool {
            pool().spawn(run);
        } else {
            std::thread::spawn(run);
        }
        Self {
            rx,
            progress,
            cancel,
            started: Instant::now(),
            title: title.into(),
        }
    }

    /// The result once the work is done (returned once). When a cancel was asked for, a failure
    /// arrives as exactly `cancelled`, however the engine worded it on the way out (e.g.
    /// "fitting failed: cancelled"), so callers can tell a stop from a fault.
    pub fn poll(&mut self) -> Option<Result<T, String>> {
        match self.rx.try_recv() {
            Ok(Err(_)) if self.is_cancelling() => Some(Err(CANCELLED.into())),
            Ok(r) => Some(r),
            Err(TryRecvError::Empty) => None,
            Err(TryRecvError::Disconnected) => {
                Some(Err("the background work ended without a result".into()))
            }
        }
    }

    /// The latest stage report.
    pub fn stage(&self) -> Stage {
        self.progress.get()
    }

    /// Seconds since the job started.
    pub fn seconds(&self) -> f32 {
        self.started.elapsed().as_secs_f32()
    }

    /// Ask the work to stop; its result (an error "cancelled") still arrives.
    pub fn cancel(&self) {
        self.cancel.cancel();
    }

    /// Whether a cancel was asked for.
    pub fn is_cancelling(&self) -> bool {
        self.cancel.is_cancelled()
    }
}

/// The text of a panic payload.
fn panic_text(panic: &Box<dyn std::any::Any + Send>) -> String {
    if let Some(s) = panic.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = panic.downcast_ref::<String>() {
        s.clone()
    } else {
        "no message".into()
    }
}
