//! The one win-chance model the rest of the engine uses: a fitted logistic or boosted model
//! behind one interface, the feature spec it was fitted on, and an optional draw model.
//!
//! Each actor's raw estimate is combined per turn so that the chances of all actors plus the
//! draw chance sum to 1.

use super::{Boosted, Logistic, Matrix};
use crate::analysis::traces::{Trace, TraceSource};
use crate::features::{FeatureSpec, RowKey, TurnTable, start_table};
use serde::{Deserialize, Serialize};

/// Which kind of model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ModelKind {
    /// L2-penalised logistic regression on standardised features.
    Logistic,
    /// Histogram gradient-boosted trees with log loss.
    Boosted,
}

impl ModelKind {
    /// The name used in files and messages.
    pub fn name(self) -> &'static str {
        match self {
            ModelKind::Logistic => "logistic",
            ModelKind::Boosted => "boosted",
        }
    }
}

/// A fitted model of either kind.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Fitted {
    /// A logistic regression.
    Logistic(Logistic),
    /// Boosted trees.
    Boosted(Boosted),
}

impl Fitted {
    /// Which kind it is.
    pub fn kind(&self) -> ModelKind {
        match self {
            Fitted::Logistic(_) => ModelKind::Logistic,
            Fitted::Boosted(_) => ModelKind::Boosted,
        }
    }
    /// Raw per-row probabilities.
    pub fn predict_proba(&self, x: &Matrix) -> Vec<f64> {
        match self {
            Fitted::Logistic(m) => m.predict_proba(x),
            Fitted::Boosted(m) => m.predict_proba(x),
        }
    }
}

/// What a model file says about how the model was made.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct ModelSummary {
    /// The tellturn version that trained it.
    pub created_by: String,
    /// Names of the sets trained on.
    pub sets: Vec<String>,
    /// Sessions the final model was fitted on.
    pub trained_sessions: usize,
    /// Turn rows the final model was fitted on.
    pub trained_rows: usize,
    /// Sessions held out as the untouched test share.
    pub test_sessions: usize,
    /// The seed used.
    pub seed: u64,
    /// Why this kind and these settings were chosen.
    pub choice: String,
    /// Hyperparameters, as text.
    pub settings: String,
    /// Held-out log loss on the test share, when there was one.
    pub test_log_loss: Option<f64>,
    /// Held-out share of turns where the favourite went on to win.
    pub test_accuracy: Option<f64>,
    /// Cautions and notes (small set, sampled turns, ...).
    pub notes: Vec<String>,
}

/// A win-chance model with its feature spec.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WinModel {
    /// The features it expects.
    pub spec: FeatureSpec,
    /// The per-actor win model.
    pub win: Fitted,
    /// The draw model, when the training sessions had draws.
    pub draw: Option<Fitted>,
    /// How it was made.
    pub summary: ModelSummary,
}

/// Per-row chances from a model: each actor's win chance and the turn's draw chance.
#[derive(Debug, Clone, PartialEq)]
pub struct RowChances {
    /// Win chance of the row's actor, normalised within its turn.
    pub win: Vec<f64>,
    /// Draw chance of the row's turn (repeated on every actor's row).
    pub draw: Vec<f64>,
}

/// Normalise raw per-actor estimates so that, in every (set, session, turn) group of
/// consecutive rows, the actors' chances plus the draw chance sum to 1.
pub fn normalise(keys: &[RowKey], raw: &[f64], raw_draw: Option<&[f64]>) -> RowChances {
    let mut win = vec![0.0; raw.len()];
    let mut draw = vec![0.0; raw.len()];
    let mut start = 0;
    while start < keys.len() {
        let k = keys[start];
        let mut end = start + 1;
        while end < keys.len()
            && (keys[end].set, keys[end].session, keys[end].turn) == (k.set, k.session, k.turn)
        {
            end += 1;
        }
        let n = (end - start) as f64;
        let d = raw_draw
            .map(|d| d[start..end].iter().sum::<f64>() / n)
            .unwrap_or(0.0)
            .clamp(0.0, 1.0);
        let total: f64 = raw[start..end].iter().map(|p| p.max(0.0)).sum();
        for i in start..end {
            win[i] = if total > 0.0 {
                (1.0 - d) * raw[i].max(0.0) / total
            } else {
                (1.0 - d) / n
            };
            draw[i] = d;
        }
        start = end;
    }
    RowChances { win, draw }
}

