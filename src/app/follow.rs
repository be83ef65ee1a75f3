//! Facilitator mode: follow a set whose log is still being written. About twice a second the
//! events file's modification time and length are checked; when they change, the set is
//! re-read and its new or changed sessions are scored with the model already trained (no
//! retraining), so an exercise in progress shows fresh chances within about a second.

use super::jobs::Job;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::{Duration, Instant, SystemTime};
use tellturn::analysis::traces::{Trace, TraceSource};
use tellturn::evaluate::train::score_sessions;
use tellturn::models::win_model::WinModel;
use tellturn::sessions::{SessionSet, load_set};

/// How often the files are checked.
pub const POLL: Duration = Duration::from_millis(500);

/// A re-read set with its traces.
pub struct Reread {
    /// The set as it is on disk now.
    pub set: SessionSet,
    /// Traces for every session: unchanged finished sessions keep their training trace,
    /// the rest are scored by the trained model.
    pub traces: Vec<Trace>,
}

type Stamp = Vec<(PathBuf, Option<(SystemTime, u64)>)>;

fn stamp(files: &[PathBuf]) -> Stamp {
    files
        .iter()
        .map(|f| {
            let meta = std::fs::metadata(f).ok();
            (
                f.clone(),
                meta.and_then(|m| Some((m.modified().ok()?, m.len()))),
            )
        })
        .collect()
}

/// Following one set.
pub struct Follow {
    /// The bundle followed.
    pub bundle: u64,
    path: PathBuf,
    stamps: Stamp,
    last_poll: Instant,
    job: Option<Job<Reread>>,
    /// Re-reads done so far.
    pub updates: usize,
    /// When the last re-read finished.
    pub last_update: Option<Instant>,
}

impl Follow {
    /// Start following the set at `path` (its files as read now).
    pub fn new(bundle: u64, path: &Path, files: &[PathBuf]) -> Self {
        Self {
            bundle,
            path: path.to_path_buf(),
            stamps: stamp(files),
            last_poll: Instant::now(),
            job: None,
            updates: 0,
            last_update: None,
        }
    }

    /// Check the files when due and start a re-read when they changed; returns a finished
    /// re-read.
    pub fn tick(
        &mut self,
        ctx: &egui::Context,
        model: Option<Arc<WinModel>>,
        old_set: &Arc<SessionSet>,
        old_traces: &Arc<Vec<Trace>>,
    ) -> Option<Result<Reread, String>> {
        ctx.request_repaint_after(POLL);
        if let Some(j) = &mut self.job {
            let out = j.poll();
            if out.is_some() {
                self.job = None;
                self.updates += 1;
                self.last_update = Some(Instant::now());
            }
            return out;
        }
        if self.last_poll.elapsed() < POLL {
            return None;
        }
        self.last_poll = Instant::now();
        let files: Vec<PathBuf> = self.stamps.iter().map(|s| s.0.clone()).collect();
        let now = stamp(&files);
        if now == self.stamps {
            return None;
        }
        self.stamps = now;
        let (path, old_set, old_traces) = (self.path.clone(), old_set.clone(), old_traces.clone());
        self.job = Some(Job::spawn_quick(
            ctx,
            "re-reading the live log",
            move |_, cancel| {
                let set = load_set(&path);
                if !set.is_usable() {
                    return Err(format!(
                        "the live log cannot be used right now: {}",
                        set.problems
                            .first()
                            .map(|p| p.to_string())
                            .unwrap_or_default()
                    ));
                }
                let old_index = super::workspace::index_by_id(&old_set);
                let mut keep: Vec<Trace> = Vec::new();
                let mut to_score = Vec::new();
                for (k, s) in set.sessions.iter().enumerate() {
                    let reuse = old_index.get(s.id.as_str()).and_then(|&o| {
                        let old = &old_set.sessions[o];
                        (s.is_finished() && old.is_finished() && old.events.len() == s.events.len())
                            .then(|| old_traces.iter().find(|t| t.session == o))
                            .flatten()
                    });
                    match reuse {
                        Some(t) => {
                            let mut t = t.clone();
                            t.session = k;
                            keep.push(t);
                        }
                        None => to_score.push((0, k)),
                    }
                }
                if let Some(model) = model {
                    let fresh = score_sessions(
                        &model,
                        &[&set],
                        &to_score,
                        |_, _| TraceSource::Scored,
                        cancel,
                    )
                    .map_err(|e| e.to_string())?;
                    keep.extend(fresh);
                }
                keep.sort_by_key(|t| t.session);
                Ok(Reread { set, traces: keep })
            },
        ));
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;
    use tellturn::evaluate::train::{TrainOptions, train};
    use tellturn::progress::{Cancel, NoProgress};

    #[test]
    fn a_growing_live_log_is_rescored_without_retraining() {
        let dir = std::env::temp_dir().join(format!("tellturn-follow-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let sample =
            Path::new(env!("CARGO_MANIFEST_DIR")).join("sample_sessions/tarnsluice-exercise");
        for f in ["events.csv", "outcomes.csv"] {
            std::fs::copy(sample.join(f), dir.join(f)).unwrap();
        }
        let set = load_set(&dir);
        let options = TrainOptions {
            cross_fit: false,
            learning_curve: false,
            ..TrainOptions::default()
        };
        let training = train(&[&set], &options, &NoProgress, &Cancel::new()).unwrap();
        let open = set.sessions.iter().position(|s| !s.is_finished()).unwrap();
        let turns_before = training
            .traces
            .iter()
            .find(|t| t.session == open)
            .unwrap()
            .len();
        let model = Arc::new(training.model);
        let old_set = Arc::new(set);
        let old_traces = Arc::new(training.traces);
        let mut follow = Follow::new(1, &dir, &old_set.files);
        // The facilitator's log grows by two turns of the session in progress.
        let id = old_set.sessions[open].id.clone();
        let mut f = std::fs::OpenOptions::new()
            .append(true)
            .open(dir.join("events.csv"))
            .unwrap();
        writeln!(f, "{id},{},Weir Desk,crew_sent,,10", turns_before + 1).unwrap();
        writeln!(f, "{id},{},Squall Cell,escalation,,17", turns_before + 2).unwrap();
        drop(f);
        let ctx = egui::Context::default();
        let started = Instant::now();
        let reread = loop {
            if let Some(r) = follow.tick(&ctx, Some(model.clone()), &old_set, &old_traces) {
                break r.expect("re-read");
            }
            assert!(
                started.elapsed() < Duration::from_secs(20),
                "no re-read arrived"
            );
            std::thread::sleep(Duration::from_millis(50));
        };
        let trace = reread.traces.iter().find(|t| t.session == open).unwrap();
        assert_eq!(trace.len(), turns_before + 2);
        assert_eq!(trace.source, TraceSource::Scored);
        // Finished sessions keep their out-of-fold traces.
        let finished = reread
            .traces
            .iter()
            .filter(|t| t.source != TraceSource::Scored)
            .count();
        assert_eq!(
            finished,
            old_traces
                .iter()
                .filter(|t| t.source != TraceSource::Scored)
                .count()
        );
        let _ = std::fs::remove_dir_all(&dir);
    }
}
