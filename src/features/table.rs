//! The turn table: one row per (session, turn, actor) after that turn's events, seen from that
//! actor's side, so one model serves every seat and 2–8 actors.
//!
//! Nothing here looks ahead: every value uses only events up to and including the row's turn
//! (no game length, no share of the game, nothing derived from the outcome).

use super::spec::FeatureSpec;
use crate::progress::{Cancel, Cancelled};
use crate::sessions::{Session, SessionSet, text};
use rayon::prelude::*;
use std::collections::{HashMap, VecDeque};

/// Which row a table row is: set, session, turn and actor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RowKey {
    /// Index of the set in the list the table was built from.
    pub set: u16,
    /// Index of the session in its set.
    pub session: u32,
    /// The log's turn number.
    pub turn: u32,
    /// The actor's seat (index into `Session::actors`).
    pub actor: u8,
    /// Number of actors in the session.
    pub actors: u8,
}

/// Feature rows in row-major order with their keys.
#[derive(Debug, Clone, Default)]
pub struct TurnTable {
    /// Column names.
    pub columns: Vec<String>,
    /// Row keys, one per row.
    pub rows: Vec<RowKey>,
    /// Row-major values, `rows.len() * columns.len()`.
    pub values: Vec<f32>,
}

impl TurnTable {
    /// Number of columns.
    pub fn width(&self) -> usize {
        self.columns.len()
    }
    /// One row's values.
    pub fn row(&self, i: usize) -> &[f32] {
        let w = self.width();
        &self.values[i * w..(i + 1) * w]
    }
}

/// How a set's own label, column and word indices map onto the spec's.
struct SetMapping {
    labels: Vec<Option<usize>>,
    states: Vec<Option<usize>>,
    tokens: HashMap<String, usize>,
}

impl SetMapping {
    fn new(spec: &FeatureSpec, set: &SessionSet) -> Self {
        let find = |names: &[String], n: &str| names.iter().position(|x| x == n);
        SetMapping {
            labels: set.labels.iter().map(|l| find(&spec.labels, l)).collect(),
            states: set
                .state_columns
                .iter()
                .map(|c| find(&spec.state_columns, c))
                .collect(),
            tokens: spec
                .tokens
                .iter()
                .enumerate()
                .map(|(i, t)| (t.clone(), i))
                .collect(),
        }
    }
}

