//! Dashboard tests with egui_kittest: the real views, no display and no GPU. Each test drives
//! the dashboard through its widgets (found by their accessible labels) and waits for the
//! background work with a timeout. File dialogs are answered by a script; screenshots (chart
//! export) are drawn by a small software rasteriser.

use super::dashboard::{Dashboard, Setup, Tab};
use super::dialogs::{Answer, Ask, Chooser, Dialogs};
use super::prefs::Prefs;
use super::soft_render::{TextureKeeper, Textures};
use super::workspace::Fit;
use egui_kittest::Harness;
use egui_kittest::kittest::{NodeT, Queryable};
use std::collections::VecDeque;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};
use tellturn::evaluate::train::TrainOptions;

type State = Option<Dashboard>;

fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// A fresh scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tellturn-app-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

/// File dialogs answered from a list (then "dismissed"), remembering what was asked.
#[derive(Default)]
struct Script {
    answers: Mutex<VecDeque<Answer>>,
    asked: Mutex<Vec<Ask>>,
}

impl Script {
    fn answer(&self, a: Answer) {
        self.answers.lock().unwrap().push_back(a);
    }
    fn choose_path(&self, p: &Path) {
        self.answer(Answer::Chosen(p.to_path_buf()));
    }
    fn asked(&self) -> Vec<Ask> {
        self.asked.lock().unwrap().clone()
    }
}

impl Chooser for Script {
    fn choose(&self, ask: &Ask) -> Answer {
        self.asked.lock().unwrap().push(ask.clone());
        self.answers
            .lock()
            .unwrap()
            .pop_front()
            .unwrap_or(Answer::Dismissed)
    }
}

/// Small, quick training: three folds, no learning curve, few bootstrap resamples; dialogs
/// answered by `script`.
fn scripted_setup(paths: Vec<PathBuf>, script: &Arc<Script>) -> Setup {
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
        dialogs: Dialogs::with(script.clone()),
        ..Setup::default()
    }
}

/// [`scripted_setup`] with dialogs that are always dismissed.
fn quick_setup(paths: Vec<PathBuf>) -> Setup {
    scripted_setup(paths, &Arc::new(Script::default()))
}

fn harness(setup: Setup) -> Harness<'static, State> {
    harness_with(setup, Prefs::default(), None)
}

/// A harness with the given settings; with `textures`, the textures egui uploads are kept so
/// screenshots can be drawn.
fn harness_with(setup: Setup, prefs: Prefs, textures: Option<Textures>) -> Harness<'static, State> {
    let mut setup = Some(setup);
    let mut builder = Harness::builder().with_size(egui::vec2(1280.0, 800.0));
    if let Some(t) = textures {
        builder = builder.renderer(TextureKeeper::new(t));
    }
    builder.build_ui_state(
        move |ui, st: &mut State| {
            let d = st.get_or_insert_with(|| {
                Dashboard::new(ui.ctx(), prefs.clone(), setup.take().expect("built once"))
            });
            d.ui(ui);
        },
        None,
    )
}

/// Answer the screenshot requests of the last frame with a picture drawn on the CPU; returns
/// how many there were.
fn fulfil_screenshots(h: &Harness<'_, State>, textures: &Textures) -> usize {
    let requests: Vec<egui::ScreenshotCallback> = h
        .output()
        .viewport_output
        .values()
        .flat_map(|v| {
            v.commands.iter().filter_map(|c| match c {
                egui::ViewportCommand::Screenshot(cb) => Some(cb.clone()),
                _ => None,
            })
        })
        .collect();
    if requests.is_empty() {
        return 0;
    }
    let img = Arc::new(super::soft_render::render(
        &h.ctx,
        h.output(),
        textures,
        egui::vec2(1280.0, 800.0),
    ));
    let n = requests.len();
    for cb in requests {
        cb.complete(img.clone());
    }
    n
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

/// The text of a node (its label, else its value).
fn text_of(node: &egui_kittest::Node<'_>) -> String {
    let ak = node.accesskit_node();
    ak.label()
        .or_else(|| ak.value())
        .unwrap_or_default()
        .to_string()
}

/// Pick an entry of the Export menu by its label.
fn export_menu(h: &mut Harness<'_, State>, entry: &str) {
    h.get_by_label("Export").click();
    h.run_steps(2);
    h.get_by_label(entry).click();
}

/// Files in a folder (names), sorted.
fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .map(|r| {
            r.map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

/// Every file under a folder with its bytes, to show it was left untouched.
fn snapshot(dir: &Path) -> Vec<(PathBuf, Vec<u8>)> {
    let mut out = Vec::new();
    let mut todo = vec![dir.to_path_buf()];
    while let Some(d) = todo.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                todo.push(p);
            } else {
                let bytes = std::fs::read(&p).unwrap();
                out.push((p, bytes));
            }
        }
    }
    out.sort();
    out
}

