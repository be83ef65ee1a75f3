//! What was played: sessions, their events and outcomes, and reading session sets from disk.
//!
//! A session set is a folder (one playtest batch or one rule variant) holding `events.csv`
//! (or `events.jsonl`, or `sessions/<id>.csv`) and `outcomes.csv`. [`load_set`] reads it and
//! never fails: every defect becomes a [`Problem`], and the good sessions always load.

mod import;
pub mod limits;
mod problem;
mod summary;
pub mod text;

pub use import::{EventSource, load_set, load_set_from_reader};
pub use problem::{Problem, Severity};
pub use summary::{SetSummary, summarize};

use serde::Serialize;
use std::path::PathBuf;

/// One logged action.
#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    /// The log's own turn counter.
    pub turn: u32,
    /// Index into [`Session::actors`], or `None` for a neutral event.
    pub actor: Option<u8>,
    /// Index into [`SessionSet::labels`].
    pub label: u32,
    /// Free text (may be empty).
    pub detail: Box<str>,
    /// State values after this event, as (index into [`SessionSet::state_columns`], value).
    pub state: Box<[(u16, f64)]>,
    /// 1-based line in the source file.
    pub line: u32,
}

/// How a finished session ended.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// The winner's index into [`Session::actors`], or `None` for a draw.
    pub winner: Option<u8>,
    /// The route by which it was won, when recorded.
    pub victory: Option<String>,
    /// The rule variant, when recorded.
    pub variant: Option<String>,
    /// Line of the outcome row.
    pub line: u64,
}

/// One recorded play of a game or exercise.
#[derive(Debug, Clone, PartialEq)]
pub struct Session {
    /// The session id as written in the files.
    pub id: String,
    /// Actors in seat order: `actors[0]` moved first, the rest in order of first appearance.
    pub actors: Vec<String>,
    /// Events in turn order.
    pub events: Vec<Event>,
    /// The outcome, or `None` while the session is in progress.
    pub outcome: Option<Outcome>,
    /// The file the events came from.
    pub file: PathBuf,
}

impl Session {
    /// Whether the session has an outcome (finished sessions are trained on).
    pub fn is_finished(&self) -> bool {
        self.outcome.is_some()
    }
    /// The distinct turns, in order.
    pub fn turns(&self) -> Vec<u32> {
        let mut turns: Vec<u32> = self.events.iter().map(|e| e.turn).collect();
        turns.dedup();
        turns
    }
    /// Number of distinct turns.
    pub fn turn_count(&self) -> usize {
        let mut n = 0;
        let mut last = None;
        for e in &self.events {
            if last != Some(e.turn) {
                n += 1;
                last = Some(e.turn);
            }
        }
        n
    }
    /// The winner's seat (0 = moved first), `None` for a draw or an unfinished session.
    pub fn winner_seat(&self) -> Option<usize> {
        self.outcome
            .as_ref()
            .and_then(|o| o.winner)
            .map(usize::from)
    }
    /// Whether the session ended in a draw.
    pub fn is_draw(&self) -> bool {
        matches!(self.outcome, Some(Outcome { winner: None, .. }))
    }
    /// The recorded variant, if any.
    pub fn variant(&self) -> Option<&str> {
        self.outcome.as_ref().and_then(|o| o.variant.as_deref())
    }
    /// The recorded victory route, if any.
    pub fn victory(&self) -> Option<&str> {
        self.outcome.as_ref().and_then(|o| o.victory.as_deref())
    }
    /// The winner's name, or `draw`, or `in progress`.
    pub fn winner_name(&self) -> &str {
        match &self.outcome {
            None => "in progress",
            Some(Outcome { winner: None, .. }) => "draw",
            Some(Outcome {
                winner: Some(w), ..
            }) => &self.actors[*w as usize],
        }
    }
}

/// A session that could not be used, and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SetAside {
    /// The session id.
    pub session: String,
    /// Why it was set aside.
    pub reason: String,
}

/// A folder of sessions: one playtest batch or one rule variant.
#[derive(Debug, Clone, Default)]
pub struct SessionSet {
    /// A short name (the folder name).
    pub name: String,
    /// Where it was read from.
    pub root: PathBuf,
    /// Distinct event labels; [`Event::label`] indexes this.
    pub labels: Vec<String>,
    /// Numeric state columns; [`Event::state`] indexes this.
    pub state_columns: Vec<String>,
    /// Loaded sessions (finished and in progress), sorted by id in natural order (`g2` before
    /// `g10`; see [`text::natural_cmp`]), so that no result depends on file order.
    pub sessions: Vec<Session>,
    /// Sessions that were set aside, with their reasons.
    pub set_aside: Vec<SetAside>,
    /// Every problem found, in the order found.
    pub problems: Vec<Problem>,
    /// Event rows read (including those of set-aside sessions).
    pub event_rows: u64,
    /// The files read.
    pub files: Vec<PathBuf>,
}

impl SessionSet {
    /// Whether the set can be used: no problem made it unusable.
    pub fn is_usable(&self) -> bool {
        !self
            .problems
            .iter()
            .any(|p| p.severity == Severity::Unusable)
    }
    /// Finished sessions (those with an outcome).
    pub fn finished(&self) -> impl Iterator<Item = &Session> {
        self.sessions.iter().filter(|s| s.is_finished())
    }
    /// Sessions still in progress (no outcome row).
    pub fn in_progress(&self) -> impl Iterator<Item = &Session> {
        self.sessions.iter().filter(|s| !s.is_finished())
    }
    /// The variant that most finished sessions record, else the set's name.
    pub fn main_variant(&self) -> String {
        let mut counts: std::collections::BTreeMap<&str, usize> = Default::default();
        for s in self.finished() {
            if let Some(v) = s.variant() {
                *counts.entry(v).or_default() += 1;
            }
        }
        counts
            .into_iter()
            .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(a.0)))
            .map(|(v, _)| v.to_string())
            .unwrap_or_else(|| self.name.clone())
    }
    /// The label text of an event.
    pub fn label(&self, event: &Event) -> &str {
        &self.labels[event.label as usize]
    }
}

impl SessionSet {
    /// A copy holding only the sessions `keep` accepts (labels, columns and problems kept), named
    /// `name` — used to give each variant of one set its own model.
    pub fn subset(&self, name: &str, keep: impl Fn(&Session) -> bool) -> SessionSet {
        SessionSet {
            name: name.to_string(),
            root: self.root.clone(),
            labels: self.labels.clone(),
            state_columns: self.state_columns.clone(),
            sessions: self.sessions.iter().filter(|s| keep(s)).cloned().collect(),
            set_aside: self.set_aside.clone(),
            problems: self.problems.clone(),
            event_rows: self.event_rows,
            files: self.files.clone(),
        }
    }
}
