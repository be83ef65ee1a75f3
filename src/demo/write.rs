//! Writing a demo set as a session-set folder: `events.csv`, `outcomes.csv` and, with truth,
//! `truth.csv`, each written atomically.

use std::fs;
use std::io;
use std::path::Path;

use super::DemoSet;
use crate::atomic::write_atomic_with;

/// The header of `events.csv`.
pub const EVENTS_HEADER: [&str; 6] = ["session", "turn", "actor", "event", "detail", "score"];
/// The header of `outcomes.csv`.
pub const OUTCOMES_HEADER: [&str; 5] = ["session", "winner", "victory", "variant", "first"];
/// The header of `truth.csv`.
pub const TRUTH_HEADER: [&str; 4] = ["session", "turn", "actor", "p_true"];

/// Write `set` into the folder `dir` (created when missing). Each file is written atomically.
/// A `truth.csv` left there by an earlier set is removed when `set` has no truth, so the folder
/// never pairs new events with old truth.
pub fn write_set(set: &DemoSet, dir: &Path) -> io::Result<()> {
    fs::create_dir_all(dir).map_err(|e| with_context(e, "creating the demo set folder", dir))?;

    let events_path = dir.join("events.csv");
    write_atomic_with(&events_path, |w| {
        let mut out = csv::Writer::from_writer(w);
        out.write_record(EVENTS_HEADER)?;
        let mut turn = String::new();
        let mut score = String::new();
        for e in &set.events {
            turn.clear();
            score.clear();
            push_display(&mut turn, e.turn);
            if let Some(s) = e.score {
                push_display(&mut score, s);
            }
            out.write_record([
                e.session.as_str(),
                turn.as_str(),
                e.actor.as_str(),
                e.event.as_str(),
                e.detail.as_str(),
                score.as_str(),
            ])?;
        }
        out.flush()
    })
    .map_err(|e| with_context(e, "writing", &events_path))?;

    let outcomes_path = dir.join("outcomes.csv");
    write_atomic_with(&outcomes_path, |w| {
        let mut out = csv::Writer::from_writer(w);
        out.write_record(OUTCOMES_HEADER)?;
        for o in &set.outcomes {
            out.write_record([
                o.session.as_str(),
                o.winner.as_str(),
                o.victory.as_str(),
                o.variant.as_str(),
                o.first.as_str(),
            ])?;
        }
        out.flush()
    })
    .map_err(|e| with_context(e, "writing", &outcomes_path))?;

    let truth_path = dir.join("truth.csv");
    match &set.truth {
        Some(truth) => write_atomic_with(&truth_path, |w| {
            let mut out = csv::Writer::from_writer(w);
            out.write_record(TRUTH_HEADER)?;
            let mut turn = String::new();
            let mut p = String::new();
            for t in truth {
                turn.clear();
                p.clear();
                push_display(&mut turn, t.turn);
                // Shortest round-trip form: rollout shares k/256 print exactly.
                push_display(&mut p, t.p_true);
                out.write_record([t.session.as_str(), turn.as_str(), t.actor.as_str(), &p])?;
            }
            out.flush()
        })
        .map_err(|e| with_context(e, "writing", &truth_path))?,
        None => match fs::remove_file(&truth_path) {
            Ok(()) => {}
            Err(e) if e.kind() == io::ErrorKind::NotFound => {}
            Err(e) => return Err(with_context(e, "removing the stale", &truth_path)),
        },
    }
    Ok(())
}

fn push_display(buf: &mut String, value: impl std::fmt::Display) {
    use std::fmt::Write as _;
    // Writing into a String cannot fail.
    let _ = write!(buf, "{value}");
}

/// Keep the error kind, and say what was being done with which file.
fn with_context(e: io::Error, doing: &str, path: &Path) -> io::Error {
    io::Error::new(e.kind(), format!("{doing} {}: {e}", path.display()))
}
