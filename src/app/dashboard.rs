//! The dashboard: the top bar, the list of loaded sets with their problems, the progress line,
//! and the views as tabs. It owns the state and hands each view what it shows.

use super::bundled;
use super::dialogs::{Answer, Ask, Dialogs, Pending};
use super::follow::Follow;
use super::jobs::{CANCELLED, Job};
use super::opener::{Opened, Opener};
use super::palette;
use super::prefs::{ModelPick, Prefs};
use super::saver::{Saver, bytes_writer};
use super::views::decided::DecidedChart;
use super::views::fairness::Fairness;
use super::views::model_check::ModelCheck;
use super::views::replay::Replay;
use super::views::roster::{Roster, RosterAction};
use super::views::side_by_side::SideBySide;
use super::views::swing_makers::SwingMakers;
use super::workspace::{Bundle, Fit, Learned, Loaded, Origin, Scored, Shelf};
use egui::{RichText, Ui};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{Receiver, channel};
use std::time::Instant;
use tellturn::analysis::compare::{CompareParams, CompareSide, Comparison, compare};
use tellturn::analysis::traces::TraceSource;
use tellturn::evaluate::train::{TrainOptions, score_sessions};
use tellturn::sessions::{EventSource, Severity, load_set, load_set_from_reader};

/// The views, in tab order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Tab {
    /// The session table.
    Roster,
    /// One session's trace beside its events.
    Replay,
    /// When each session was decided.
    Decided,
    /// Seat and faction balance.
    Fairness,
    /// Which events swing games.
    Swings,
    /// How good the model is.
    ModelCheck,
    /// Two sets side by side.
    Compare,
}

impl Tab {
    const ALL: [Tab; 7] = [
        Tab::Roster,
        Tab::Replay,
        Tab::Decided,
        Tab::Fairness,
        Tab::Swings,
        Tab::ModelCheck,
        Tab::Compare,
    ];

    /// The tab's title.
    pub fn title(self) -> &'static str {
        match self {
            Tab::Roster => "Roster",
            Tab::Replay => "Replay",
            Tab::Decided => "When decided",
            Tab::Fairness => "Fairness",
            Tab::Swings => "What swings games",
            Tab::ModelCheck => "Model check",
            Tab::Compare => "Compare sets",
        }
    }

    fn help(self) -> &'static str {
        match self {
            Tab::Roster => {
                "Every session of the chosen set in a table: who won, how long it lasted, when it was decided. Sort, filter, and open one in the Replay."
            }
            Tab::Replay => {
                "One session turn by turn: each player's win chance beside the logged events, with the decided turn and the biggest swings marked."
            }
            Tab::Decided => {
                "When each game was decided: every session as a bar of its length with the decided turn marked."
            }
            Tab::Fairness => {
                "Is the game fair? Win rates by seat and by player with intervals, how games were won, how long they lasted."
            }
            Tab::Swings => {
                "Which kinds of events move the win chances most, and at which turns the chances move most."
            }
            Tab::ModelCheck => {
                "How far the win chances can be trusted, measured only on sessions the model never saw."
            }
            Tab::Compare => {
                "Two sets (for example two rule variants) on the same axes, with the differences and whether they are more than chance."
            }
        }
    }
}

/// What a comparison was computed from: both sets, their generations, and the threshold.
type CompareKey = (u64, u64, u64, u64, u64);

/// A short message in the status line.
struct Notice {
    text: String,
    error: bool,
    at: Instant,
}

/// Work the dashboard was asked to do, gathered while drawing and done afterwards.
enum Action {
    Open(PathBuf),
    Close(u64),
    Retrain,
    Follow(u64, bool),
    ExportPng,
    ExportCsv,
    SaveModel,
    LoadModel,
    LoadModelFrom(PathBuf),
    Train(u64),
    ExportReport,
}

/// Settings for tests and benchmarks: smaller training, no bundled samples.
#[derive(Debug, Clone)]
pub struct Setup {
    /// Sets to open at start.
    pub paths: Vec<PathBuf>,
    /// Open the bundled samples when `paths` is empty.
    pub samples: bool,
    /// Training options (the model kind comes from the preferences).
    pub train: TrainOptions,
    /// Bootstrap resamples for event-impact intervals.
    pub bootstrap: usize,
    /// Who answers the file dialogs (the desktop's, unless a test scripts them).
    pub dialogs: Dialogs,
    /// Make every training run panic, to check that a panic becomes a message.
    #[cfg(test)]
    pub panic_in_training: bool,
}

impl Default for Setup {
    fn default() -> Self {
        Self {
            paths: Vec::new(),
            samples: true,
            train: TrainOptions {
                cross_fit: true,
                ..TrainOptions::default()
            },
            bootstrap: 1000,
            dialogs: Dialogs::default(),
            #[cfg(test)]
            panic_in_training: false,
        }
    }
}

/// The whole dashboard.
pub struct Dashboard {
    /// Remembered settings.
    pub prefs: Prefs,
    /// The loaded sets.
    pub shelf: Shelf,
    /// The set the single-set views show.
    pub active: Option<u64>,
    /// The tab in front.
    pub tab: Tab,
    /// Selected session per set.
    pub selected: HashMap<u64, usize>,
    /// The two sets compared.
    pub compare_pair: (Option<u64>, Option<u64>),
    train: TrainOptions,
    bootstrap: usize,
    roster: Roster,
    replay: Replay,
    decided: DecidedChart,
    model_check: ModelCheck,
    fairness: Fairness,
    swing_makers: SwingMakers,
    side_by_side: SideBySide,
    compare_job: Option<(CompareKey, Job<Comparison>)>,
    compare_result: Option<(CompareKey, Result<Comparison, String>)>,
    opener: Opener,
    saver: Saver,
    model_dialog: Option<Pending>,
    follows: Vec<Follow>,
    notices: Vec<Notice>,
    about: bool,
    chart_rect: Option<egui::Rect>,
    shot_next: Option<&'static str>,
    shot: Option<Receiver<Arc<egui::ColorImage>>>,
    shot_rect: Option<(egui::Rect, &'static str)>,
    model_load: Option<(u64, Job<Loaded>)>,
    dialogs: Dialogs,
    #[cfg(test)]
    panic_in_training: bool,
    theme_applied: Option<bool>,
    actions: Vec<Action>,
    ctx: egui::Context,
}

impl Dashboard {
    /// A dashboard with remembered settings, opening `setup.paths` (or the samples).
    pub fn new(ctx: &egui::Context, prefs: Prefs, setup: Setup) -> Self {
        // The arrows and marks used in labels are in the monospace face only: let the
        // proportional face fall back to it.
        let mut fonts = egui::FontDefinitions::default();
        fonts
            .families
            .entry(egui::FontFamily::Proportional)
            .or_default()
            .push("Hack".into());
        ctx.set_fonts(fonts);
        let mut d = Self {
            prefs,
            shelf: Shelf::default(),
            active: None,
            tab: Tab::Roster,
            selected: HashMap::new(),
            compare_pair: (None, None),
            train: setup.train,
            bootstrap: setup.bootstrap,
            roster: Roster::default(),
            replay: Replay::default(),
            decided: DecidedChart::default(),
            model_check: ModelCheck::default(),
            fairness: Fairness,
            swing_makers: SwingMakers::default(),
            side_by_side: SideBySide,
            compare_job: None,
            compare_result: None,
            opener: Opener::with_dialogs(setup.dialogs.clone()),
            saver: Saver::with_dialogs(setup.dialogs.clone()),
            model_dialog: None,
            follows: Vec::new(),
            notices: Vec::new(),
            about: false,
            chart_rect: None,
            shot_next: None,
            shot: None,
            shot_rect: None,
            model_load: None,
            dialogs: setup.dialogs.clone(),
            #[cfg(test)]
            panic_in_training: setup.panic_in_training,
            theme_applied: None,
            actions: Vec::new(),
            ctx: ctx.clone(),
        };
        if !setup.paths.is_empty() {
            for p in &setup.paths {
                d.open_path(ctx, p);
            }
        } else if setup.samples {
            d.open_samples(ctx);
        }
        d
    }

