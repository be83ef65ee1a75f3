//! Gathers event rows into sessions, then joins outcomes and sets aside what cannot be used.

use crate::sessions::limits::*;
use crate::sessions::{Event, Outcome, Problem, Session, SessionSet, SetAside, Severity};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// How many warnings of one kind are kept per file before they are only counted.
const WARNINGS_PER_KIND: usize = 20;

/// One event row as read from a file, before it is checked.
pub(crate) struct RawEvent<'a> {
    pub session: &'a str,
    pub turn: &'a str,
    pub actor: &'a str,
    pub event: &'a str,
    pub detail: &'a str,
    /// (state column index from [`SetBuilder::state_column`], raw value).
    pub state: &'a [(u16, &'a str)],
    pub line: u64,
}

/// One outcome row as read from `outcomes.csv`.
pub(crate) struct RawOutcome {
    pub session: String,
    pub winner: String,
    pub victory: String,
    pub variant: String,
    pub first: String,
    pub line: u64,
}

struct SessionBuilder {
    id: String,
    actors: Vec<String>,
    events: Vec<Event>,
    last_turn: Option<u32>,
    aside: Option<String>,
    file: PathBuf,
}

struct StateColumn {
    name: String,
    values: u64,
    text_example: Option<(u64, String)>,
    non_finite: u64,
    neutral_values: u64,
}

/// Accumulates a session set while files are read.
pub(crate) struct SetBuilder {
    file: PathBuf,
    labels: Vec<String>,
    label_index: HashMap<String, u32>,
    columns: Vec<StateColumn>,
    column_index: HashMap<String, u16>,
    sessions: Vec<SessionBuilder>,
    session_index: HashMap<String, usize>,
    pub problems: Vec<Problem>,
    warning_counts: HashMap<(&'static str, PathBuf), usize>,
    pub rows: u64,
    stopped: bool,
    outcomes: Vec<RawOutcome>,
    outcome_file: PathBuf,
    last_session: Option<usize>,
}

impl SetBuilder {
    pub fn new() -> Self {
        SetBuilder {
            file: PathBuf::new(),
            labels: Vec::new(),
            label_index: HashMap::new(),
            columns: Vec::new(),
            column_index: HashMap::new(),
            sessions: Vec::new(),
            session_index: HashMap::new(),
            problems: Vec::new(),
            warning_counts: HashMap::new(),
            rows: 0,
            stopped: false,
            outcomes: Vec::new(),
            outcome_file: PathBuf::new(),
            last_session: None,
        }
    }

    /// Rows from now on come from `file`.
    pub fn set_file(&mut self, file: &Path) {
        self.file = file.to_path_buf();
    }

    /// Whether a limit stopped reading.
    pub fn stopped(&self) -> bool {
        self.stopped
    }

    /// Record a warning, keeping at most [`WARNINGS_PER_KIND`] of one kind per file.
    pub fn warn(&mut self, problem: Problem) {
        let count = self
            .warning_counts
            .entry((problem.kind, problem.file.clone()))
            .or_default();
        *count += 1;
        if *count <= WARNINGS_PER_KIND {
            self.problems.push(problem);
        }
    }

    /// The index of a numeric state column named `name` (created on first use).
    pub fn state_column(&mut self, name: &str) -> Option<u16> {
        if let Some(&i) = self.column_index.get(name) {
            return Some(i);
        }
        if self.columns.len() >= MAX_STATE_COLUMNS {
            let p = Problem::new(
                &self.file,
                Severity::Warning,
                "too_many_columns",
                format!("more than {MAX_STATE_COLUMNS} state columns; column `{name}` is ignored"),
            )
            .in_column(name);
            self.warn(p);
            return None;
        }
        let i = self.columns.len() as u16;
        self.columns.push(StateColumn {
            name: name.to_string(),
            values: 0,
            text_example: None,
            non_finite: 0,
            neutral_values: 0,
        });
        self.column_index.insert(name.to_string(), i);
        Some(i)
    }

