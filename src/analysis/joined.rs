//! A trace joined to its session, after checking that the two fit together.
//!
//! Every analysis starts here, so a trace that points at the wrong session or holds a NaN is
//! a precise error once, instead of a panic or a silent NaN somewhere downstream.

use super::error::AnalysisError;
use super::traces::Trace;
use crate::sessions::{Session, SessionSet};

/// One trace with the session and set it describes.
#[derive(Debug, Clone, Copy)]
pub struct Joined<'a> {
    /// The trace.
    pub trace: &'a Trace,
    /// Its session set.
    pub set: &'a SessionSet,
    /// Its session.
    pub session: &'a Session,
}

/// Join every trace to its session, checking indices, shapes and values.
///
/// Errors name the trace and session at fault: a set or session index out of range, vectors
/// of the wrong length, an actor count that differs from the session's, turns not strictly
/// increasing, or a chance that is not a finite number in [0, 1].
pub fn join<'a>(
    traces: &[&'a Trace],
    sets: &[&'a SessionSet],
) -> Result<Vec<Joined<'a>>, AnalysisError> {
    traces
        .iter()
        .enumerate()
        .map(|(i, &trace)| join_one(i, trace, sets))
        .collect()
}

fn join_one<'a>(
    index: usize,
    trace: &'a Trace,
    sets: &[&'a SessionSet],
) -> Result<Joined<'a>, AnalysisError> {
    let set = *sets.get(trace.set).ok_or(AnalysisError::SetOutOfRange {
        trace: index,
        set: trace.set,
        sets: sets.len(),
    })?;
    let session =
        set.sessions
            .get(trace.session)
            .ok_or_else(|| AnalysisError::SessionOutOfRange {
                trace: index,
                set: set.name.clone(),
                session: trace.session,
                sessions: set.sessions.len(),
            })?;
    let bad = |what: String| AnalysisError::MalformedTrace {
        session: session.id.clone(),
        what,
    };
    if trace.actors != session.actors.len() {
        return Err(bad(format!(
            "{} actors in the trace, {} in the session",
            trace.actors,
            session.actors.len()
        )));
    }
    if trace.start.len() != trace.actors {
        return Err(bad(format!(
            "{} start chances for {} actors",
            trace.start.len(),
            trace.actors
        )));
    }
    if trace.chances.len() != trace.turns.len() * trace.actors {
        return Err(bad(format!(
            "{} chances for {} turns × {} actors",
            trace.chances.len(),
            trace.turns.len(),
            trace.actors
        )));
    }
    if !trace.draw.is_empty() && trace.draw.len() != trace.turns.len() {
        return Err(bad(format!(
            "{} draw chances for {} turns",
            trace.draw.len(),
            trace.turns.len()
        )));
    }
    if let Some(w) = trace.turns.windows(2).find(|w| w[0] >= w[1]) {
        return Err(bad(format!(
            "turn {} follows turn {}; turns must increase",
            w[1], w[0]
        )));
    }
    let mut values = trace.start.iter().chain(&trace.chances).chain(&trace.draw);
    if let Some(v) = values.find(|v| !(0.0..=1.0).contains(*v)) {
        return Err(bad(format!("chance {v} is not a number in [0, 1]")));
    }
    if let Some(w) = session.winner_seat()
        && w >= trace.actors
    {
        return Err(bad(format!("winner seat {w} outside the trace's actors")));
    }
    Ok(Joined {
        trace,
        set,
        session,
    })
}