    fn open_samples(&mut self, ctx: &egui::Context) {
        let folders = bundled::sample_folders();
        if !folders.is_empty() {
            for f in folders {
                self.open_path_quiet(ctx, &f, false);
            }
            return;
        }
        for e in bundled::embedded() {
            let id = self.shelf.next_id();
            let name = e.name;
            let job = Job::spawn_quick(
                ctx,
                format!("reading the built-in sample {name}"),
                move |_, _| {
                    let mut set =
                        load_set_from_reader(e.events, EventSource::Csv, Some(e.outcomes));
                    set.name = name.to_string();
                    Ok(set)
                },
            );
            self.shelf
                .bundles
                .push(Bundle::loading(id, Origin::Bundled(name), job));
            self.active.get_or_insert(id);
        }
    }

    /// Open a set folder or events file (reading happens on a worker).
    pub fn open_path(&mut self, ctx: &egui::Context, path: &Path) {
        self.open_path_quiet(ctx, path, true);
    }

    fn open_path_quiet(&mut self, ctx: &egui::Context, path: &Path, remember: bool) {
        let canon = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        if let Some(b) = self.shelf.bundles.iter().find(|b| {
            b.origin
                .path()
                .map(|p| std::fs::canonicalize(p).unwrap_or_else(|_| p.clone()))
                == Some(canon.clone())
        }) {
            self.active = Some(b.id);
            self.notice(format!("{} is already open", path.display()), false);
            return;
        }
        if remember && path.exists() {
            self.prefs.remember(path);
        }
        let id = self.shelf.next_id();
        let p = path.to_path_buf();
        let job = Job::spawn_quick(ctx, format!("reading {}", path.display()), move |_, _| {
            Ok(load_set(&p))
        });
        self.shelf
            .bundles
            .push(Bundle::loading(id, Origin::Disk(path.to_path_buf()), job));
        if remember || self.active.is_none() {
            self.active = Some(id);
        }
        self.fill_compare_pair();
    }

    fn fill_compare_pair(&mut self) {
        let ids: Vec<u64> = self.shelf.bundles.iter().map(|b| b.id).collect();
        let alive = |x: Option<u64>| x.filter(|i| ids.contains(i));
        self.compare_pair.0 = alive(self.compare_pair.0).or(ids.first().copied());
        self.compare_pair.1 = alive(self.compare_pair.1)
            .filter(|&b| Some(b) != self.compare_pair.0)
            .or(ids
                .iter()
                .copied()
                .find(|&i| Some(i) != self.compare_pair.0));
    }

    fn notice(&mut self, text: impl Into<String>, error: bool) {
        self.notices.push(Notice {
            text: text.into(),
            error,
            at: Instant::now(),
        });
        if self.notices.len() > 6 {
            self.notices.remove(0);
        }
    }

    fn start_training(&mut self, ctx: &egui::Context, id: u64) {
        let mut options = self.train.clone();
        options.choice = self.prefs.model.choice();
        let Some(b) = self.shelf.get_mut(id) else {
            return;
        };
        if !b.set.is_usable() || b.loading.is_some() {
            return;
        }
        if let Fit::Running(j) = &b.fit {
            j.cancel();
        }
        let set = b.set.clone();
        let bootstrap = self.bootstrap;
        let title = format!("training on {} ({})", b.name(), self.prefs.model.words());
        #[cfg(test)]
        let panic = self.panic_in_training;
        b.fit = Fit::Running(Job::spawn(ctx, title, move |progress, cancel| {
            #[cfg(test)]
            if panic {
                panic!("a failure injected by a test");
            }
            Learned::compute(&set, &options, bootstrap, progress, cancel)
        }));
    }

    /// Collect finished background work.
    fn poll_jobs(&mut self, ctx: &egui::Context) {
        let threshold = self.prefs.threshold;
        let mut to_train = Vec::new();
        let mut msgs = Vec::new();
        for b in &mut self.shelf.bundles {
            if let Some(j) = &mut b.loading
                && let Some(r) = j.poll()
            {
                b.loading = None;
                match r {
                    Ok(set) => {
                        let usable = set.is_usable();
                        let n = set.sessions.len();
                        let problems = set.problems.len();
                        b.set = Arc::new(set);
                        b.refresh_facts(threshold);
                        if usable {
                            to_train.push(b.id);
                            msgs.push((
                                format!(
                                    "read {}: {n} sessions{}",
                                    b.name(),
                                    if problems > 0 {
                                        format!(", {problems} problem(s) listed on the left")
                                    } else {
                                        String::new()
                                    }
                                ),
                                false,
                            ));
                        } else {
                            msgs.push((
                                format!(
                                    "{} cannot be used — see its problems on the left",
                                    b.name()
                                ),
                                true,
                            ));
                        }
                    }
                    Err(e) => msgs.push((format!("could not read {}: {e}", b.name()), true)),
                }
            }
            if let Fit::Running(j) = &mut b.fit
                && let Some(r) = j.poll()
            {
                match r {
                    Ok(learned) => {
                        let traces = Arc::new(learned.training.traces.clone());
                        b.learned = Some(Arc::new(learned));
                        b.loaded = None;
                        b.fit = Fit::Done;
                        b.set_traces(traces, threshold);
                        msgs.push((format!("training on {} finished", b.name()), false));
                    }
                    Err(e) => {
                        msgs.push((
                            format!("training on {} stopped: {e}", b.name()),
                            e != CANCELLED,
                        ));
                        b.fit = Fit::Failed(e);
                    }
                }
            }
            if let Fit::Scoring(j) = &mut b.fit
                && let Some(r) = j.poll()
            {
                match r {
                    Ok(scored) => {
                        msgs.push((
                            format!(
                                "scored {} with the model from {}",
                                b.name(),
                                scored.loaded.path.display()
                            ),
                            false,
                        ));
                        b.loaded = Some(scored.loaded);
                        b.learned = None;
                        b.fit = Fit::Done;
                        b.set_traces(Arc::new(scored.traces), threshold);
                    }
                    Err(e) => {
                        msgs.push((
                            format!("scoring {} with the loaded model stopped: {e}", b.name()),
                            e != CANCELLED,
                        ));
                        // What was there before (a trained or loaded model) stays in use.
                        b.fit = if b.learned.is_some() || b.loaded.is_some() {
                            Fit::Done
                        } else {
                            Fit::ScoringFailed(e)
                        };
                    }
                }
            }
        }
        for (text, error) in msgs {
            self.notice(text, error);
        }
        for id in to_train {
            self.start_training(ctx, id);
        }
        if let Some((id, j)) = &mut self.model_load
            && let Some(r) = j.poll()
        {
            let id = *id;
            self.model_load = None;
            match r {
                Ok(loaded) => self.start_scoring(ctx, id, loaded),
                Err(e) => self.notice(format!("could not load the model: {e}"), true),
            }
        }
        // Facilitator mode.
        let mut rereads = Vec::new();
        for f in &mut self.follows {
            let Some(b) = self.shelf.get(f.bundle) else {
                continue;
            };
            if let Some(r) = f.tick(ctx, b.model(), &b.set, &b.traces) {
                rereads.push((f.bundle, r));
            }
        }
        for (id, r) in rereads {
            match r {
                Ok(rr) => {
                    if let Some(b) = self.shelf.get_mut(id) {
                        let selected_id = self
                            .selected
                            .get(&id)
                            .and_then(|&k| b.set.sessions.get(k))
                            .map(|s| s.id.clone());
                        b.set = Arc::new(rr.set);
                        b.set_traces(Arc::new(rr.traces), threshold);
                        if let Some(sid) = selected_id
                            && let Some(k) = b.set.sessions.iter().position(|s| s.id == sid)
                        {
                            self.selected.insert(id, k);
                        }
                    }
                }
                Err(e) => self.notice(e, true),
            }
        }
        let (msgs, unavailable) = self.saver.poll(ctx);
        if unavailable {
            self.opener.no_dialogs = true;
        }
        for m in msgs {
            match m {
                Ok(t) => self.notice(t, false),
                Err(t) => self.notice(t, true),
            }
        }
        if let Some(p) = &self.model_dialog
            && let Some(a) = p.poll()
        {
            self.model_dialog = None;
            match a {
                Answer::Chosen(path) => self.load_model_file(ctx, &path),
                Answer::Dismissed => {}
                Answer::Unavailable => {
                    self.opener.no_dialogs = true;
                    self.opener.show(Some(NO_MODEL_DIALOG.into()));
                }
            }
        }
        if let Some(rx) = &self.shot
            && let Ok(img) = rx.try_recv()
        {
            self.shot = None;
            if let Some((rect, view)) = self.shot_rect.take() {
                let ppp = ctx.pixels_per_point();
                match crop(&img, rect, ppp).and_then(|region| encode_png(&region)) {
                    Ok(bytes) => {
                        let name =
                            format!("tellturn-{}.png", view.to_lowercase().replace(' ', "-"));
                        self.saver.begin(
                            ctx,
                            self.opener.no_dialogs,
                            "chart",
                            &name,
                            "png",
                            bytes_writer(bytes),
                        );
                    }
                    Err(e) => self.notice(format!("could not encode the chart: {e}"), true),
                }
            }
        }
    }