    /// The index of event label `name` (created on first use); `line` is where it was read.
    fn label(&mut self, name: &str, line: u64) -> u32 {
        if let Some(&i) = self.label_index.get(name) {
            return i;
        }
        if self.labels.len() >= MAX_EVENT_LABELS {
            let p = Problem::new(
                &self.file,
                Severity::Warning,
                "too_many_labels",
                format!(
                    "more than {MAX_EVENT_LABELS} distinct event labels; later new labels are counted as `{OTHER_LABEL}`"
                ),
            )
            .at_line(line)
            .in_column("event");
            self.warn(p);
            // The merged label takes the one slot past the cap (asking `label` for it again
            // would find the cap reached and never return).
            if let Some(&i) = self.label_index.get(OTHER_LABEL) {
                return i;
            }
            let i = self.labels.len() as u32;
            self.labels.push(OTHER_LABEL.to_string());
            self.label_index.insert(OTHER_LABEL.to_string(), i);
            return i;
        }
        let i = self.labels.len() as u32;
        self.labels.push(name.to_string());
        self.label_index.insert(name.to_string(), i);
        i
    }

    fn set_aside(&mut self, index: usize, line: u64, reason: String) {
        let s = &mut self.sessions[index];
        if s.aside.is_none() {
            s.aside = Some(reason.clone());
            s.events = Vec::new();
            let p = Problem::new(&self.file, Severity::SetAside, "session_set_aside", reason)
                .at_line(line)
                .for_session(s.id.clone());
            self.problems.push(p);
        }
    }

