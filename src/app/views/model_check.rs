//! Model check: how trustworthy the win chances are, measured only on sessions the model never
//! saw — accuracy and log loss by turn or by tenth of the game with interval bands, the
//! calibration chart, the learning curve, the metrics table and the choice of model kind.

use crate::app::palette;
use crate::app::workspace::{Learned, Loaded};
use egui::{RichText, Ui};
use egui_plot::{FilledArea, HLine, Legend, Line, MarkerShape, Plot, PlotPoints, Points};
use tellturn::evaluate::quality::{CurvePoint, Quality};
use tellturn::models::win_model::ModelKind;

/// The view's own state.
#[derive(Default)]
pub struct ModelCheck {
    by_tenth: bool,
}

fn opt(x: Option<f64>, digits: usize) -> String {
    x.map(|v| format!("{v:.digits$}"))
        .unwrap_or_else(|| "—".into())
}

fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

impl ModelCheck {
    /// Draw the view; returns the first chart's rectangle.
    pub fn ui(&mut self, ui: &mut Ui, learned: &Learned) -> Option<egui::Rect> {
        let t = &learned.training;
        ui.label(RichText::new(format!("Model: {}", t.model.summary.choice)).strong())
            .on_hover_text("Which kind of model was fitted and why: the candidates were compared on sessions left out of fitting, and the one with the lowest log loss won.");
        for note in &t.notes {
            ui.label(
                RichText::new(format!("Note: {note}")).color(palette::warn(ui.visuals().dark_mode)),
            );
        }
        let Some(q) = learned.out_of_fold.as_ref() else {
            ui.label("Too few finished sessions to check the model on sessions it never saw.");
            return None;
        };
        ui.horizontal(|ui| {
            ui.label("Curves by:");
            ui.selectable_value(&mut self.by_tenth, false, "turn number")
                .on_hover_text("Each point uses every session still running at that turn (points with fewer than 10 sessions are left out).");
            ui.selectable_value(&mut self.by_tenth, true, "tenth of the game")
                .on_hover_text("Each game cut into ten equal parts, so short and long games line up: 1 = the first tenth, 10 = the end.");
            ui.label(format!("· {} finished sessions, every one scored by a model that never saw it (out-of-fold)", q.sessions))
                .on_hover_text("Out-of-fold: the sessions were split into groups; each group was scored by a model fitted on the other groups only. So these figures are honest about sessions the model has not seen.");
        });
        let curve: &[CurvePoint] = if self.by_tenth {
            &q.by_tenth
        } else {
            &q.by_turn
        };
        let x_label = if self.by_tenth {
            "tenth of the game"
        } else {
            "turn"
        };
        let dark = ui.visuals().dark_mode;
        let h = ((ui.available_height() - 200.0) / 2.0).clamp(150.0, 320.0);
        let mut rect = None;
        ui.columns(2, |cols| {
            cols[0].label(RichText::new("How often the favourite went on to win").strong())
                .on_hover_text("Accuracy: the share of sessions in which the player with the highest win chance at that point went on to win. The band is a 95 % Wilson interval.");
            let (_, full) = super::show_plot(&mut cols[0], Plot::new("model-accuracy")
                .height(h)
                .include_y(0.0)
                .include_y(1.0)
                .x_axis_label(x_label)
                .y_axis_label("accuracy")
                .y_axis_formatter(|m, _| format!("{:.0} %", 100.0 * m.value))
                .allow_scroll(false)
                .legend(Legend::default())
                ,
|p| {
                    let xs: Vec<f64> = curve.iter().map(|c| c.x as f64).collect();
                    let lo: Vec<f64> = curve.iter().map(|c| c.accuracy_interval.lo).collect();
                    let hi: Vec<f64> = curve.iter().map(|c| c.accuracy_interval.hi).collect();
                    p.add(FilledArea::new("95 % interval", &xs, &lo, &hi).fill_color(palette::band(palette::series(dark, 0))));
                    p.line(Line::new("accuracy", PlotPoints::from_iter(curve.iter().map(|c| [c.x as f64, c.accuracy]))).color(palette::series(dark, 0)).width(2.0));
                    p.hline(HLine::new("coin toss (50 %)", 0.5).color(palette::neutral(dark)));
                });
            rect = Some(full);
            cols[1].label(RichText::new("Log loss (lower is better)").strong())
                .on_hover_text("Log loss punishes confident wrong chances hard. The band is ±1.96 standard errors across sessions. The grey line is the loss of chances from the seat alone, before anything happened.");
            Plot::new("model-logloss")
                .height(h)
                .include_y(0.0)
                .x_axis_label(x_label)
                .y_axis_label("log loss")
                .allow_scroll(false)
                .legend(Legend::default())
                .show(&mut cols[1], |p| {
                    let xs: Vec<f64> = curve.iter().map(|c| c.x as f64).collect();
                    let lo: Vec<f64> = curve.iter().map(|c| (c.log_loss - 1.96 * c.log_loss_se).max(0.0)).collect();
                    let hi: Vec<f64> = curve.iter().map(|c| c.log_loss + 1.96 * c.log_loss_se).collect();
                    p.add(FilledArea::new("±1.96 SE", &xs, &lo, &hi).fill_color(palette::band(palette::series(dark, 1))));
                    p.line(Line::new("log loss", PlotPoints::from_iter(curve.iter().map(|c| [c.x as f64, c.log_loss]))).color(palette::series(dark, 1)).width(2.0));
                    if q.seat_only_log_loss.is_finite() {
                        p.hline(HLine::new("seat alone", q.seat_only_log_loss).color(palette::neutral(dark)));
                    }
                });
            cols[0].label(RichText::new("Calibration: do 70 % chances come true 70 % of the time?").strong())
                .on_hover_text("Each point groups turns by the chance given (x) and shows how often that player actually won (y), with a 95 % interval. Points on the diagonal mean the chances can be taken at face value.");
            Plot::new("model-calibration")
                .height(h)
                .data_aspect(1.0)
                .include_x(0.0)
                .include_x(1.0)
                .include_y(0.0)
                .include_y(1.0)
                .x_axis_label("chance given")
                .y_axis_label("share that won")
                .allow_scroll(false)
                .show(&mut cols[0], |p| {
                    p.line(Line::new("perfect calibration", PlotPoints::from(vec![[0.0, 0.0], [1.0, 1.0]])).color(palette::neutral(dark)).style(egui_plot::LineStyle::Dashed { length: 6.0 }));
                    let mut pts = Vec::new();
                    for b in &q.reliability.bins {
                        if let (Some(x), Some(y)) = (b.mean_predicted, b.observed_rate) {
                            pts.push([x, y]);
                            p.line(Line::new("95 % interval", PlotPoints::from(vec![[x, b.interval.lo], [x, b.interval.hi]])).color(palette::series(dark, 2)).width(1.5));
                        }
                    }
                    p.points(Points::new("observed", PlotPoints::from(pts)).shape(MarkerShape::Circle).radius(4.0).filled(true).color(palette::series(dark, 2)));
                });
            let answer = match tellturn::evaluate::train::loss_fall_per_doubling(&t.learning_curve) {
                Some(f) if f > tellturn::evaluate::train::STILL_IMPROVING_PER_DOUBLING => format!(" Likely: {f:.3} lower per doubling."),
                Some(f) => format!(" Little: {f:.3} lower per doubling."),
                None => String::new(),
            };
            cols[1].label(RichText::new(format!("Learning curve: would more sessions help?{answer}")).strong())
                .on_hover_text("Held-out log loss of models fitted on growing numbers of training sessions. The answer is the fall in log loss per doubling of the sessions over the three largest fits: above 0.005 (our rule of thumb) more recorded sessions would likely sharpen the chances; at or below it, more of the same would add little.");
            Plot::new("model-learning")
                .height(h)
                .x_axis_label("training sessions")
                .y_axis_label("held-out log loss")
                .allow_scroll(false)
                .show(&mut cols[1], |p| {
                    let pts: Vec<[f64; 2]> = t.learning_curve.iter().map(|l| [l.sessions as f64, l.log_loss]).collect();
                    p.line(Line::new("held-out log loss", PlotPoints::from(pts.clone())).color(palette::series(dark, 3)).width(2.0));
                    p.points(Points::new("measured", PlotPoints::from(pts)).radius(3.5).filled(true).color(palette::series(dark, 3)));
                });
        });
        ui.add_space(4.0);
        egui::ScrollArea::vertical()
            .id_salt("model-tables")
            .show(ui, |ui| {
                Self::metrics(ui, q, learned.test_share.as_ref());
                ui.add_space(4.0);
                ui.label(RichText::new("Candidates tried").strong());
                egui::Grid::new("model-tuning")
                    .striped(true)
                    .show(ui, |ui| {
                        ui.strong("candidate");
                        ui.strong("validation log loss");
                        ui.strong("rounds");
                        ui.strong("chosen");
                        ui.end_row();
                        for r in &t.tuning {
                            ui.label(&r.candidate);
                            ui.label(format!("{:.4}", r.valid_log_loss));
                            ui.label(r.rounds.map(|x| x.to_string()).unwrap_or_default());
                            ui.label(if r.chosen { "yes" } else { "" });
                            ui.end_row();
                        }
                    });
            });
        rect
    }

