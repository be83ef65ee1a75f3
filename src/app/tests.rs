//! Dashboard tests with egui_kittest: the real views, no display and no GPU. Each test drives
//! the dashboard through its widgets (found by their accessible labels) and waits for the
//! background work with a timeout.

use super::dashboard::{Dashboard, Setup, Tab};
use super::prefs::Prefs;
use egui_kittest::Harness;
use egui_kittest::kittest::{NodeT, Queryable};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};
use tellturn::evaluate::train::TrainOptions;

type State = Option<Dashboard>;

fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Small, quick training: three folds, no learning curve, few bootstrap resamples.
fn quick_setup(paths: Vec<PathBuf>) -> Setup {
    Setup {
        paths,
        samples: false,
        train: TrainOptions {
            folds: 3,
            learning_curve: false,
            cross_fit: true,
            ..TrainOptions::default()
        },
        bootstrap: 40,
    }
}

fn harness(setup: Setup) -> Harness<'static, State> {
    let mut setup = Some(setup);
    Harness::builder()
        .with_size(egui::vec2(1280.0, 800.0))
        .build_ui_state(
            move |ui, st: &mut State| {
                let d = st.get_or_insert_with(|| {
                    Dashboard::new(
                        ui.ctx(),
                        Prefs::default(),
                        setup.take().expect("built once"),
                    )
                });
                d.ui(ui);
            },
            None,
        )
}

fn dash<'h>(h: &'h Harness<'_, State>) -> &'h Dashboard {
    h.state().as_ref().expect("created in the first frame")
}

/// Step the harness until `done` holds (background work finishes in real time).
fn step_until(h: &mut Harness<'_, State>, what: &str, done: impl Fn(&Harness<'_, State>) -> bool) {
    let start = Instant::now();
    loop {
        h.step();
        if h.state().is_some() && done(h) {
            h.run_steps(2);
            return;
        }
        assert!(
            start.elapsed() < Duration::from_secs(240),
            "timed out waiting for {what}"
        );
        std::thread::sleep(Duration::from_millis(15));
    }
}

fn trained(h: &Harness<'_, State>) -> bool {
    let d = dash(h);
    !d.busy() && !d.shelf.bundles.is_empty() && d.shelf.bundles.iter().all(|b| b.loading.is_none())
}

/// The number in "N of M finished sessions were decided…".
fn decided_count(h: &Harness<'_, State>) -> (usize, usize) {
    let node = h.get_by_label_contains("finished sessions were decided before the end");
    let ak = node.accesskit_node();
    let text = ak
        .label()
        .or_else(|| ak.value())
        .unwrap_or_default()
        .to_string();
    let mut words = text.split_whitespace();
    let n = words
        .next()
        .and_then(|w| w.parse().ok())
        .unwrap_or_else(|| panic!("count first in {text:?}"));
    let m = words
        .nth(1)
        .and_then(|w| w.parse().ok())
        .unwrap_or_else(|| panic!("total third in {text:?}"));
    (n, m)
}

/// The decided turn by its definition (ARCHITECTURE.md "decided turn"): the first turn from
/// which the winner's chance stays at or above the threshold to the end. Written here again,
/// independently of the engine, to check what the dashboard shows.
fn decided_by_definition(d: &Dashboard, threshold: f64) -> usize {
    let b = &d.shelf.bundles[0];
    b.set
        .sessions
        .iter()
        .enumerate()
        .filter(|(k, s)| {
            let (Some(w), Some(t)) = (s.winner_seat(), b.trace(*k)) else {
                return false;
            };
            !t.is_empty() && t.chance(t.len() - 1, w) >= threshold
        })
        .count()
}

#[test]
fn a_sample_set_trains_and_a_chosen_session_shows_its_trace_and_events() {
    let mut h = harness(quick_setup(vec![repo("sample_sessions/vessmire-weekend")]));
    step_until(&mut h, "training", trained);
    assert!(
        dash(&h).shelf.bundles[0].learned.is_some(),
        "training produced a model"
    );
    h.state_mut().as_mut().unwrap().open_session(0);
    h.run_steps(3);
    let id = dash(&h).shelf.bundles[0].set.sessions[0].id.clone();
    assert!(
        h.query_all_by_label_contains(&format!("Session {id}"))
            .next()
            .is_some(),
        "the Replay names the session"
    );
    assert!(
        h.query_by_label("Event log").is_some(),
        "the event log is shown"
    );
    assert!(
        h.query_all_by_label_contains("turn 1 ").next().is_some(),
        "the first turn's events are listed"
    );
    // The trace's chances come with a decided-turn sentence (or the reason there is none).
    assert!(
        h.query_all_by_label_contains("Decided at turn")
            .next()
            .is_some()
            || h.query_all_by_label_contains("Never decided")
                .next()
                .is_some(),
        "the decision is explained"
    );
    assert!(
        h.query_all_by_label_contains("What swung it")
            .next()
            .is_some(),
        "the biggest swings are listed"
    );
}

