//! The CSV files of a report and `summary.json`.

use crate::analysis::decision::DecisionSummary;
use crate::analysis::traces::Trace;
use crate::study::Study;
use serde::Serialize;
use std::io::{self, Write};

fn several_sets(study: &Study) -> bool {
    study.sets.len() > 1
}

/// `turn_probabilities.csv`: session, turn, actor, p_win, fold (and set, with several sets).
pub fn turn_probabilities(study: &Study, w: &mut dyn Write) -> io::Result<()> {
    let mut csv = csv::Writer::from_writer(w);
    let several = several_sets(study);
    let mut header = vec!["session", "turn", "actor", "p_win", "fold"];
    if several {
        header.push("set");
    }
    csv.write_record(&header)?;
    for side in &study.sides {
        for t in &side.training.traces {
            let set = &study.sets[t.set];
            let s = &set.sessions[t.session];
            for (i, turn) in t.turns.iter().enumerate() {
                for a in 0..t.actors {
                    let mut rec = vec![
                        s.id.clone(),
                        turn.to_string(),
                        s.actors[a].clone(),
                        format!("{:.6}", t.chance(i, a)),
                        t.source.label(),
                    ];
                    if several {
                        rec.push(set.name.clone());
                    }
                    csv.write_record(&rec)?;
                }
            }
        }
    }
    csv.flush()
}

fn opt<T: ToString>(v: Option<T>) -> String {
    v.map(|x| x.to_string()).unwrap_or_default()
}

/// `decisions.csv`: one row per finished session at the study's threshold.
pub fn decisions(study: &Study, w: &mut dyn Write) -> io::Result<()> {
    let mut csv = csv::Writer::from_writer(w);
    let several = several_sets(study);
    let mut header = vec![
        "session",
        "variant",
        "winner",
        "victory",
        "turns",
        "decided_turn",
        "settled_share",
        "false_certainty",
        "comeback",
        "lead_changes",
        "excitement",
    ];
    if several {
        header.push("set");
    }
    csv.write_record(&header)?;
    for side in &study.sides {
        for d in &side.decisions.decisions.sessions {
            let mut rec = vec![
                d.id.clone(),
                d.variant.clone().unwrap_or_default(),
                d.winner.clone(),
                d.victory.clone().unwrap_or_default(),
                d.turns.to_string(),
                opt(d.decided_turn),
                d.settled_share
                    .map(|s| format!("{s:.4}"))
                    .unwrap_or_default(),
                d.false_certainty.to_string(),
                d.comeback.to_string(),
                d.lead_changes.to_string(),
                format!("{:.4}", d.excitement),
            ];
            if several {
                rec.push(study.sets[d.set].name.clone());
            }
            csv.write_record(&rec)?;
        }
    }
    csv.flush()
}

/// `turn_accuracy.csv`: per side and turn, held-out accuracy and log loss with intervals.
pub fn turn_accuracy(study: &Study, w: &mut dyn Write) -> io::Result<()> {
    let mut csv = csv::Writer::from_writer(w);
    csv.write_record([
        "side",
        "scope",
        "turn",
        "sessions",
        "accuracy",
        "accuracy_lo",
        "accuracy_hi",
        "log_loss",
        "log_loss_se",
    ])?;
    for side in &study.sides {
        for (scope, q) in [
            ("test", &side.test_quality),
            ("out_of_fold", &side.oof_quality),
        ] {
            let Some(q) = q else { continue };
            for p in &q.by_turn {
                csv.write_record([
                    side.name.clone(),
                    scope.to_string(),
                    p.x.to_string(),
                    p.sessions.to_string(),
                    format!("{:.4}", p.accuracy),
                    format!("{:.4}", p.accuracy_interval.lo),
                    format!("{:.4}", p.accuracy_interval.hi),
                    format!("{:.4}", p.log_loss),
                    format!("{:.4}", p.log_loss_se),
                ])?;
            }
        }
    }
    csv.flush()
}

/// `event_impact.csv`: per side, every event label and detail word with its mean swing.
pub fn event_impact(study: &Study, w: &mut dyn Write) -> io::Result<()> {
    let mut csv = csv::Writer::from_writer(w);
    csv.write_record([
        "side",
        "kind",
        "name",
        "occurrences",
        "sessions",
        "mean_swing",
        "swing_lo",
        "swing_hi",
        "win_share",
    ])?;
    for side in &study.sides {
        for item in &side.impact.items {
            csv.write_record([
                side.name.clone(),
                format!("{:?}", item.kind).to_lowercase(),
                item.name.clone(),
                item.occurrences.to_string(),
                item.sessions.to_string(),
                item.mean_swing
                    .map(|v| format!("{v:.5}"))
                    .unwrap_or_default(),
                item.interval
                    .map(|i| format!("{:.5}", i.lo))
                    .unwrap_or_default(),
                item.interval
                    .map(|i| format!("{:.5}", i.hi))
                    .unwrap_or_default(),
                item.win_share
                    .map(|v| format!("{v:.4}"))
                    .unwrap_or_default(),
            ])?;
        }
    }
    csv.flush()
}