/// Build the rows of one session (all its turns, every actor).
fn session_rows(
    spec: &FeatureSpec,
    map: &SetMapping,
    session: &Session,
    set_index: u16,
    session_index: u32,
    keep_turn: &dyn Fn(u32) -> bool,
    with_start: bool,
) -> (Vec<RowKey>, Vec<f32>) {
    let n = session.actors.len();
    let labels = spec.labels.len();
    let states = spec.state_columns.len();
    let vocab = spec.tokens.len();
    let width = spec.width();
    let window = spec.params.window.max(1);
    // Slot n holds neutral events.
    let mut cum = vec![0f32; (n + 1) * labels];
    let mut win = vec![0f32; (n + 1) * labels];
    let mut events_by = vec![0f32; n + 1];
    let mut words = vec![0f32; n * vocab];
    let mut last_state = vec![0f32; n * states];
    let mut history: VecDeque<(u32, Vec<usize>)> = VecDeque::new();
    let mut keys = Vec::new();
    let mut values = Vec::new();
    if with_start {
        // "Before the first turn": what the seat alone says; it teaches the model the start.
        let start = start_table(spec, n);
        keys.extend(start.rows.iter().map(|k| RowKey {
            set: set_index,
            session: session_index,
            ..*k
        }));
        values.extend(start.values);
    }
    let events = &session.events;
    let mut i = 0;
    while i < events.len() {
        let turn = events[i].turn;
        let mut increments = Vec::new();
        while i < events.len() && events[i].turn == turn {
            let e = &events[i];
            let slot = e.actor.map_or(n, usize::from);
            events_by[slot] += 1.0;
            if let Some(l) = map.labels[e.label as usize] {
                cum[slot * labels + l] += 1.0;
                win[slot * labels + l] += 1.0;
                increments.push(slot * labels + l);
            }
            if let Some(a) = e.actor {
                let a = a as usize;
                if vocab > 0 && !e.detail.is_empty() {
                    for t in text::tokens(&e.detail) {
                        if let Some(&v) = map.tokens.get(&t) {
                            words[a * vocab + v] += 1.0;
                        }
                    }
                }
                for &(c, v) in e.state.iter() {
                    if let Some(c) = map.states[c as usize] {
                        last_state[a * states + c] = v as f32;
                    }
                }
            }
            i += 1;
        }
        history.push_back((turn, increments));
        while let Some((t, _)) = history.front() {
            if *t + window <= turn {
                let (_, old) = history.pop_front().unwrap_or_default();
                for idx in old {
                    win[idx] -= 1.0;
                }
            } else {
                break;
            }
        }
        if !keep_turn(turn) {
            continue;
        }
        for a in 0..n {
            keys.push(RowKey {
                set: set_index,
                session: session_index,
                turn,
                actor: a as u8,
                actors: n as u8,
            });
            let start = values.len();
            values.push(turn as f32);
            values.push(if a == 0 { 1.0 } else { 0.0 });
            values.push(a as f32);
            values.push(n as f32);
            values.push(events_by[a]);
            let others_events: f32 = (0..n).filter(|&b| b != a).map(|b| events_by[b]).sum();
            values.push(others_events);
            for l in 0..labels {
                let own = cum[a * labels + l];
                let mut others = 0f32;
                let mut best = 0f32;
                let mut others_w = 0f32;
                for b in (0..n).filter(|&b| b != a) {
                    let c = cum[b * labels + l];
                    others += c;
                    best = best.max(c);
                    others_w += win[b * labels + l];
                }
                values.push(own);
                values.push(others);
                if spec.multi_actor {
                    values.push(best);
                }
                values.push(cum[n * labels + l]);
                values.push(own - others);
                values.push(win[a * labels + l]);
                values.push(others_w);
                values.push(win[n * labels + l]);
                values.push(if events_by[a] > 0.0 {
                    own / events_by[a]
                } else {
                    0.0
                });
            }
            for c in 0..states {
                let own = last_state[a * states + c];
                let best = (0..n)
                    .filter(|&b| b != a)
                    .map(|b| last_state[b * states + c])
                    .fold(f32::NEG_INFINITY, f32::max);
                let best = if best.is_finite() { best } else { 0.0 };
                values.push(own);
                values.push(best);
                values.push(own - best);
            }
            for v in 0..vocab {
                let own = words[a * vocab + v];
                let others: f32 = (0..n)
                    .filter(|&b| b != a)
                    .map(|b| words[b * vocab + v])
                    .sum();
                values.push(own);
                values.push(others);
            }
            debug_assert_eq!(values.len() - start, width);
        }
    }
    (keys, values)
}

/// Which turns of a session become rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TurnSample {
    /// Every turn.
    All,
    /// About one turn in `every`, chosen by a hash of (seed, session id, turn): deterministic and
    /// independent of file order. Used when a set is too large to use every turn.
    OneIn {
        /// Keep about one turn in this many.
        every: u32,
        /// Seed of the hash.
        seed: u64,
    },
}

impl TurnSample {
    /// About one in `by` of this sample's turns: `All` becomes one turn in `by` (hashed with
    /// `seed`), one in `every` becomes one in `every × by` with the same seed, whose turns are
    /// then a subset of this sample's (a hash divisible by `every × by` is divisible by
    /// `every`).
    pub fn thinned(self, by: u32, seed: u64) -> TurnSample {
        match self {
            TurnSample::All => TurnSample::OneIn { every: by, seed },
            TurnSample::OneIn { every, seed } => TurnSample::OneIn {
                every: every.saturating_mul(by),
                seed,
            },
        }
    }

    /// Whether turn `turn` of the session with id `session_id` becomes a row.
    pub fn keeps(&self, session_id: &str, turn: u32) -> bool {
        match *self {
            TurnSample::All => true,
            TurnSample::OneIn { every, seed } => {
                every <= 1
                    || stable_hash(seed, session_id, u64::from(turn))
                        .is_multiple_of(u64::from(every))
            }
        }
    }
}