/// Copy a set folder (flat) to a scratch place, so a test may point outputs at it.
fn copy_set(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let p = e.unwrap().path();
        if p.is_file() {
            std::fs::copy(&p, to.join(p.file_name().unwrap())).unwrap();
        }
    }
}

#[test]
fn exporting_the_chart_writes_a_png_of_the_chart_in_view() {
    let out = scratch("png");
    let target = out.join("chart.png");
    // Something is already there under the chosen name: it is replaced whole.
    std::fs::write(&target, b"not a picture").unwrap();
    let script = Arc::new(Script::default());
    script.choose_path(&target);
    let textures: Textures = Arc::default();
    let mut h = harness_with(
        scripted_setup(vec![repo("sample_sessions/vessmire-weekend")], &script),
        Prefs::default(),
        Some(textures.clone()),
    );
    step_until(&mut h, "training", trained);
    h.state_mut().as_mut().unwrap().tab = Tab::Replay;
    h.run_steps(2);
    // Narrow the list of sets (drag its edge to the left), so the Export menu opens over the
    // chart.
    // The central panel starts one margin left of its first tab; the list's edge is there.
    let edge = h.get_by_label("Roster").rect().left() - 8.5;
    println!("edge {edge}");
    let drag = |h: &mut Harness<'_, State>, ev: egui::Event| {
        h.input_mut().events.push(ev);
        h.step();
    };
    let (from, to) = (egui::pos2(edge, 400.0), egui::pos2(150.0, 400.0));
    drag(&mut h, egui::Event::PointerMoved(from));
    drag(
        &mut h,
        egui::Event::PointerButton {
            pos: from,
            button: egui::PointerButton::Primary,
            pressed: true,
            modifiers: egui::Modifiers::NONE,
        },
    );
    drag(&mut h, egui::Event::PointerMoved(egui::pos2(200.0, 400.0)));
    drag(&mut h, egui::Event::PointerMoved(to));
    drag(
        &mut h,
        egui::Event::PointerButton {
            pos: to,
            button: egui::PointerButton::Primary,
            pressed: false,
            modifiers: egui::Modifiers::NONE,
        },
    );
    h.run_steps(2);
    let chart = dash(&h).chart_rect().expect("the Replay has a chart");
    println!("chart after narrowing: {chart:?}");
    // As a person does: open the menu, rest on the entry until its hover help shows (it
    // reaches over the chart), then click.
    h.get_by_label("Export").click();
    h.run_steps(2);
    h.get_by_label("Current chart as PNG…").hover();
    h.run_steps(60);
    assert!(
        h.query_all_by_label_contains("Save the main chart of the view in front")
            .next()
            .is_some(),
        "the hover help is up"
    );
    h.get_by_label("Current chart as PNG…").click();
    let start = Instant::now();
    let mut shots = 0;
    loop {
        h.step();
        shots += fulfil_screenshots(&h, &textures);
        if shots > 0 && dash(&h).saves_idle() {
            break;
        }
        assert!(
            start.elapsed() < Duration::from_secs(30),
            "timed out waiting for the PNG"
        );
        std::thread::sleep(Duration::from_millis(10));
    }
    assert_eq!(shots, 1, "one picture was taken");
    assert!(
        matches!(&script.asked()[..], [Ask::SaveAs { extension, .. }] if extension == "png"),
        "a save dialog for a PNG was asked for: {:?}",
        script.asked()
    );
    let notices = dash(&h).notices();
    assert!(
        notices
            .iter()
            .any(|(t, e)| !e && t == &format!("saved {}", target.display())),
        "{notices:?}"
    );
    // To look at the picture: TELLTURN_KEEP_PNG=where.png
    if let Ok(keep) = std::env::var("TELLTURN_KEEP_PNG") {
        let _ = std::fs::copy(&target, keep);
    }
    let decoder = png::Decoder::new(std::fs::File::open(&target).unwrap());
    let mut reader = decoder.read_info().expect("a valid PNG header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("valid PNG image data");
    assert!(info.width > 0 && info.height > 0);
    assert_eq!(info.color_type, png::ColorType::Rgba);
    // The picture is the chart's rectangle, not the whole window.
    assert!(
        info.width < 1280 && info.height < 800,
        "{}×{}",
        info.width,
        info.height
    );
    let pixels: std::collections::HashSet<&[u8]> =
        buf[..info.buffer_size()].chunks_exact(4).collect();
    assert!(
        pixels.len() > 8,
        "the picture has {} colours: a flat image",
        pixels.len()
    );
    // It is the chart as it stands once the Export menu has closed: drawn again now, the
    // chart's rectangle holds the same pixels.
    h.run_steps(2);
    let rect = dash(&h).chart_rect().expect("the view has a chart");
    let now = super::soft_render::render(&h.ctx, h.output(), &textures, egui::vec2(1280.0, 800.0));
    let ppp = h.ctx.pixels_per_point();
    let (x0, y0) = (
        (rect.min.x * ppp).round() as usize,
        (rect.min.y * ppp).round() as usize,
    );
    assert_eq!(
        (info.width as usize, info.height as usize),
        (
            (rect.max.x * ppp).round() as usize - x0,
            (rect.max.y * ppp).round() as usize - y0,
        ),
        "the picture is the chart's rectangle"
    );
    let mut differ = 0;
    for y in 0..info.height as usize {
        for x in 0..info.width as usize {
            let a = now.pixels[(y0 + y) * now.size[0] + x0 + x].to_array();
            let i = 4 * (y * info.width as usize + x);
            if a[..3] != buf[i..i + 3] {
                differ += 1;
            }
        }
    }
    assert_eq!(
        differ, 0,
        "pixels differ from the chart on screen (menu in the picture?)"
    );
    // Written beside and renamed: nothing else is left in the folder.
    assert_eq!(listing(&out), ["chart.png"]);
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_view_without_a_chart_says_so_instead_of_exporting() {
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(Vec::new(), &script));
    h.run_steps(2);
    export_menu(&mut h, "Current chart as PNG…");
    h.run_steps(3);
    assert!(script.asked().is_empty(), "no dialog was shown");
    assert!(
        h.query_all_by_label_contains("this view has no chart to export")
            .next()
            .is_some()
    );
}

