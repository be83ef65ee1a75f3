//! Frame times of the dashboard (`cargo bench --bench dashboard_frames`).
//!
//! Runs the real dashboard code headless with egui_kittest (layout, painting and tessellation
//! input of every frame; no GPU upload, so a real window adds the renderer's cost on top) and
//! reports p50 / p95 / max milliseconds per frame:
//!
//! 1. while a 600-session set trains in the background (one worker thread, the rest for the UI);
//! 2. with 10,000 sessions loaded: scrolling the Roster, panning the When-decided chart, and
//!    panning the Replay chart.
//!
//! The target is under 16 ms per frame. `TELLTURN_BENCH_SESSIONS` changes the 10,000.

#[allow(dead_code, unused_imports)]
#[path = "../../src/app/mod.rs"]
mod app;

use app::{Dashboard, Prefs, Setup};
use egui_kittest::Harness;
use std::path::PathBuf;
use std::time::{Duration, Instant};
use tellturn::evaluate::train::TrainOptions;

type State = Option<Dashboard>;

fn harness(setup: Setup, prefs: Prefs) -> Harness<'static, State> {
    let mut setup = Some(setup);
    Harness::builder()
        .with_size(egui::vec2(1280.0, 800.0))
        .build_ui_state(
            move |ui, st: &mut State| {
                let d = st.get_or_insert_with(|| {
                    Dashboard::new(ui.ctx(), prefs.clone(), setup.take().expect("once"))
                });
                d.ui(ui);
            },
            None,
        )
}

fn summary(name: &str, mut ms: Vec<f64>) {
    ms.sort_by(f64::total_cmp);
    let q = |p: f64| ms[((ms.len() - 1) as f64 * p).round() as usize];
    println!(
        "{name:<44} frames {:>5}  p50 {:>6.2} ms  p95 {:>6.2} ms  max {:>6.2} ms",
        ms.len(),
        q(0.5),
        q(0.95),
        ms[ms.len() - 1]
    );
}

