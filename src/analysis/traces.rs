//! Traces: one session's win chances turn by turn, the input of every analysis.

use serde::{Deserialize, Serialize};

/// Which model produced a trace, so nobody mistakes in-sample numbers for held-out ones.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum TraceSource {
    /// Cross-fitted: predicted by the model of the folds that left this session out.
    CrossFit {
        /// The fold (0-based) the session sat in.
        fold: u8,
    },
    /// In the untouched test share: predicted by the final model, which never saw it.
    Test,
    /// Scored by the final model: an in-progress session, or a session of a set scored with a
    /// saved model. Not out-of-fold when the model was trained on it.
    Scored,
}

impl TraceSource {
    /// A short label for tables and CSV files (`cv3`, `test`, `scored`).
    pub fn label(&self) -> String {
        match self {
            TraceSource::CrossFit { fold } => format!("cv{fold}"),
            TraceSource::Test => "test".into(),
            TraceSource::Scored => "scored".into(),
        }
    }
    /// Whether the model that produced it never saw the session.
    pub fn is_out_of_fold(&self) -> bool {
        !matches!(self, TraceSource::Scored)
    }
}

/// Win chances of every actor of one session, after each turn.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Trace {
    /// Index of the session's set.
    pub set: usize,
    /// Index of the session in its set.
    pub session: usize,
    /// Number of actors.
    pub actors: usize,
    /// The log's turn numbers, in order.
    pub turns: Vec<u32>,
    /// Chances before the first turn (from the seat alone), one per actor.
    pub start: Vec<f64>,
    /// Chances after each turn: `turns.len() * actors`, turn-major.
    pub chances: Vec<f64>,
    /// Chance of a draw after each turn (zero when the set has no draws).
    pub draw: Vec<f64>,
    /// Which model produced it.
    pub source: TraceSource,
}

impl Trace {
    /// The chance of `actor` after turn index `t` (index into [`Trace::turns`]).
    pub fn chance(&self, t: usize, actor: usize) -> f64 {
        self.chances[t * self.actors + actor]
    }
    /// One actor's chances after every turn.
    pub fn series(&self, actor: usize) -> Vec<f64> {
        (0..self.turns.len())
            .map(|t| self.chance(t, actor))
            .collect()
    }
    /// One actor's chance before turn index `t`: the start for `t = 0`, else after `t − 1`.
    pub fn before(&self, t: usize, actor: usize) -> f64 {
        if t == 0 {
            self.start[actor]
        } else {
            self.chance(t - 1, actor)
        }
    }
    /// The swing of `actor` across turn index `t`: chance after minus chance before.
    pub fn swing(&self, t: usize, actor: usize) -> f64 {
        self.chance(t, actor) - self.before(t, actor)
    }
    /// The favourite after turn index `t` (lowest seat on ties).
    pub fn favourite(&self, t: usize) -> usize {
        let mut best = 0;
        for a in 1..self.actors {
            if self.chance(t, a) > self.chance(t, best) {
                best = a;
            }
        }
        best
    }
    /// Number of turns.
    pub fn len(&self) -> usize {
        self.turns.len()
    }
    /// Whether the trace has no turns.
    pub fn is_empty(&self) -> bool {
        self.turns.is_empty()
    }
}
