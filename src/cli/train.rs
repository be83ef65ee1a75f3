//! `tellturn train`: fit a win-chance model with held-out validation and save it.

use super::progress::{StderrProgress, ctrl_c_cancel};
use super::{TrainArgs, load_sets};
use std::time::Instant;
use tellturn::evaluate::quality::{Quality, quality};
use tellturn::evaluate::train::{
    STILL_IMPROVING_PER_DOUBLING, Training, loss_fall_per_doubling, train,
};
use tellturn::models::file::save_model;

/// Run `train`.
pub fn run(args: &TrainArgs) -> anyhow::Result<i32> {
    let started = Instant::now();
    let progress = StderrProgress::new(args.quiet);
    let cancel = ctrl_c_cancel();
    let t0 = Instant::now();
    let sets = load_sets(&args.sets, &progress)?;
    let load_seconds = t0.elapsed().as_secs_f64();
    let refs: Vec<&_> = sets.iter().collect();
    let options = args.train.options();
    let mut training = train(&refs, &options, &progress, &cancel)?;
    progress.finish();
    let test: Vec<&_> = training
        .traces
        .iter()
        .filter(|t| t.source == tellturn::analysis::traces::TraceSource::Test)
        .collect();
    let q = quality(&refs, &test);
    if let Some(q) = &q {
        training.model.summary.test_log_loss = Some(q.log_loss);
        training.model.summary.test_accuracy = Some(q.favourite_accuracy);
    }
    save_model(&training.model, &args.model_out)?;
    print!("{}", describe(&training, q.as_ref()));
    println!("saved          {}", args.model_out.display());
    if args.train.timings {
        let t = &training.timings;
        println!(
            "timings        load {load_seconds:.2} s, features {:.2} s, fit {:.2} s, scoring {:.2} s, total {:.2} s",
            t.features,
            t.fit,
            t.score,
            started.elapsed().as_secs_f64()
        );
        let stages: Vec<String> = t
            .stages
            .iter()
            .map(|(name, s)| format!("{name} {s:.2} s"))
            .collect();
        println!("               by stage: {}", stages.join(", "));
    }
    Ok(0)
}

fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

/// The training summary as a designer reads it.
pub fn describe(training: &Training, q: Option<&Quality>) -> String {
    use std::fmt::Write as _;
    let mut out = String::new();
    let s = &training.model.summary;
    let _ = writeln!(out, "model          {}", s.choice);
    for t in &training.tuning {
        let _ = writeln!(
            out,
            "  {} {:<58} validation log loss {:.4}",
            if t.chosen { "*" } else { " " },
            t.candidate,
            t.valid_log_loss
        );
    }
    let _ = writeln!(
        out,
        "trained on     {} sessions ({} turn rows); {} sessions held out as the untouched test set",
        s.trained_sessions, s.trained_rows, s.test_sessions
    );
    match q {
        Some(q) => {
            let _ = writeln!(
                out,
                "held out       log loss {:.3} (seat alone {:.3}), Brier {:.3}, calibration error {:.3}{}",
                q.log_loss,
                q.seat_only_log_loss,
                q.brier.brier,
                q.reliability.ece,
                q.auc
                    .map(|a| format!(
                        ", AUC {:.3} (SE {:.3})",
                        a.auc,
                        a.se_delong.unwrap_or(a.se_hanley_mcneil)
                    ))
                    .unwrap_or_default()
            );
            let _ = writeln!(
                out,
                "               the favourite went on to win after {} of turns (95 % CI {}–{}, {} sessions)",
                pct(q.favourite_accuracy),
                pct(q.favourite_accuracy_interval.lo),
                pct(q.favourite_accuracy_interval.hi),
                q.sessions
            );
            let reach: Vec<String> = q
                .turns_for_accuracy
                .iter()
                .map(|(level, turn)| match turn {
                    Some(t) => format!("{} from turn {t}", pct(*level)),
                    None => format!("{} never", pct(*level)),
                })
                .collect();
            let _ = writeln!(out, "               accuracy reached: {}", reach.join(", "));
        }
        None => {
            let _ = writeln!(out, "held out       too few test sessions to score");
        }
    }
    if training.learning_curve.len() >= 2 {
        let points: Vec<String> = training
            .learning_curve
            .iter()
            .map(|p| format!("{} → {:.3}", p.sessions, p.log_loss))
            .collect();
        let fall = loss_fall_per_doubling(&training.learning_curve).unwrap_or(0.0);
        let verdict = if fall > STILL_IMPROVING_PER_DOUBLING {
            format!(
                "still improving ({fall:.3} lower per doubling of sessions): more sessions would likely sharpen the chances"
            )
        } else {
            format!(
                "flattening ({fall:.3} lower per doubling of sessions): more sessions of the same kind would add little"
            )
        };
        let _ = writeln!(
            out,
            "learning curve {} (sessions → held-out log loss): {verdict}",
            points.join(", ")
        );
    }
    for note in &training.notes {
        let _ = writeln!(out, "note           {note}");
    }
    let _ = writeln!(
        out,
        "caution        {}",
        tellturn::analysis::findings::CAUTION
    );
    out
}