    /// Read a model file (on a worker) to score the chosen set with.
    fn load_model_file(&mut self, ctx: &egui::Context, path: &Path) {
        let Some(b) = self.active.and_then(|id| self.shelf.get(id)) else {
            self.notice("open a set first, then load a model to score it", true);
            return;
        };
        if b.loading.is_some() {
            self.notice(
                format!(
                    "{} is still being read; load the model once it is",
                    b.name()
                ),
                true,
            );
            return;
        }
        if !b.set.is_usable() {
            self.notice(
                format!("{} cannot be used, so there is nothing to score", b.name()),
                true,
            );
            return;
        }
        let (id, p) = (b.id, path.to_path_buf());
        let job = Job::spawn_quick(ctx, format!("reading {}", path.display()), move |_, _| {
            let model = tellturn::models::file::load_model(&p).map_err(|e| e.to_string())?;
            Ok(Loaded {
                path: p,
                model: Arc::new(model),
            })
        });
        self.model_load = Some((id, job));
    }

    /// Score every session of a set with a loaded model, instead of training on it: a training
    /// run in progress is stopped.
    fn start_scoring(&mut self, ctx: &egui::Context, id: u64, loaded: Loaded) {
        let Some(b) = self.shelf.get_mut(id) else {
            return;
        };
        if b.loading.is_some() || !b.set.is_usable() {
            return;
        }
        b.cancel();
        let set = b.set.clone();
        let title = format!(
            "scoring {} with {}",
            b.name(),
            loaded
                .path
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default()
        );
        b.fit = Fit::Scoring(Job::spawn(ctx, title, move |progress, cancel| {
            progress.report("scoring sessions", 0.0);
            let sessions: Vec<(usize, usize)> = (0..set.sessions.len()).map(|k| (0, k)).collect();
            let traces = score_sessions(
                &loaded.model,
                &[&set],
                &sessions,
                |_, _| TraceSource::Scored,
                cancel,
            )
            .map_err(|e| e.to_string())?;
            progress.report("scoring sessions", 1.0);
            Ok(Scored { loaded, traces })
        }));
    }

    fn keys_free(ctx: &egui::Context) -> bool {
        ctx.memory(|m| m.focused().is_none())
    }

