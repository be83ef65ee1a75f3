//! How good the win chances are, on sessions the model never saw: overall scores, calibration,
//! and accuracy and log loss turn by turn and by tenth of the game.
//!
//! "Accuracy" here is the share of (session, turn) pairs where the favourite — the actor with
//! the highest win chance — went on to win; draws are left out of it. Per-turn figures use the
//! sessions still running at that turn. The tenth of a game needs the game's length, known only
//! afterwards, so it is for evaluation only and never a model input.

use super::metrics::{
    BrierDecomposition, ConfusionMatrix, ReliabilityTable, RocAuc, brier_decomposition, log_loss,
    reliability_table, roc_auc,
};
use crate::analysis::traces::Trace;
use crate::sessions::SessionSet;
use crate::stats::proportion::{Interval, wilson_interval};
use serde::Serialize;
use std::collections::BTreeMap;

/// Fewest sessions a per-turn point needs before it is reported.
pub const MIN_SESSIONS_PER_POINT: usize = 10;

/// One point of a per-turn or per-tenth curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CurvePoint {
    /// The turn number, or the tenth of the game (1..=10).
    pub x: u32,
    /// Sessions contributing.
    pub sessions: usize,
    /// Sessions (without draws) whose favourite went on to win.
    pub correct: usize,
    /// Sessions without draws contributing to the accuracy.
    pub decided_sessions: usize,
    /// Share of sessions whose favourite went on to win.
    pub accuracy: f64,
    /// Wilson 95 % interval of the accuracy.
    pub accuracy_interval: Interval,
    /// Mean log loss per actor row.
    pub log_loss: f64,
    /// Standard error of the mean log loss across sessions.
    pub log_loss_se: f64,
}

/// The quality of a group of traces.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Quality {
    /// Sessions scored.
    pub sessions: usize,
    /// Actor rows scored.
    pub rows: usize,
    /// Mean log loss per actor row.
    pub log_loss: f64,
    /// Log loss of the chances from the seat alone (before any turn), for comparison.
    pub seat_only_log_loss: f64,
    /// Brier score and Murphy's decomposition (10 bins).
    pub brier: BrierDecomposition,
    /// ROC AUC of the chances for "this actor wins".
    pub auc: Option<RocAuc>,
    /// Reliability table and expected calibration error (10 bins).
    pub reliability: ReliabilityTable,
    /// Row-level counts at chance 0.5.
    pub confusion: ConfusionMatrix,
    /// Row-level accuracy at 0.5.
    pub row_accuracy: Option<f64>,
    /// Row-level balanced accuracy at 0.5.
    pub balanced_accuracy: Option<f64>,
    /// Row-level precision at 0.5.
    pub precision: Option<f64>,
    /// Row-level recall at 0.5.
    pub recall: Option<f64>,
    /// Row-level F1 at 0.5.
    pub f1: Option<f64>,
    /// Share of (session, turn) pairs whose favourite won, draws left out.
    pub favourite_accuracy: f64,
    /// Wilson 95 % interval of that share, counting sessions (not turns) as the sample size.
    pub favourite_accuracy_interval: Interval,
    /// Curve by turn number.
    pub by_turn: Vec<CurvePoint>,
    /// Curve by tenth of the game (1..=10).
    pub by_tenth: Vec<CurvePoint>,
    /// First turn at which the favourite's accuracy reaches 70 %, 80 % and 90 %.
    pub turns_for_accuracy: Vec<(f64, Option<u32>)>,
}

#[derive(Default)]
struct Acc {
    sessions: usize,
    decided: usize,
    correct: usize,
    loss_by_session: Vec<f64>,
    rows: usize,
}

fn curve(groups: BTreeMap<u32, Acc>) -> Vec<CurvePoint> {
    groups
        .into_iter()
        .filter(|(_, a)| a.sessions >= MIN_SESSIONS_PER_POINT)
        .map(|(x, a)| {
            let n = a.loss_by_session.len() as f64;
            let mean = a.loss_by_session.iter().sum::<f64>() / n;
            let var = if n > 1.0 {
                a.loss_by_session
                    .iter()
                    .map(|l| (l - mean).powi(2))
                    .sum::<f64>()
                    / (n - 1.0)
            } else {
                0.0
            };
            CurvePoint {
                x,
                sessions: a.sessions,
                correct: a.correct,
                decided_sessions: a.decided,
                accuracy: if a.decided > 0 {
                    a.correct as f64 / a.decided as f64
                } else {
                    0.0
                },
                accuracy_interval: wilson_interval(a.correct as u64, a.decided as u64, 0.95, false)
                    .unwrap_or(Interval::new(0.0, 1.0)),
                log_loss: mean,
                log_loss_se: (var / n).sqrt(),
            }
        })
        .collect()
}

