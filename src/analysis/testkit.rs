//! Builders for the analysis tests: sessions from CSV text and hand-made traces.

use super::traces::{Trace, TraceSource};
use crate::sessions::{EventSource, SessionSet, load_set_from_reader};

/// A plan for one two-actor session (`north` moves first, then `south`).
pub struct Plan {
    /// Number of turns (numbered 1..=turns).
    pub turns: u32,
    /// Winner seat, `None` for a draw.
    pub winner: Option<usize>,
    /// Victory route.
    pub victory: &'static str,
    /// Variant.
    pub variant: &'static str,
}

/// A set of two-actor sessions `s0, s1, …`: every turn, north logs `move` and south logs
/// `reply`.
pub fn set_of(plans: &[Plan]) -> SessionSet {
    let mut events = String::from("session,turn,actor,event,detail\n");
    let mut outcomes = String::from("session,winner,victory,variant\n");
    for (i, p) in plans.iter().enumerate() {
        for t in 1..=p.turns {
            events += &format!("s{i},{t},north,move,\ns{i},{t},south,reply,\n");
        }
        let winner = match p.winner {
            Some(0) => "north",
            Some(_) => "south",
            None => "draw",
        };
        outcomes += &format!("s{i},{winner},{},{}\n", p.victory, p.variant);
    }
    load(&events, &outcomes)
}

/// Load a set from CSV texts, failing the test on any unusable problem.
pub fn load(events: &str, outcomes: &str) -> SessionSet {
    let set = load_set_from_reader(
        events.as_bytes(),
        EventSource::Csv,
        Some(outcomes.as_bytes()),
    );
    assert!(set.is_usable(), "{:?}", set.problems);
    set
}

/// A trace with the given start chances and per-turn chances (one row per turn), turns
/// numbered 1..=rows.
pub fn trace(set: usize, session: usize, start: &[f64], rows: &[Vec<f64>]) -> Trace {
    let turns = (1..=rows.len() as u32).collect();
    trace_at(set, session, start, rows, turns)
}

/// As [`trace`] with explicit turn numbers.
pub fn trace_at(
    set: usize,
    session: usize,
    start: &[f64],
    rows: &[Vec<f64>],
    turns: Vec<u32>,
) -> Trace {
    Trace {
        set,
        session,
        actors: start.len(),
        turns,
        start: start.to_vec(),
        chances: rows.iter().flatten().copied().collect(),
        draw: vec![0.0; rows.len()],
        source: TraceSource::CrossFit { fold: 0 },
    }
}

/// A two-actor trace from north's chances (south has the rest), starting at 0.5 each.
pub fn duel(set: usize, session: usize, north: &[f64]) -> Trace {
    let rows: Vec<Vec<f64>> = north.iter().map(|&p| vec![p, 1.0 - p]).collect();
    trace(set, session, &[0.5, 0.5], &rows)
}

/// A duel of `turns` turns that `winner` clinches at `decided` (chance 0.95 from then on,
/// 0.5 before).
pub fn clinched(set: usize, session: usize, turns: u32, decided: u32, winner: usize) -> Trace {
    let north: Vec<f64> = (1..=turns)
        .map(|t| {
            let w = if t >= decided { 0.95 } else { 0.5 };
            if winner == 0 { w } else { 1.0 - w }
        })
        .collect();
    duel(set, session, &north)
}

/// Borrow every element.
pub fn refs<T>(v: &[T]) -> Vec<&T> {
    v.iter().collect()
}