    /// What a model file says about itself, as (what, value) rows: the training summary it was
    /// saved with.
    pub fn loaded_rows(loaded: &Loaded) -> Vec<[String; 2]> {
        let m = &loaded.model;
        let s = &m.summary;
        let kind = match m.win.kind() {
            ModelKind::Boosted => "boosted trees",
            ModelKind::Logistic => "logistic regression",
        };
        let row = |a: &str, b: String| [a.to_string(), b];
        vec![
            row("model file", loaded.path.display().to_string()),
            row(
                "kind",
                format!(
                    "{kind}{}",
                    if m.draw.is_some() {
                        ", with a draw model"
                    } else {
                        ""
                    }
                ),
            ),
            row("how it was chosen", s.choice.clone()),
            row("settings", s.settings.clone()),
            row("trained on sets", s.sets.join(", ")),
            row(
                "training sessions",
                format!("{} ({} turn rows)", s.trained_sessions, s.trained_rows),
            ),
            row("held-out test sessions", s.test_sessions.to_string()),
            row("test log loss", opt(s.test_log_loss, 3)),
            row(
                "test: favourite won",
                s.test_accuracy.map(pct).unwrap_or_else(|| "—".into()),
            ),
            row("feature columns", m.spec.width().to_string()),
            row("seed", s.seed.to_string()),
            row("written by", s.created_by.clone()),
        ]
    }

