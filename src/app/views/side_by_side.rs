//! Compare sets: two sets (say two rule variants) on the same axes — the decided-turn
//! distributions overlaid, every measure side by side with its difference, interval and
//! verdict, and how many sessions would be needed to tell a first-mover difference apart.

use crate::app::palette;
use egui::{RichText, Ui};
use egui_plot::{Legend, Line, Plot, PlotPoints};
use tellturn::analysis::compare::{Comparison, RateDifference, ShiftComparison};
use tellturn::analysis::decision::DecisionReport;

/// The view (its choices of sets live in the dashboard).
#[derive(Default)]
pub struct SideBySide;

fn opt(x: Option<f64>, scale: f64, digits: usize) -> String {
    x.map(|v| format!("{:.digits$}", v * scale))
        .unwrap_or_else(|| "—".into())
}

/// One row of the measures table: measure, A, B, B − A, interval, verdict.
fn shift_row(s: &ShiftComparison, scale: f64, unit: &str) -> [String; 6] {
    let hl = s.hodges_lehmann.as_ref();
    [
        format!("{} (median)", s.measure),
        format!("{}{unit}", opt(s.a_median, scale, 1)),
        format!("{}{unit}", opt(s.b_median, scale, 1)),
        hl.map(|h| format!("{:+.1}{unit}", h.shift * scale))
            .unwrap_or_else(|| "—".into()),
        hl.map(|h| {
            format!(
                "{:+.1} to {:+.1}",
                h.interval.lo * scale,
                h.interval.hi * scale
            )
        })
        .unwrap_or_else(|| "—".into()),
        s.verdict.clone(),
    ]
}

fn rate_row(r: &RateDifference) -> [String; 6] {
    let rate = |s: usize, n: usize| {
        if n > 0 {
            format!("{:.0} % ({s}/{n})", 100.0 * s as f64 / n as f64)
        } else {
            "—".into()
        }
    };
    [
        r.measure.clone(),
        rate(r.a_successes, r.a_trials),
        rate(r.b_successes, r.b_trials),
        r.difference
            .map(|d| format!("{:+.1} points", 100.0 * d))
            .unwrap_or_else(|| "—".into()),
        format!(
            "{:+.1} to {:+.1}",
            100.0 * r.interval.lo,
            100.0 * r.interval.hi
        ),
        r.verdict.clone(),
    ]
}

/// The measures table rows.
pub fn rows(c: &Comparison) -> Vec<[String; 6]> {
    vec![
        rate_row(&c.first_mover),
        shift_row(&c.decided_turn, 1.0, ""),
        shift_row(&c.settled_share, 100.0, " %"),
        shift_row(&c.game_length, 1.0, ""),
        rate_row(&c.false_certainty),
        shift_row(&c.excitement, 1.0, ""),
    ]
}

/// Share of decided sessions decided at or before each turn (an empirical distribution).
fn cumulative(report: &DecisionReport) -> Vec<[f64; 2]> {
    let mut turns: Vec<u32> = report
        .decisions
        .sessions
        .iter()
        .filter_map(|d| d.decided_turn)
        .collect();
    turns.sort_unstable();
    let n = report.decisions.sessions.len().max(1) as f64;
    let mut pts = vec![[0.0, 0.0]];
    for (i, t) in turns.iter().enumerate() {
        if i + 1 < turns.len() && turns[i + 1] == *t {
            continue;
        }
        pts.push([*t as f64, (i + 1) as f64 / n]);
    }
    pts
}

