//! When decided: every finished session as a bar of its length with its decided turn marked,
//! sorted, coloured by the winner's seat or by the victory route; beside it the settled-share
//! histogram and the counts of false certainty and comebacks.

use crate::app::facts::SessionFacts;
use crate::app::palette;
use egui::{RichText, Ui};
use egui_plot::{Bar, BarChart, Legend, MarkerShape, Plot, PlotPoints, Points};
use std::collections::BTreeMap;
use tellturn::sessions::SessionSet;

/// Most bars drawn; beyond it every n-th session (in sorted order) is shown.
const MAX_BARS: usize = 1500;

/// How bars are coloured.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Colouring {
    Seat,
    Route,
}

/// The view's own state and its cache (rebuilt when the facts change).
pub struct DecidedChart {
    colouring: Colouring,
    cache: Option<(u64, u64, Colouring)>,
    order: Vec<usize>,
    groups: Vec<(String, Vec<usize>)>,
    stride: usize,
}

impl Default for DecidedChart {
    fn default() -> Self {
        Self {
            colouring: Colouring::Seat,
            cache: None,
            order: Vec::new(),
            groups: Vec::new(),
            stride: 1,
        }
    }
}

fn median(mut v: Vec<f64>) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    })
}

impl DecidedChart {
    fn refresh(&mut self, set: &SessionSet, facts: &[SessionFacts], set_id: u64, generation: u64) {
        let key = (set_id, generation, self.colouring);
        if self.cache == Some(key) {
            return;
        }
        let mut order: Vec<usize> = (0..set.sessions.len())
            .filter(|&k| {
                set.sessions[k].is_finished() && facts.get(k).is_some_and(|f| f.trace.is_some())
            })
            .collect();
        order.sort_by_key(|&k| {
            let f = &facts[k];
            (
                f.decided_turn.is_none(),
                f.decided_turn.unwrap_or(0),
                f.turns,
                k,
            )
        });
        self.stride = order.len().div_ceil(MAX_BARS).max(1);
        let mut groups: BTreeMap<String, Vec<usize>> = BTreeMap::new();
        for (rank, &k) in order.iter().enumerate() {
            if rank % self.stride != 0 {
                continue;
            }
            let s = &set.sessions[k];
            let name = match self.colouring {
                Colouring::Seat => match s.winner_seat() {
                    Some(0) => "won by seat 1 (moved first)".to_string(),
                    Some(w) => format!("won by seat {}", w + 1),
                    None => "draw".to_string(),
                },
                Colouring::Route => s.victory().unwrap_or("route not recorded").to_string(),
            };
            groups.entry(name).or_default().push(rank);
        }
        self.groups = groups.into_iter().collect();
        self.order = order;
        self.cache = Some(key);
    }