fn add_point(acc: &mut Acc, loss: f64, correct: Option<bool>, rows: usize) {
    acc.sessions += 1;
    acc.loss_by_session.push(loss);
    acc.rows += rows;
    if let Some(c) = correct {
        acc.decided += 1;
        acc.correct += usize::from(c);
    }
}

fn row_loss(p: f64, won: bool) -> f64 {
    let p = p.clamp(1e-15, 1.0 - 1e-15);
    if won { -p.ln() } else { -(1.0 - p).ln() }
}

/// Score finished-session traces against their outcomes; `None` when there is nothing to score.
pub fn quality(sets: &[&SessionSet], traces: &[&Trace]) -> Option<Quality> {
    let mut outcomes = Vec::new();
    let mut probs = Vec::new();
    let mut start_probs = Vec::new();
    let mut start_outcomes = Vec::new();
    let mut by_turn: BTreeMap<u32, Acc> = BTreeMap::new();
    let mut by_tenth: BTreeMap<u32, Acc> = BTreeMap::new();
    let mut pick_correct = 0usize;
    let mut pick_total = 0usize;
    let mut sessions = 0usize;
    let mut decided_sessions = 0usize;
    for t in traces {
        let s = &sets[t.set].sessions[t.session];
        if !s.is_finished() || t.is_empty() {
            continue;
        }
        sessions += 1;
        let winner = s.winner_seat();
        if winner.is_some() {
            decided_sessions += 1;
        }
        for a in 0..t.actors {
            start_probs.push(t.start[a]);
            start_outcomes.push(winner == Some(a));
        }
        let len = t.len();
        let mut tenths: BTreeMap<u32, (f64, usize, Option<bool>)> = BTreeMap::new();
        for i in 0..len {
            let mut loss = 0.0;
            for a in 0..t.actors {
                let won = winner == Some(a);
                let p = t.chance(i, a);
                outcomes.push(won);
                probs.push(p);
                loss += row_loss(p, won);
            }
            let loss = loss / t.actors as f64;
            let correct = winner.map(|w| t.favourite(i) == w);
            if let Some(c) = correct {
                pick_total += 1;
                pick_correct += usize::from(c);
            }
            add_point(
                by_turn.entry(t.turns[i]).or_default(),
                loss,
                correct,
                t.actors,
            );
            // Within a tenth: mean loss over its turns, the favourite at its last turn.
            let tenth = ((10 * (i + 1)).div_ceil(len)).clamp(1, 10) as u32;
            let e = tenths.entry(tenth).or_insert((0.0, 0, None));
            e.0 += loss;
            e.1 += 1;
            e.2 = correct;
        }
        for (tenth, (sum, n, correct)) in tenths {
            add_point(
                by_tenth.entry(tenth).or_default(),
                sum / n as f64,
                correct,
                t.actors * n,
            );
        }
    }
    if outcomes.is_empty() {
        return None;
    }
    let reliability = reliability_table(&outcomes, &probs, 10, 0.95).ok()?;
    let confusion = ConfusionMatrix::at_threshold(&outcomes, &probs, 0.5).ok()?;
    let by_turn = curve(by_turn);
    let turns_for_accuracy = [0.7, 0.8, 0.9]
        .iter()
        .map(|&level| {
            (
                level,
                by_turn
                    .iter()
                    .find(|p| p.decided_sessions >= MIN_SESSIONS_PER_POINT && p.accuracy >= level)
                    .map(|p| p.x),
            )
        })
        .collect();
    let favourite_accuracy = if pick_total > 0 {
        pick_correct as f64 / pick_total as f64
    } else {
        0.0
    };
    // Turns of one session are not independent: size the interval by sessions.
    let effective = decided_sessions.max(1) as u64;
    let favourite_accuracy_interval = wilson_interval(
        (favourite_accuracy * effective as f64).round() as u64,
        effective,
        0.95,
        false,
    )
    .unwrap_or(Interval::new(0.0, 1.0));
    Some(Quality {
        sessions,
        rows: outcomes.len(),
        log_loss: log_loss(&outcomes, &probs, None).ok()?,
        seat_only_log_loss: log_loss(&start_outcomes, &start_probs, None).unwrap_or(f64::NAN),
        brier: brier_decomposition(&outcomes, &probs, 10).ok()?,
        auc: roc_auc(&outcomes, &probs).ok(),
        confusion,
        row_accuracy: confusion.accuracy(),
        balanced_accuracy: confusion.balanced_accuracy(),
        precision: confusion.precision(),
        recall: confusion.recall(),
        f1: confusion.f1(),
        favourite_accuracy,
        favourite_accuracy_interval,
        by_turn,
        by_tenth: curve(by_tenth),
        turns_for_accuracy,
        reliability,
    })
}
