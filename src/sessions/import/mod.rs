//! Reading a session set from disk: `events.csv`, `events.jsonl` or `sessions/<id>.csv`,
//! beside `outcomes.csv`. Files are only ever opened for reading.

mod builder;
mod jsonl;
mod table;

use crate::sessions::{Problem, SessionSet, Severity};
use builder::{RawEvent, RawOutcome, SetBuilder};
use std::fs::File;
use std::io::{BufReader, Read};
use std::path::{Path, PathBuf};
use table::Table;

/// Where a set's events come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EventSource {
    /// One delimited file with a `session` column.
    Csv,
    /// One JSON object per line.
    JsonLines,
    /// A folder of one delimited file per session (the file name is the session id).
    PerSessionFolder,
}

/// Read a session set from a folder (or from an events file, whose folder holds `outcomes.csv`).
///
/// Never fails: an unreadable set comes back with an `Unusable` problem and no sessions.
pub fn load_set(path: &Path) -> SessionSet {
    let (root, events) = locate(path);
    let name = root
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| root.display().to_string());
    let mut b = SetBuilder::new();
    let mut files = Vec::new();
    match events {
        Err(problem) => b.problems.push(problem),
        Ok((source, file, notes)) => {
            b.problems.extend(notes);
            files.push(file.clone());
            match source {
                EventSource::Csv => read_events_file(&mut b, &file, true, None),
                EventSource::JsonLines => match File::open(&file) {
                    Ok(f) => jsonl::read_events(&mut b, &file, BufReader::new(f)),
                    Err(e) => b.problems.push(cannot_open(&file, &e)),
                },
                EventSource::PerSessionFolder => read_session_folder(&mut b, &file),
            }
        }
    }
    let outcomes = root.join("outcomes.csv");
    if outcomes.is_file() {
        files.push(outcomes.clone());
        match File::open(&outcomes) {
            Ok(f) => read_outcomes(&mut b, &outcomes, f),
            Err(e) => b.problems.push(cannot_open(&outcomes, &e)),
        }
    } else if b.rows > 0 {
        b.problems.push(Problem::new(
            &outcomes,
            Severity::Warning,
            "no_outcomes",
            "no outcomes.csv beside the events; every session counts as in progress \
             (expected columns session, winner, and optionally victory, variant, first)",
        ));
    }
    b.finish(name, root, files)
}

/// Read a set from in-memory bytes (for tests and fuzzing): events in the given form
/// (`Csv` or `JsonLines`), and optional outcomes CSV bytes.
pub fn load_set_from_reader(
    events: &[u8],
    source: EventSource,
    outcomes: Option<&[u8]>,
) -> SessionSet {
    let mut b = SetBuilder::new();
    let events_file = PathBuf::from(match source {
        EventSource::JsonLines => "events.jsonl",
        _ => "events.csv",
    });
    match source {
        EventSource::JsonLines => jsonl::read_events(&mut b, &events_file, events),
        _ => read_events_table(&mut b, &events_file, events, true, None),
    }
    if let Some(bytes) = outcomes {
        read_outcomes(&mut b, Path::new("outcomes.csv"), bytes);
    }
    b.finish("memory".into(), PathBuf::new(), vec![events_file])
}

fn cannot_open(file: &Path, e: &std::io::Error) -> Problem {
    Problem::new(
        file,
        Severity::Unusable,
        "unreadable",
        format!("cannot open the file: {e}"),
    )
}

type Located = Result<(EventSource, PathBuf, Vec<Problem>), Problem>;

/// Find the set's folder and its events.
fn locate(path: &Path) -> (PathBuf, Located) {
    if path.is_file() {
        let root = path
            .parent()
            .map(Path::to_path_buf)
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or_else(|| PathBuf::from("."));
        let is_jsonl = path
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("jsonl") || e.eq_ignore_ascii_case("ndjson"));
        let source = if is_jsonl {
            EventSource::JsonLines
        } else {
            EventSource::Csv
        };
        return (root, Ok((source, path.to_path_buf(), Vec::new())));
    }
    let root = path.to_path_buf();
    if !path.is_dir() {
        return (
            root,
            Err(Problem::new(
                path,
                Severity::Unusable,
                "not_found",
                "no such folder or file; expected a session-set folder holding events.csv and outcomes.csv",
            )),
        );
    }
    let csv = path.join("events.csv");
    let jsonl = path.join("events.jsonl");
    let folder = path.join("sessions");
    let mut found = Vec::new();
    if csv.is_file() {
        found.push((EventSource::Csv, csv));
    }
    if jsonl.is_file() {
        found.push((EventSource::JsonLines, jsonl));
    }
    if folder.is_dir() {
        found.push((EventSource::PerSessionFolder, folder));
    }
    if found.is_empty() {
        return (
            root,
            Err(Problem::new(
                path,
                Severity::Unusable,
                "no_events",
                "no events here; expected events.csv, events.jsonl, or a sessions/ folder of one CSV per session",
            )),
        );
    }
    let (source, file) = found.remove(0);
    let notes = found
        .into_iter()
        .map(|(_, other)| {
            Problem::new(
                &other,
                Severity::Warning,
                "several_sources",
                format!(
                    "the set also has {}; only {} is read",
                    other.display(),
                    file.display()
                ),
            )
        })
        .collect();
    (root, Ok((source, file, notes)))
}

fn read_events_file(b: &mut SetBuilder, file: &Path, with_session: bool, id: Option<&str>) {
    match File::open(file) {
        Ok(f) => read_events_table(b, file, f, with_session, id),
        Err(e) => b.problems.push(cannot_open(file, &e)),
    }
}