    /// Add one event row; returns `false` once a limit stops reading.
    pub fn add_event(&mut self, raw: &RawEvent) -> bool {
        if self.stopped {
            return false;
        }
        self.rows += 1;
        if self.rows > MAX_EVENT_ROWS {
            self.stopped = true;
            self.problems.push(
                Problem::new(
                    &self.file,
                    Severity::Warning,
                    "too_many_rows",
                    format!("more than {MAX_EVENT_ROWS} event rows; reading stopped here"),
                )
                .at_line(raw.line),
            );
            return false;
        }
        let id = raw.session.trim();
        if id.is_empty() {
            let p = Problem::new(
                &self.file,
                Severity::Warning,
                "no_session_id",
                "row has no session id; expected the id of the session it belongs to — row skipped",
            )
            .at_line(raw.line)
            .in_column("session");
            self.warn(p);
            return true;
        }
        // Rows of a session usually come together: skip the lookup while the id repeats.
        let cached = self.last_session.filter(|&i| self.sessions[i].id == id);
        let index = match cached.or_else(|| self.session_index.get(id).copied()) {
            Some(i) => i,
            None => {
                if self.sessions.len() >= MAX_SESSIONS {
                    self.stopped = true;
                    self.problems.push(
                        Problem::new(
                            &self.file,
                            Severity::Warning,
                            "too_many_sessions",
                            format!("more than {MAX_SESSIONS} sessions; reading stopped here"),
                        )
                        .at_line(raw.line),
                    );
                    return false;
                }
                self.sessions.push(SessionBuilder {
                    id: id.to_string(),
                    actors: Vec::new(),
                    events: Vec::new(),
                    last_turn: None,
                    aside: None,
                    file: self.file.clone(),
                });
                self.session_index
                    .insert(id.to_string(), self.sessions.len() - 1);
                self.sessions.len() - 1
            }
        };
        self.last_session = Some(index);
        if self.sessions[index].aside.is_some() {
            return true;
        }
        let turn_text = raw.turn.trim();
        let turn = match parse_turn(turn_text) {
            Some(t) => t,
            None => {
                let reason = if turn_text.is_empty() {
                    "turn is empty; expected a whole number such as 1, 2, 3".to_string()
                } else {
                    format!(
                        "turn `{}` is not a whole number from 0 to {MAX_TURN}; expected a turn counter such as 1, 2, 3",
                        clip(turn_text)
                    )
                };
                self.set_aside(index, raw.line, reason);
                return true;
            }
        };
        if let Some(last) = self.sessions[index].last_turn
            && turn < last
        {
            let reason = format!(
                "turns out of order: turn {turn} comes after turn {last}; rows of a session must come in turn order"
            );
            self.set_aside(index, raw.line, reason);
            return true;
        }
        let actor_name = raw.actor.trim();
        let actor = if actor_name.is_empty() {
            None
        } else {
            let s = &mut self.sessions[index];
            match s.actors.iter().position(|a| a == actor_name) {
                Some(i) => Some(i as u8),
                None if s.actors.len() >= MAX_ACTORS => {
                    let reason = format!(
                        "more than {MAX_ACTORS} actors (`{}` is the {}th); tellturn handles 2 to {MAX_ACTORS} actors per session",
                        clip(actor_name),
                        MAX_ACTORS + 1
                    );
                    self.set_aside(index, raw.line, reason);
                    return true;
                }
                None => {
                    s.actors.push(actor_name.to_string());
                    Some((s.actors.len() - 1) as u8)
                }
            }
        };
        if self.sessions[index].events.len() >= MAX_EVENTS_PER_SESSION {
            let reason = format!(
                "more than {MAX_EVENTS_PER_SESSION} events in one session; is the session id repeated across games?"
            );
            self.set_aside(index, raw.line, reason);
            return true;
        }
        let label_text = raw.event.trim();
        let label = if label_text.is_empty() {
            let p = Problem::new(
                &self.file,
                Severity::Warning,
                "empty_event",
                "event label is empty; expected a name for the action — counted as `(blank)`",
            )
            .at_line(raw.line)
            .in_column("event")
            .for_session(id);
            self.warn(p);
            self.label("(blank)", raw.line)
        } else {
            self.label(label_text, raw.line)
        };
        let mut state = Vec::new();
        for &(col, value) in raw.state {
            let value = value.trim();
            if value.is_empty() {
                continue;
            }
            let column = &mut self.columns[col as usize];
            match value.parse::<f64>() {
                Ok(v) if v.is_finite() && v.abs() <= MAX_STATE_VALUE => {
                    if actor.is_none() {
                        column.neutral_values += 1;
                    } else {
                        column.values += 1;
                        state.push((col, v));
                    }
                }
                Ok(v) => {
                    column.non_finite += 1;
                    let name = column.name.clone();
                    let (kind, what) = if v.is_finite() {
                        (
                            "out_of_range",
                            format!(
                                "is larger than {MAX_STATE_VALUE:e} in size, the most a state value can hold"
                            ),
                        )
                    } else {
                        ("non_finite", "is not a finite number".to_string())
                    };
                    let p = Problem::new(
                        &self.file,
                        Severity::Warning,
                        kind,
                        format!(
                            "`{}` in column `{name}` {what}; the value is ignored",
                            clip(value)
                        ),
                    )
                    .at_line(raw.line)
                    .in_column(name)
                    .for_session(id);
                    self.warn(p);
                }
                Err(_) => {
                    if column.text_example.is_none() {
                        column.text_example = Some((raw.line, clip(value).to_string()));
                    }
                }
            }
        }
        let s = &mut self.sessions[index];
        s.last_turn = Some(turn);
        s.events.push(Event {
            turn,
            actor,
            label,
            detail: raw.detail.trim().into(),
            state: state.into_boxed_slice(),
            line: raw.line.min(u32::MAX as u64) as u32,
        });
        true
    }

    /// Record the outcome rows read from `file`.
    pub fn set_outcomes(&mut self, file: &Path, rows: Vec<RawOutcome>) {
        self.outcome_file = file.to_path_buf();
        self.outcomes = rows;
    }