    /// Draw one frame.
    pub fn ui(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        let threshold = self.prefs.threshold;
        for b in &mut self.shelf.bundles {
            b.poll_facts(&ctx, threshold);
        }
        if self.theme_applied != Some(self.prefs.dark) {
            ctx.set_theme(if self.prefs.dark {
                egui::Theme::Dark
            } else {
                egui::Theme::Light
            });
            self.theme_applied = Some(self.prefs.dark);
        }
        self.poll_jobs(&ctx);
        for p in self.opener.poll() {
            self.actions.push(Action::Open(p));
        }
        for p in Opener::dropped(ui) {
            self.actions.push(Action::Open(p));
        }
        if ctx.input(|i| i.modifiers.command && i.key_pressed(egui::Key::Q)) {
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
        egui::Panel::top("top-bar").show(ui, |ui| self.top_bar(ui));
        egui::Panel::bottom("status").show(ui, |ui| self.status(ui));
        egui::Panel::left("sets")
            .resizable(true)
            .default_size(260.0)
            .show(ui, |ui| self.sets_panel(ui));
        egui::CentralPanel::default().show(ui, |ui| self.central(ui));
        for o in self.opener.window(&ctx, &self.prefs.recent.clone()) {
            self.actions.push(match o {
                Opened::Set(p) => Action::Open(p),
                Opened::Model(p) => Action::LoadModelFrom(p),
            });
        }
        self.saver.window(&ctx);
        self.about_window(&ctx);
        if ui.input(|i| !i.raw.hovered_files.is_empty()) {
            let painter = ctx.layer_painter(egui::LayerId::new(
                egui::Order::Foreground,
                egui::Id::unique("drop-hint"),
            ));
            let rect = ctx.content_rect();
            painter.rect_filled(rect, 0.0, egui::Color32::from_black_alpha(160));
            painter.text(
                rect.center(),
                egui::Align2::CENTER_CENTER,
                "Drop session-set folders or events files to open them",
                egui::FontId::proportional(22.0),
                egui::Color32::WHITE,
            );
        }
        self.take_shot(&ctx);
        self.run_actions(&ctx);
    }

    /// Ask for the screenshot of a chart export, one frame after it was asked for: by then the
    /// Export menu is closed and no longer covers the chart.
    fn take_shot(&mut self, ctx: &egui::Context) {
        let Some(view) = self.shot_next.take() else {
            return;
        };
        match self.chart_rect {
            Some(rect) if rect.is_positive() => {
                let (tx, rx) = channel();
                let c = ctx.clone();
                ctx.request_screenshot(move |img| {
                    let _ = tx.send(img);
                    c.request_repaint();
                });
                self.shot = Some(rx);
                self.shot_rect = Some((rect, view));
            }
            _ => self.notice("this view has no chart to export", true),
        }
    }

    fn run_actions(&mut self, ctx: &egui::Context) {
        for a in std::mem::take(&mut self.actions) {
            match a {
                Action::Open(p) => self.open_path(ctx, &p),
                Action::Close(id) => {
                    if let Some(b) = self.shelf.get(id) {
                        b.cancel();
                    }
                    self.shelf.bundles.retain(|b| b.id != id);
                    self.follows.retain(|f| f.bundle != id);
                    self.selected.remove(&id);
                    if self.active == Some(id) {
                        self.active = self.shelf.bundles.first().map(|b| b.id);
                    }
                    self.fill_compare_pair();
                }
                Action::Retrain => {
                    let ids: Vec<u64> = self.shelf.bundles.iter().map(|b| b.id).collect();
                    for id in ids {
                        match self.shelf.get(id) {
                            Some(b) if b.loaded.is_some() => {
                                let name = b.name().to_string();
                                self.notice(format!("{name} keeps the model loaded from a file; use Train beside it to train on it instead"), false);
                            }
                            _ => self.start_training(ctx, id),
                        }
                    }
                }
                Action::Train(id) => self.start_training(ctx, id),
                Action::Follow(id, on) => {
                    self.follows.retain(|f| f.bundle != id);
                    if on
                        && let Some(b) = self.shelf.get(id)
                        && let Some(p) = b.origin.path()
                    {
                        self.follows.push(Follow::new(id, p, &b.set.files));
                        self.notice(
                            format!(
                                "following {}: new events are scored as they are written",
                                b.name()
                            ),
                            false,
                        );
                    }
                }
                Action::ExportPng => match self.chart_rect {
                    Some(_) if self.shot.is_some() || self.shot_next.is_some() => {
                        self.notice("a chart export is already under way", true)
                    }
                    Some(_) => {
                        self.shot_next = Some(self.tab.title());
                        ctx.request_repaint();
                    }
                    None => self.notice("this view has no chart to export", true),
                },
                Action::ExportCsv => match self.table_csv() {
                    Some((name, csv)) => self.saver.begin(
                        ctx,
                        self.opener.no_dialogs,
                        "table",
                        &name,
                        "csv",
                        bytes_writer(csv.into_bytes()),
                    ),
                    None => self.notice("this view has no table to export yet", true),
                },
                Action::SaveModel => {
                    let learned = self
                        .active
                        .and_then(|id| self.shelf.get(id))
                        .and_then(|b| b.learned.clone().map(|l| (b.name().to_string(), l)));
                    match learned {
                        Some((name, l)) => self.saver.begin(
                            ctx,
                            self.opener.no_dialogs,
                            "model",
                            &format!("{name}-model.json"),
                            "json",
                            Box::new(move |p: &Path, _: &dyn tellturn::progress::Progress, _: &tellturn::progress::Cancel| {
                                tellturn::models::file::save_model(&l.training.model, p).map_err(|e| e.to_string())
                            }),
                        ),
                        None => self.notice("no trained model yet for the chosen set", true),
                    }
                }
                Action::LoadModel => {
                    if self.opener.no_dialogs {
                        self.opener.show(Some(NO_MODEL_DIALOG.into()));
                    } else {
                        self.model_dialog = Some(self.dialogs.show(ctx, Ask::ModelFile));
                    }
                }
                Action::LoadModelFrom(p) => self.load_model_file(ctx, &p),
                Action::ExportReport => self.export_report(ctx),
            }
        }
    }

    /// The report the command line writes (`tellturn report`), for the chosen set or, on the
    /// Compare tab, for the two sets compared. It runs the engine's study on a worker.
    fn export_report(&mut self, ctx: &egui::Context) {
        let mut ids = Vec::new();
        if self.tab == Tab::Compare
            && let (Some(a), Some(b)) = self.compare_pair
            && a != b
        {
            ids = vec![a, b];
        } else if let Some(a) = self.active {
            ids = vec![a];
        }
        let sets: Vec<tellturn::sessions::SessionSet> = ids
            .iter()
            .filter_map(|id| self.shelf.get(*id))
            .filter(|b| b.set.is_usable() && b.loading.is_none())
            .map(|b| (*b.set).clone())
            .collect();
        if sets.is_empty() {
            self.notice("open a usable set first", true);
            return;
        }
        // The folders the sets were read from: the report is never written into one of them.
        let roots: Vec<PathBuf> = sets.iter().map(|s| s.root.clone()).collect();
        let mut train = self.train.clone();
        train.choice = self.prefs.model.choice();
        let options = tellturn::study::StudyOptions {
            train,
            threshold: self.prefs.threshold,
            bootstrap: self.bootstrap,
            ..tellturn::study::StudyOptions::default()
        };
        let name = format!(
            "tellturn-report-{}",
            sets.iter()
                .map(|s| s.name.clone())
                .collect::<Vec<_>>()
                .join("-vs-")
        );
        let mut sets = sets;
        let b: Vec<_> = if sets.len() > 1 {
            sets.split_off(1)
        } else {
            Vec::new()
        };
        let a = sets;
        self.saver.begin(
            ctx,
            self.opener.no_dialogs,
            "report (a folder)",
            &name,
            "",
            Box::new(
                move |out: &Path,
                      progress: &dyn tellturn::progress::Progress,
                      cancel: &tellturn::progress::Cancel| {
                    // Refused before any training, as `tellturn report` does (in the
                    // window's words: there is no --out here).
                    tellturn::report::check_output_dir(&roots, out).map_err(|e| match e {
                        tellturn::report::ReportError::IntoInput { out, input } => format!(
                            "{} is inside the input folder {}; reports are never written into an input folder — choose another folder",
                            out.display(),
                            input.display()
                        ),
                        e => e.to_string(),
                    })?;
                    let study = tellturn::study::run_study(a, b, &options, progress, cancel)
                        .map_err(|e| e.to_string())?;
                    tellturn::report::write_report(&study, out, progress, cancel)
                        .map_err(|e| e.to_string())?;
                    Ok(())
                },
            ),
        );
    }

    /// The table of the view in front as (file name, CSV text), with the rows as shown.
    fn table_csv(&mut self) -> Option<(String, String)> {
        let b = self.shelf.get(self.active?)?;
        match self.tab {
            Tab::Roster | Tab::Replay | Tab::Decided => Some((
                format!("{}-sessions.csv", b.name()),
                self.roster.csv(&b.set, &b.facts, b.id, b.generation),
            )),
            Tab::ModelCheck if b.loaded.is_some() => {
                let rows = ModelCheck::loaded_rows(b.loaded.as_ref()?);
                Some((
                    format!("{}-loaded-model.csv", b.name()),
                    super::views::table::to_csv(
                        &["what", "value"],
                        rows.into_iter().map(|r| r.to_vec()),
                    ),
                ))
            }
            Tab::ModelCheck => {
                let l = b.learned.as_ref()?;
                let q = l.out_of_fold.as_ref()?;
                let rows = ModelCheck::metric_rows(q, l.test_share.as_ref());
                Some((
                    format!("{}-model-check.csv", b.name()),
                    super::views::table::to_csv(
                        &["measure", "out_of_fold", "test_share", "meaning"],
                        rows.into_iter().map(|r| r.to_vec()),
                    ),
                ))
            }
            Tab::Fairness => {
                let bal = b.learned.as_ref()?.balance.as_ref().ok()?;
                Some((format!("{}-fairness.csv", b.name()), Fairness::csv(bal)))
            }
            Tab::Swings => {
                let imp = b.learned.as_ref()?.impact.as_ref().ok()?;
                Some((
                    format!("{}-event-impact.csv", b.name()),
                    self.swing_makers.csv(imp),
                ))
            }
            Tab::Compare => {
                let c = self.compare_result.as_ref()?.1.as_ref().ok()?;
                let rows = super::views::side_by_side::rows(c);
                Some((
                    "comparison.csv".into(),
                    super::views::table::to_csv(
                        &["measure", "a", "b", "difference", "interval", "verdict"],
                        rows.into_iter().map(|r| r.to_vec()),
                    ),
                ))
            }
        }
    }

    fn top_bar(&mut self, ui: &mut Ui) {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("Open", |ui| {
                if ui.button("Session-set folder…").on_hover_text("Choose a folder holding events.csv and outcomes.csv").clicked() {
                    self.opener.browse(ui.ctx(), Ask::Folder);
                    ui.close();
                }
                if ui.button("Events file…").on_hover_text("Choose an events file (CSV or JSON Lines); outcomes.csv is read from the same folder").clicked() {
                    self.opener.browse(ui.ctx(), Ask::EventsFile);
                    ui.close();
                }
                if ui.button("Type a path…").clicked() {
                    self.opener.show(None);
                    ui.close();
                }
                ui.separator();
                if ui.button("Sample sessions").on_hover_text("The invented sample sets that come with tellturn").clicked() {
                    let ctx = ui.ctx().clone();
                    self.open_samples(&ctx);
                    ui.close();
                }
                ui.menu_button("Recent", |ui| {
                    if self.prefs.recent.is_empty() {
                        ui.label("nothing yet");
                    }
                    for p in self.prefs.recent.clone() {
                        if ui.button(p.display().to_string()).clicked() {
                            self.actions.push(Action::Open(p));
                            ui.close();
                        }
                    }
                });
            });
            ui.menu_button("Export", |ui| {
                if ui.button("Report (HTML)…").on_hover_text("The same report `tellturn report` writes — report.html plus CSV and JSON tables — into a folder you choose. On the Compare tab it compares the two sets. It retrains in the background, so it takes a minute.").clicked() {
                    self.actions.push(Action::ExportReport);
                    ui.close();
                }
                if ui.button("Current chart as PNG…").on_hover_text("Save the main chart of the view in front as an image").clicked() {
                    self.actions.push(Action::ExportPng);
                    ui.close();
                }
                if ui.button("Current table as CSV…").on_hover_text("Save the table of the view in front (as filtered and sorted) for a spreadsheet").clicked() {
                    self.actions.push(Action::ExportCsv);
                    ui.close();
                }
                ui.separator();
                if ui.button("Save model…").on_hover_text("Save the trained model of the chosen set, to score new sessions later (also with `tellturn score`)").clicked() {
                    self.actions.push(Action::SaveModel);
                    ui.close();
                }
                if ui.button("Load a model to score this set…").on_hover_text("Score every session of the chosen set with a model saved earlier, instead of the one trained here").clicked() {
                    self.actions.push(Action::LoadModel);
                    ui.close();
                }
            });
            ui.separator();
            let l = ui.label("Model:");
            let before = self.prefs.model;
            egui::ComboBox::from_id_salt("model-kind")
                .selected_text(self.prefs.model.words())
                .show_ui(ui, |ui| {
                    for m in [ModelPick::Auto, ModelPick::Boosted, ModelPick::Logistic] {
                        ui.selectable_value(&mut self.prefs.model, m, m.words());
                    }
                })
                .response
                .labelled_by(l.id)
                .on_hover_text("Which kind of model learns the win chances. \"Auto\" fits both and keeps the one that predicts held-out sessions better. Changing it retrains in the background.");
            if self.prefs.model != before {
                self.actions.push(Action::Retrain);
            }
            ui.separator();
            let l = ui.label("Decided at:");
            let mut t = self.prefs.threshold;
            ui.add(
                egui::Slider::new(&mut t, 0.55..=0.99)
                    .fixed_decimals(2)
                    .custom_formatter(|v, _| format!("{:.0} %", 100.0 * v))
                    .custom_parser(|s| s.trim().trim_end_matches('%').trim().parse::<f64>().ok().map(|v| if v > 1.0 { v / 100.0 } else { v })),
            )
            .labelled_by(l.id)
            .on_hover_text("The threshold: a game counts as decided from the first turn at which the eventual winner's win chance reached this level and never fell below it again. Higher = stricter.");
            for preset in [0.75, 0.9] {
                if ui
                    .selectable_label((t - preset).abs() < 1e-9, format!("{:.0} %", 100.0 * preset))
                    .on_hover_text(format!("Set the threshold to {:.0} %", 100.0 * preset))
                    .clicked()
                {
                    t = preset;
                }
            }
            if (t - self.prefs.threshold).abs() > 1e-12 {
                self.set_threshold(t);
            }
            ui.separator();
            let theme = if self.prefs.dark { "Light theme" } else { "Dark theme" };
            if ui.button(theme).on_hover_text("Switch between the dark and the light theme").clicked() {
                self.prefs.dark = !self.prefs.dark;
            }
            if ui.button("About").clicked() {
                self.about = !self.about;
            }
        });
    }

