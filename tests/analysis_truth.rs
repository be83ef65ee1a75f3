//! Analysis against ground truth: decided turns read from the model's out-of-fold traces are
//! close to those read from the simulator's true chances, and variant B (whose catch-up rule
//! makes games be decided later) is detected as decided later than A.

use std::collections::HashMap;
use tellturn::analysis::decision::decided_turn;
use tellturn::analysis::traces::{Trace, TraceSource};
use tellturn::demo::{DemoOptions, Scenario, generate, write_set};
use tellturn::progress::{Cancel, NoProgress};
use tellturn::sessions::{SessionSet, load_set};
use tellturn::study::{StudyOptions, run_study};

fn demo(variant: &str, sessions: usize, seed: u64) -> (std::path::PathBuf, SessionSet) {
    let dir = std::env::temp_dir().join(format!(
        "tellturn-analysis-truth-{}-{variant}-{seed}",
        std::process::id()
    ));
    let _ = std::fs::remove_dir_all(&dir);
    let opts = DemoOptions {
        variant: variant.into(),
        sessions,
        seed,
        truth: true,
        ..DemoOptions::for_scenario(Scenario::BoardGame)
    };
    let set = generate(&opts, &NoProgress, &Cancel::new()).unwrap();
    write_set(&set, &dir).unwrap();
    let loaded = load_set(&dir);
    (dir, loaded)
}

/// Truth traces built from truth.csv, in the same shape as model traces.
fn truth_traces(dir: &std::path::Path, set: &SessionSet, set_index: usize) -> Vec<Trace> {
    let mut rdr = csv::Reader::from_path(dir.join("truth.csv")).unwrap();
    let mut by: HashMap<(String, u32, String), f64> = HashMap::new();
    for r in rdr.records() {
        let r = r.unwrap();
        by.insert(
            (r[0].to_string(), r[1].parse().unwrap(), r[2].to_string()),
            r[3].parse().unwrap(),
        );
    }
    set.sessions
        .iter()
        .enumerate()
        .map(|(k, s)| {
            let turns = s.turns();
            let mut chances = Vec::new();
            for t in &turns {
                for a in &s.actors {
                    chances.push(by[&(s.id.clone(), *t, a.clone())]);
                }
            }
            Trace {
                set: set_index,
                session: k,
                actors: s.actors.len(),
                draw: vec![0.0; turns.len()],
                turns,
                start: vec![0.5; s.actors.len()],
                chances,
                source: TraceSource::Test,
            }
        })
        .collect()
}

#[test]
fn decided_turns_match_the_truth_and_variant_b_is_decided_later() {
    let (dir_a, a) = demo("A", 400, 31);
    let (dir_b, b) = demo("B", 400, 32);
    let truth_a = truth_traces(&dir_a, &a, 0);
    let options = StudyOptions {
        bootstrap: 200,
        ..StudyOptions::default()
    };
    let study = run_study(vec![a], vec![b], &options, &NoProgress, &Cancel::new()).unwrap();
    // Decided turns of side A: model (out-of-fold) against truth, session by session.
    let side = &study.sides[0];
    let mut diffs = Vec::new();
    for d in &side.decisions.decisions.sessions {
        let Some(w) = d.winner_seat else { continue };
        let truth_turn = decided_turn(&truth_a[d.session], w, 0.9);
        if let (Some(m), Some(t)) = (d.decided_turn, truth_turn) {
            diffs.push(m as f64 - t as f64);
        }
    }
    diffs.sort_by(f64::total_cmp);
    let median = diffs[diffs.len() / 2];
    let within: f64 = diffs.iter().filter(|d| d.abs() <= 10.0).count() as f64 / diffs.len() as f64;
    eprintln!(
        "sessions decided by both {}; median model − truth {median}; within 10 turns {within:.2}",
        diffs.len()
    );
    // The model cannot see hidden skill, so it is sure later than the truth, but not by much.
    assert!(median.abs() <= 8.0, "median difference {median}");
    assert!(within >= 0.5, "share within 10 turns {within}");
    // Variant B is decided later, with a Hodges-Lehmann interval that excludes zero.
    let c = study.comparison.as_ref().unwrap();
    let hl = c.decided_turn.hodges_lehmann.as_ref().unwrap();
    eprintln!(
        "B − A decided turn shift {} ({}..{}); {}",
        hl.shift, hl.interval.lo, hl.interval.hi, c.decided_turn.verdict
    );
    assert!(hl.interval.lo > 0.0, "{:?}", hl);
    let _ = std::fs::remove_dir_all(&dir_a);
    let _ = std::fs::remove_dir_all(&dir_b);
}