    /// The view for a set scored with a model loaded from a file: what the file says about the
    /// model, and which charts need a training run on this set. Returns true when the user asks
    /// to train on the set instead.
    pub fn loaded_ui(ui: &mut Ui, loaded: &Loaded, set: &str, scored: usize) -> bool {
        let warn = palette::warn(ui.visuals().dark_mode);
        ui.label(
            RichText::new(format!("{set} is scored with a model loaded from a file")).strong(),
        );
        ui.label(format!(
            "{scored} sessions were given win chances by this model; nothing was trained on {set}."
        ));
        ui.add_space(4.0);
        ui.label(RichText::new("What the model file records about its training").strong())
            .on_hover_text("The training summary saved in the model file when it was trained. The held-out figures were measured on sessions of the sets it was trained on, not on this set.");
        egui::Grid::new("loaded-model")
            .striped(true)
            .show(ui, |ui| {
                for [a, b] in Self::loaded_rows(loaded) {
                    ui.label(a);
                    ui.label(b);
                    ui.end_row();
                }
            });
        for note in &loaded.model.summary.notes {
            ui.label(RichText::new(format!("Note: {note}")).color(warn));
        }
        if loaded.model.summary.sets.iter().any(|s| s == set) {
            ui.label(RichText::new(format!("The model was trained on a set also named {set}: if these are the same sessions, the model has seen them, and its chances here look more certain than they would on new sessions.")).color(warn));
        }
        ui.add_space(6.0);
        ui.label(RichText::new("Needs a training run on this set").strong());
        ui.label("• here: accuracy and log loss by turn, the calibration chart, the learning curve and the candidates tried;");
        ui.label("• the Fairness view and the What-swings-games view.");
        ui.label("They measure how well chances predict this set's outcomes using sessions the model never saw, which only a training run on this set gives. The Roster, Replay and When-decided views already use the loaded model's chances.");
        ui.add_space(4.0);
        ui.button("Train on this set")
            .on_hover_text("Train a model on this set's finished sessions (in the background) and use it instead of the loaded one")
            .clicked()
    }