/// Read events from a delimited table. Without a session column, every row belongs to `id`.
fn read_events_table<R: Read>(
    b: &mut SetBuilder,
    file: &Path,
    reader: R,
    with_session: bool,
    id: Option<&str>,
) {
    b.set_file(file);
    let mut table = match Table::open(file, reader) {
        Ok(t) => t,
        Err(p) => {
            b.problems.push(*p);
            return;
        }
    };
    let required: &[&str] = if with_session {
        &["session", "turn", "actor", "event"]
    } else {
        &["turn", "actor", "event"]
    };
    let missing: Vec<&str> = required
        .iter()
        .copied()
        .filter(|c| table.column(c).is_none())
        .collect();
    if !missing.is_empty() {
        let found = if table.raw_headers.is_empty() {
            "none".to_string()
        } else {
            table.raw_headers.join(", ")
        };
        b.problems.push(
            Problem::new(
                file,
                Severity::Unusable,
                "missing_column",
                format!(
                    "the header has no {} column; expected columns {} (found: {found})",
                    missing
                        .iter()
                        .map(|c| format!("`{c}`"))
                        .collect::<Vec<_>>()
                        .join(", "),
                    required.join(", ")
                ),
            )
            .at_line(1),
        );
        return;
    }
    let col = |name: &str| table.column(name);
    let session_col = col("session");
    let turn_col = col("turn").unwrap_or_default();
    let actor_col = col("actor").unwrap_or_default();
    let event_col = col("event").unwrap_or_default();
    let detail_col = col("detail");
    let known = ["session", "turn", "actor", "event", "detail"];
    let mut state_cols: Vec<(usize, u16)> = Vec::new();
    let mut seen = std::collections::HashSet::new();
    for (i, h) in table.headers.iter().enumerate() {
        if !seen.insert(h.clone()) {
            b.warn(
                Problem::new(
                    file,
                    Severity::Warning,
                    "duplicate_column",
                    format!("column `{h}` appears twice in the header; the first is used"),
                )
                .at_line(1)
                .in_column(h.clone()),
            );
            continue;
        }
        if h.is_empty() || known.contains(&h.as_str()) {
            continue;
        }
        if let Some(c) = b.state_column(h) {
            state_cols.push((i, c));
        }
    }
    let rows_before = b.rows;
    while table.next_row() {
        let f = &table.fields;
        let state: Vec<(u16, &str)> = state_cols
            .iter()
            .map(|&(i, c)| (c, f[i].as_str()))
            .collect();
        let raw = RawEvent {
            session: match session_col {
                Some(c) => &f[c],
                None => id.unwrap_or_default(),
            },
            turn: &f[turn_col],
            actor: &f[actor_col],
            event: &f[event_col],
            detail: detail_col.map_or("", |c| f[c].as_str()),
            state: &state,
            line: table.line,
        };
        if !b.add_event(&raw) {
            break;
        }
    }
    let read_any = b.rows > rows_before;
    b.problems.extend(table.finish());
    if !read_any && with_session {
        b.problems.push(
            Problem::new(
                file,
                Severity::Unusable,
                "no_rows",
                "the file has a header but no event rows",
            )
            .at_line(2),
        );
    }
}

fn read_session_folder(b: &mut SetBuilder, folder: &Path) {
    let mut files: Vec<PathBuf> = match std::fs::read_dir(folder) {
        Ok(entries) => entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| {
                p.is_file()
                    && p.extension().is_some_and(|e| {
                        e.eq_ignore_ascii_case("csv") || e.eq_ignore_ascii_case("tsv")
                    })
            })
            .collect(),
        Err(e) => {
            b.problems.push(cannot_open(folder, &e));
            return;
        }
    };
    // Sorted so the set does not depend on the order the file system lists files in.
    files.sort();
    if files.is_empty() {
        b.problems.push(Problem::new(
            folder,
            Severity::Unusable,
            "no_events",
            "the sessions/ folder holds no .csv files; expected one CSV per session named <id>.csv",
        ));
        return;
    }
    for file in files {
        let id = file
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        read_events_file(b, &file, false, Some(&id));
        if b.stopped() {
            break;
        }
    }
}

fn read_outcomes<R: Read>(b: &mut SetBuilder, file: &Path, reader: R) {
    let mut table = match Table::open(file, reader) {
        Ok(t) => t,
        Err(p) => {
            let mut p = *p;
            // An unreadable outcomes file leaves every session in progress; the set-level
            // check then reports that nothing is finished.
            p.severity = Severity::Warning;
            b.problems.push(p);
            return;
        }
    };
    let (Some(session_col), Some(winner_col)) = (table.column("session"), table.column("winner"))
    else {
        b.problems.push(
            Problem::new(
                file,
                Severity::Unusable,
                "missing_column",
                format!(
                    "the header needs `session` and `winner` columns (found: {}); \
                     optional columns are victory, variant, first",
                    table.raw_headers.join(", ")
                ),
            )
            .at_line(1),
        );
        return;
    };
    let victory_col = table.column("victory");
    let variant_col = table.column("variant");
    let first_col = table.column("first");
    let mut rows = Vec::new();
    while table.next_row() {
        let f = &table.fields;
        let get = |c: Option<usize>| c.map(|c| f[c].clone()).unwrap_or_default();
        rows.push(RawOutcome {
            session: f[session_col].clone(),
            winner: f[winner_col].clone(),
            victory: get(victory_col),
            variant: get(variant_col),
            first: get(first_col),
            line: table.line,
        });
    }
    b.problems.extend(table.finish());
    b.set_outcomes(file, rows);
}