    /// Change the threshold: decided turns are recomputed from the traces, no retraining.
    pub fn set_threshold(&mut self, t: f64) {
        self.prefs.threshold = t;
        let ctx = self.ctx.clone();
        for b in &mut self.shelf.bundles {
            b.refresh_facts_later(&ctx, t);
        }
    }

    fn status(&mut self, ui: &mut Ui) {
        let mut cancel = None;
        let busy: Vec<(u64, String, super::jobs::Stage, f32, bool)> = self
            .shelf
            .bundles
            .iter()
            .filter_map(|b| b.busy().map(|(t, s, secs, c)| (b.id, t, s, secs, c)))
            .collect();
        // Jobs run one at a time in the work pool; the first that reported progress is running.
        let running = busy
            .iter()
            .position(|b| b.2.name != "starting")
            .unwrap_or(0);
        if let Some((id, title, stage, secs, cancelling)) = busy.get(running) {
            ui.horizontal(|ui| {
                let text = if *cancelling {
                    format!("{title}: stopping…")
                } else {
                    format!("{title}: {} {:.0} % ({secs:.0} s)", stage.name, 100.0 * stage.fraction)
                };
                ui.add(egui::ProgressBar::new(stage.fraction).desired_width(560.0).animate(true).text(text))
                    .on_hover_text("Work runs in the background; the window stays usable. Results appear as soon as it finishes.");
                if ui.button("Cancel").on_hover_text(format!("Stop {title}")).clicked() {
                    cancel = Some(*id);
                }
                let waiting: Vec<&str> = busy.iter().enumerate().filter(|(i, _)| *i != running).map(|(_, b)| b.1.as_str()).collect();
                if !waiting.is_empty() {
                    ui.label(format!("then {} more", waiting.len()))
                        .on_hover_text(format!("Waiting their turn (one at a time, so the window keeps a processor core):\n{}", waiting.join("\n")));
                }
            });
        }
        if let Some(id) = cancel
            && let Some(b) = self.shelf.get(id)
        {
            b.cancel();
        }
        let mut cancel_save = None;
        for (i, (title, stage, secs, cancelling)) in self.saver.busy().into_iter().enumerate() {
            ui.horizontal(|ui| {
                let text = if cancelling {
                    format!("{title}: stopping…")
                } else {
                    format!(
                        "{title}: {} {:.0} % ({secs:.0} s)",
                        stage.name,
                        100.0 * stage.fraction
                    )
                };
                ui.add(
                    egui::ProgressBar::new(stage.fraction)
                        .desired_width(560.0)
                        .animate(true)
                        .text(text),
                );
                if ui
                    .button("Cancel")
                    .on_hover_text(format!("Stop {title}"))
                    .clicked()
                {
                    cancel_save = Some(i);
                }
            });
        }
        if let Some(i) = cancel_save {
            self.saver.cancel(i);
        }
        let mut dismiss = None;
        for (i, n) in self.notices.iter().enumerate().rev().take(2) {
            if !n.error && n.at.elapsed().as_secs() > 12 {
                continue;
            }
            ui.horizontal(|ui| {
                let text = RichText::new(&n.text);
                if n.error {
                    ui.label(text.color(palette::warn(ui.visuals().dark_mode)));
                } else {
                    ui.label(text);
                }
                if n.error
                    && ui
                        .small_button("×")
                        .on_hover_text("Dismiss this message")
                        .clicked()
                {
                    dismiss = Some(i);
                }
            });
        }
        if let Some(i) = dismiss {
            self.notices.remove(i);
        }
        if self.notices.iter().any(|n| !n.error) {
            ui.ctx()
                .request_repaint_after(std::time::Duration::from_secs(1));
        }
    }