#[test]
fn exported_tables_have_the_header_and_the_rows_shown() {
    let out = scratch("csv");
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(
        vec![repo("sample_sessions/vessmire-weekend")],
        &script,
    ));
    step_until(&mut h, "training", trained);
    // The Roster, filtered to sessions won by one player.
    let winner = dash(&h).shelf.bundles[0].set.sessions[0]
        .winner_name()
        .to_string();
    h.get_by_label("Find:").click();
    h.run_steps(1);
    h.get_by_label("Find:").type_text(&winner);
    h.run_steps(3);
    let shown = text_of(&h.get_by_label_contains("sessions shown"));
    let n_shown: usize = shown
        .split_whitespace()
        .next()
        .and_then(|w| w.parse().ok())
        .unwrap_or_else(|| panic!("count in {shown:?}"));
    let total = dash(&h).shelf.bundles[0].set.sessions.len();
    assert!(
        n_shown > 0 && n_shown < total,
        "the filter leaves some sessions ({shown})"
    );
    let roster_csv = out.join("roster.csv");
    script.choose_path(&roster_csv);
    h.get_by_label("Find:").focus(); // leave the text field; the menu still works
    export_menu(&mut h, "Current table as CSV…");
    step_until(&mut h, "the CSV", |h| {
        dash(h).saves_idle() && roster_csv.exists()
    });
    let mut r = csv::Reader::from_path(&roster_csv).expect("readable CSV");
    let header: Vec<String> = r.headers().unwrap().iter().map(String::from).collect();
    // Every column title the view shows heads the file, in the same order.
    let mut last_x = f64::MIN;
    for title in &header {
        // A header is its title, with the sort arrow on the sorted column.
        let node = h
            .query_all_by_label_contains(title)
            .find(|n| {
                let t = text_of(n);
                t == *title || t == format!("{title} ▲") || t == format!("{title} ▼")
            })
            .unwrap_or_else(|| panic!("the view shows a column {title:?}"));
        let x = node.accesskit_node().bounding_box().map_or(0.0, |b| b.x0);
        assert!(x > last_x, "{title} comes after the previous column");
        last_x = x;
    }
    assert_eq!(header[0], "Session");
    let rows: Vec<csv::StringRecord> = r.records().map(|x| x.expect("a CSV row")).collect();
    assert_eq!(rows.len(), n_shown, "one row per shown row");
    let set = &dash(&h).shelf.bundles[0].set;
    for row in &rows {
        let s = set
            .sessions
            .iter()
            .find(|s| s.id == row[0])
            .unwrap_or_else(|| panic!("session {} exists", &row[0]));
        assert!(
            s.actors.iter().any(|a| a.contains(&winner)) || s.winner_name().contains(&winner),
            "only sessions matching the filter"
        );
        assert_eq!(row.len(), header.len());
    }
    // The first row shown in the window is the first row of the file.
    let first = text_of(
        &h.query_all_by_label_contains("won by")
            .next()
            .expect("a row is shown"),
    );
    assert!(
        first.starts_with(&format!("session {} ", &rows[0][0])),
        "{first:?}"
    );

    // The event-impact table, with and without detail words.
    h.get_by_label("What swings games").click();
    h.run_steps(3);
    let impact = match &dash(&h).shelf.bundles[0].learned.as_ref().unwrap().impact {
        Ok(i) => i.clone(),
        Err(e) => panic!("event impact: {e}"),
    };
    let labels_only = impact
        .items
        .iter()
        .filter(|i| i.kind == tellturn::analysis::swings::ItemKind::Label)
        .count();
    assert!(
        labels_only > 0 && labels_only < impact.items.len(),
        "the sample has labels and words"
    );
    let mut counts = Vec::new();
    for (file, expected) in [
        ("impact-all.csv", impact.items.len()),
        ("impact-labels.csv", labels_only),
    ] {
        let shown = text_of(&h.get_by_label_contains("items shown"));
        assert!(
            shown.starts_with(&format!("{expected} of {} items shown", impact.items.len())),
            "{shown:?}"
        );
        let path = out.join(file);
        script.choose_path(&path);
        export_menu(&mut h, "Current table as CSV…");
        step_until(&mut h, "the CSV", |h| dash(h).saves_idle() && path.exists());
        let mut r = csv::Reader::from_path(&path).unwrap();
        let header: Vec<String> = r.headers().unwrap().iter().map(String::from).collect();
        assert_eq!(header[0], "Event or word");
        for title in &header {
            assert!(
                h.query_all_by_label_contains(title).next().is_some(),
                "the view shows a column {title:?}"
            );
        }
        let rows: Vec<csv::StringRecord> = r.records().map(|x| x.unwrap()).collect();
        assert_eq!(rows.len(), expected, "{file}: one row per shown row");
        let first = text_of(
            &h.query_all_by_label_contains("mean swing")
                .find(|n| text_of(n).contains(" mean swing "))
                .expect("a row is shown"),
        );
        assert!(
            first.starts_with(&format!("{} mean swing {}", &rows[0][0], &rows[0][4])),
            "the first row shown is the file's first row: {first:?} / {:?}",
            rows[0]
        );
        counts.push(rows.iter().filter(|r| &r[1] == "word").count());
        h.get_by_label("include detail words").click();
        h.run_steps(3);
    }
    assert!(counts[0] > 0 && counts[1] == 0, "words only when included");
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn the_report_is_written_to_a_chosen_folder_but_never_into_an_input_set() {
    let out = scratch("report");
    let input = out.join("weekend");
    copy_set(&repo("sample_sessions/vessmire-weekend"), &input);
    let before = snapshot(&input);
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(vec![input.clone()], &script));
    step_until(&mut h, "training", trained);

    // Inside the input set: refused at once, as `tellturn report` refuses it.
    let inside = input.join("report");
    script.choose_path(&inside);
    export_menu(&mut h, "Report (HTML)…");
    h.step();
    let start = Instant::now();
    let mut stages = Vec::new();
    while !dash(&h).saves_idle() {
        h.step();
        stages.extend(
            h.query_all_by_label_contains("saving report")
                .map(|n| text_of(&n)),
        );
        assert!(start.elapsed() < Duration::from_secs(60), "no answer");
        std::thread::sleep(Duration::from_millis(2));
    }
    let refused = start.elapsed();
    // Refused before the study began: no training stage was ever reported.
    assert!(
        stages.iter().all(|t| t.contains("starting")),
        "work was done before the refusal: {stages:?}"
    );
    assert!(
        tellturn::report::check_output_dir(std::slice::from_ref(&input), &inside).is_err(),
        "the engine's rule refuses it"
    );
    let message = format!(
        "could not save: {} is inside the input folder {}; reports are never written into an input folder — choose another folder",
        inside.display(),
        input.display()
    );
    let notices = dash(&h).notices();
    assert!(
        notices.iter().any(|(t, e)| *e && t == &message),
        "{message:?} in {notices:?}"
    );
    assert!(
        h.query_all_by_label_contains(&message).next().is_some(),
        "shown in the window"
    );
    assert!(!inside.exists(), "nothing is created inside the input set");
    assert!(
        refused < Duration::from_secs(5),
        "refused before training ({refused:?})"
    );

    // Beside it: the same files the command line writes.
    let folder = out.join("the-report");
    script.choose_path(&folder);
    export_menu(&mut h, "Report (HTML)…");
    step_until(&mut h, "the report", |h| {
        dash(h).saves_idle() && folder.exists()
    });
    assert_eq!(
        listing(&folder),
        [
            "decisions.csv",
            "event_impact.csv",
            "report.html",
            "summary.json",
            "turn_accuracy.csv",
            "turn_probabilities.csv"
        ]
    );
    let html = std::fs::read_to_string(folder.join("report.html")).unwrap();
    assert!(html.contains("weekend") && html.contains("</html>"));
    let summary: serde_json::Value =
        serde_json::from_slice(&std::fs::read(folder.join("summary.json")).unwrap())
            .expect("summary.json is JSON");
    assert!(summary.is_object());
    for f in [
        "decisions.csv",
        "event_impact.csv",
        "turn_probabilities.csv",
    ] {
        let mut r = csv::Reader::from_path(folder.join(f)).unwrap();
        assert!(!r.headers().unwrap().is_empty());
        assert!(r.records().all(|x| x.is_ok()), "{f} parses");
    }
    assert_eq!(snapshot(&input), before, "the input set is untouched");
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_model_saved_from_the_window_scores_a_new_set_in_a_fresh_window_without_training() {
    let out = scratch("model");
    let model_path = out.join("weekend-model.json");
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(
        vec![repo("sample_sessions/vessmire-weekend")],
        &script,
    ));
    step_until(&mut h, "training", trained);
    script.choose_path(&model_path);
    export_menu(&mut h, "Save model…");
    step_until(&mut h, "saving the model", |h| {
        dash(h).saves_idle() && model_path.exists()
    });
    let saved = tellturn::models::file::load_model(&model_path).expect("the saved file loads");
    let trained_model = dash(&h).shelf.bundles[0]
        .learned
        .as_ref()
        .unwrap()
        .training
        .model
        .clone();
    // The file holds the trained model: byte for byte what the engine writes for it.
    let reference = out.join("reference.json");
    tellturn::models::file::save_model(&trained_model, &reference).unwrap();
    assert_eq!(
        std::fs::read(&model_path).unwrap(),
        std::fs::read(&reference).unwrap(),
        "the file holds the trained model"
    );
    assert_eq!(
        (
            saved.summary.trained_sessions,
            saved.summary.seed,
            &saved.summary.choice
        ),
        (
            trained_model.summary.trained_sessions,
            trained_model.summary.seed,
            &trained_model.summary.choice
        )
    );
    drop(h);

    // New sessions of the same game, in a fresh window.
    let opts = tellturn::demo::DemoOptions {
        sessions: 40,
        seed: 99,
        ..tellturn::demo::DemoOptions::for_scenario(tellturn::demo::Scenario::BoardGame)
    };
    let set = tellturn::demo::generate(
        &opts,
        &tellturn::progress::NoProgress,
        &tellturn::progress::Cancel::new(),
    )
    .expect("demo set");
    let new_set = out.join("new-sessions");
    tellturn::demo::write_set(&set, &new_set).expect("written");
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(vec![new_set.clone()], &script));
    step_until(&mut h, "reading", |h| {
        dash(h).shelf.bundles.iter().all(|b| b.loading.is_none())
    });
    script.choose_path(&model_path);
    export_menu(&mut h, "Load a model to score this set…");
    step_until(&mut h, "scoring", |h| {
        let b = &dash(h).shelf.bundles[0];
        !dash(h).busy() && b.loaded.is_some()
    });
    assert_eq!(script.asked(), [Ask::ModelFile]);
    {
        let b = &dash(&h).shelf.bundles[0];
        assert!(b.learned.is_none(), "nothing was trained");
        assert!(matches!(b.fit, Fit::Done), "no training job runs");
        assert_eq!(b.traces.len(), b.set.sessions.len(), "every session scored");
        assert!(
            (0..b.set.sessions.len()).all(|k| b.trace(k).is_some_and(|t| !t.is_empty())),
            "each session has its trace"
        );
        assert_eq!(*b.loaded.as_ref().unwrap().model, saved);
    }
    // The views use the loaded chances…
    h.state_mut().as_mut().unwrap().tab = Tab::Decided;
    h.run_steps(3);
    let (_, finished) = decided_count(&h);
    assert_eq!(finished, 40);
    // …and the model check says what the file records and what needs a training run here.
    h.get_by_label("Model check").click();
    h.run_steps(3);
    for want in [
        "What the model file records about its training".to_string(),
        "Needs a training run on this set".to_string(),
        format!(
            "{} ({} turn rows)",
            saved.summary.trained_sessions, saved.summary.trained_rows
        ),
        saved.spec.width().to_string(),
        saved.summary.seed.to_string(),
        saved.summary.choice.clone(),
        model_path.display().to_string(),
    ] {
        assert!(
            h.query_all_by_label(&want).next().is_some()
                || h.query_all_by_label_contains(&want).next().is_some(),
            "the model check shows {want:?}"
        );
    }
    assert!(
        h.query_all_by_label_contains("the model has seen them")
            .next()
            .is_none(),
        "new sessions under another name: no in-sample warning"
    );
    let kind = match saved.win.kind() {
        tellturn::models::win_model::ModelKind::Boosted => "boosted trees",
        tellturn::models::win_model::ModelKind::Logistic => "logistic regression",
    };
    assert!(h.query_all_by_label_contains(kind).next().is_some());
    // Its table export is that summary.
    let summary_csv = out.join("loaded.csv");
    script.choose_path(&summary_csv);
    export_menu(&mut h, "Current table as CSV…");
    step_until(&mut h, "the CSV", |h| {
        dash(h).saves_idle() && summary_csv.exists()
    });
    let mut r = csv::Reader::from_path(&summary_csv).unwrap();
    assert_eq!(r.headers().unwrap(), vec!["what", "value"]);
    let rows: Vec<(String, String)> = r
        .records()
        .map(|x| {
            let x = x.unwrap();
            (x[0].to_string(), x[1].to_string())
        })
        .collect();
    assert!(rows.contains(&("seed".into(), saved.summary.seed.to_string())));
    assert!(rows.contains(&("feature columns".into(), saved.spec.width().to_string())));
    // Several frames later still nothing trains.
    h.run_steps(5);
    assert!(!dash(&h).busy());
    assert!(dash(&h).shelf.bundles[0].learned.is_none());
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_file_that_is_not_a_model_gets_a_precise_message_and_changes_nothing() {
    let out = scratch("bad-model");
    let bad = out.join("bad.json");
    std::fs::write(&bad, br#"{"format":"something-else"}"#).unwrap();
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(
        vec![repo("sample_sessions/vessmire-weekend")],
        &script,
    ));
    step_until(&mut h, "training", trained);
    let traces_before = dash(&h).shelf.bundles[0].traces.len();
    script.choose_path(&bad);
    export_menu(&mut h, "Load a model to score this set…");
    step_until(&mut h, "the message", |h| {
        dash(h)
            .notices()
            .iter()
            .any(|(t, _)| t.starts_with("could not load the model"))
    });
    let engine = tellturn::models::file::load_model(&bad)
        .expect_err("not a model")
        .to_string();
    assert!(
        dash(&h)
            .notices()
            .iter()
            .any(|(t, e)| *e && t == &format!("could not load the model: {engine}")),
        "{:?}",
        dash(&h).notices()
    );
    let b = &dash(&h).shelf.bundles[0];
    assert!(b.learned.is_some() && b.loaded.is_none());
    assert_eq!(b.traces.len(), traces_before);
    let _ = std::fs::remove_dir_all(&out);
}