    /// Join outcomes, set aside what cannot be used and build the set.
    pub fn finish(mut self, name: String, root: PathBuf, files: Vec<PathBuf>) -> SessionSet {
        // State columns: numeric only when every non-empty value was a number.
        let mut keep: Vec<Option<u16>> = Vec::with_capacity(self.columns.len());
        let mut state_columns = Vec::new();
        let mut column_warnings = Vec::new();
        for c in &self.columns {
            if let Some((line, example)) = &c.text_example {
                keep.push(None);
                column_warnings.push(
                    Problem::new(
                        &self.file,
                        Severity::Warning,
                        "text_column",
                        format!(
                            "column `{}` holds text (`{example}`), so it is not used as a numeric state value",
                            c.name
                        ),
                    )
                    .at_line(*line)
                    .in_column(c.name.clone()),
                );
            } else if c.values == 0 {
                keep.push(None);
            } else {
                keep.push(Some(state_columns.len() as u16));
                state_columns.push(c.name.clone());
                if c.neutral_values > 0 {
                    column_warnings.push(
                        Problem::new(
                            &self.file,
                            Severity::Warning,
                            "neutral_state",
                            format!(
                                "{} value(s) of `{}` are on rows with no actor; state values belong to the row's actor, so they are ignored",
                                c.neutral_values, c.name
                            ),
                        )
                        .in_column(c.name.clone()),
                    );
                }
            }
        }
        self.problems.extend(column_warnings);

        // Outcomes by session; duplicates set the session aside.
        let mut by_session: HashMap<String, Vec<RawOutcome>> = HashMap::new();
        let mut outcome_order = Vec::new();
        for row in std::mem::take(&mut self.outcomes) {
            let id = row.session.trim().to_string();
            if id.is_empty() {
                let p = Problem::new(
                    &self.outcome_file,
                    Severity::Warning,
                    "no_session_id",
                    "outcome row has no session id; row skipped",
                )
                .at_line(row.line);
                self.warn(p);
                continue;
            }
            if !by_session.contains_key(&id) {
                outcome_order.push(id.clone());
            }
            by_session.entry(id).or_default().push(row);
        }
        for id in &outcome_order {
            // With no events read at all, the events file's own problem says enough.
            if self.rows > 0 && !self.session_index.contains_key(id) {
                let line = by_session[id][0].line;
                let p = Problem::new(
                    &self.outcome_file,
                    Severity::Warning,
                    "outcome_without_events",
                    format!(
                        "outcome for session `{}`, which has no events; ignored",
                        clip(id)
                    ),
                )
                .at_line(line)
                .for_session(id.clone());
                self.warn(p);
            }
        }

        let mut sessions = Vec::with_capacity(self.sessions.len());
        let mut set_aside = Vec::new();
        let outcome_file = self.outcome_file.clone();
        for s in std::mem::take(&mut self.sessions) {
            if let Some(reason) = s.aside {
                set_aside.push(SetAside {
                    session: s.id,
                    reason,
                });
                continue;
            }
            let rows = by_session.remove(&s.id).unwrap_or_default();
            let aside = |reason: String, line: u64, problems: &mut Vec<Problem>| {
                problems.push(
                    Problem::new(
                        &outcome_file,
                        Severity::SetAside,
                        "session_set_aside",
                        reason.clone(),
                    )
                    .at_line(line)
                    .for_session(s.id.clone()),
                );
                SetAside {
                    session: s.id.clone(),
                    reason,
                }
            };
            if rows.len() > 1 {
                let lines: Vec<String> = rows.iter().map(|r| r.line.to_string()).collect();
                let reason = format!(
                    "outcome given {} times (lines {}); expected one outcome row per session",
                    rows.len(),
                    lines.join(", ")
                );
                set_aside.push(aside(reason, rows[1].line, &mut self.problems));
                continue;
            }
            let finished = !rows.is_empty();
            if s.actors.len() < MIN_ACTORS && finished {
                let reason = format!(
                    "only {} actor(s) in the log; a finished session needs {MIN_ACTORS} to {MAX_ACTORS} actors",
                    s.actors.len()
                );
                set_aside.push(aside(reason, rows[0].line, &mut self.problems));
                continue;
            }
            if s.actors.is_empty() {
                set_aside.push(SetAside {
                    session: s.id.clone(),
                    reason: "no actor appears in the log yet".into(),
                });
                self.problems.push(
                    Problem::new(
                        &s.file,
                        Severity::SetAside,
                        "session_set_aside",
                        "no actor appears in the log yet; a session needs 2 to 8 actors",
                    )
                    .for_session(s.id.clone()),
                );
                continue;
            }
            let mut actors = s.actors;
            let mut events = s.events;
            let mut outcome = None;
            if let Some(row) = rows.into_iter().next() {
                // Seat order: the `first` actor, when named, sits in seat 0.
                let first = row.first.trim();
                if !first.is_empty() {
                    match find_actor(&actors, first) {
                        Some(0) => {}
                        Some(i) => {
                            let mut map: Vec<u8> = (0..actors.len() as u8).collect();
                            let moved = actors.remove(i);
                            actors.insert(0, moved);
                            map.remove(i);
                            map.insert(0, i as u8);
                            // map[new] = old; invert for events.
                            let mut old_to_new = vec![0u8; actors.len()];
                            for (new, &old) in map.iter().enumerate() {
                                old_to_new[old as usize] = new as u8;
                            }
                            for e in &mut events {
                                if let Some(a) = e.actor {
                                    e.actor = Some(old_to_new[a as usize]);
                                }
                            }
                        }
                        None => {
                            let p = Problem::new(
                                &outcome_file,
                                Severity::Warning,
                                "first_unknown",
                                format!(
                                    "`first` is `{}`, who is not among the session's actors ({}); the first actor in the log is taken as moving first",
                                    clip(first),
                                    actors.join(", ")
                                ),
                            )
                            .at_line(row.line)
                            .in_column("first")
                            .for_session(s.id.clone());
                            self.warn(p);
                        }
                    }
                }
                let winner_text = row.winner.trim();
                let winner = if winner_text.eq_ignore_ascii_case("draw") {
                    None
                } else if winner_text.is_empty() {
                    let reason =
                        "winner is empty; expected an actor's name or the word `draw`".to_string();
                    set_aside.push(aside(reason, row.line, &mut self.problems));
                    continue;
                } else {
                    match find_actor(&actors, winner_text) {
                        Some(i) => Some(i as u8),
                        None => {
                            let reason = format!(
                                "winner `{}` is not among the session's actors ({}); expected one of them or `draw`",
                                clip(winner_text),
                                actors.join(", ")
                            );
                            set_aside.push(aside(reason, row.line, &mut self.problems));
                            continue;
                        }
                    }
                };
                outcome = Some(Outcome {
                    winner,
                    victory: non_empty(&row.victory),
                    variant: non_empty(&row.variant),
                    line: row.line,
                });
            }
            // Only rebuild state values when some column was dropped or renumbered.
            let renumbered = keep.iter().enumerate().any(|(i, k)| *k != Some(i as u16));
            for e in events
                .iter_mut()
                .filter(|e| renumbered && !e.state.is_empty())
            {
                let state: Vec<(u16, f64)> = e
                    .state
                    .iter()
                    .filter_map(|&(c, v)| keep[c as usize].map(|k| (k, v)))
                    .collect();
                e.state = state.into_boxed_slice();
            }
            sessions.push(Session {
                id: s.id,
                actors,
                events,
                outcome,
                file: s.file,
            });
        }

        // Sessions in identifier order (duplicates keep file order): no result may depend on
        // the order sessions appear in the files.
        sessions.sort_by(|a, b| crate::sessions::text::natural_cmp(&a.id, &b.id));
        let mut set = SessionSet {
            name,
            root,
            labels: self.labels,
            state_columns,
            sessions,
            set_aside,
            problems: self.problems,
            event_rows: self.rows,
            files,
        };
        add_set_level_problems(&mut set, &self.warning_counts);
        set
    }
}

fn add_set_level_problems(
    set: &mut SessionSet,
    warning_counts: &HashMap<(&'static str, PathBuf), usize>,
) {
    let mut extra = Vec::new();
    let mut counted: Vec<_> = warning_counts
        .iter()
        .filter(|(_, n)| **n > WARNINGS_PER_KIND)
        .collect();
    counted.sort_by(|a, b| (a.0.1.clone(), a.0.0).cmp(&(b.0.1.clone(), b.0.0)));
    for ((kind, file), &n) in counted {
        extra.push(Problem::new(
            file,
            Severity::Warning,
            kind,
            format!(
                "… and {} more warning(s) of this kind (`{kind}`) not listed",
                n - WARNINGS_PER_KIND
            ),
        ));
    }
    let finished: Vec<&Session> = set.finished().collect();
    let events_file = set.files.first().cloned().unwrap_or_default();
    if set.sessions.is_empty() && set.is_usable() {
        extra.push(Problem::new(
            &events_file,
            Severity::Unusable,
            "no_sessions",
            "no session could be loaded; expected event rows with session, turn, actor and event",
        ));
    } else if finished.is_empty() && set.is_usable() {
        extra.push(Problem::new(
            &events_file,
            Severity::Unusable,
            "no_finished_session",
            "no finished session: no session has a usable outcome row, so there is nothing to learn from \
             (outcomes.csv needs `session` and `winner`)",
        ));
    } else if !finished.is_empty() {
        if finished.iter().all(|s| s.is_draw()) {
            extra.push(Problem::new(
                &events_file,
                Severity::Unusable,
                "single_class",
                "every finished session is a draw; there is no winner to learn from",
            ));
        } else {
            let seat = finished[0].winner_seat();
            if finished.len() >= 2 && finished.iter().all(|s| s.winner_seat() == seat) {
                let who = match seat {
                    Some(0) => "the actor who moved first".to_string(),
                    Some(k) => format!("seat {}", k + 1),
                    None => "nobody".to_string(),
                };
                extra.push(Problem::new(
                    &events_file,
                    Severity::Warning,
                    "single_class",
                    format!(
                        "every one of the {} finished sessions was won by {who}; win chances can learn little beyond the seat",
                        finished.len()
                    ),
                ));
            }
        }
        let mut counts: std::collections::BTreeMap<usize, usize> = Default::default();
        for s in &set.sessions {
            *counts.entry(s.actors.len()).or_default() += 1;
        }
        if counts.len() > 1 {
            let list: Vec<String> = counts
                .iter()
                .map(|(k, n)| format!("{n} with {k} actors"))
                .collect();
            extra.push(Problem::new(
                &events_file,
                Severity::Warning,
                "mixed_actor_counts",
                format!(
                    "sessions have different numbers of actors ({}); the actor count is one of the model's inputs",
                    list.join(", ")
                ),
            ));
        }
    }
    set.problems.extend(extra);
}

fn find_actor(actors: &[String], name: &str) -> Option<usize> {
    actors.iter().position(|a| a == name).or_else(|| {
        let matches: Vec<usize> = actors
            .iter()
            .enumerate()
            .filter(|(_, a)| a.to_lowercase() == name.to_lowercase())
            .map(|(i, _)| i)
            .collect();
        (matches.len() == 1).then(|| matches[0])
    })
}

fn non_empty(s: &str) -> Option<String> {
    let s = s.trim();
    (!s.is_empty()).then(|| s.to_string())
}

/// A turn counter: a whole number (integral decimals such as `3.0` are accepted).
fn parse_turn(s: &str) -> Option<u32> {
    if let Ok(t) = s.parse::<u64>() {
        return (t <= MAX_TURN).then_some(t as u32);
    }
    let f: f64 = s.parse().ok()?;
    (f.is_finite() && f >= 0.0 && f.fract() == 0.0 && f <= MAX_TURN as f64).then_some(f as u32)
}

/// Shorten user text quoted in a message.
pub(crate) fn clip(s: &str) -> &str {
    match s.char_indices().nth(60) {
        Some((i, _)) => &s[..i],
        None => s,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn turns_are_whole_numbers_within_the_limit() {
        assert_eq!(parse_turn("7"), Some(7));
        assert_eq!(parse_turn("7.0"), Some(7));
        assert_eq!(parse_turn("7.5"), None);
        assert_eq!(parse_turn("-1"), None);
        assert_eq!(parse_turn("NaN"), None);
        assert_eq!(parse_turn("seven"), None);
        assert_eq!(parse_turn("99999999999"), None);
    }
}
