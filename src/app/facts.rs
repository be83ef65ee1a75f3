//! Per-session facts at the chosen threshold, from the engine's decision analysis: decided
//! turn, settled share, comeback, false certainty, excitement. One pass over the traces, so
//! they are recomputed whenever the threshold moves, without retraining.

use tellturn::analysis::decision::{DecisionReport, SessionDecision};

/// What the dashboard shows about one session at one threshold.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SessionFacts {
    /// Index of the session's trace, when it has one.
    pub trace: Option<usize>,
    /// Distinct turns played.
    pub turns: usize,
    /// Index (into the trace's turns) of the decided turn.
    pub decided_index: Option<usize>,
    /// The log's number of the decided turn.
    pub decided_turn: Option<u32>,
    /// Share of the session's turns played after the decided turn.
    pub settled_share: Option<f64>,
    /// How much the chances moved: Σ|swing| over turns and actors, per actor.
    pub excitement: Option<f64>,
    /// The winner's chance fell to 20 % or lower at some turn and they still won.
    pub comeback: bool,
    /// Someone reached the threshold at some turn and did not win.
    pub false_certainty: bool,
    /// Changes of the favourite.
    pub lead_changes: usize,
    /// The session has no outcome yet.
    pub in_progress: bool,
}

impl SessionFacts {
    /// Facts of a session from its engine decision (finished sessions) and trace.
    pub fn from_decision(
        d: Option<&SessionDecision>,
        trace: Option<(usize, &tellturn::analysis::traces::Trace)>,
        turns: usize,
        in_progress: bool,
    ) -> Self {
        let decided_index = d
            .and_then(|d| d.decided_turn)
            .and_then(|turn| trace.and_then(|(_, t)| t.turns.iter().position(|&x| x == turn)));
        Self {
            trace: trace.map(|t| t.0),
            turns,
            decided_index,
            decided_turn: d.and_then(|d| d.decided_turn),
            settled_share: d.and_then(|d| d.settled_share),
            excitement: d.map(|d| d.excitement),
            comeback: d.is_some_and(|d| d.comeback),
            false_certainty: d.is_some_and(|d| d.false_certainty),
            lead_changes: d.map_or(0, |d| d.lead_changes),
            in_progress,
        }
    }
}

/// The decisions of a set at one threshold, indexed by session.
pub fn decision_index(report: &DecisionReport, sessions: usize) -> Vec<Option<usize>> {
    let mut idx = vec![None; sessions];
    for (i, d) in report.decisions.sessions.iter().enumerate() {
        if d.set == 0 && d.session < sessions {
            idx[d.session] = Some(i);
        }
    }
    idx
}
