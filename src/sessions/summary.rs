//! What `tellturn check` reports about a set: counts, shapes, and its problems.

use crate::sessions::{Problem, SessionSet, text};
use serde::Serialize;
use std::collections::{BTreeMap, BTreeSet};
use std::path::PathBuf;

/// A description of one session set, for `tellturn check` and the dashboard's problem panel.
#[derive(Debug, Clone, Serialize)]
pub struct SetSummary {
    /// The set's name (its folder).
    pub name: String,
    /// Where it was read from.
    pub root: PathBuf,
    /// Whether the set can be used.
    pub usable: bool,
    /// Finished sessions (with an outcome).
    pub finished: usize,
    /// Sessions without an outcome yet.
    pub in_progress: usize,
    /// Sessions set aside.
    pub set_aside: usize,
    /// Number of sessions by actor count.
    pub actors_per_session: BTreeMap<usize, usize>,
    /// Median number of distinct turns per loaded session.
    pub turns_median: f64,
    /// Fewest distinct turns in a loaded session.
    pub turns_min: usize,
    /// Most distinct turns in a loaded session.
    pub turns_max: usize,
    /// Event rows read.
    pub event_rows: u64,
    /// Distinct event labels.
    pub event_labels: usize,
    /// Distinct words in the detail text.
    pub detail_tokens: usize,
    /// Wins by seat (seat 1 moved first), over finished sessions.
    pub wins_by_seat: BTreeMap<usize, usize>,
    /// Finished sessions that ended in a draw.
    pub draws: usize,
    /// Finished sessions by victory route.
    pub victory_routes: BTreeMap<String, usize>,
    /// Finished sessions by variant.
    pub variants: BTreeMap<String, usize>,
    /// Numeric state columns.
    pub state_columns: Vec<String>,
    /// Every problem found.
    pub problems: Vec<Problem>,
}

/// Describe a loaded set.
pub fn summarize(set: &SessionSet) -> SetSummary {
    let mut actors_per_session = BTreeMap::new();
    let mut turns: Vec<usize> = Vec::with_capacity(set.sessions.len());
    let mut tokens = BTreeSet::new();
    let mut wins_by_seat = BTreeMap::new();
    let mut draws = 0;
    let mut victory_routes = BTreeMap::new();
    let mut variants = BTreeMap::new();
    for s in &set.sessions {
        *actors_per_session.entry(s.actors.len()).or_insert(0) += 1;
        turns.push(s.turn_count());
        for e in &s.events {
            if !e.detail.is_empty() {
                for t in text::tokens(&e.detail) {
                    if !tokens.contains(&t) {
                        tokens.insert(t);
                    }
                }
            }
        }
        if s.is_finished() {
            match s.winner_seat() {
                Some(seat) => *wins_by_seat.entry(seat + 1).or_insert(0) += 1,
                None => draws += 1,
            }
            if let Some(v) = s.victory() {
                *victory_routes.entry(v.to_string()).or_insert(0) += 1;
            }
            if let Some(v) = s.variant() {
                *variants.entry(v.to_string()).or_insert(0) += 1;
            }
        }
    }
    turns.sort_unstable();
    let turns_median = match turns.len() {
        0 => 0.0,
        n if n % 2 == 1 => turns[n / 2] as f64,
        n => (turns[n / 2 - 1] + turns[n / 2]) as f64 / 2.0,
    };
    SetSummary {
        name: set.name.clone(),
        root: set.root.clone(),
        usable: set.is_usable(),
        finished: set.finished().count(),
        in_progress: set.in_progress().count(),
        set_aside: set.set_aside.len(),
        actors_per_session,
        turns_median,
        turns_min: turns.first().copied().unwrap_or(0),
        turns_max: turns.last().copied().unwrap_or(0),
        event_rows: set.event_rows,
        event_labels: set.labels.len(),
        detail_tokens: tokens.len(),
        wins_by_seat,
        draws,
        victory_routes,
        variants,
        state_columns: set.state_columns.clone(),
        problems: set.problems.clone(),
    }
}