    fn sets_panel(&mut self, ui: &mut Ui) {
        ui.heading("Session sets").on_hover_text(
            "Every set you opened. Click one to show it in the views; Compare uses two.",
        );
        if self.shelf.bundles.is_empty() {
            ui.label("Nothing open yet. Use Open in the top bar, or drop a session-set folder onto the window.");
        }
        let mut close = None;
        let mut follow = None;
        let mut train = None;
        for b in &self.shelf.bundles {
            let active = self.active == Some(b.id);
            ui.horizontal(|ui| {
                if ui
                    .selectable_label(active, RichText::new(b.name()).strong())
                    .on_hover_text(match &b.origin {
                        Origin::Disk(p) => format!("Show this set in the views\n{}", p.display()),
                        Origin::Bundled(_) => {
                            "Show this set in the views (a sample built into the program)"
                                .to_string()
                        }
                    })
                    .clicked()
                {
                    self.active = Some(b.id);
                }
                if ui
                    .small_button("×")
                    .on_hover_text(format!("Close {}", b.name()))
                    .clicked()
                {
                    close = Some(b.id);
                }
            });
            let status = if b.loading.is_some() {
                "reading…".to_string()
            } else if !b.set.is_usable() {
                "cannot be used — see problems".to_string()
            } else {
                let fin = b.set.finished().count();
                let open = b.set.sessions.len() - fin;
                let fit = match &b.fit {
                    Fit::Running(j) if j.stage().name == "starting" => "waiting to train".into(),
                    Fit::Running(j) => format!(
                        "training: {} {:.0} %",
                        j.stage().name,
                        100.0 * j.stage().fraction
                    ),
                    Fit::Scoring(_) => "scoring with the loaded model".into(),
                    Fit::Failed(e) if e == CANCELLED => "training cancelled".into(),
                    Fit::Failed(_) => "training failed".into(),
                    Fit::ScoringFailed(_) => "scoring failed".into(),
                    Fit::Done if b.loaded.is_some() => "ready (loaded model)".into(),
                    Fit::Done => "ready".into(),
                    Fit::Idle => String::new(),
                };
                format!(
                    "{fin} finished{} · {fit}",
                    if open > 0 {
                        format!(", {open} in progress")
                    } else {
                        String::new()
                    }
                )
            };
            ui.small(status);
            if let Fit::Failed(e) | Fit::ScoringFailed(e) = &b.fit
                && e != CANCELLED
            {
                ui.label(
                    RichText::new(e)
                        .color(palette::warn(ui.visuals().dark_mode))
                        .small(),
                );
            }
            let can_train = b.loading.is_none()
                && b.set.is_usable()
                && !matches!(b.fit, Fit::Running(_) | Fit::Scoring(_))
                && (b.learned.is_none() || b.loaded.is_some());
            if can_train
                && ui
                    .small_button("Train")
                    .on_hover_text(format!(
                        "Train a model on {} ({}), checked on sessions it never saw; it replaces any model loaded from a file",
                        b.name(),
                        self.prefs.model.words()
                    ))
                    .clicked()
            {
                train = Some(b.id);
            }
            if b.origin.path().is_some() && b.set.is_usable() {
                let mut on = self.follows.iter().any(|f| f.bundle == b.id);
                if ui
                    .checkbox(&mut on, "Follow live log")
                    .on_hover_text("Facilitator mode: for a session that is still being played and logged, re-read the file whenever it changes and update the chances within about a second, using the model already trained (no retraining).")
                    .changed()
                {
                    follow = Some((b.id, on));
                }
                if let Some(f) = self.follows.iter().find(|f| f.bundle == b.id) {
                    let ago = f
                        .last_update
                        .map(|t| format!("{:.0} s ago", t.elapsed().as_secs_f32()))
                        .unwrap_or_else(|| "waiting for changes".into());
                    ui.small(format!("live: {} update(s), last {ago}", f.updates));
                }
            }
            ui.add_space(4.0);
        }
        if let Some(id) = close {
            self.actions.push(Action::Close(id));
        }
        if let Some(id) = train {
            self.actions.push(Action::Train(id));
        }
        if let Some((id, on)) = follow {
            self.actions.push(Action::Follow(id, on));
        }
        ui.separator();
        if let Some(b) = self.active.and_then(|id| self.shelf.get(id)) {
            Self::problems(ui, b);
        }
    }

    fn problems(ui: &mut Ui, b: &Bundle) {
        let (unusable, aside, warnings) = b.problem_counts();
        ui.heading(format!("Problems in {}", b.name()))
            .on_hover_text("What was wrong in the files, as file:line: message. Bad lines are skipped or their sessions set aside; the rest still loads.");
        if b.set.problems.is_empty() {
            ui.label(if b.loading.is_some() {
                "reading…"
            } else {
                "none found"
            });
            return;
        }
        ui.label(format!(
            "{unusable} make the set unusable · {aside} set a session aside · {warnings} warnings"
        ));
        egui::ScrollArea::vertical()
            .id_salt("problems")
            .auto_shrink([false, true])
            .show(ui, |ui| {
                for p in b.set.problems.iter().take(500) {
                    let text = RichText::new(format!("{} — {}", p.severity.word(), p)).small();
                    match p.severity {
                        Severity::Unusable | Severity::SetAside => {
                            ui.label(text.color(palette::warn(ui.visuals().dark_mode)))
                        }
                        Severity::Warning => ui.label(text),
                    };
                }
                if b.set.problems.len() > 500 {
                    ui.label(format!(
                        "… and {} more (run `tellturn check` for all)",
                        b.set.problems.len() - 500
                    ));
                }
            });
    }

