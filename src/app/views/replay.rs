//! The Replay: one session's win chances turn by turn beside its event log. The threshold,
//! the decided turn and the biggest swings are marked; hovering the chart shows that turn's
//! events; clicking it scrolls the log there; left/right step through turns.

use super::table::{self, Column};
use crate::app::facts::SessionFacts;
use crate::app::palette;
use egui::{Color32, RichText, Ui};
use egui_plot::{HLine, Legend, Line, MarkerShape, Plot, PlotPoints, Points, VLine};
use tellturn::analysis::traces::{Trace, TraceSource};
use tellturn::sessions::{Session, SessionSet};

const EVENT_ROW: f32 = 18.0;

/// A turn where the chances moved a lot.
#[derive(Debug, Clone, PartialEq)]
pub struct Swing {
    /// Index into the trace's turns.
    pub index: usize,
    /// The actor whose chance moved most.
    pub actor: usize,
    /// Chance after minus chance before.
    pub change: f64,
}

/// The `n` turns with the largest single-actor swing, largest first.
pub fn biggest_swings(trace: &Trace, n: usize) -> Vec<Swing> {
    let mut all: Vec<Swing> = (0..trace.len())
        .map(|i| {
            let actor = (0..trace.actors)
                .max_by(|&a, &b| trace.swing(i, a).abs().total_cmp(&trace.swing(i, b).abs()))
                .unwrap_or(0);
            Swing {
                index: i,
                actor,
                change: trace.swing(i, actor),
            }
        })
        .collect();
    all.sort_by(|a, b| {
        b.change
            .abs()
            .total_cmp(&a.change.abs())
            .then(a.index.cmp(&b.index))
    });
    all.truncate(n);
    all
}

/// Where the trace came from, in words.
pub fn source_words(source: TraceSource) -> String {
    match source {
        TraceSource::CrossFit { fold } => format!(
            "out-of-fold (fold {}): these chances come from a model trained without this session, so they are honest about what could be foreseen",
            fold + 1
        ),
        TraceSource::Test => {
            "held-out test session: the final model never saw it while learning".into()
        }
        TraceSource::Scored => {
            "scored by the model in use: one loaded from a file, or the one trained here for a session that was not part of training (e.g. still in progress)".into()
        }
    }
}

/// The Replay's own state: the turn in focus and where the log should scroll.
#[derive(Default)]
pub struct Replay {
    /// Index (into the trace's turns) of the turn in focus.
    pub turn: Option<usize>,
    scroll_log: bool,
    shown: Option<(u64, usize)>,
}

fn events_of(session: &Session, turn: u32) -> impl Iterator<Item = &tellturn::sessions::Event> {
    session.events.iter().filter(move |e| e.turn == turn)
}

fn actor_name(session: &Session, actor: Option<u8>) -> &str {
    actor
        .and_then(|a| session.actors.get(a as usize))
        .map(String::as_str)
        .unwrap_or("—")
}

fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

impl Replay {
    /// Focus a turn (index into the trace), scrolling the event log to it.
    pub fn focus_turn(&mut self, index: usize) {
        self.turn = Some(index);
        self.scroll_log = true;
    }

