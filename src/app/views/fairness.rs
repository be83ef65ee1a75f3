//! Fairness: win rates by seat and by player with 95 % intervals against the fair rate, the
//! mix of victory routes, the distribution of game length, and the findings in words.

use crate::app::palette;
use egui::{RichText, Ui};
use egui_plot::{Bar, BarChart, HLine, Legend, Line, Plot, PlotPoints};
use tellturn::analysis::balance::{Balance, WinRate};

/// The view (stateless apart from egui's own plot memory).
#[derive(Default)]
pub struct Fairness;

fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

fn rate_chart(
    ui: &mut Ui,
    id: &str,
    rates: &[WinRate],
    label: &dyn Fn(&WinRate) -> String,
    height: f32,
) -> egui::Rect {
    let dark = ui.visuals().dark_mode;
    let names: Vec<String> = rates.iter().map(label).collect();
    let (_, full) = super::show_plot(
        ui,
        Plot::new(id)
            .height(height)
            .include_y(0.0)
            .include_y(1.0)
            .y_axis_label("win rate")
            .y_axis_formatter(|m, _| format!("{:.0} %", 100.0 * m.value))
            .x_axis_formatter(move |m, _| {
                let i = m.value.round();
                if (m.value - i).abs() < 1e-6 && i >= 0.0 {
                    names.get(i as usize).cloned().unwrap_or_default()
                } else {
                    String::new()
                }
            })
            .allow_scroll(false)
            .allow_drag(false)
            .allow_zoom(false)
            .legend(Legend::default()),
        |p| {
            let bars: Vec<Bar> = rates
                .iter()
                .enumerate()
                .map(|(i, r)| {
                    Bar::new(i as f64, r.rate)
                        .width(0.6)
                        .name(format!(
                            "{}: {} of {} sessions",
                            label(r),
                            r.wins,
                            r.sessions
                        ))
                        .fill(palette::band(palette::series(dark, i)))
                        .stroke(egui::Stroke::new(1.5, palette::series(dark, i)))
                })
                .collect();
            p.bar_chart(
                BarChart::new("win rate", bars).element_formatter(Box::new(|b, _| b.name.clone())),
            );
            for (i, r) in rates.iter().enumerate() {
                let x = i as f64;
                p.line(
                    Line::new(
                        "95 % interval",
                        PlotPoints::from(vec![[x, r.interval.lo], [x, r.interval.hi]]),
                    )
                    .color(palette::rule(dark))
                    .width(2.0),
                );
                p.line(
                    Line::new(
                        "95 % interval",
                        PlotPoints::from(vec![
                            [x - 0.12, r.interval.lo],
                            [x + 0.12, r.interval.lo],
                        ]),
                    )
                    .color(palette::rule(dark))
                    .width(2.0),
                );
                p.line(
                    Line::new(
                        "95 % interval",
                        PlotPoints::from(vec![
                            [x - 0.12, r.interval.hi],
                            [x + 0.12, r.interval.hi],
                        ]),
                    )
                    .color(palette::rule(dark))
                    .width(2.0),
                );
            }
            if let Some(f) = rates.first() {
                p.hline(
                    HLine::new(format!("fair share ({})", pct(f.fair_rate)), f.fair_rate)
                        .color(palette::neutral(dark))
                        .style(egui_plot::LineStyle::Dashed { length: 6.0 }),
                );
            }
        },
    );
    full
}