    fn central(&mut self, ui: &mut Ui) {
        ui.horizontal_wrapped(|ui| {
            for t in Tab::ALL {
                ui.selectable_value(&mut self.tab, t, RichText::new(t.title()).size(15.0))
                    .on_hover_text(t.help());
            }
        });
        ui.separator();
        self.chart_rect = None;
        if self.tab == Tab::Compare {
            self.compare_tab(ui);
            return;
        }
        let Some(id) = self.active else {
            ui.label("Open a session set to begin (Open in the top bar, or drop a folder onto the window).");
            return;
        };
        let Some(b) = self.shelf.get(id) else { return };
        if b.loading.is_some() {
            ui.spinner();
            ui.label(format!("Reading {}…", b.name()));
            return;
        }
        if !b.set.is_usable() {
            ui.label(
                RichText::new(format!("{} cannot be used.", b.name()))
                    .strong()
                    .color(palette::warn(ui.visuals().dark_mode)),
            );
            ui.label("Its problems are listed on the left (file:line: message). Fix the files and open the set again.");
            return;
        }
        let keys = Self::keys_free(ui.ctx());
        let threshold = self.prefs.threshold;
        let (set, facts, generation) = (b.set.clone(), b.facts.clone(), b.generation);
        match self.tab {
            Tab::Roster => {
                let mut sel = self.selected.get(&id).copied();
                let action = self
                    .roster
                    .ui(ui, &set, &facts, id, generation, &mut sel, keys);
                if let Some(k) = sel {
                    self.selected.insert(id, k);
                }
                if let RosterAction::Open(k) = action {
                    self.selected.insert(id, k);
                    self.tab = Tab::Replay;
                }
            }
            Tab::Replay => {
                let k = match self.selected.get(&id) {
                    Some(&k) if k < set.sessions.len() => k,
                    _ => {
                        if set.sessions.is_empty() {
                            ui.label("This set has no sessions.");
                            return;
                        }
                        // Prefer a session still in progress: that is what a facilitator watches.
                        set.sessions
                            .iter()
                            .position(|s| !s.is_finished())
                            .unwrap_or(0)
                    }
                };
                self.selected.insert(id, k);
                ui.horizontal(|ui| {
                    if ui.button("◀ previous session").on_hover_text("The session before this one in the set").clicked() && k > 0 {
                        self.selected.insert(id, k - 1);
                    }
                    if ui.button("next session ▶").on_hover_text("The session after this one in the set").clicked() && k + 1 < set.sessions.len() {
                        self.selected.insert(id, k + 1);
                    }
                    ui.label("· ←/→ step through turns · hover the chart for a turn's events · click it to jump the log there");
                });
                let b = self.shelf.get(id).expect("checked above");
                let trace = b.trace(k).cloned();
                self.chart_rect = self.replay.ui(
                    ui,
                    &set,
                    id,
                    k,
                    trace.as_ref(),
                    facts.get(k),
                    threshold,
                    keys,
                );
            }
            Tab::Decided => {
                let (rect, open) = self.decided.ui(ui, &set, &facts, id, generation, threshold);
                self.chart_rect = rect;
                if let Some(k) = open {
                    self.selected.insert(id, k);
                    self.tab = Tab::Replay;
                }
            }
            Tab::ModelCheck => match (b.learned.clone(), &b.loaded) {
                (_, Some(loaded)) => {
                    let scored = b.traces.len();
                    if ModelCheck::loaded_ui(ui, loaded, b.name(), scored) {
                        self.actions.push(Action::Train(id));
                    }
                }
                (Some(l), None) => self.chart_rect = self.model_check.ui(ui, &l),
                (None, None) => Self::waiting_for_training(ui, b),
            },
            Tab::Fairness => match b.learned.clone() {
                Some(l) => match &l.balance {
                    Ok(bal) => self.chart_rect = self.fairness.ui(ui, bal),
                    Err(e) => {
                        ui.label(format!("Balance not available: {e}"));
                    }
                },
                None => Self::waiting_for_training(ui, b),
            },
            Tab::Swings => match b.learned.clone() {
                Some(l) => {
                    self.chart_rect = self.swing_makers.ui(
                        ui,
                        l.impact.as_ref().map_err(String::as_str),
                        l.leverage.as_ref().map_err(String::as_str),
                    )
                }
                None => Self::waiting_for_training(ui, b),
            },
            Tab::Compare => unreachable!("handled above"),
        }
    }

    /// What a view that needs a training run says while there is none.
    fn waiting_for_training(ui: &mut Ui, b: &Bundle) {
        let warn = palette::warn(ui.visuals().dark_mode);
        match &b.fit {
            _ if b.loaded.is_some() => ui.label(format!(
                "{} is scored with a model loaded from a file. This view needs a training run on this set (Train, in the list of sets on the left); the Roster, Replay and When-decided views use the loaded model's chances.",
                b.name()
            )),
            Fit::Failed(e) if e == CANCELLED => ui.label("Training was cancelled. Press Train beside the set on the left to start it again."),
            Fit::Failed(e) => ui.label(RichText::new(format!("Training stopped: {e}")).color(warn)),
            Fit::ScoringFailed(e) => ui.label(RichText::new(format!("Scoring with the loaded model stopped: {e}")).color(warn)),
            Fit::Scoring(_) => ui.label("Scoring with the loaded model (see the progress bar below)…"),
            Fit::Idle | Fit::Done => ui.label("No model yet for this set: press Train beside it on the left."),
            Fit::Running(_) => ui.label("Training is running in the background (see the progress bar below); this view fills in when it finishes."),
        };
    }