/// An eframe storage in memory.
#[derive(Default)]
struct MemoryStorage(std::collections::HashMap<String, String>);

impl eframe::Storage for MemoryStorage {
    fn get_string(&self, key: &str) -> Option<String> {
        self.0.get(key).cloned()
    }
    fn set_string(&mut self, key: &str, value: String) {
        self.0.insert(key.to_string(), value);
    }
    fn remove_string(&mut self, key: &str) {
        self.0.remove(key);
    }
    fn flush(&mut self) {}
}

#[test]
fn the_theme_button_switches_egui_to_light_and_the_choice_is_remembered() {
    let mut h = harness(quick_setup(Vec::new()));
    h.run_steps(2);
    assert!(h.ctx.global_style().visuals.dark_mode, "dark by default");
    h.get_by_label("Light theme").click();
    h.run_steps(2);
    assert!(
        !h.ctx.global_style().visuals.dark_mode,
        "light after the click"
    );
    assert!(!dash(&h).prefs.dark);
    assert!(
        h.query_by_label("Dark theme").is_some(),
        "the button offers the way back"
    );
    // Saved as the app saves on exit, read as it reads at start.
    let mut storage = MemoryStorage::default();
    super::prefs::save(&mut storage, &dash(&h).prefs);
    let restored = super::prefs::load(Some(&storage));
    assert!(!restored.dark);
    assert_eq!(restored, dash(&h).prefs);
    assert!(super::prefs::load(None).dark, "no storage: the default");
    let mut h2 = harness_with(quick_setup(Vec::new()), restored, None);
    h2.run_steps(2);
    assert!(
        !h2.ctx.global_style().visuals.dark_mode,
        "a new window starts light"
    );
    h2.get_by_label("Dark theme").click();
    h2.run_steps(2);
    assert!(h2.ctx.global_style().visuals.dark_mode, "and switches back");
}