    /// Draw the Replay of session `k`; returns the chart's rectangle (for PNG export).
    #[allow(clippy::too_many_arguments)]
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        set: &SessionSet,
        set_id: u64,
        k: usize,
        trace: Option<&Trace>,
        facts: Option<&SessionFacts>,
        threshold: f64,
        keys_free: bool,
    ) -> Option<egui::Rect> {
        let session = &set.sessions[k];
        if self.shown != Some((set_id, k)) {
            self.shown = Some((set_id, k));
            self.turn = None;
        }
        let dark = ui.visuals().dark_mode;
        ui.horizontal_wrapped(|ui| {
            ui.heading(format!("Session {}", session.id));
            ui.label(format!("· {}", session.actors.join(" vs ")));
            match &session.outcome {
                Some(_) => {
                    ui.label(format!("· winner: {}", session.winner_name()));
                    if let Some(v) = session.victory() {
                        ui.label(format!("by {v}"));
                    }
                }
                None => {
                    ui.label(
                        RichText::new("· in progress")
                            .strong()
                            .color(palette::warn(dark)),
                    );
                }
            }
            ui.label(format!("· {} turns", session.turn_count()));
        });
        let Some(trace) = trace.filter(|t| !t.is_empty()) else {
            ui.label("No win chances for this session yet: they appear when training has finished (see the progress bar below).");
            self.event_log(ui, session, None, set);
            return None;
        };
        if keys_free {
            let (left, right) = ui.input(|i| {
                (
                    i.key_pressed(egui::Key::ArrowLeft),
                    i.key_pressed(egui::Key::ArrowRight),
                )
            });
            let last = trace.len() - 1;
            if left {
                let t = self.turn.map_or(last, |t| t.saturating_sub(1));
                self.focus_turn(t);
            }
            if right {
                let t = self.turn.map_or(0, |t| (t + 1).min(last));
                self.focus_turn(t);
            }
        }
        self.summary(ui, session, trace, facts, threshold);
        ui.small(source_words(trace.source));
        let swings = biggest_swings(trace, 3);
        let mut rect = None;
        let log_width = (ui.available_width() * 0.38).clamp(260.0, 480.0);
        ui.horizontal_top(|ui| {
            let plot_width = (ui.available_width() - log_width - 12.0).max(200.0);
            ui.vertical(|ui| {
                ui.set_width(plot_width);
                rect = Some(self.chart(ui, set, session, trace, facts, threshold, &swings, dark));
                self.swing_list(ui, set, session, trace, &swings);
            });
            ui.separator();
            ui.vertical(|ui| {
                ui.set_width(log_width);
                self.event_log(ui, session, Some(trace), set);
            });
        });
        rect
    }

    fn summary(
        &self,
        ui: &mut Ui,
        session: &Session,
        trace: &Trace,
        facts: Option<&SessionFacts>,
        threshold: f64,
    ) {
        let last = trace.len() - 1;
        let dark = ui.visuals().dark_mode;
        if !session.is_finished() {
            ui.horizontal_wrapped(|ui| {
                ui.label(
                    RichText::new(format!("Current chances after turn {}:", trace.turns[last]))
                        .strong(),
                );
                for a in 0..trace.actors {
                    ui.label(
                        RichText::new(format!(
                            "■ {} {}",
                            session.actors[a],
                            pct(trace.chance(last, a))
                        ))
                        .color(palette::series(dark, a))
                        .size(18.0),
                    );
                }
                if trace.draw[last] > 0.005 {
                    ui.label(format!("draw {}", pct(trace.draw[last])));
                }
            });
            return;
        }
        let text = match (facts.and_then(|f| f.decided_index), session.winner_seat()) {
            (Some(i), Some(w)) => format!(
                "Decided at turn {} of {}: from then on {}'s win chance stayed at or above {} to the end; {} of the game was played after that.",
                trace.turns[i],
                session.turn_count(),
                session.actors[w],
                pct(threshold),
                pct(facts.and_then(|f| f.settled_share).unwrap_or(0.0)),
            ),
            (None, Some(w)) => format!(
                "Never decided at {}: {}'s win chance did not stay at or above it until the end — a close game to the last turn.",
                pct(threshold),
                session.actors[w]
            ),
            (_, None) => "A draw: no winner, so no decided turn.".into(),
        };
        ui.label(RichText::new(text).strong());
        if let Some(f) = facts {
            let mut notes = Vec::new();
            if f.comeback {
                notes.push(
                    "a comeback: the winner's chance fell to 20 % or lower at some turn"
                        .to_string(),
                );
            }
            if f.false_certainty {
                notes.push(format!(
                    "false certainty: someone else was at {} or more at some turn and still lost",
                    pct(threshold)
                ));
            }
            if !notes.is_empty() {
                ui.label(notes.join(" · "));
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn chart(
        &mut self,
        ui: &mut Ui,
        set: &SessionSet,
        session: &Session,
        trace: &Trace,
        facts: Option<&SessionFacts>,
        threshold: f64,
        swings: &[Swing],
        dark: bool,
    ) -> egui::Rect {
        let first_x = trace.turns.first().map_or(0.0, |&t| t as f64 - 1.0);
        let height = (ui.available_height() - 120.0).clamp(220.0, 520.0);
        let (resp, full) = super::show_plot(
            ui,
            Plot::new("replay-chart")
                .height(height)
                .include_y(0.0)
                .include_y(1.0)
                .x_axis_label("turn")
                .y_axis_label("win chance")
                .y_axis_formatter(|m, _| format!("{:.0} %", 100.0 * m.value))
                .legend(Legend::default())
                .allow_scroll(false)
                .show_x(false)
                .show_y(false),
            |p| {
                p.hline(
                    HLine::new(format!("threshold {}", pct(threshold)), threshold)
                        .color(palette::rule(dark))
                        .style(egui_plot::LineStyle::Dashed { length: 6.0 }),
                );
                if let Some(i) = facts.and_then(|f| f.decided_index) {
                    p.vline(
                        VLine::new(
                            format!("decided (turn {})", trace.turns[i]),
                            trace.turns[i] as f64,
                        )
                        .color(palette::rule(dark))
                        .width(2.0),
                    );
                }
                if let Some(i) = self.turn {
                    p.vline(
                        VLine::new(
                            format!("turn in focus ({})", trace.turns[i]),
                            trace.turns[i] as f64,
                        )
                        .color(palette::focus(dark))
                        .width(1.5)
                        .style(egui_plot::LineStyle::Dotted { spacing: 4.0 }),
                    );
                }
                for a in 0..trace.actors {
                    let mut pts = vec![[first_x, trace.start[a]]];
                    pts.extend(
                        (0..trace.len()).map(|i| [trace.turns[i] as f64, trace.chance(i, a)]),
                    );
                    p.line(
                        Line::new(session.actors[a].clone(), PlotPoints::from(pts))
                            .color(palette::series(dark, a))
                            .style(palette::dash(a))
                            .width(2.0),
                    );
                }
                let marks: Vec<[f64; 2]> = swings
                    .iter()
                    .map(|s| [trace.turns[s.index] as f64, trace.chance(s.index, s.actor)])
                    .collect();
                p.points(
                    Points::new("biggest swings", PlotPoints::from(marks))
                        .shape(MarkerShape::Diamond)
                        .radius(6.0)
                        .filled(false)
                        .color(if dark { Color32::WHITE } else { Color32::BLACK }),
                );
                p.pointer_coordinate()
            },
        );
        let nearest = |x: f64| {
            (0..trace.len())
                .min_by(|&a, &b| {
                    (trace.turns[a] as f64 - x)
                        .abs()
                        .total_cmp(&(trace.turns[b] as f64 - x).abs())
                })
                .unwrap_or(0)
        };
        if let Some(pos) = resp.inner {
            let i = nearest(pos.x);
            let response = resp.response.clone();
            response.on_hover_ui_at_pointer(|ui| {
                ui.strong(format!("Turn {}", trace.turns[i]));
                for a in 0..trace.actors {
                    let s = trace.swing(i, a);
                    ui.colored_label(
                        palette::series(dark, a),
                        format!(
                            "{} {} ({:+.0} points)",
                            session.actors[a],
                            pct(trace.chance(i, a)),
                            100.0 * s
                        ),
                    );
                }
                for e in events_of(session, trace.turns[i]).take(12) {
                    ui.label(format!(
                        "{}: {} {}",
                        actor_name(session, e.actor),
                        set.label(e),
                        e.detail
                    ));
                }
                ui.small("Click to show this turn in the event log.");
            });
            if resp.response.clicked() {
                self.focus_turn(i);
            }
        }
        full
    }

    fn swing_list(
        &mut self,
        ui: &mut Ui,
        set: &SessionSet,
        session: &Session,
        trace: &Trace,
        swings: &[Swing],
    ) {
        ui.label(RichText::new("What swung it — the biggest moves (◇ on the chart):").strong())
            .on_hover_text("A swing is how much one player's win chance changed across one turn. These turns moved the chances most; click one to see its events.");
        for s in swings {
            let evs: Vec<String> = events_of(session, trace.turns[s.index])
                .filter(|e| e.actor == Some(s.actor as u8))
                .take(3)
                .map(|e| {
                    let label = set.label(e);
                    if e.detail.is_empty() {
                        label.to_string()
                    } else {
                        format!("{label} ({})", e.detail)
                    }
                })
                .collect();
            let text = format!(
                "turn {}: {} {:+.0} points{}",
                trace.turns[s.index],
                session.actors[s.actor],
                100.0 * s.change,
                if evs.is_empty() {
                    String::new()
                } else {
                    format!(" — {}", evs.join(", "))
                }
            );
            if ui
                .selectable_label(self.turn == Some(s.index), text)
                .clicked()
            {
                self.focus_turn(s.index);
            }
        }
    }

    fn event_log(
        &mut self,
        ui: &mut Ui,
        session: &Session,
        trace: Option<&Trace>,
        set: &SessionSet,
    ) {
        let dark = ui.visuals().dark_mode;
        ui.label(RichText::new("Event log").strong()).on_hover_text(
            "Every logged action of this session. Click a row to mark its turn on the chart.",
        );
        let focus_turn = self.turn.and_then(|i| trace.map(|t| t.turns[i]));
        let mut area = egui::ScrollArea::vertical()
            .id_salt("replay-log")
            .auto_shrink([false, false]);
        if self.scroll_log {
            self.scroll_log = false;
            if let Some(turn) = focus_turn
                && let Some(row) = session.events.iter().position(|e| e.turn == turn)
            {
                let step = EVENT_ROW + ui.spacing().item_spacing.y;
                area = area.vertical_scroll_offset((row as f32 * step - 40.0).max(0.0));
            }
        }
        let width = ui.available_width();
        let columns = [
            Column {
                title: "turn",
                width: 44.0,
                numeric: true,
                help: "The log's turn number.",
            },
            Column {
                title: "actor",
                width: 90.0,
                numeric: false,
                help: "Who acted (— for a neutral event).",
            },
            Column {
                title: "event",
                width: 110.0,
                numeric: false,
                help: "The event's label in the log.",
            },
            Column {
                title: "detail",
                width: (width - 244.0).max(80.0),
                numeric: false,
                help: "The free-text detail of the event.",
            },
        ];
        let _ = table::header(
            ui,
            &columns,
            table::Sort {
                column: usize::MAX,
                ascending: true,
            },
        );
        area.show_rows(ui, EVENT_ROW, session.events.len(), |ui, range| {
            for r in range {
                let e = &session.events[r];
                let cells = [
                    e.turn.to_string(),
                    actor_name(session, e.actor).to_string(),
                    set.label(e).to_string(),
                    e.detail.to_string(),
                ];
                let selected = focus_turn == Some(e.turn);
                let colour = e.actor.map(|a| palette::series(dark, a as usize));
                let label = format!("turn {} {} {} {}", cells[0], cells[1], cells[2], cells[3]);
                let resp =
                    table::row_coloured(ui, &columns, &cells, EVENT_ROW, selected, &label, colour);
                if resp.clicked()
                    && let Some(t) = trace
                    && let Some(i) = t.turns.iter().position(|&x| x == e.turn)
                {
                    self.turn = Some(i);
                }
            }
        });
    }
}