/// Which rows of a table made by [`build_training_table`] a table of the same sessions made
/// with `sample` holds: every "before the first turn" row (a session's first rows, one per
/// actor) and the rows of the turns `sample` keeps. With `starts` false, the start rows are
/// left out (what [`build_table`] would hold). When `sample` keeps a subset of the turns the
/// table was made with (see [`TurnSample::thinned`]), the rows picked are exactly the rows
/// that building with `sample` gives, in the same order.
pub fn rows_kept(
    rows: &[RowKey],
    sets: &[&SessionSet],
    sample: TurnSample,
    starts: bool,
) -> Vec<bool> {
    let mut kept = Vec::with_capacity(rows.len());
    let mut current: Option<(u16, u32)> = None;
    let mut seen_in_session = 0usize;
    for k in rows {
        if current != Some((k.set, k.session)) {
            current = Some((k.set, k.session));
            seen_in_session = 0;
        }
        let is_start = seen_in_session < usize::from(k.actors);
        seen_in_session += 1;
        let id = &sets[k.set as usize].sessions[k.session as usize].id;
        kept.push(if is_start {
            starts
        } else {
            sample.keeps(id, k.turn)
        });
    }
    kept
}

/// A 64-bit mix of a seed, a text and a number (SplitMix64 finaliser over FNV-1a).
pub fn stable_hash(seed: u64, text: &str, n: u64) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325 ^ seed;
    for b in text.bytes() {
        h ^= b as u64;
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    let mut z = h ^ n.wrapping_mul(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// Build the turn table for the sessions `(set index, session index)` listed, in that order.
///
/// Sessions are processed in parallel and concatenated in list order, so the table does not
/// depend on the thread count.
pub fn build_table(
    spec: &FeatureSpec,
    sets: &[&SessionSet],
    sessions: &[(usize, usize)],
    sample: TurnSample,
    cancel: &Cancel,
) -> Result<TurnTable, Cancelled> {
    build_rows(spec, sets, sessions, sample, false, cancel)
}

/// Like [`build_table`], plus one "before the first turn" row per session and actor (turn 0,
/// nothing done yet), so the model learns what the seat alone says. For fitting only.
pub fn build_training_table(
    spec: &FeatureSpec,
    sets: &[&SessionSet],
    sessions: &[(usize, usize)],
    sample: TurnSample,
    cancel: &Cancel,
) -> Result<TurnTable, Cancelled> {
    build_rows(spec, sets, sessions, sample, true, cancel)
}

fn build_rows(
    spec: &FeatureSpec,
    sets: &[&SessionSet],
    sessions: &[(usize, usize)],
    sample: TurnSample,
    with_start: bool,
    cancel: &Cancel,
) -> Result<TurnTable, Cancelled> {
    let maps: Vec<SetMapping> = sets.iter().map(|s| SetMapping::new(spec, s)).collect();
    let parts: Vec<Option<(Vec<RowKey>, Vec<f32>)>> = sessions
        .par_iter()
        .map(|&(si, k)| {
            if cancel.is_cancelled() {
                return None;
            }
            let session = &sets[si].sessions[k];
            let keep = |t: u32| sample.keeps(&session.id, t);
            Some(session_rows(
                spec, &maps[si], session, si as u16, k as u32, &keep, with_start,
            ))
        })
        .collect();
    cancel.check()?;
    let total: usize = parts.iter().flatten().map(|p| p.0.len()).sum();
    let mut table = TurnTable {
        columns: spec.column_names(),
        rows: Vec::with_capacity(total),
        values: Vec::with_capacity(total * spec.width()),
    };
    // Joined in order, each session's part freed as soon as it is copied.
    for (keys, values) in parts.into_iter().flatten() {
        table.rows.extend(keys);
        table.values.extend(values);
    }
    Ok(table)
}

/// The rows of one session alone (for scoring a session that is still being written).
pub fn session_table(spec: &FeatureSpec, set: &SessionSet, session_index: usize) -> TurnTable {
    let map = SetMapping::new(spec, set);
    let (rows, values) = session_rows(
        spec,
        &map,
        &set.sessions[session_index],
        0,
        session_index as u32,
        &|_| true,
        false,
    );
    TurnTable {
        columns: spec.column_names(),
        rows,
        values,
    }
}

/// Rows for "before the first turn" of a session of `actors` actors: nothing done yet, only the
/// seat and the actor count are known.
pub fn start_table(spec: &FeatureSpec, actors: usize) -> TurnTable {
    let width = spec.width();
    let mut values = vec![0f32; actors * width];
    let mut rows = Vec::with_capacity(actors);
    for a in 0..actors {
        let row = &mut values[a * width..(a + 1) * width];
        row[1] = if a == 0 { 1.0 } else { 0.0 };
        row[2] = a as f32;
        row[3] = actors as f32;
        rows.push(RowKey {
            set: 0,
            session: 0,
            turn: 0,
            actor: a as u8,
            actors: actors as u8,
        });
    }
    TurnTable {
        columns: spec.column_names(),
        rows,
        values,
    }
}