    /// Draw the view; returns the main chart's rectangle and a session to open, if one was clicked.
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        set: &SessionSet,
        facts: &[SessionFacts],
        set_id: u64,
        generation: u64,
        threshold: f64,
    ) -> (Option<egui::Rect>, Option<usize>) {
        self.refresh(set, facts, set_id, generation);
        let dark = ui.visuals().dark_mode;
        if self.order.is_empty() {
            ui.label(
                "No finished session has win chances yet: they appear when training has finished.",
            );
            return (None, None);
        }
        let finished: Vec<&SessionFacts> = self.order.iter().map(|&k| &facts[k]).collect();
        let decided = finished.iter().filter(|f| f.decided_turn.is_some()).count();
        let false_certainty = finished.iter().filter(|f| f.false_certainty).count();
        let comebacks = finished.iter().filter(|f| f.comeback).count();
        let settled = median(finished.iter().filter_map(|f| f.settled_share).collect());
        let decided_median = median(
            finished
                .iter()
                .filter_map(|f| f.decided_turn.map(f64::from))
                .collect(),
        );
        let n = finished.len();
        ui.horizontal_wrapped(|ui| {
            ui.label(RichText::new(format!(
                "{decided} of {n} finished sessions were decided before the end at {:.0} %",
                100.0 * threshold
            )).strong())
            .on_hover_text("A session is decided at the first turn from which the eventual winner's win chance stays at or above the threshold until the end. Move the threshold in the top bar to see how the answer changes.");
            if let Some(m) = decided_median {
                ui.label(format!("· median decided turn {m:.0}"));
            }
            if let Some(m) = settled {
                ui.label(format!("· median settled share {:.0} %", 100.0 * m))
                    .on_hover_text("Settled share: the share of a session's turns played after it was decided. Half the decided sessions had more, half less.");
            }
        });
        ui.horizontal_wrapped(|ui| {
            ui.label(format!("False certainty: {false_certainty} ({:.0} %)", 100.0 * false_certainty as f64 / n as f64))
                .on_hover_text("Sessions where someone who went on to lose was at or above the threshold at some turn: the chances looked settled and were not.");
            ui.label("·");
            ui.label(format!("Comebacks: {comebacks} ({:.0} %)", 100.0 * comebacks as f64 / n as f64))
                .on_hover_text("Sessions the winner won after their win chance had fallen to 20 % or lower at some turn.");
            ui.separator();
            ui.label("Colour by:");
            let mut c = self.colouring;
            ui.selectable_value(&mut c, Colouring::Seat, "winner's seat");
            ui.selectable_value(&mut c, Colouring::Route, "victory route");
            self.colouring = c;
        });
        if self.stride > 1 {
            ui.small(format!(
                "{n} sessions: every {}th one (in sorted order) is drawn.",
                self.stride
            ));
        }
        let mut open = None;
        let chart_h = (ui.available_height() * 0.62).max(200.0);
        let order = &self.order;
        let groups = &self.groups;
        let (resp, rect) = super::show_plot(
            ui,
            Plot::new("decided-chart")
                .height(chart_h)
                .x_axis_label("sessions, sorted by decided turn (never-decided ones at the right)")
                .y_axis_label("turn")
                .legend(Legend::default())
                .include_y(0.0)
                .allow_scroll(false)
                .show_x(false),
            |p| {
                for (gi, (name, ranks)) in groups.iter().enumerate() {
                    let colour = if name == "draw" {
                        palette::neutral(dark)
                    } else {
                        palette::series(dark, gi)
                    };
                    let bars: Vec<Bar> = ranks
                        .iter()
                        .map(|&r| {
                            Bar::new(r as f64, facts[order[r]].turns as f64)
                                .width(self.stride as f64 * 0.8)
                        })
                        .collect();
                    let fill = egui::Color32::from_rgba_unmultiplied(
                        colour.r(),
                        colour.g(),
                        colour.b(),
                        150,
                    );
                    p.bar_chart(
                        BarChart::new(name.clone(), bars)
                            .color(fill)
                            .allow_hover(false),
                    );
                }
                let marks: Vec<[f64; 2]> = order
                    .iter()
                    .enumerate()
                    .filter(|(r, _)| r % self.stride == 0)
                    .filter_map(|(r, &k)| facts[k].decided_turn.map(|t| [r as f64, t as f64]))
                    .collect();
                p.points(
                    Points::new("decided turn", PlotPoints::from(marks))
                        .shape(MarkerShape::Down)
                        .radius(if order.len() > 300 { 2.0 } else { 3.5 })
                        .filled(true)
                        .color(palette::rule(dark)),
                );
                p.pointer_coordinate()
            },
        );
        if let Some(pos) = resp.inner {
            let r = pos.x.round();
            if r >= 0.0 && (r as usize) < order.len() {
                let k = order[r as usize];
                let s = &set.sessions[k];
                let f = &facts[k];
                let resp2 = resp.response.clone();
                resp2.on_hover_ui_at_pointer(|ui| {
                    ui.strong(format!("Session {}", s.id));
                    ui.label(format!("winner {} · {} turns", s.winner_name(), f.turns));
                    match f.decided_turn {
                        Some(t) => ui.label(format!("decided at turn {t}")),
                        None => ui.label("never decided at this threshold"),
                    };
                    ui.small("Click to open it in the Replay.");
                });
                if resp.response.clicked() {
                    open = Some(k);
                }
            }
        }
        ui.add_space(6.0);
        ui.label(
            RichText::new("Settled share: how much of each game was played after it was decided")
                .strong(),
        );
        let mut bins = [0usize; 10];
        for f in &finished {
            if let Some(x) = f.settled_share {
                bins[((x * 10.0) as usize).min(9)] += 1;
            }
        }
        Plot::new("settled-histogram")
            .height(ui.available_height().max(120.0))
            .x_axis_label("settled share")
            .y_axis_label("sessions")
            .x_axis_formatter(|m, _| format!("{:.0} %", m.value))
            .include_y(0.0)
            .allow_scroll(false)
            .show(ui, |p| {
                let bars: Vec<Bar> = bins
                    .iter()
                    .enumerate()
                    .map(|(i, &c)| {
                        Bar::new(i as f64 * 10.0 + 5.0, c as f64)
                            .width(9.0)
                            .name(format!("{}–{} %", i * 10, i * 10 + 10))
                    })
                    .collect();
                p.bar_chart(BarChart::new("sessions", bars).color(palette::series(dark, 0)));
            });
        (Some(rect), open)
    }
}