#[test]
fn moving_the_threshold_changes_the_decided_count_without_retraining() {
    let mut h = harness(quick_setup(vec![repo("sample_sessions/vessmire-weekend")]));
    step_until(&mut h, "training", trained);
    h.state_mut().as_mut().unwrap().tab = Tab::Decided;
    h.run_steps(2);
    let (at_75, total) = decided_count(&h);
    assert_eq!(
        at_75,
        decided_by_definition(dash(&h), 0.75),
        "count at 75 % matches the definition"
    );
    let model_before = dash(&h).shelf.bundles[0]
        .learned
        .as_ref()
        .map(|l| std::sync::Arc::as_ptr(l) as usize);
    // The 90 % preset button beside the slider.
    h.get_all_by_label("90 %")
        .next()
        .expect("the 90 % preset")
        .click();
    h.run_steps(3);
    assert!((dash(&h).prefs.threshold - 0.9).abs() < 1e-12);
    let (at_90, total_90) = decided_count(&h);
    assert_eq!(total, total_90);
    assert_eq!(
        at_90,
        decided_by_definition(dash(&h), 0.9),
        "count at 90 % matches the definition"
    );
    assert!(
        at_90 <= at_75,
        "a stricter threshold decides no more sessions"
    );
    assert!(!dash(&h).busy(), "no retraining started");
    let model_after = dash(&h).shelf.bundles[0]
        .learned
        .as_ref()
        .map(|l| std::sync::Arc::as_ptr(l) as usize);
    assert_eq!(model_before, model_after, "the same model is kept");
}

#[test]
fn the_comparison_opens_with_two_sets_and_gives_verdicts() {
    let dir = std::env::temp_dir().join(format!("tellturn-app-compare-{}", std::process::id()));
    let mut paths = Vec::new();
    for variant in ["A", "B"] {
        let opts = tellturn::demo::DemoOptions {
            variant: variant.into(),
            sessions: 70,
            seed: 7,
            ..tellturn::demo::DemoOptions::for_scenario(tellturn::demo::Scenario::BoardGame)
        };
        let set = tellturn::demo::generate(
            &opts,
            &tellturn::progress::NoProgress,
            &tellturn::progress::Cancel::new(),
        )
        .expect("demo set");
        let out = dir.join(format!("variant-{variant}"));
        tellturn::demo::write_set(&set, &out).expect("written");
        paths.push(out);
    }
    let mut h = harness(quick_setup(paths));
    step_until(&mut h, "training both sets", |h| {
        trained(h) && dash(h).shelf.bundles.len() == 2
    });
    h.get_by_label("Compare sets").click();
    step_until(&mut h, "the comparison", |h| {
        h.query_all_by_label_contains("Verdicts").next().is_some()
    });
    assert!(
        h.query_all_by_label_contains("variant-A against variant-B")
            .next()
            .is_some(),
        "both sets are named on the chart"
    );
    assert!(
        h.query_by_label("decided turn (median)").is_some(),
        "the decided turn is compared"
    );
    assert!(
        h.query_all_by_label_contains("sessions per variant")
            .next()
            .is_some()
            || h.query_all_by_label_contains("sessions needed")
                .next()
                .is_some(),
        "sessions-needed advice is given"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_broken_set_lists_its_problems_as_file_line_message() {
    let mut h = harness(quick_setup(vec![repo("tests/inputs/bad_turn")]));
    step_until(&mut h, "reading", |h| {
        dash(h).shelf.bundles.iter().all(|b| b.loading.is_none())
    });
    let problem = dash(&h).shelf.bundles[0]
        .set
        .problems
        .first()
        .expect("bad_turn has a problem")
        .to_string();
    assert!(
        problem.contains("events.csv:"),
        "problems carry file:line ({problem})"
    );
    assert!(
        h.query_all_by_label_contains(&problem).next().is_some(),
        "the problem is listed in the window"
    );
    let mut h = harness(quick_setup(vec![repo("tests/inputs/missing_column")]));
    step_until(&mut h, "reading", |h| {
        dash(h).shelf.bundles.iter().all(|b| b.loading.is_none())
    });
    assert!(
        h.query_all_by_label_contains("cannot be used")
            .next()
            .is_some(),
        "an unusable set says so"
    );
    assert!(
        h.query_all_by_label_contains("unusable —").next().is_some(),
        "and lists why"
    );
}

#[test]
fn up_and_down_keys_move_through_the_roster_and_enter_opens_the_replay() {
    let mut h = harness(quick_setup(vec![repo("sample_sessions/vessmire-weekend")]));
    step_until(&mut h, "reading", |h| {
        dash(h).shelf.bundles.iter().all(|b| b.loading.is_none())
    });
    let id = dash(&h).shelf.bundles[0].id;
    h.key_press(egui::Key::ArrowDown);
    h.run_steps(2);
    let first = dash(&h).selected.get(&id).copied();
    h.key_press(egui::Key::ArrowDown);
    h.run_steps(2);
    let second = dash(&h).selected.get(&id).copied();
    assert!(
        first.is_some() && second.is_some() && first != second,
        "down moves the selection"
    );
    h.key_press(egui::Key::ArrowUp);
    h.run_steps(2);
    assert_eq!(
        dash(&h).selected.get(&id).copied(),
        first,
        "up moves it back"
    );
    h.key_press(egui::Key::Enter);
    h.run_steps(2);
    assert_eq!(dash(&h).tab, Tab::Replay, "Enter opens the Replay");
}

#[derive(Debug)]
struct Dropped(PathBuf);

impl egui::DroppedFile for Dropped {
    fn path(&self) -> &Path {
        &self.0
    }
    fn bytes(&self) -> Result<Vec<u8>, String> {
        Err("not read".into())
    }
}

#[test]
fn a_folder_dropped_onto_the_window_is_opened() {
    let mut h = harness(quick_setup(Vec::new()));
    h.run_steps(2);
    assert!(dash(&h).shelf.bundles.is_empty());
    h.input_mut()
        .dropped_files
        .push(std::sync::Arc::new(Dropped(repo(
            "tests/inputs/in_progress",
        ))));
    h.run_steps(2);
    step_until(&mut h, "reading", |h| {
        dash(h).shelf.bundles.iter().all(|b| b.loading.is_none())
    });
    assert_eq!(dash(&h).shelf.bundles.len(), 1);
    assert_eq!(dash(&h).shelf.bundles[0].name(), "in_progress");
}