#[derive(Serialize)]
struct DecisionsOut<'a> {
    threshold: f64,
    all: &'a DecisionSummary,
    by_variant: &'a [DecisionSummary],
    by_victory: &'a [DecisionSummary],
}

#[derive(Serialize)]
struct SideOut<'a> {
    name: &'a str,
    sets: Vec<&'a str>,
    model: &'a str,
    model_choice: &'a str,
    tuning: &'a [crate::evaluate::train::TuningRecord],
    learning_curve: &'a [crate::evaluate::train::LearningPoint],
    notes: &'a [String],
    sessions_finished: usize,
    sessions_in_progress: usize,
    trained_sessions: usize,
    test_sessions: usize,
    test_quality: &'a Option<crate::evaluate::quality::Quality>,
    out_of_fold_quality: &'a Option<crate::evaluate::quality::Quality>,
    decisions: Vec<DecisionsOut<'a>>,
    balance: &'a crate::analysis::balance::Balance,
    event_impact: &'a crate::analysis::swings::EventImpact,
    leverage: &'a crate::analysis::swings::LeverageTable,
    findings: &'a crate::analysis::findings::Findings,
}

#[derive(Serialize)]
struct SummaryOut<'a> {
    format: &'static str,
    version: u32,
    created_by: String,
    caution: &'a str,
    options: &'a crate::study::StudyOptions,
    notes: &'a [String],
    findings: &'a crate::analysis::findings::Findings,
    sides: Vec<SideOut<'a>>,
    comparison: &'a Option<crate::analysis::compare::Comparison>,
}

/// `summary.json`: every figure of the report, for scripts.
pub fn summary_json(study: &Study, w: &mut dyn Write) -> io::Result<()> {
    let sides = study
        .sides
        .iter()
        .map(|s| {
            let sets = &study.sets[s.sets.clone()];
            SideOut {
                name: &s.name,
                sets: sets.iter().map(|x| x.name.as_str()).collect(),
                model: &s.model_label,
                model_choice: &s.training.model.summary.choice,
                tuning: &s.training.tuning,
                learning_curve: &s.training.learning_curve,
                notes: &s.training.notes,
                sessions_finished: sets.iter().map(|x| x.finished().count()).sum(),
                sessions_in_progress: sets.iter().map(|x| x.in_progress().count()).sum(),
                trained_sessions: s.training.model.summary.trained_sessions,
                test_sessions: s.training.model.summary.test_sessions,
                test_quality: &s.test_quality,
                out_of_fold_quality: &s.oof_quality,
                decisions: [&s.decisions, &s.decisions_second]
                    .into_iter()
                    .map(|d| DecisionsOut {
                        threshold: d.threshold,
                        all: &d.all,
                        by_variant: &d.by_variant,
                        by_victory: &d.by_victory,
                    })
                    .collect(),
                balance: &s.balance,
                event_impact: &s.impact,
                leverage: &s.leverage,
                findings: &s.findings,
            }
        })
        .collect();
    let out = SummaryOut {
        format: "tellturn-summary",
        version: 1,
        created_by: format!("tellturn {}", env!("CARGO_PKG_VERSION")),
        caution: crate::analysis::findings::CAUTION,
        options: &study.options,
        notes: &study.notes,
        findings: &study.findings,
        sides,
        comparison: &study.comparison,
    };
    serde_json::to_writer_pretty(&mut *w, &out).map_err(io::Error::other)?;
    w.write_all(b"\n")
}

/// Traces of a side, most decisive first (highest settled share), for the gallery.
pub fn gallery(study: &Study, side: usize, count: usize) -> (Vec<&Trace>, Vec<&Trace>) {
    let s = &study.sides[side];
    let mut scored: Vec<(f64, &Trace)> = s
        .decisions
        .decisions
        .sessions
        .iter()
        .filter_map(|d| {
            let t = s
                .training
                .traces
                .iter()
                .find(|t| t.set == d.set && t.session == d.session)?;
            Some((
                d.settled_share.unwrap_or(-1.0) - d.lead_changes as f64 * 1e-3,
                t,
            ))
        })
        .collect();
    scored.sort_by(|a, b| {
        b.0.total_cmp(&a.0)
            .then((a.1.set, a.1.session).cmp(&(b.1.set, b.1.session)))
    });
    let most: Vec<&Trace> = scored.iter().take(count).map(|x| x.1).collect();
    let least: Vec<&Trace> = scored.iter().rev().take(count).map(|x| x.1).collect();
    (most, least)
}