fn timed(
    h: &mut Harness<'_, State>,
    frames: usize,
    mut before: impl FnMut(&mut Harness<'_, State>, usize),
) -> Vec<f64> {
    let mut out = Vec::with_capacity(frames);
    for i in 0..frames {
        before(h, i);
        let t = Instant::now();
        h.step();
        out.push(t.elapsed().as_secs_f64() * 1e3);
    }
    out
}

fn wait(h: &mut Harness<'_, State>, what: &str) {
    let start = Instant::now();
    loop {
        h.step();
        let d = h.state().as_ref().expect("made");
        if !d.busy() && d.shelf.bundles.iter().all(|b| b.loading.is_none()) {
            return;
        }
        assert!(
            start.elapsed() < Duration::from_secs(1800),
            "timed out: {what}"
        );
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn wheel(h: &Harness<'_, State>, at: egui::Pos2, dy: f32) {
    h.hover_at(at);
    h.event(egui::Event::MouseWheel {
        unit: egui::MouseWheelUnit::Point,
        delta: egui::vec2(0.0, dy),
        phase: egui::TouchPhase::Move,
        source: egui::MouseWheelSource::Unknown,
        modifiers: egui::Modifiers::NONE,
    });
}

fn drag(h: &Harness<'_, State>, i: usize, from: egui::Pos2) {
    let pos = from + egui::vec2(((i % 60) as f32 - 30.0) * 6.0, 0.0);
    if i.is_multiple_of(60) {
        h.event(egui::Event::PointerButton {
            pos,
            button: egui::PointerButton::Primary,
            pressed: false,
            modifiers: egui::Modifiers::NONE,
        });
        h.event(egui::Event::PointerMoved(pos));
        h.event(egui::Event::PointerButton {
            pos,
            button: egui::PointerButton::Primary,
            pressed: true,
            modifiers: egui::Modifiers::NONE,
        });
    } else {
        h.event(egui::Event::PointerMoved(pos));
    }
}

fn main() {
    let cores = std::thread::available_parallelism().map_or(0, |n| n.get());
    println!("dashboard frame times (headless egui_kittest, {cores} cores)");
    let repo = PathBuf::from(env!("CARGO_MANIFEST_DIR"));

    // 1. Training in the background.
    let prefs = Prefs::default();
    let mut h = harness(
        Setup {
            paths: vec![repo.join("sample_sessions/vessmire-a")],
            samples: false,
            ..Setup::default()
        },
        prefs.clone(),
    );
    h.run_steps(2);
    let mut during = Vec::new();
    let start = Instant::now();
    while h
        .state()
        .as_ref()
        .is_some_and(|d| d.busy() || d.shelf.bundles.iter().any(|b| b.loading.is_some()))
    {
        let i = during.len();
        during.extend(timed(&mut h, 1, |h, _| {
            wheel(
                h,
                egui::pos2(700.0, 400.0),
                if (i / 50) % 2 == 0 { -60.0 } else { 60.0 },
            )
        }));
        std::thread::sleep(Duration::from_millis(16));
        if start.elapsed() > Duration::from_secs(900) {
            break;
        }
    }
    println!(
        "(training vessmire-a took {:.0} s of wall time while frames ran)",
        start.elapsed().as_secs_f64()
    );
    summary("roster scrolling while training 600 sessions", during);

    // 2. 10,000 sessions.
    let n: usize = std::env::var("TELLTURN_BENCH_SESSIONS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(10_000);
    let dir = std::env::temp_dir().join(format!("tellturn-bench-{n}"));
    if !dir.join("outcomes.csv").is_file() {
        let t = Instant::now();
        let opts = tellturn::demo::DemoOptions {
            sessions: n,
            ..tellturn::demo::DemoOptions::for_scenario(tellturn::demo::Scenario::BoardGame)
        };
        let set = tellturn::demo::generate(
            &opts,
            &tellturn::progress::NoProgress,
            &tellturn::progress::Cancel::new(),
        )
        .expect("demo");
        tellturn::demo::write_set(&set, &dir).expect("write");
        println!(
            "(generated {n} sessions in {:.0} s)",
            t.elapsed().as_secs_f64()
        );
    }
    let prefs = Prefs {
        model: app::prefs_logistic(),
        ..Prefs::default()
    };
    let mut h = harness(
        Setup {
            paths: vec![dir.clone()],
            samples: false,
            train: TrainOptions {
                folds: 3,
                learning_curve: false,
                cross_fit: true,
                ..TrainOptions::default()
            },
            bootstrap: 200,
            ..Setup::default()
        },
        prefs,
    );
    let t = Instant::now();
    wait(&mut h, "training 10,000 sessions");
    println!(
        "(read and trained {n} sessions in {:.0} s)",
        t.elapsed().as_secs_f64()
    );
    h.run_steps(3);
    let roster = timed(&mut h, 400, |h, i| {
        wheel(
            h,
            egui::pos2(700.0, 400.0),
            if (i / 100) % 2 == 0 { -120.0 } else { 120.0 },
        )
    });
    summary(&format!("roster scrolling, {n} sessions"), roster);
    h.state_mut().as_mut().expect("made").tab = app::Tab::Decided;
    h.run_steps(3);
    let decided = timed(&mut h, 300, |h, i| drag(h, i, egui::pos2(760.0, 300.0)));
    summary(
        &format!("when-decided chart panning, {n} sessions"),
        decided,
    );
    h.state_mut().as_mut().expect("made").open_session(0);
    h.run_steps(3);
    let replay = timed(&mut h, 300, |h, i| drag(h, i, egui::pos2(560.0, 330.0)));
    summary(
        &format!("replay chart panning, {n} sessions loaded"),
        replay,
    );
    h.state_mut().as_mut().expect("made").tab = app::Tab::Roster;
    h.run_steps(2);
    let threshold = timed(&mut h, 60, |h, i| {
        let t = 0.6 + 0.3 * (i as f64 / 60.0);
        h.state_mut().as_mut().expect("made").set_threshold(t);
    });
    summary(
        &format!("threshold moved every frame, {n} sessions"),
        threshold,
    );
}
