//! The engine against ground truth: the demo simulator knows every actor's true win chance
//! (Monte Carlo rollouts from its full state), so out-of-fold chances can be checked against it.

use std::collections::HashMap;
use tellturn::analysis::traces::TraceSource;
use tellturn::demo::{DemoOptions, Scenario, generate, write_set};
use tellturn::evaluate::metrics::{log_loss, reliability_table};
use tellturn::evaluate::train::{TrainOptions, train};
use tellturn::progress::{Cancel, NoProgress};
use tellturn::sessions::load_set;

fn demo_set(
    variant: &str,
    sessions: usize,
    seed: u64,
) -> (tempdir::Dir, tellturn::sessions::SessionSet) {
    let dir = tempdir::Dir::new(&format!("truth-{variant}-{sessions}-{seed}"));
    let opts = DemoOptions {
        variant: variant.into(),
        sessions,
        seed,
        truth: true,
        ..DemoOptions::for_scenario(Scenario::BoardGame)
    };
    let set = generate(&opts, &NoProgress, &Cancel::new()).expect("demo");
    write_set(&set, dir.path()).expect("write");
    let loaded = load_set(dir.path());
    assert!(loaded.is_usable(), "{:?}", loaded.problems);
    (dir, loaded)
}

mod tempdir {
    use std::path::{Path, PathBuf};
    /// A scratch folder under the target dir, removed on drop.
    pub struct Dir(PathBuf);
    impl Dir {
        pub fn new(name: &str) -> Self {
            let p =
                std::env::temp_dir().join(format!("tellturn-test-{}-{name}", std::process::id()));
            let _ = std::fs::remove_dir_all(&p);
            std::fs::create_dir_all(&p).unwrap();
            Dir(p)
        }
        pub fn path(&self) -> &Path {
            &self.0
        }
    }
    impl Drop for Dir {
        fn drop(&mut self) {
            let _ = std::fs::remove_dir_all(&self.0);
        }
    }
}

fn read_truth(dir: &std::path::Path) -> HashMap<(String, u32, String), f64> {
    let mut rdr = csv::Reader::from_path(dir.join("truth.csv")).unwrap();
    let mut out = HashMap::new();
    for r in rdr.records() {
        let r = r.unwrap();
        out.insert(
            (r[0].to_string(), r[1].parse().unwrap(), r[2].to_string()),
            r[3].parse().unwrap(),
        );
    }
    out
}

#[test]
fn out_of_fold_chances_are_close_to_the_simulators_truth_and_calibrated() {
    let (dir, set) = demo_set("A", 600, 21);
    let truth = read_truth(dir.path());
    let options = TrainOptions {
        cross_fit: true,
        learning_curve: false,
        ..TrainOptions::default()
    };
    let training = train(&[&set], &options, &NoProgress, &Cancel::new()).unwrap();
    let mut outcomes = Vec::new();
    let mut model = Vec::new();
    let mut exact = Vec::new();
    for t in training
        .traces
        .iter()
        .filter(|t| t.source != TraceSource::Scored)
    {
        let s = &set.sessions[t.session];
        for (i, turn) in t.turns.iter().enumerate() {
            for a in 0..t.actors {
                outcomes.push(s.winner_seat() == Some(a));
                model.push(t.chance(i, a));
                exact.push(truth[&(s.id.clone(), *turn, s.actors[a].clone())]);
            }
        }
    }
    let model_loss = log_loss(&outcomes, &model, None).unwrap();
    let truth_loss = log_loss(&outcomes, &exact, None).unwrap();
    let ece = reliability_table(&outcomes, &model, 10, 0.95).unwrap().ece;
    let truth_ece = reliability_table(&outcomes, &exact, 10, 0.95).unwrap().ece;
    let mae: f64 = model
        .iter()
        .zip(&exact)
        .map(|(m, e)| (m - e).abs())
        .sum::<f64>()
        / model.len() as f64;
    eprintln!(
        "rows {} model log loss {model_loss:.4} truth floor {truth_loss:.4} ECE {ece:.4} (truth's own {truth_ece:.4}) mean |model - truth| {mae:.4} model {}",
        model.len(),
        training.model.summary.choice
    );
    // The truth is the floor no model can beat on average (up to rollout noise).
    assert!(model_loss > truth_loss - 0.01);
    // Measured (seed 21, 600 sessions): model 0.463 against the floor 0.3955 (the same with
    // trees grown on every turn and regrown for the final model). Most of the gap
    // is knowledge the log cannot carry early in a game: the truth knows both players' hidden
    // skills from turn 1, the model has to read them from how the game goes.
    assert!(
        model_loss - truth_loss < 0.085,
        "{model_loss} vs floor {truth_loss}"
    );
    // Calibration: the engine issue's bar (ECE ≤ 0.02); measured 0.010 (0.012 with every turn
    // and regrowth), the truth's own 0.014.
    assert!(ece <= 0.02, "ECE {ece}");
}