    /// The metrics rows as (name, out-of-fold, test share, meaning).
    pub fn metric_rows(q: &Quality, test: Option<&Quality>) -> Vec<[String; 4]> {
        let row = |name: &str, f: &dyn Fn(&Quality) -> String, help: &str| {
            [
                name.to_string(),
                f(q),
                test.map(f).unwrap_or_else(|| "—".into()),
                help.to_string(),
            ]
        };
        vec![
            row(
                "sessions",
                &|q| q.sessions.to_string(),
                "finished sessions scored",
            ),
            row(
                "log loss",
                &|q| format!("{:.3}", q.log_loss),
                "lower is better; punishes confident mistakes",
            ),
            row(
                "log loss, seat alone",
                &|q| format!("{:.3}", q.seat_only_log_loss),
                "what knowing only the seat gives; the model should beat it",
            ),
            row(
                "Brier score",
                &|q| format!("{:.3}", q.brier.brier),
                "mean squared error of the chances (0 is perfect, 0.25 is a coin toss)",
            ),
            row(
                "calibration error",
                &|q| format!("{:.3}", q.reliability.ece),
                "average gap between chance given and share that won (0 is perfect)",
            ),
            row(
                "AUC",
                &|q| opt(q.auc.map(|a| a.auc), 3),
                "how well chances rank winners above losers (0.5 = no better than chance, 1 = perfect)",
            ),
            row(
                "favourite won",
                &|q| {
                    format!(
                        "{} ({}–{})",
                        pct(q.favourite_accuracy),
                        pct(q.favourite_accuracy_interval.lo),
                        pct(q.favourite_accuracy_interval.hi)
                    )
                },
                "share of turns where the player with the highest chance went on to win, 95 % interval",
            ),
            row(
                "favourite right 80 % of the time from turn",
                &|q| {
                    q.turns_for_accuracy
                        .iter()
                        .find(|x| (x.0 - 0.8).abs() < 1e-9)
                        .and_then(|x| x.1)
                        .map(|t| t.to_string())
                        .unwrap_or_else(|| "never".into())
                },
                "the first turn from which the favourite's accuracy reached 80 %",
            ),
        ]
    }

    fn metrics(ui: &mut Ui, q: &Quality, test: Option<&Quality>) {
        ui.label(RichText::new("Scores on sessions the model never saw").strong());
        egui::Grid::new("model-metrics").striped(true).show(ui, |ui| {
            ui.strong("measure");
            ui.strong("all finished (out-of-fold)").on_hover_text("Every finished session, each scored by a model that never saw it.");
            ui.strong("test share only").on_hover_text("The sessions kept aside before any fitting or tuning: the most untouched check.");
            ui.strong("what it means");
            ui.end_row();
            for r in Self::metric_rows(q, test) {
                for c in &r {
                    ui.label(c);
                }
                ui.end_row();
            }
        });
    }
}
