//! `tellturn features`: export the turn table with readable column names.

use super::progress::{StderrProgress, ctrl_c_cancel};
use super::{FeaturesArgs, load_sets};
use tellturn::atomic::write_atomic_with;
use tellturn::features::{FeatureParams, FeatureSpec, TurnSample, build_table};

/// Run `features`.
pub fn run(args: &FeaturesArgs) -> anyhow::Result<i32> {
    let progress = StderrProgress::new(args.quiet);
    let cancel = ctrl_c_cancel();
    let sets = load_sets(std::slice::from_ref(&args.set), &progress)?;
    let refs: Vec<&_> = sets.iter().collect();
    let params = FeatureParams {
        window: args.window,
        min_token_sessions: args.min_word_sessions,
        ..FeatureParams::default()
    };
    let spec = FeatureSpec::learn(&refs, params, |si, k| refs[si].sessions[k].is_finished());
    let all: Vec<(usize, usize)> = (0..sets[0].sessions.len()).map(|k| (0, k)).collect();
    let table = build_table(&spec, &refs, &all, TurnSample::All, &cancel)?;
    write_atomic_with(&args.out, |w| {
        let mut csv = csv::Writer::from_writer(w);
        let mut header = vec!["session".to_string(), "actor".into(), "won".into()];
        header.extend(table.columns.iter().cloned());
        csv.write_record(&header)?;
        let mut record = Vec::with_capacity(header.len());
        for (i, key) in table.rows.iter().enumerate() {
            let s = &sets[0].sessions[key.session as usize];
            record.clear();
            record.push(s.id.clone());
            record.push(s.actors[key.actor as usize].clone());
            record.push(match s.outcome {
                None => String::new(),
                Some(_) => u8::from(s.winner_seat() == Some(key.actor as usize)).to_string(),
            });
            record.extend(table.row(i).iter().map(|v| v.to_string()));
            csv.write_record(&record)?;
        }
        csv.flush()?;
        Ok(())
    })?;
    progress.note(&format!(
        "{} rows × {} feature columns → {} (detail words: {} distinct, {} kept — seen in at least {} sessions; event labels: {})",
        table.rows.len(),
        table.width(),
        args.out.display(),
        spec.tokens_before_pruning,
        spec.tokens.len(),
        params.min_token_sessions,
        spec.labels.len()
    ));
    Ok(0)
}