impl WinModel {
    /// Chances for every row of a table built with this model's spec.
    pub fn chances(&self, table: &TurnTable) -> RowChances {
        let width = table.width();
        let x = Matrix::new(table.rows.len(), width, table.values.clone())
            .unwrap_or_else(|_| Matrix::zeros(0, width));
        self.chances_of(&table.rows, &x)
    }

    /// Chances for rows already in a matrix.
    pub fn chances_of(&self, keys: &[RowKey], x: &Matrix) -> RowChances {
        let raw = self.win.predict_proba(x);
        let raw_draw = self.draw.as_ref().map(|d| d.predict_proba(x));
        normalise(keys, &raw, raw_draw.as_deref())
    }

    /// Chances before the first turn for a session of `actors` actors (from the seat alone).
    pub fn start_chances(&self, actors: usize) -> (Vec<f64>, f64) {
        let table = start_table(&self.spec, actors);
        let c = self.chances(&table);
        let draw = c.draw.first().copied().unwrap_or(0.0);
        (c.win, draw)
    }

    /// Turn per-row chances into one trace per session, in the order of `rows` (a turn
    /// table's keys).
    pub fn traces_from(
        &self,
        rows: &[RowKey],
        chances: &RowChances,
        source: impl Fn(&RowKey) -> TraceSource,
    ) -> Vec<Trace> {
        let mut traces: Vec<Trace> = Vec::new();
        let mut starts: std::collections::HashMap<usize, Vec<f64>> = Default::default();
        for (i, k) in rows.iter().enumerate() {
            let same = traces.last().is_some_and(|t: &Trace| {
                t.set == k.set as usize && t.session == k.session as usize
            });
            if !same {
                let n = k.actors as usize;
                let start = starts
                    .entry(n)
                    .or_insert_with(|| self.start_chances(n).0)
                    .clone();
                traces.push(Trace {
                    set: k.set as usize,
                    session: k.session as usize,
                    actors: n,
                    turns: Vec::new(),
                    start,
                    chances: Vec::new(),
                    draw: Vec::new(),
                    source: source(k),
                });
            }
            let t = traces.last_mut().expect("pushed above");
            if t.turns.last() != Some(&k.turn) {
                t.turns.push(k.turn);
                t.draw.push(chances.draw[i]);
            }
            t.chances.push(chances.win[i]);
        }
        traces
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn key(session: u32, turn: u32, actor: u8, actors: u8) -> RowKey {
        RowKey {
            set: 0,
            session,
            turn,
            actor,
            actors,
        }
    }

    #[test]
    fn chances_and_draw_sum_to_one_in_every_turn() {
        let keys = [
            key(0, 1, 0, 2),
            key(0, 1, 1, 2),
            key(0, 2, 0, 2),
            key(0, 2, 1, 2),
            key(1, 1, 0, 3),
            key(1, 1, 1, 3),
            key(1, 1, 2, 3),
        ];
        let raw = [0.6, 0.6, 0.9, 0.3, 0.2, 0.1, 0.1];
        let draw = [0.1, 0.1, 0.0, 0.2, 0.3, 0.3, 0.3];
        let c = normalise(&keys, &raw, Some(&draw));
        assert!((c.win[0] + c.win[1] + c.draw[0] - 1.0).abs() < 1e-12);
        assert!((c.win[0] - 0.45).abs() < 1e-12);
        // Turn 2: draw chance is the mean of the rows' estimates (0.1).
        assert!((c.win[2] - 0.9 * 0.75).abs() < 1e-12);
        let s: f64 = c.win[4..7].iter().sum::<f64>() + c.draw[4];
        assert!((s - 1.0).abs() < 1e-12);
        assert!((c.win[4] - 0.7 * 0.5).abs() < 1e-12);
    }

    #[test]
    fn all_zero_estimates_share_the_chance_evenly() {
        let keys = [key(0, 1, 0, 2), key(0, 1, 1, 2)];
        let c = normalise(&keys, &[0.0, 0.0], None);
        assert_eq!(c.win, [0.5, 0.5]);
    }
}