impl Fairness {
    /// Draw the balance of a set; returns the seat chart's rectangle.
    pub fn ui(&mut self, ui: &mut Ui, b: &Balance) -> Option<egui::Rect> {
        let dark = ui.visuals().dark_mode;
        ui.label(
            RichText::new(format!(
                "Is it fair? {} finished sessions, {} draws ({})",
                b.sessions,
                b.draws,
                pct(b.draw_share)
            ))
            .strong(),
        );
        egui::CollapsingHeader::new(RichText::new("Findings").strong()).default_open(true).show(ui, |ui| {
            for f in &b.findings {
                ui.label(format!("• {f}"));
            }
            let d = &b.first_seat;
            ui.label(match d.detectable_rate {
                Some(r) => format!(
                    "• With {} sessions, a first-seat win rate of {} or more (fair: {}) would be noticed 8 times in 10; smaller edges could hide in the noise.",
                    d.sessions, pct(r), pct(d.fair_rate)
                ),
                None => format!("• {} sessions are too few to notice even a large first-seat edge.", d.sessions),
            })
            .on_hover_text("How large an advantage of the player who moves first these sessions could reliably reveal (80 % power, 5 % two-sided test).");
        });
        let h = ((ui.available_height() - 60.0) / 2.0).clamp(160.0, 300.0);
        let mut rect = None;
        ui.columns(2, |cols| {
            cols[0].label(RichText::new("Win rate by seat (seat 1 moves first)").strong())
                .on_hover_text("Bars: the share of sessions won from each seat. Whiskers: 95 % Wilson intervals — if the dashed fair line runs through a whisker, that seat's edge could be chance.");
            rect = Some(rate_chart(&mut cols[0], "fair-seats", &b.seats, &|r| format!("seat {}", r.who), h));
            cols[1].label(RichText::new("Win rate by player or side").strong())
                .on_hover_text("Players (or factions) that appear in at least 5 sessions, with 95 % intervals. Skill differences show up here, not only rule problems.");
            let mut actors = b.actors.clone();
            actors.sort_by(|a, b| b.sessions.cmp(&a.sessions).then(a.who.cmp(&b.who)));
            actors.truncate(12);
            if actors.is_empty() {
                cols[1].label("No player appears in 5 or more sessions.");
            } else {
                rate_chart(&mut cols[1], "fair-actors", &actors, &|r| r.who.clone(), h);
            }
            cols[0].label(RichText::new("How games were won (victory routes)").strong());
            let routes = b.routes.clone();
            let names: Vec<String> = routes.iter().map(|r| r.route.clone()).collect();
            Plot::new("fair-routes")
                .height(h)
                .include_y(0.0)
                .y_axis_label("share of sessions")
                .y_axis_formatter(|m, _| format!("{:.0} %", 100.0 * m.value))
                .x_axis_formatter(move |m, _| {
                    let i = m.value.round();
                    if (m.value - i).abs() < 1e-6 && i >= 0.0 { names.get(i as usize).cloned().unwrap_or_default() } else { String::new() }
                })
                .allow_scroll(false)
                .allow_drag(false)
                .allow_zoom(false)
                .show(&mut cols[0], |p| {
                    let bars: Vec<Bar> = routes
                        .iter()
                        .enumerate()
                        .map(|(i, r)| Bar::new(i as f64, r.share).width(0.6).name(format!("{}: {} sessions ({})", r.route, r.count, pct(r.share))).fill(palette::series(dark, i)))
                        .collect();
                    p.bar_chart(BarChart::new("routes", bars).element_formatter(Box::new(|b, _| b.name.clone())));
                });
            let l = &b.length;
            cols[1].label(RichText::new(format!(
                "Game length: {}–{} turns, median {:.0} (middle half {:.0}–{:.0})",
                l.min, l.max, l.quartiles.median, l.quartiles.q1, l.quartiles.q3
            )).strong());
            Plot::new("fair-length")
                .height(h)
                .include_y(0.0)
                .x_axis_label("turns")
                .y_axis_label("sessions")
                .allow_scroll(false)
                .show(&mut cols[1], |p| {
                    let bars: Vec<Bar> = l
                        .bins
                        .iter()
                        .map(|bin| {
                            let w = (bin.hi - bin.lo + 1) as f64;
                            Bar::new(bin.lo as f64 + w / 2.0 - 0.5, bin.count as f64).width(w * 0.9).name(format!("{}–{} turns: {}", bin.lo, bin.hi, bin.count))
                        })
                        .collect();
                    p.bar_chart(BarChart::new("sessions", bars).color(palette::series(dark, 0)).element_formatter(Box::new(|b, _| b.name.clone())));
                });
        });
        rect
    }

    /// The win-rate tables as CSV rows.
    pub fn csv(b: &Balance) -> String {
        let mut rows = Vec::new();
        for (kind, list) in [("seat", &b.seats), ("player", &b.actors)] {
            for r in list.iter() {
                rows.push(vec![
                    kind.to_string(),
                    r.who.clone(),
                    r.sessions.to_string(),
                    r.wins.to_string(),
                    format!("{:.4}", r.rate),
                    format!("{:.4}", r.interval.lo),
                    format!("{:.4}", r.interval.hi),
                    format!("{:.4}", r.fair_rate),
                ]);
            }
        }
        super::table::to_csv(
            &[
                "kind",
                "who",
                "sessions",
                "wins",
                "rate",
                "ci_low",
                "ci_high",
                "fair_rate",
            ],
            rows.into_iter(),
        )
    }
}
