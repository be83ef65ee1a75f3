//! `tellturn score`: win chances of every session of a set from a saved model.

use super::progress::{StderrProgress, ctrl_c_cancel};
use super::{ScoreArgs, load_sets};
use std::io::Write;
use tellturn::analysis::traces::TraceSource;
use tellturn::atomic::write_atomic_with;
use tellturn::evaluate::train::score_sessions;
use tellturn::models::file::load_model;

/// Run `score`.
pub fn run(args: &ScoreArgs) -> anyhow::Result<i32> {
    let progress = StderrProgress::new(args.quiet);
    let cancel = ctrl_c_cancel();
    let model = load_model(&args.model)?;
    let sets = load_sets(&args.sets, &progress)?;
    let refs: Vec<&_> = sets.iter().collect();
    let sessions: Vec<(usize, usize)> = sets
        .iter()
        .enumerate()
        .flat_map(|(si, s)| (0..s.sessions.len()).map(move |k| (si, k)))
        .collect();
    let traces = score_sessions(
        &model,
        &refs,
        &sessions,
        |_, _| TraceSource::Scored,
        &cancel,
    )?;
    write_atomic_with(&args.out, |w| {
        let mut csv = csv::Writer::from_writer(w);
        csv.write_record(["session", "turn", "actor", "p_win"])?;
        for t in &traces {
            let s = &sets[t.set].sessions[t.session];
            for (i, turn) in t.turns.iter().enumerate() {
                for a in 0..t.actors {
                    csv.write_record([
                        s.id.as_str(),
                        &turn.to_string(),
                        s.actors[a].as_str(),
                        &format!("{:.6}", t.chance(i, a)),
                    ])?;
                }
            }
        }
        csv.flush()?;
        Ok(())
    })?;
    let rows: usize = traces.iter().map(|t| t.len() * t.actors).sum();
    progress.note(&format!(
        "scored {} sessions ({rows} rows) with {} → {}",
        traces.len(),
        args.model.display(),
        args.out.display()
    ));
    let _ = std::io::stdout().flush();
    Ok(0)
}
