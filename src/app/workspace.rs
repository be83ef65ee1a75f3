//! The loaded session sets: each with its problems, its training run (on a worker), what the
//! training produced, and the per-session facts at the current threshold.

use super::facts::{SessionFacts, decision_index};
use super::jobs::{Job, Stage};
use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::Arc;
use tellturn::analysis::balance::{Balance, BalanceParams, balance};
use tellturn::analysis::decision::{DecisionReport, decision_report};
use tellturn::analysis::swings::{
    EventImpact, EventImpactParams, LeverageParams, LeverageTable, event_impact, leverage_by_turn,
};
use tellturn::analysis::traces::{Trace, TraceSource};
use tellturn::evaluate::quality::{Quality, quality};
use tellturn::evaluate::train::{TrainOptions, Training, train};
use tellturn::models::win_model::WinModel;
use tellturn::sessions::{SessionSet, Severity};

/// Where a set came from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Origin {
    /// A folder or events file on disk.
    Disk(PathBuf),
    /// A sample built into the program.
    Bundled(&'static str),
}

impl Origin {
    /// The path, for sets read from disk.
    pub fn path(&self) -> Option<&PathBuf> {
        match self {
            Origin::Disk(p) => Some(p),
            Origin::Bundled(_) => None,
        }
    }
}

/// What a training run produced, with the scores derived from it (all computed on the worker).
pub struct Learned {
    /// The engine's training result (model, traces, tuning, learning curve, notes).
    pub training: Training,
    /// Scores over every out-of-fold trace (each session predicted by a model that never saw it).
    pub out_of_fold: Option<Quality>,
    /// Scores over the untouched test share only.
    pub test_share: Option<Quality>,
    /// The mean swing after each event label and detail word, with bootstrap intervals.
    pub impact: Result<EventImpact, String>,
    /// Leverage by turn number, with the turns far above their neighbours.
    pub leverage: Result<LeverageTable, String>,
    /// Balance between seats, actors and routes, with findings.
    pub balance: Result<Balance, String>,
}

impl Learned {
    /// Train and score on a worker.
    pub fn compute(
        set: &SessionSet,
        options: &TrainOptions,
        bootstrap: usize,
        progress: &dyn tellturn::progress::Progress,
        cancel: &tellturn::progress::Cancel,
    ) -> Result<Learned, String> {
        let refs = [set];
        let mut training = train(&refs, options, progress, cancel).map_err(|e| e.to_string())?;
        progress.report("scoring held-out sessions", 0.0);
        let oof: Vec<&Trace> = training
            .traces
            .iter()
            .filter(|t| t.source.is_out_of_fold())
            .collect();
        let test: Vec<&Trace> = training
            .traces
            .iter()
            .filter(|t| t.source == TraceSource::Test)
            .collect();
        let out_of_fold = quality(&refs, &oof);
        let test_share = quality(&refs, &test);
        if let Some(q) = &test_share {
            training.model.summary.test_log_loss = Some(q.log_loss);
            training.model.summary.test_accuracy = Some(q.favourite_accuracy);
        }
        progress.report("scoring held-out sessions", 1.0);
        let traces: Vec<&Trace> = training.traces.iter().collect();
        let impact = event_impact(
            &traces,
            &refs,
            &EventImpactParams {
                bootstrap: tellturn::stats::BootstrapParams {
                    resamples: bootstrap,
                    seed: options.seed,
                    ..tellturn::stats::BootstrapParams::default()
                },
                ..EventImpactParams::default()
            },
            progress,
            cancel,
        )
        .map_err(|e| e.to_string());
        if cancel.is_cancelled() {
            return Err(super::jobs::CANCELLED.into());
        }
        let leverage =
            leverage_by_turn(&traces, &refs, &LeverageParams::default()).map_err(|e| e.to_string());
        let balance = balance(&refs, None, &BalanceParams::default()).map_err(|e| e.to_string());
        Ok(Learned {
            training,
            out_of_fold,
            test_share,
            impact,
            leverage,
            balance,
        })
    }
}

/// A model read from a file, scoring a set instead of a model trained on it.
pub struct Loaded {
    /// The model file.
    pub path: PathBuf,
    /// The model, with the training summary it was saved with.
    pub model: Arc<WinModel>,
}

/// What scoring a set with a loaded model produced (on a worker).
pub struct Scored {
    /// The model used.
    pub loaded: Loaded,
    /// One trace per session.
    pub traces: Vec<Trace>,
}

/// Where a set's model stands.
pub enum Fit {
    /// Not started (the set is unusable, still loading, or was never trained).
    Idle,
    /// Training on a worker.
    Running(Job<Learned>),
    /// Scoring with a loaded model on a worker.
    Scoring(Job<Scored>),
    /// Training stopped with a message (`cancelled` when asked to).
    Failed(String),
    /// Scoring with a loaded model stopped with a message.
    ScoringFailed(String),
    /// Done; the result sits in [`Bundle::learned`] or [`Bundle::loaded`].
    Done,
}