    fn compare_tab(&mut self, ui: &mut Ui) {
        self.fill_compare_pair();
        if self.shelf.bundles.len() < 2 {
            ui.label("Open two session sets to compare them (for example two rule variants): Open in the top bar, or drop a second folder onto the window.");
            return;
        }
        let names: Vec<(u64, String)> = self
            .shelf
            .bundles
            .iter()
            .map(|b| (b.id, b.name().to_string()))
            .collect();
        let name_of = |id: Option<u64>| {
            names
                .iter()
                .find(|n| Some(n.0) == id)
                .map(|n| n.1.clone())
                .unwrap_or_default()
        };
        ui.horizontal(|ui| {
            for (slot, title, help) in [
                (0, "Reference (A):", "The set the other is measured against, e.g. the current rules."),
                (1, "Variant (B):", "The set compared with the reference, e.g. the changed rules. Differences are B − A."),
            ] {
                let l = ui.label(title);
                let current = if slot == 0 { self.compare_pair.0 } else { self.compare_pair.1 };
                let mut chosen = current;
                egui::ComboBox::from_id_salt(("compare-pick", slot))
                    .selected_text(name_of(current))
                    .show_ui(ui, |ui| {
                        for (id, n) in &names {
                            ui.selectable_value(&mut chosen, Some(*id), n);
                        }
                    })
                    .response
                    .labelled_by(l.id)
                    .on_hover_text(help);
                if chosen != current {
                    if slot == 0 {
                        self.compare_pair.0 = chosen;
                    } else {
                        self.compare_pair.1 = chosen;
                    }
                }
            }
            if ui.button("⇄ swap").on_hover_text("Swap the reference and the variant").clicked() {
                self.compare_pair = (self.compare_pair.1, self.compare_pair.0);
            }
        });
        ui.separator();
        let (Some(ia), Some(ib)) = self.compare_pair else {
            return;
        };
        if ia == ib {
            ui.label("Choose two different sets.");
            return;
        }
        let (Some(a), Some(b)) = (self.shelf.get(ia), self.shelf.get(ib)) else {
            return;
        };
        let threshold = self.prefs.threshold;
        let key: CompareKey = (ia, a.generation, ib, b.generation, threshold.to_bits());
        let ready = a.learned.is_some() && b.learned.is_some();
        if ready
            && self.compare_result.as_ref().map(|r| r.0) != Some(key)
            && self.compare_job.as_ref().map(|j| j.0) != Some(key)
        {
            let (sa, sb) = (a.set.clone(), b.set.clone());
            let (ta, tb) = (a.traces.clone(), b.traces.clone());
            let (na, nb) = (a.name().to_string(), b.name().to_string());
            let (ma, mb) = (
                a.learned
                    .as_ref()
                    .map(|l| l.training.model.summary.choice.clone())
                    .unwrap_or_default(),
                b.learned
                    .as_ref()
                    .map(|l| l.training.model.summary.choice.clone())
                    .unwrap_or_default(),
            );
            let job = Job::spawn_quick(ui.ctx(), "comparing", move |_, _| {
                let tb: Vec<tellturn::analysis::traces::Trace> = tb
                    .iter()
                    .map(|t| {
                        let mut t = t.clone();
                        t.set = 1;
                        t
                    })
                    .collect();
                let refs_a: Vec<&tellturn::analysis::traces::Trace> = ta.iter().collect();
                let refs_b: Vec<&tellturn::analysis::traces::Trace> = tb.iter().collect();
                let side_a = CompareSide {
                    name: na,
                    model: ma,
                    traces: refs_a,
                };
                let side_b = CompareSide {
                    name: nb,
                    model: mb,
                    traces: refs_b,
                };
                compare(
                    &[&sa, &sb],
                    &side_a,
                    &side_b,
                    &CompareParams {
                        threshold,
                        ..CompareParams::default()
                    },
                )
                .map_err(|e| e.to_string())
            });
            self.compare_job = Some((key, job));
        }
        if let Some((k, j)) = &mut self.compare_job
            && let Some(r) = j.poll()
        {
            self.compare_result = Some((*k, r));
            self.compare_job = None;
        }
        let result = self
            .compare_result
            .as_ref()
            .filter(|r| r.0 == key)
            .map(|r| &r.1);
        if !ready {
            let loaded: Vec<&str> = [a, b]
                .iter()
                .filter(|x| x.loaded.is_some())
                .map(|x| x.name())
                .collect();
            if loaded.is_empty() {
                ui.label("Both sets need a trained model first; training runs in the background (see the progress bar below).");
            } else {
                ui.label(format!(
                    "The comparison needs a training run on both sets: {} scored with a model loaded from a file. Press Train beside it on the left.",
                    if loaded.len() == 1 {
                        format!("{} is", loaded[0])
                    } else {
                        format!("{} and {} are", loaded[0], loaded[1])
                    }
                ));
            }
        }
        let (da, db) = (a.decisions.clone(), b.decisions.clone());
        let (na, nb) = (a.name().to_string(), b.name().to_string());
        let result = if ready {
            result.cloned()
        } else {
            Some(Err("waiting for training".into()))
        };
        self.chart_rect = self.side_by_side.ui(
            ui,
            (&na, &nb),
            (da.as_deref(), db.as_deref()),
            result.as_ref(),
            threshold,
        );
    }

    fn about_window(&mut self, ctx: &egui::Context) {
        let mut open = self.about;
        egui::Window::new("About tellturn").open(&mut open).collapsible(false).default_width(460.0).show(ctx, |ui| {
            ui.label(format!("tellturn {}", env!("CARGO_PKG_VERSION")));
            ui.label("tellturn learns, from recorded playtest or training-exercise sessions, how each player's chance of winning moved turn by turn. From that it shows when each game was decided, what swung it, whether the game is fair between seats, and whether a rule variant changed that.");
            ui.add_space(6.0);
            ui.label(RichText::new("Caution").strong().color(palette::warn(ui.visuals().dark_mode)));
            ui.label("Results describe the recorded sessions only. They are estimates from a model, not facts about real-world events, and must not be used to make operational decisions.");
            ui.add_space(6.0);
            ui.label("Words used here:");
            ui.label("• win chance — the model's estimate that a player wins, after a turn's events.");
            ui.label("• decided turn — the first turn from which the eventual winner's win chance stays at or above the threshold to the end.");
            ui.label("• settled share — the share of a session's turns played after it was decided.");
            ui.label("• swing — how much a player's win chance changed across one turn.");
            ui.label("• out-of-fold — predicted by a model that never saw that session.");
            ui.add_space(6.0);
            ui.small("Keyboard: ↑/↓ move through sessions in the Roster, Enter opens one, ←/→ step through turns in the Replay, Ctrl+Q quits.");
        });
        self.about = open;
    }

    /// Whether background work is running (for tests and benchmarks).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn busy(&self) -> bool {
        self.shelf.any_busy() || self.model_load.is_some()
    }

    /// The main chart's rectangle in the last frame, if the view has one (for tests).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn chart_rect(&self) -> Option<egui::Rect> {
        self.chart_rect
    }

    /// Whether nothing is being saved or asked for (for tests).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn saves_idle(&self) -> bool {
        self.saver.is_idle() && self.shot.is_none() && self.shot_next.is_none()
    }

    /// The latest messages of the status line, oldest first (for tests).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn notices(&self) -> Vec<(String, bool)> {
        self.notices
            .iter()
            .map(|n| (n.text.clone(), n.error))
            .collect()
    }

    /// Select a session and bring the Replay to the front (for tests).
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn open_session(&mut self, k: usize) {
        if let Some(id) = self.active {
            self.selected.insert(id, k);
            self.tab = Tab::Replay;
        }
    }
}

/// What the Open window says when no dialog can choose a model file.
const NO_MODEL_DIALOG: &str = "No file dialog can be shown on this desktop. Type or paste the path of the model file below and press \"Load as model\".";

/// The part of a screenshot inside `rect` (in points), clipped to the image: the window may
/// have changed size between the request and the picture.
fn crop(img: &egui::ColorImage, rect: egui::Rect, ppp: f32) -> Result<egui::ColorImage, String> {
    let [w, h] = img.size;
    let px = |v: f32, max: usize| ((v * ppp).round().max(0.0) as usize).min(max);
    let (x0, x1) = (px(rect.min.x, w), px(rect.max.x, w));
    let (y0, y1) = (px(rect.min.y, h), px(rect.max.y, h));
    if x1 <= x0 || y1 <= y0 {
        return Err("the chart was not on screen when the picture was taken".into());
    }
    Ok(img.region_by_pixels([x0, y0], [x1 - x0, y1 - y0]))
}

/// Encode an image as PNG bytes.
fn encode_png(img: &egui::ColorImage) -> Result<Vec<u8>, String> {
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, img.size[0] as u32, img.size[1] as u32);
        enc.set_color(png::ColorType::Rgba);
        enc.set_depth(png::BitDepth::Eight);
        let mut w = enc.write_header().map_err(|e| e.to_string())?;
        w.write_image_data(img.as_raw())
            .map_err(|e| e.to_string())?;
    }
    Ok(out)
}
