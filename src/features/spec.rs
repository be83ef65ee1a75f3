//! The feature spec: which event labels, detail words and state columns become columns.
//!
//! Learned from training sessions only and stored in the model file, so new sessions are turned
//! into exactly the columns the model was fitted on (unknown labels and words are ignored).

use crate::sessions::{SessionSet, text};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, HashSet};

/// Settings for learning a [`FeatureSpec`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FeatureParams {
    /// Turns in the recent window (counts over turns `t − window + 1 ..= t`).
    pub window: u32,
    /// A detail word is kept when it appears in at least this many training sessions.
    pub min_token_sessions: usize,
    /// Most detail words kept (the ones seen in the most sessions).
    pub max_tokens: usize,
    /// Most event labels kept (the ones seen in the most sessions); the rest are not counted.
    pub max_labels: usize,
}

impl Default for FeatureParams {
    fn default() -> Self {
        FeatureParams {
            window: 5,
            min_token_sessions: 5,
            max_tokens: 120,
            max_labels: 60,
        }
    }
}

/// Vocabularies and settings that define the turn-table columns.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FeatureSpec {
    /// The settings used.
    pub params: FeatureParams,
    /// Event labels counted, in column order.
    pub labels: Vec<String>,
    /// Detail words counted, in column order.
    pub tokens: Vec<String>,
    /// Distinct detail words before pruning.
    pub tokens_before_pruning: usize,
    /// Distinct event labels before the cap.
    pub labels_before_cap: usize,
    /// Numeric state columns.
    pub state_columns: Vec<String>,
    /// Whether some training session had more than two actors (adds strongest-other columns).
    pub multi_actor: bool,
}

/// Keep the `cap` names seen in the most sessions (ties by name), in name order.
fn keep_most_common(counts: BTreeMap<String, usize>, min: usize, cap: usize) -> Vec<String> {
    let mut items: Vec<(String, usize)> = counts.into_iter().filter(|(_, n)| *n >= min).collect();
    items.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    items.truncate(cap);
    let mut names: Vec<String> = items.into_iter().map(|(k, _)| k).collect();
    names.sort();
    names
}

impl FeatureSpec {
    /// Learn the vocabularies from the sessions for which `use_session(set index, session index)`
    /// is true (the training sessions).
    pub fn learn(
        sets: &[&SessionSet],
        params: FeatureParams,
        use_session: impl Fn(usize, usize) -> bool,
    ) -> FeatureSpec {
        let mut label_sessions: BTreeMap<String, usize> = BTreeMap::new();
        let mut token_sessions: BTreeMap<String, usize> = BTreeMap::new();
        let mut state: Vec<String> = Vec::new();
        let mut multi_actor = false;
        for (si, set) in sets.iter().enumerate() {
            for c in &set.state_columns {
                if !state.contains(c) {
                    state.push(c.clone());
                }
            }
            for (k, s) in set.sessions.iter().enumerate() {
                if !use_session(si, k) {
                    continue;
                }
                multi_actor |= s.actors.len() > 2;
                let mut labels = HashSet::new();
                let mut tokens = HashSet::new();
                for e in &s.events {
                    labels.insert(e.label);
                    for t in text::tokens(&e.detail) {
                        tokens.insert(t);
                    }
                }
                for l in labels {
                    *label_sessions
                        .entry(set.labels[l as usize].clone())
                        .or_default() += 1;
                }
                for t in tokens {
                    *token_sessions.entry(t).or_default() += 1;
                }
            }
        }
        let labels_before_cap = label_sessions.len();
        let tokens_before_pruning = token_sessions.len();
        FeatureSpec {
            params,
            labels: keep_most_common(label_sessions, 1, params.max_labels),
            tokens: keep_most_common(
                token_sessions,
                params.min_token_sessions.max(1),
                params.max_tokens,
            ),
            tokens_before_pruning,
            labels_before_cap,
            state_columns: state,
            multi_actor,
        }
    }

    /// The readable column names, in order.
    pub fn column_names(&self) -> Vec<String> {
        let mut names = vec![
            "turn".to_string(),
            "moved_first".to_string(),
            "seat".to_string(),
            "actors".to_string(),
            "events_self".to_string(),
            "events_others".to_string(),
        ];
        let w = self.params.window;
        for l in &self.labels {
            names.push(format!("self:{l}"));
            names.push(format!("others:{l}"));
            if self.multi_actor {
                names.push(format!("best_other:{l}"));
            }
            names.push(format!("neutral:{l}"));
            names.push(format!("self_minus_others:{l}"));
            names.push(format!("self_last{w}:{l}"));
            names.push(format!("others_last{w}:{l}"));
            names.push(format!("neutral_last{w}:{l}"));
            names.push(format!("self_share:{l}"));
        }
        for c in &self.state_columns {
            names.push(format!("state_self:{c}"));
            names.push(format!("state_best_other:{c}"));
            names.push(format!("state_self_minus_best_other:{c}"));
        }
        for t in &self.tokens {
            names.push(format!("word_self:{t}"));
            names.push(format!("word_others:{t}"));
        }
        names
    }

    /// Number of columns.
    pub fn width(&self) -> usize {
        6 + self.labels.len() * (if self.multi_actor { 9 } else { 8 })
            + self.state_columns.len() * 3
            + self.tokens.len() * 2
    }
}