#[test]
fn chart_colours_stand_out_from_the_background_of_either_theme() {
    use super::palette::{SERIES_COUNT, contrast, focus, neutral, rule, series, warn};
    for (dark, visuals) in [
        (true, egui::Visuals::dark()),
        (false, egui::Visuals::light()),
    ] {
        let backgrounds = [
            visuals.panel_fill,
            visuals.extreme_bg_color,
            visuals.window_fill,
        ];
        for bg in backgrounds {
            for i in 0..SERIES_COUNT {
                let c = series(dark, i);
                assert!(
                    contrast(c, bg) >= 3.0,
                    "series {i} {c:?} on {bg:?} (dark {dark}): {:.2}",
                    contrast(c, bg)
                );
            }
            for (name, c) in [
                ("focus", focus(dark)),
                ("neutral", neutral(dark)),
                ("rule", rule(dark)),
            ] {
                assert!(contrast(c, bg) >= 3.0, "{name} on {bg:?} (dark {dark})");
            }
            // Warnings are text: 4.5:1 (WCAG AA).
            assert!(
                contrast(warn(dark), bg) >= 4.5,
                "warn on {bg:?} (dark {dark}): {:.2}",
                contrast(warn(dark), bg)
            );
        }
    }
    // The check itself: white on white has none, black on white the most.
    assert!((contrast(egui::Color32::WHITE, egui::Color32::WHITE) - 1.0).abs() < 1e-9);
    assert!((contrast(egui::Color32::BLACK, egui::Color32::WHITE) - 21.0).abs() < 1e-9);
}

