//! What swings games: the event-impact table (mean swing after each event label and detail
//! word, with session-bootstrap intervals; sortable) and leverage by turn, with the turns far
//! above their neighbours flagged.

use super::table::{self, Column, Sort};
use crate::app::palette;
use egui::{RichText, Ui};
use egui_plot::{Bar, BarChart, HLine, Legend, Plot};
use tellturn::analysis::swings::{EventImpact, ImpactItem, ItemKind, LeverageTable};

const COLUMNS: [Column; 7] = [
    Column {
        title: "Event or word",
        width: 170.0,
        numeric: false,
        help: "An event label from the log, or a word from the events' detail text.",
    },
    Column {
        title: "Kind",
        width: 60.0,
        numeric: false,
        help: "label: the event's name; word: a word of the free-text detail.",
    },
    Column {
        title: "Times",
        width: 60.0,
        numeric: true,
        help: "How many events carried it.",
    },
    Column {
        title: "Sessions",
        width: 70.0,
        numeric: true,
        help: "In how many sessions it occurred.",
    },
    Column {
        title: "Mean swing",
        width: 90.0,
        numeric: true,
        help: "On average, how much the acting player's win chance changed across the turn of this event, in percentage points. Positive: it tends to help whoever does it.",
    },
    Column {
        title: "95 % interval",
        width: 120.0,
        numeric: true,
        help: "Bootstrap interval of the mean swing, resampling whole sessions: if it spans zero, the effect could be chance.",
    },
    Column {
        title: "Doer won",
        width: 80.0,
        numeric: true,
        help: "Share of these events whose player went on to win the session.",
    },
];

/// The view's state: the table's sort order.
pub struct SwingMakers {
    sort: Sort,
    words: bool,
}

impl Default for SwingMakers {
    fn default() -> Self {
        Self {
            sort: Sort {
                column: 4,
                ascending: false,
            },
            words: true,
        }
    }
}

fn cells(i: &ImpactItem) -> Vec<String> {
    vec![
        i.name.clone(),
        match i.kind {
            ItemKind::Label => "label".into(),
            ItemKind::Word => "word".into(),
        },
        i.occurrences.to_string(),
        i.sessions.to_string(),
        i.mean_swing
            .map(|m| format!("{:+.1}", 100.0 * m))
            .unwrap_or_else(|| "—".into()),
        i.interval
            .map(|v| format!("{:+.1} to {:+.1}", 100.0 * v.lo, 100.0 * v.hi))
            .unwrap_or_else(|| "—".into()),
        i.win_share
            .map(|w| format!("{:.0} %", 100.0 * w))
            .unwrap_or_else(|| "—".into()),
    ]
}

impl SwingMakers {
    /// The impact table as CSV: the rows shown (detail words only when they are included), in
    /// the order shown.
    pub fn csv(&self, impact: &EventImpact) -> String {
        let headers: Vec<&str> = COLUMNS.iter().map(|c| c.title).collect();
        table::to_csv(&headers, self.shown(impact).into_iter().map(cells))
    }