/// One loaded set and everything derived from it.
pub struct Bundle {
    /// A stable id for the session (indices shift when sets are closed).
    pub id: u64,
    /// Where it came from.
    pub origin: Origin,
    /// The sessions (shared with workers).
    pub set: Arc<SessionSet>,
    /// Reading the set, when it is still being read.
    pub loading: Option<Job<SessionSet>>,
    /// Training state.
    pub fit: Fit,
    /// The latest training result (kept while a retrain runs, so the views stay filled).
    pub learned: Option<Arc<Learned>>,
    /// The model file scoring this set, when one was loaded instead of training here.
    pub loaded: Option<Loaded>,
    /// Traces in use: the training's, with live re-scores of in-progress sessions on top.
    pub traces: Arc<Vec<Trace>>,
    /// Trace index by session index.
    pub trace_of: Vec<Option<usize>>,
    /// Per-session facts at the current threshold, in session order.
    pub facts: Vec<SessionFacts>,
    /// The engine's decisions at the current threshold (finished sessions with traces).
    pub decisions: Option<Arc<DecisionReport>>,
    /// Why decisions could not be computed, if they could not.
    pub decisions_error: Option<String>,
    /// The threshold `facts` were computed for.
    pub facts_threshold: f64,
    /// Facts being recomputed on a worker (large sets).
    pub facts_job: Option<Job<(f64, Option<DecisionReport>)>>,
    /// A threshold waiting for the running recomputation to end.
    pub facts_pending: Option<f64>,
    /// Bumped whenever `facts` or `traces` change, so views can refresh their caches.
    pub generation: u64,
}