impl SideBySide {
    /// Draw the comparison; returns the overlay chart's rectangle.
    pub fn ui(
        &mut self,
        ui: &mut Ui,
        names: (&str, &str),
        decisions: (Option<&DecisionReport>, Option<&DecisionReport>),
        comparison: Option<&Result<Comparison, String>>,
        threshold: f64,
    ) -> Option<egui::Rect> {
        let (a, b) = names;
        let mut rect = None;
        let dark = ui.visuals().dark_mode;
        ui.label(RichText::new(format!("When were games decided? {a} against {b} at {:.0} %", 100.0 * threshold)).strong())
            .on_hover_text("Each line climbs as sessions get decided: its height at a turn is the share of that set's finished sessions already decided by then. A line further right means games stay open longer; a lower end means more games were never decided before the end.");
        if let (Some(da), Some(db)) = decisions {
            let h = (ui.available_height() * 0.42).clamp(180.0, 340.0);
            let (_, full) = super::show_plot(
                ui,
                Plot::new("compare-decided")
                    .height(h)
                    .include_y(0.0)
                    .include_y(1.0)
                    .x_axis_label("decided turn")
                    .y_axis_label("share of sessions decided")
                    .y_axis_formatter(|m, _| format!("{:.0} %", 100.0 * m.value))
                    .legend(Legend::default())
                    .allow_scroll(false),
                |p| {
                    for (i, (name, d)) in [(a, da), (b, db)].into_iter().enumerate() {
                        let pts = cumulative(d);
                        let mut stepped = Vec::with_capacity(pts.len() * 2);
                        for w in pts.windows(2) {
                            stepped.push(w[0]);
                            stepped.push([w[1][0], w[0][1]]);
                        }
                        if let Some(last) = pts.last() {
                            stepped.push(*last);
                        }
                        p.line(
                            Line::new(
                                format!("{name} ({} sessions)", d.decisions.sessions.len()),
                                PlotPoints::from(stepped),
                            )
                            .color(palette::series(dark, i))
                            .style(palette::dash(i))
                            .width(2.5),
                        );
                    }
                },
            );
            rect = Some(full);
        } else {
            ui.label("Waiting for both sets to finish training…");
        }
        ui.add_space(6.0);
        match comparison {
            None => {
                ui.horizontal(|ui| {
                    ui.spinner();
                    ui.label("comparing…");
                });
            }
            Some(Err(e)) => {
                ui.label(
                    RichText::new(format!("The comparison could not be made: {e}"))
                        .color(palette::warn(dark)),
                );
            }
            Some(Ok(c)) => {
                ui.label(RichText::new(format!("Measures side by side (differences are {b} − {a})")).strong())
                    .on_hover_text("Rates use Newcombe's interval for a difference of two proportions; medians use the Hodges–Lehmann shift with its interval and a Mann–Whitney test. An interval that spans 0 means no clear difference.");
                egui::ScrollArea::vertical().id_salt("compare-table").show(ui, |ui| {
                    egui::Grid::new("compare-grid").striped(true).num_columns(5).show(ui, |ui| {
                        ui.strong("measure");
                        ui.strong(a);
                        ui.strong(b);
                        ui.strong(format!("difference ({b} − {a})"));
                        ui.strong("95 % interval").on_hover_text("The range of differences compatible with these sessions; if it includes 0, the two sets may not really differ.");
                        ui.end_row();
                        for r in rows(c) {
                            for cell in &r[..5] {
                                ui.label(cell);
                            }
                            ui.end_row();
                        }
                    });
                    ui.add_space(6.0);
                    ui.label(RichText::new("Verdicts: what changed, and what could be chance").strong());
                    for v in &c.verdicts {
                        ui.label(format!("• {v}"));
                    }
                    ui.label(format!("• {}", c.victory_mix.verdict));
                    ui.add_space(6.0);
                    ui.label(RichText::new("How many sessions would settle it?").strong())
                        .on_hover_text("The number of sessions per variant needed to tell the two first-mover win rates apart 8 times in 10 (two-sided 5 % test).");
                    ui.label(&c.sessions_needed.verdict);
                    if c.a.not_out_of_fold > 0 || c.b.not_out_of_fold > 0 {
                        ui.label(RichText::new("Some traces were scored by a model that saw those sessions; their chances look more certain than they would on new sessions.").color(palette::warn(dark)));
                    }
                });
            }
        }
        rect
    }
}