    /// The items the table shows, filtered and sorted as chosen.
    fn shown<'a>(&self, impact: &'a EventImpact) -> Vec<&'a ImpactItem> {
        let mut items: Vec<&ImpactItem> = impact
            .items
            .iter()
            .filter(|i| self.words || i.kind == ItemKind::Label)
            .collect();
        let col = self.sort.column;
        items.sort_by(|a, b| {
            let o = match col {
                0 => a.name.cmp(&b.name),
                1 => a.kind.cmp(&b.kind),
                2 => a.occurrences.cmp(&b.occurrences),
                3 => a.sessions.cmp(&b.sessions),
                4 => a
                    .mean_swing
                    .unwrap_or(f64::NEG_INFINITY)
                    .total_cmp(&b.mean_swing.unwrap_or(f64::NEG_INFINITY)),
                5 => a
                    .interval
                    .map_or(f64::NEG_INFINITY, |v| v.lo)
                    .total_cmp(&b.interval.map_or(f64::NEG_INFINITY, |v| v.lo)),
                _ => a
                    .win_share
                    .unwrap_or(-1.0)
                    .total_cmp(&b.win_share.unwrap_or(-1.0)),
            };
            if self.sort.ascending { o } else { o.reverse() }
        });
        items
    }

    /// Draw the view; returns the leverage chart's rectangle.
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        impact: Result<&EventImpact, &str>,
        leverage: Result<&LeverageTable, &str>,
    ) -> Option<egui::Rect> {
        let mut rect = None;
        let dark = ui.visuals().dark_mode;
        ui.label(RichText::new("At which turns do the chances move most?").strong())
            .on_hover_text("Leverage: the average size of a turn's swings, relative to the average over all turns (1 = typical). Turns flagged in orange swing far more than the turns around them — often a rule that fires at that turn.");
        match leverage {
            Err(e) => {
                ui.label(format!("Leverage not available: {e}"));
            }
            Ok(l) => {
                if l.quirk_turns.is_empty() {
                    ui.label("No turn stands far above its neighbours.");
                } else {
                    ui.label(RichText::new(format!(
                        "Flagged turns (at least {:.1}× the swing of the turns around them): {}",
                        l.params.factor,
                        l.quirk_turns.iter().map(|t| t.to_string()).collect::<Vec<_>>().join(", ")
                    )).color(palette::warn(dark)));
                }
                let (_, full) = super::show_plot(
                    ui,
                    Plot::new("leverage")
                        .height(200.0)
                        .include_y(0.0)
                        .x_axis_label("turn")
                        .y_axis_label("leverage")
                        .legend(Legend::default())
                        .allow_scroll(false),
                    |p| {
                        let (quirk, plain): (Vec<_>, Vec<_>) = l.rows.iter().partition(|r| r.quirk);
                        let bar = |r: &&tellturn::analysis::swings::LeverageRow| {
                            Bar::new(r.turn as f64, r.leverage).width(0.8).name(format!(
                                "turn {}: leverage {:.2} ({} sessions)",
                                r.turn, r.leverage, r.sessions
                            ))
                        };
                        p.bar_chart(
                            BarChart::new("turns", plain.iter().map(bar).collect())
                                .color(palette::series(dark, 0))
                                .element_formatter(Box::new(|b, _| b.name.clone())),
                        );
                        p.bar_chart(
                            BarChart::new("flagged turns", quirk.iter().map(bar).collect())
                                .color(palette::series(dark, 4))
                                .element_formatter(Box::new(|b, _| b.name.clone())),
                        );
                        p.hline(
                            HLine::new("typical turn (1)", 1.0)
                                .color(palette::neutral(dark))
                                .style(egui_plot::LineStyle::Dashed { length: 6.0 }),
                        );
                    },
                );
                rect = Some(full);
            }
        }
        ui.add_space(6.0);
        ui.horizontal(|ui| {
            ui.label(RichText::new("Which events move the chances?").strong())
                .on_hover_text("Each event is credited with the swing of its player's win chance across that turn. Sorted by size of the mean swing; click a header to sort differently.");
            ui.checkbox(&mut self.words, "include detail words").on_hover_text("Also list single words of the events' free-text detail, not only event labels.");
        });
        match impact {
            Err(e) => {
                ui.label(format!("Event impact not available: {e}"));
            }
            Ok(imp) => {
                let items = self.shown(imp);
                ui.small(format!(
                    "{} of {} items shown · {} finished sessions · intervals from {} bootstrap resamples of whole sessions · {} rare items (in fewer than {} sessions) left out",
                    items.len(), imp.items.len(), imp.sessions, imp.params.bootstrap.resamples, imp.rare_items, imp.params.min_sessions
                ));
                egui::ScrollArea::horizontal()
                    .id_salt("impact-h")
                    .show(ui, |ui| {
                        if let Some(s) = table::header(ui, &COLUMNS, self.sort) {
                            self.sort = s;
                        }
                        egui::ScrollArea::vertical()
                            .id_salt("impact-v")
                            .auto_shrink([false, false])
                            .show_rows(ui, 20.0, items.len(), |ui, range| {
                                for i in range {
                                    let c = cells(items[i]);
                                    let label = format!("{} mean swing {}", c[0], c[4]);
                                    table::row(ui, &COLUMNS, &c, 20.0, false, &label);
                                }
                            });
                    });
            }
        }
        rect
    }
}