/// Wait until `done`, stepping as fast as the frames go; returns the wall time it took.
fn time_until(
    h: &mut Harness<'_, State>,
    what: &str,
    limit: Duration,
    done: impl Fn(&Harness<'_, State>) -> bool,
) -> Duration {
    let start = Instant::now();
    loop {
        h.step();
        if done(h) {
            return start.elapsed();
        }
        assert!(start.elapsed() < limit, "{what}: not done after {limit:?}");
        std::thread::sleep(Duration::from_millis(2));
    }
}

#[test]
fn cancel_stops_training_and_a_report_export_within_a_second() {
    let out = scratch("cancel");
    let script = Arc::new(Script::default());
    let mut setup = scripted_setup(vec![repo("sample_sessions/vessmire-a")], &script);
    setup.train = TrainOptions {
        cross_fit: true,
        ..TrainOptions::default()
    };
    let mut h = harness(setup);
    // Wait until the training is at work (past its first stage report), then press Cancel.
    step_until(
        &mut h,
        "training to start",
        |h| matches!(&dash(h).shelf.bundles[0].fit, Fit::Running(j) if j.stage().name != "starting"),
    );
    std::thread::sleep(Duration::from_millis(300));
    h.step();
    assert!(matches!(dash(&h).shelf.bundles[0].fit, Fit::Running(_)));
    h.get_by_label("Cancel").click();
    let took = time_until(
        &mut h,
        "cancelling training",
        Duration::from_secs(20),
        |h| !dash(h).busy(),
    );
    println!(
        "training cancelled {:.0} ms after the click",
        took.as_secs_f64() * 1e3
    );
    let fit = match &dash(&h).shelf.bundles[0].fit {
        Fit::Failed(e) => format!("failed: {e}"),
        Fit::Done => "done".into(),
        _ => "other".into(),
    };
    assert_eq!(fit, "failed: cancelled", "the worker reports cancelled");
    assert!(took < Duration::from_secs(1), "took {took:?}");
    h.run_steps(2);
    assert!(h.query_by_label("Cancel").is_none(), "the job is gone");
    assert!(
        h.query_all_by_label_contains("training cancelled")
            .next()
            .is_some()
    );
    assert!(
        dash(&h)
            .notices()
            .iter()
            .any(|(t, e)| !e && t == "training on vessmire-a stopped: cancelled")
    );

    // The report export runs as a job with its own Cancel.
    let folder = out.join("report");
    script.choose_path(&folder);
    export_menu(&mut h, "Report (HTML)…");
    step_until(&mut h, "the report to start", |h| {
        h.query_all_by_label_contains("saving report")
            .next()
            .is_some()
            && !dash(h).saves_idle()
    });
    std::thread::sleep(Duration::from_millis(500));
    h.step();
    assert!(!dash(&h).saves_idle(), "still writing the report");
    h.get_by_label("Cancel").click();
    let took = time_until(
        &mut h,
        "cancelling the report",
        Duration::from_secs(20),
        |h| dash(h).saves_idle(),
    );
    println!(
        "report export cancelled {:.0} ms after the click",
        took.as_secs_f64() * 1e3
    );
    assert!(took < Duration::from_secs(1), "took {took:?}");
    assert!(
        dash(&h)
            .notices()
            .iter()
            .any(|(t, e)| !e && t.ends_with("stopped: cancelled") && t.contains("report")),
        "{:?}",
        dash(&h).notices()
    );
    assert!(
        listing(&out).is_empty(),
        "no report left: {:?}",
        listing(&out)
    );
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_training_failure_becomes_a_message_in_the_window() {
    // Two finished sessions: too few to train and check a model.
    let out = scratch("failure");
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(
        vec![repo("tests/inputs/in_progress")],
        &script,
    ));
    step_until(&mut h, "training to stop", |h| {
        matches!(
            dash(h).shelf.bundles.first().map(|b| &b.fit),
            Some(Fit::Failed(_))
        )
    });
    let Fit::Failed(e) = &dash(&h).shelf.bundles[0].fit else {
        unreachable!()
    };
    let e = e.clone();
    assert!(e.contains("at least 8 are needed"), "{e}");
    assert!(
        h.query_all_by_label(&e).next().is_some(),
        "the engine's message is shown beside the set"
    );
    assert!(
        h.query_all_by_label_contains("training failed")
            .next()
            .is_some()
    );
    h.get_by_label("Fairness").click();
    h.run_steps(2);
    assert!(
        h.query_by_label(&format!("Training stopped: {e}"))
            .is_some(),
        "views say why they are empty"
    );
    assert!(
        dash(&h)
            .notices()
            .iter()
            .any(|(t, err)| *err && t.contains(&e))
    );
    // With no win chances there is no decided turn to give: not "never".
    h.get_by_label("Roster").click();
    h.run_steps(2);
    let path = out.join("sessions.csv");
    script.choose_path(&path);
    export_menu(&mut h, "Current table as CSV…");
    step_until(&mut h, "the CSV", |h| dash(h).saves_idle() && path.exists());
    let mut r = csv::Reader::from_path(&path).unwrap();
    let col = r
        .headers()
        .unwrap()
        .iter()
        .position(|c| c == "Decided at")
        .expect("a decided-turn column");
    let rows: Vec<csv::StringRecord> = r.records().map(|x| x.unwrap()).collect();
    assert_eq!(rows.len(), 3);
    assert!(rows.iter().all(|r| r[col].is_empty()), "{rows:?}");
    let _ = std::fs::remove_dir_all(&out);
}

#[test]
fn a_panic_in_the_worker_becomes_a_message_and_the_window_keeps_running() {
    let mut setup = quick_setup(vec![repo("sample_sessions/vessmire-weekend")]);
    setup.panic_in_training = true;
    let mut h = harness(setup);
    step_until(&mut h, "training to stop", |h| {
        matches!(
            dash(h).shelf.bundles.first().map(|b| &b.fit),
            Some(Fit::Failed(_))
        )
    });
    let Fit::Failed(e) = &dash(&h).shelf.bundles[0].fit else {
        unreachable!()
    };
    assert!(
        e.contains("stopped unexpectedly") && e.contains("a failure injected by a test"),
        "{e}"
    );
    assert!(
        h.query_all_by_label(e).next().is_some(),
        "shown beside the set"
    );
    // The window still works: the Roster lists the sessions, and Train is offered again.
    h.run_steps(3);
    assert!(
        h.query_all_by_label_contains("sessions shown")
            .next()
            .is_some()
    );
    assert!(h.query_by_label("Train").is_some());
}

#[test]
fn without_a_file_dialog_a_typed_path_loads_a_model() {
    let out = scratch("typed-model");
    let model_path = out.join("m.json");
    let script = Arc::new(Script::default());
    let mut h = harness(scripted_setup(
        vec![repo("sample_sessions/vessmire-weekend")],
        &script,
    ));
    step_until(&mut h, "training", trained);
    let model = dash(&h).shelf.bundles[0]
        .learned
        .as_ref()
        .unwrap()
        .training
        .model
        .clone();
    tellturn::models::file::save_model(&model, &model_path).unwrap();
    // The desktop has no dialog to offer.
    script.answer(Answer::Unavailable);
    export_menu(&mut h, "Load a model to score this set…");
    step_until(&mut h, "the Open window", |h| {
        h.query_by_label("Load as model").is_some()
    });
    assert!(
        h.query_all_by_label_contains("No file dialog can be shown")
            .next()
            .is_some(),
        "the window says why it asks for a path"
    );
    h.get_by_label("Path:").click();
    h.run_steps(1);
    h.get_by_label("Path:")
        .type_text(&model_path.display().to_string());
    h.run_steps(1);
    h.get_by_label("Load as model").click();
    step_until(&mut h, "scoring", |h| {
        !dash(h).busy() && dash(h).shelf.bundles[0].loaded.is_some()
    });
    // The model was trained on these very sessions: the view warns about it.
    h.get_by_label("Model check").click();
    h.run_steps(2);
    assert!(
        h.query_all_by_label_contains("the model has seen them")
            .next()
            .is_some()
    );
    let b = &dash(&h).shelf.bundles[0];
    assert_eq!(b.loaded.as_ref().unwrap().path, model_path);
    assert!(b.learned.is_none());
    assert_eq!(b.traces.len(), b.set.sessions.len());
    // Train puts a model trained here back in charge.
    h.get_by_label("Train on this set").click();
    step_until(&mut h, "training again", trained);
    let b = &dash(&h).shelf.bundles[0];
    assert!(b.learned.is_some() && b.loaded.is_none());
    let _ = std::fs::remove_dir_all(&out);
}