impl Bundle {
    /// A bundle whose set is being read.
    pub fn loading(id: u64, origin: Origin, job: Job<SessionSet>) -> Self {
        let name = match &origin {
            Origin::Disk(p) => p
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| p.display().to_string()),
            Origin::Bundled(n) => n.to_string(),
        };
        Self {
            id,
            origin,
            set: Arc::new(SessionSet {
                name,
                ..SessionSet::default()
            }),
            loading: Some(job),
            fit: Fit::Idle,
            learned: None,
            loaded: None,
            traces: Arc::new(Vec::new()),
            trace_of: Vec::new(),
            facts: Vec::new(),
            decisions: None,
            decisions_error: None,
            facts_threshold: f64::NAN,
            facts_job: None,
            facts_pending: None,
            generation: 0,
        }
    }

    /// The set's short name.
    pub fn name(&self) -> &str {
        &self.set.name
    }

    /// Problems that make the set unusable, set sessions aside, or are warnings.
    pub fn problem_counts(&self) -> (usize, usize, usize) {
        let mut c = (0, 0, 0);
        for p in &self.set.problems {
            match p.severity {
                Severity::Unusable => c.0 += 1,
                Severity::SetAside => c.1 += 1,
                Severity::Warning => c.2 += 1,
            }
        }
        c
    }

    /// The running job's title and stage, when training or loading.
    pub fn busy(&self) -> Option<(String, Stage, f32, bool)> {
        if let Some(j) = &self.loading {
            return Some((j.title.clone(), j.stage(), j.seconds(), j.is_cancelling()));
        }
        match &self.fit {
            Fit::Running(j) => Some((j.title.clone(), j.stage(), j.seconds(), j.is_cancelling())),
            Fit::Scoring(j) => Some((j.title.clone(), j.stage(), j.seconds(), j.is_cancelling())),
            _ => None,
        }
    }

    /// Ask the running job (loading, training or scoring) to stop.
    pub fn cancel(&self) {
        if let Some(j) = &self.loading {
            j.cancel();
        }
        match &self.fit {
            Fit::Running(j) => j.cancel(),
            Fit::Scoring(j) => j.cancel(),
            _ => {}
        }
    }

    /// The model that scores new events: the loaded one, else the one trained here.
    pub fn model(&self) -> Option<Arc<WinModel>> {
        self.loaded.as_ref().map(|l| l.model.clone()).or_else(|| {
            self.learned
                .as_ref()
                .map(|l| Arc::new(l.training.model.clone()))
        })
    }

    /// Install traces (from training or a live re-score) and recompute the facts.
    pub fn set_traces(&mut self, traces: Arc<Vec<Trace>>, threshold: f64) {
        let mut trace_of = vec![None; self.set.sessions.len()];
        for (i, t) in traces.iter().enumerate() {
            if t.set == 0 && t.session < trace_of.len() {
                trace_of[t.session] = Some(i);
            }
        }
        self.traces = traces;
        self.trace_of = trace_of;
        self.refresh_facts(threshold);
    }

    /// Recompute the per-session facts for a threshold (one pass over the traces). Large sets
    /// are recomputed on a worker (see [`Bundle::refresh_facts_later`]); small ones at once.
    pub fn refresh_facts(&mut self, threshold: f64) {
        let report = Self::decide(&self.set, &self.traces, threshold);
        self.install_facts(report, threshold);
    }

    fn decide(
        set: &SessionSet,
        traces: &[Trace],
        threshold: f64,
    ) -> Result<Option<DecisionReport>, String> {
        let refs: Vec<&Trace> = traces.iter().collect();
        if refs.is_empty() {
            return Ok(None);
        }
        decision_report(&refs, &[set], threshold)
            .map(Some)
            .map_err(|e| e.to_string())
    }

    /// Sets with more sessions than this recompute their facts on a worker, so dragging the
    /// threshold never stalls a frame.
    pub const ASYNC_FACTS: usize = 2_000;

    /// Recompute on a worker when the set is large; the old facts stay shown meanwhile.
    pub fn refresh_facts_later(&mut self, ctx: &egui::Context, threshold: f64) {
        if self.set.sessions.len() <= Self::ASYNC_FACTS {
            self.refresh_facts(threshold);
            return;
        }
        if self.facts_job.is_some() {
            // One recomputation at a time: the latest threshold runs when this one ends.
            self.facts_pending = Some(threshold);
            return;
        }
        let (set, traces) = (self.set.clone(), self.traces.clone());
        self.facts_job = Some(Job::spawn_quick(ctx, "deciding sessions", move |_, _| {
            Ok((threshold, Self::decide(&set, &traces, threshold)?))
        }));
    }

    /// Install facts computed on a worker, if they are for the current threshold.
    pub fn poll_facts(&mut self, ctx: &egui::Context, current: f64) {
        let Some(j) = &mut self.facts_job else { return };
        let Some(r) = j.poll() else { return };
        self.facts_job = None;
        if let Some(next) = self.facts_pending.take() {
            self.refresh_facts_later(ctx, next);
        }
        match r {
            Ok((t, report)) if t == current => self.install_facts(Ok(report), t),
            Ok(_) => {}
            Err(e) => self.install_facts(Err(e), current),
        }
    }

    fn install_facts(&mut self, report: Result<Option<DecisionReport>, String>, threshold: f64) {
        let traces = &self.traces;
        let report = match report {
            Ok(r) => {
                self.decisions_error = None;
                r
            }
            Err(e) => {
                self.decisions_error = Some(e);
                None
            }
        };
        let index = report
            .as_ref()
            .map(|r| decision_index(r, self.set.sessions.len()))
            .unwrap_or_else(|| vec![None; self.set.sessions.len()]);
        self.facts = self
            .set
            .sessions
            .iter()
            .enumerate()
            .map(|(k, s)| {
                let t = self
                    .trace_of
                    .get(k)
                    .copied()
                    .flatten()
                    .map(|i| (i, &traces[i]));
                let d = index[k].and_then(|i| report.as_ref().map(|r| &r.decisions.sessions[i]));
                SessionFacts::from_decision(d, t, s.turn_count(), !s.is_finished())
            })
            .collect();
        self.decisions = report.map(Arc::new);
        self.facts_threshold = threshold;
        self.generation += 1;
    }

    /// The trace of session `k`, if any.
    pub fn trace(&self, k: usize) -> Option<&Trace> {
        self.trace_of
            .get(k)
            .copied()
            .flatten()
            .map(|i| &self.traces[i])
    }
}

/// Every loaded set.
#[derive(Default)]
pub struct Shelf {
    /// The sets, in the order they were opened.
    pub bundles: Vec<Bundle>,
    next_id: u64,
}

impl Shelf {
    /// A fresh id.
    pub fn next_id(&mut self) -> u64 {
        self.next_id += 1;
        self.next_id
    }
    /// The bundle with this id.
    pub fn get(&self, id: u64) -> Option<&Bundle> {
        self.bundles.iter().find(|b| b.id == id)
    }
    /// The bundle with this id, mutably.
    pub fn get_mut(&mut self, id: u64) -> Option<&mut Bundle> {
        self.bundles.iter_mut().find(|b| b.id == id)
    }
    /// Whether any set is loading or training.
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn any_busy(&self) -> bool {
        self.bundles.iter().any(|b| b.busy().is_some())
    }
}

/// Session indices by id, for carrying a selection across a re-read.
pub fn index_by_id(set: &SessionSet) -> HashMap<&str, usize> {
    set.sessions
        .iter()
        .enumerate()
        .map(|(i, s)| (s.id.as_str(), i))
        .collect()
}