/// Default training without cross-fitting, with or without the learning curve.
fn train_without_cross_fit(
    set: &tellturn::sessions::SessionSet,
    learning_curve: bool,
) -> tellturn::evaluate::train::Training {
    let options = TrainOptions {
        cross_fit: false,
        learning_curve,
        ..TrainOptions::default()
    };
    train(&[set], &options, &NoProgress, &Cancel::new()).unwrap()
}

#[test]
fn the_final_fit_uses_every_training_row_once() {
    use tellturn::features::{TurnSample, build_training_table};
    // The final fit joins the tuning fold's fitting rows and the fold's own sessions; its row
    // count must be that of a table built afresh from every training session.
    let (_dir, set) = demo_set("A", 120, 43);
    let training = train_without_cross_fit(&set, false);
    let sessions: Vec<(usize, usize)> = training
        .split
        .train()
        .into_iter()
        .map(|i| training.finished[i])
        .collect();
    let table = build_training_table(
        &training.model.spec,
        &[&set],
        &sessions,
        TurnSample::All,
        &Cancel::new(),
    )
    .unwrap();
    assert_eq!(training.model.summary.trained_sessions, sessions.len());
    assert_eq!(training.model.summary.trained_rows, table.rows.len());
}

#[test]
fn the_learning_curve_reuses_the_tuning_model_and_falls_with_more_sessions() {
    let (_dir, set) = demo_set("A", 300, 41);
    let training = train_without_cross_fit(&set, true);
    let curve = &training.learning_curve;
    let sessions: Vec<usize> = curve.iter().map(|p| p.sessions).collect();
    // 240 training sessions: 1/8 and 1/4 of them fitted for the curve, the tuning model on
    // four of the five folds, and the final model on all of them.
    let n = training.model.summary.trained_sessions;
    assert_eq!(n, 240);
    assert_eq!(sessions.first(), Some(&30));
    assert_eq!(sessions.last(), Some(&n));
    assert!(sessions.windows(2).all(|w| w[0] < w[1]), "{sessions:?}");
    let tuning = sessions[sessions.len() - 2];
    assert!((180..=204).contains(&tuning), "{sessions:?}");
    // Eight times the sessions must give clearly better held-out chances on this scenario
    // (measured, seed 41: 0.499 at 30 sessions against 0.463 at 240).
    assert!(
        curve[0].log_loss > curve[curve.len() - 1].log_loss + 0.01,
        "{curve:?}"
    );
}

#[test]
fn a_value_cap_samples_turns_deterministically_and_says_so() {
    // 120 sessions with a cap of a quarter of their feature values: about one turn in four is
    // used to fit, the output says so, every turn is still scored, and the same seed gives
    // the same model.
    let (_dir, set) = demo_set("A", 120, 31);
    let options = TrainOptions {
        cross_fit: false,
        learning_curve: false,
        ..TrainOptions::default()
    };
    let full = train(&[&set], &options, &NoProgress, &Cancel::new()).unwrap();
    assert_eq!(full.sampled_one_in, None);
    let width = full.model.spec.width();
    let capped = TrainOptions {
        max_values: full.model.summary.trained_rows * width / 4,
        ..options
    };
    let a = train(&[&set], &capped, &NoProgress, &Cancel::new()).unwrap();
    let b = train(&[&set], &capped, &NoProgress, &Cancel::new()).unwrap();
    let every = a.sampled_one_in.expect("sampled");
    assert!((4..=5).contains(&every), "one in {every}");
    let used = a.model.summary.trained_rows as f64 / full.model.summary.trained_rows as f64;
    assert!((0.15..0.35).contains(&used), "used share {used}");
    assert!(
        a.notes
            .iter()
            .any(|n| n.contains(&format!("one turn in {every}")))
    );
    let turns = |t: &tellturn::evaluate::train::Training| -> usize {
        t.traces.iter().map(|tr| tr.turns.len()).sum()
    };
    assert_eq!(turns(&a), turns(&full), "every turn is still scored");
    assert_eq!(
        serde_json::to_string(&a.model).unwrap(),
        serde_json::to_string(&b.model).unwrap()
    );
}
