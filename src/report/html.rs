//! `report.html`: one self-contained page (inline CSS and SVG, no scripts, no network),
//! readable by someone who was not there. Findings first, cautions last; every string that came
//! from an input file is escaped.

use super::escape::escape;
use super::svg::{
    Band, Bar, Frame, PALETTE, Series, Span, bar_chart, decided_chart, histogram, line_chart,
};
use super::tables::gallery;
use crate::analysis::decision::DecisionSummary;
use crate::analysis::findings::CAUTION;
use crate::analysis::swings::top_swings;
use crate::analysis::traces::Trace;
use crate::evaluate::quality::Quality;
use crate::study::{SideResult, Study};
use std::fmt::Write as _;

const STYLE: &str = r#"
body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;max-width:1040px;margin:2em auto;padding:0 1em;color:#1d1d1f;line-height:1.45}
h1{font-size:1.7em;margin-bottom:.2em} h2{margin-top:2em;border-bottom:2px solid #0072B2;padding-bottom:.2em}
h3{margin-top:1.5em} .caution{background:#fff4e0;border-left:5px solid #E69F00;padding:.6em 1em;margin:1em 0}
.finding{margin:.35em 0} table{border-collapse:collapse;margin:.6em 0;font-size:.92em} th,td{padding:.25em .6em;border-bottom:1px solid #ddd;text-align:left;vertical-align:top}
th{background:#f3f5f8} td.num,th.num{text-align:right;font-variant-numeric:tabular-nums} .muted{color:#666;font-size:.9em}
.verdict{font-weight:600} figure{margin:1em 0} figcaption{color:#555;font-size:.9em;max-width:640px}
.grid{display:flex;flex-wrap:wrap;gap:1.5em} .side{border-top:1px dashed #bbb;margin-top:2.5em}
svg{max-width:100%;height:auto;color:#1d1d1f}
"#;

fn pct(x: f64) -> String {
    format!("{:.0} %", 100.0 * x)
}

fn f3(x: f64) -> String {
    format!("{x:.3}")
}

fn quartiles(q: &Option<crate::analysis::decision::Quartiles>, scale: f64, unit: &str) -> String {
    match q {
        Some(q) => format!(
            "{:.0}{unit} (middle half {:.0}–{:.0}{unit})",
            q.median * scale,
            q.q1 * scale,
            q.q3 * scale
        ),
        None => "–".into(),
    }
}

fn seat_color(seat: Option<usize>) -> String {
    match seat {
        Some(s) => PALETTE[s % PALETTE.len()].to_string(),
        None => "#888".into(),
    }
}

fn figure(out: &mut String, svg: &str, caption: &str) {
    let _ = write!(
        out,
        "<figure>{svg}<figcaption>{caption}</figcaption></figure>"
    );
}

fn decided_section(out: &mut String, study: &Study, side: &SideResult) {
    let d = &side.decisions;
    let all = &d.all;
    let _ = write!(out, "<h3>When each game was decided</h3>");
    let _ = write!(
        out,
        "<p>A game counts as <b>decided</b> at the first turn from which the eventual winner's win chance stays at or above {} to the end. \
         The <b>settled share</b> is the share of the game's turns played after that point.</p>",
        pct(d.threshold)
    );
    let mut sessions: Vec<&crate::analysis::decision::SessionDecision> =
        d.decisions.sessions.iter().collect();
    sessions.sort_by(|a, b| {
        let key = |s: &crate::analysis::decision::SessionDecision| {
            s.decided_turn.map(|t| t as f64).unwrap_or(f64::INFINITY)
        };
        key(a).total_cmp(&key(b)).then(a.turns.cmp(&b.turns))
    });
    let max_len = sessions.iter().map(|s| s.turns).max().unwrap_or(1) as f64;
    let spans: Vec<Span> = sessions
        .iter()
        .map(|s| {
            let trace_len = side
                .training
                .traces
                .iter()
                .find(|t| t.set == s.set && t.session == s.session)
                .and_then(|t| t.turns.last().copied())
                .unwrap_or(s.turns as u32) as f64;
            Span {
                length: trace_len,
                decided: s.decided_turn.map(|t| t as f64),
                color: seat_color(s.winner_seat),
                label: format!(
                    "{} — winner {}, {} turns, decided {}",
                    s.id,
                    s.winner,
                    s.turns,
                    s.decided_turn
                        .map(|t| format!("at turn {t}"))
                        .unwrap_or_else(|| "never".into())
                ),
            }
        })
        .collect();
    let max_turn = spans.iter().map(|s| s.length).fold(max_len, f64::max);
    let mut frame = Frame::new(
        "Every session as a bar of its length, decided turn marked",
        "turn",
        "sessions (sorted by decided turn)",
        (0.0, max_turn),
        (0.0, 1.0),
    );
    frame.size = (640.0, 320.0);
    let legend: Vec<(String, String)> = (0..2)
        .map(|k| {
            (
                if k == 0 {
                    "winner moved first".to_string()
                } else {
                    format!("winner in seat {}", k + 1)
                },
                PALETTE[k].to_string(),
            )
        })
        .chain(std::iter::once((
            "never decided".to_string(),
            "#888".to_string(),
        )))
        .collect();
    figure(
        out,
        &decided_chart(frame, &spans, &legend),
        "Each thin bar is one session, as long as the game lasted. The solid part runs to the decided turn; \
         the pale part is play that came after the outcome was already settled. Grey bars were never decided (or were draws).",
    );
    let settled: Vec<f64> = d
        .decisions
        .sessions
        .iter()
        .filter_map(|s| s.settled_share)
        .collect();
    let frame = Frame::new(
        "Settled share",
        "share of the game played after it was decided",
        "sessions",
        (0.0, 1.0),
        (0.0, 1.0),
    );
    figure(
        out,
        &histogram(frame, &settled, 10, PALETTE[0]),
        "How much of each decided game was played after it was decided.",
    );
    let _ = write!(
        out,
        "<table><tr><th>at threshold</th><th class=num>sessions</th><th class=num>decided</th><th class=num>never decided</th><th class=num>draws</th><th>decided turn (median)</th><th>settled share (median)</th><th class=num>comebacks</th><th>false certainty</th></tr>"
    );
    for r in [&side.decisions, &side.decisions_second] {
        summary_row(out, &pct(r.threshold), &r.all);
    }
    let _ = write!(out, "</table>");
    let _ = write!(
        out,
        "<p class=muted>A <b>comeback</b> is a winner whose chance fell to 20 % or lower at some turn. <b>False certainty</b> counts actors who reached the threshold and still lost; a calibrated model expects about {} of such crossings to fail. {}</p>",
        pct(1.0 - d.threshold),
        escape(&all.false_certainty.verdict)
    );
    if !d.by_victory.is_empty() || d.by_variant.len() > 1 {
        let _ = write!(
            out,
            "<h4>By victory route and variant (threshold {})</h4><table><tr><th>group</th><th class=num>sessions</th><th class=num>decided</th><th class=num>never decided</th><th class=num>draws</th><th>decided turn</th><th>settled share</th><th class=num>comebacks</th><th>false certainty</th></tr>",
            pct(d.threshold)
        );
        for g in d
            .by_victory
            .iter()
            .chain(d.by_variant.iter().filter(|_| d.by_variant.len() > 1))
        {
            summary_row(out, &g.name, g);
        }
        let _ = write!(out, "</table>");
    }
    let _ = study;
}

fn summary_row(out: &mut String, name: &str, g: &DecisionSummary) {
    let fc = &g.false_certainty;
    let _ = write!(
        out,
        "<tr><td>{}</td><td class=num>{}</td><td class=num>{}</td><td class=num>{}</td><td class=num>{}</td><td>{}</td><td>{}</td><td class=num>{}</td><td>{}</td></tr>",
        escape(name),
        g.sessions,
        g.decided,
        g.never_decided,
        g.draws,
        quartiles(&g.decided_turn, 1.0, ""),
        quartiles(&g.settled_share, 100.0, " %"),
        g.comebacks,
        match fc.rate {
            Some(r) => format!(
                "{} of {} crossings ({}–{})",
                pct(r),
                fc.crossings,
                pct(fc.interval.lo),
                pct(fc.interval.hi)
            ),
            None => "no crossings".into(),
        }
    );
}

fn quality_section(out: &mut String, side: &SideResult) {
    let _ = write!(out, "<h3>How good are the win chances?</h3>");
    let s = &side.training.model.summary;
    let _ = write!(
        out,
        "<p>Model: {}. Trained on {} sessions; {} sessions were held out as an untouched test set that no tuning ever saw. \
         Every session's trace comes from a model that never saw that session (<i>out-of-fold</i>).</p>",
        escape(&s.choice),
        s.trained_sessions,
        s.test_sessions
    );
    for n in &side.training.notes {
        let _ = write!(out, "<p class=caution>{}</p>", escape(n));
    }
    let (scope, q) = match (&side.test_quality, &side.oof_quality) {
        (Some(t), _) if t.sessions >= 30 => ("the untouched test sessions", Some(t)),
        (_, Some(o)) => ("all out-of-fold traces (the test share is small)", Some(o)),
        (t, _) => ("the untouched test sessions", t.as_ref()),
    };
    let Some(q) = q else {
        let _ = write!(out, "<p>Too few held-out sessions to score the model.</p>");
        return;
    };
    metrics_table(out, q, scope, side.test_quality.as_ref());
    curve_charts(out, q, scope);
    if side.training.learning_curve.len() >= 2 {
        let lc = &side.training.learning_curve;
        let pts: Vec<(f64, f64)> = lc.iter().map(|p| (p.sessions as f64, p.log_loss)).collect();
        let ymin = pts.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
        let ymax = pts.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
        let frame = Frame::new(
            "Learning curve",
            "training sessions",
            "held-out log loss",
            (0.0, pts.last().map(|p| p.0).unwrap_or(1.0) * 1.05),
            (ymin - 0.02, ymax + 0.02),
        );
        let fall = crate::evaluate::train::loss_fall_per_doubling(lc).unwrap_or(0.0);
        let verdict = if fall > crate::evaluate::train::STILL_IMPROVING_PER_DOUBLING {
            format!(
                "The loss is still falling ({fall:.3} per doubling of the sessions): more sessions of the same kind would likely sharpen the chances."
            )
        } else {
            format!(
                "The curve is flattening ({fall:.3} per doubling of the sessions): more sessions of the same kind would add little."
            )
        };
        figure(
            out,
            &line_chart(
                frame,
                &[Series {
                    name: "held-out log loss".into(),
                    points: pts,
                    color: PALETTE[0].into(),
                    dashed: false,
                }],
                &[],
            ),
            &format!(
                "Would more sessions help? Held-out log loss (lower is better) against the number of training sessions. {verdict}"
            ),
        );
    }
    if !side.training.tuning.is_empty() {
        let _ = write!(
            out,
            "<details><summary>Tuning candidates (validation sessions inside the training part)</summary><table><tr><th></th><th>candidate</th><th class=num>validation log loss</th></tr>"
        );
        for t in &side.training.tuning {
            let _ = write!(
                out,
                "<tr><td>{}</td><td>{}</td><td class=num>{:.4}</td></tr>",
                if t.chosen { "chosen" } else { "" },
                escape(&t.candidate),
                t.valid_log_loss
            );
        }
        let _ = write!(out, "</table></details>");
    }
}

fn metrics_table(out: &mut String, q: &Quality, scope: &str, test: Option<&Quality>) {
    let reach: Vec<String> = q
        .turns_for_accuracy
        .iter()
        .map(|(l, t)| match t {
            Some(t) => format!("{} from turn {t}", pct(*l)),
            None => format!("{} not reached", pct(*l)),
        })
        .collect();
    let auc = q
        .auc
        .map(|a| {
            format!(
                "{:.3} (SE {:.3})",
                a.auc,
                a.se_delong.unwrap_or(a.se_hanley_mcneil)
            )
        })
        .unwrap_or_else(|| "–".into());
    let _ = write!(
        out,
        "<p>Scored on {scope}: {} sessions, {} actor-turn rows.</p><table>",
        q.sessions, q.rows
    );
    let rows: Vec<(&str, String, &str)> = vec![
        (
            "favourite went on to win",
            format!(
                "{} of turns (95 % CI {}–{})",
                pct(q.favourite_accuracy),
                pct(q.favourite_accuracy_interval.lo),
                pct(q.favourite_accuracy_interval.hi)
            ),
            "the actor with the highest win chance after a turn went on to win (draws left out)",
        ),
        (
            "accuracy reached",
            reach.join(", "),
            "first turn at which the favourite wins that often, over sessions still running then",
        ),
        (
            "log loss",
            format!(
                "{} (from the seat alone: {})",
                f3(q.log_loss),
                f3(q.seat_only_log_loss)
            ),
            "lower is better; 0.693 is a coin flip for two actors",
        ),
        (
            "Brier score",
            format!(
                "{} = reliability {} − resolution {} + uncertainty {}",
                f3(q.brier.brier),
                f3(q.brier.reliability),
                f3(q.brier.resolution),
                f3(q.brier.uncertainty)
            ),
            "Murphy's decomposition over 10 bins",
        ),
        (
            "calibration error (ECE)",
            f3(q.reliability.ece),
            "mean gap between predicted chance and observed win rate over 10 bins",
        ),
        ("ROC AUC", auc, "how well chances rank winners above losers"),
        (
            "at 50 %: accuracy / balanced / precision / recall / F1",
            format!(
                "{} / {} / {} / {} / {}",
                q.row_accuracy.map(f3).unwrap_or_default(),
                q.balanced_accuracy.map(f3).unwrap_or_default(),
                q.precision.map(f3).unwrap_or_default(),
                q.recall.map(f3).unwrap_or_default(),
                q.f1.map(f3).unwrap_or_default()
            ),
            "each actor-turn row as a yes/no call at chance 0.5",
        ),
        (
            "confusion at 50 %",
            format!(
                "TP {} · FP {} · TN {} · FN {}",
                q.confusion.true_pos,
                q.confusion.false_pos,
                q.confusion.true_neg,
                q.confusion.false_neg
            ),
            "",
        ),
    ];
    for (k, v, help) in rows {
        let _ = write!(
            out,
            "<tr><th>{k}</th><td>{v}</td><td class=muted>{help}</td></tr>"
        );
    }
    if let Some(t) = test.filter(|t| t.sessions < 30) {
        let _ = write!(
            out,
            "<tr><th>untouched test share alone</th><td>log loss {} over {} sessions</td><td class=muted>too few sessions for a sharp figure</td></tr>",
            f3(t.log_loss),
            t.sessions
        );
    }
    let _ = write!(out, "</table>");
}

fn curve_charts(out: &mut String, q: &Quality, scope: &str) {
    if !q.by_turn.is_empty() {
        let pts: Vec<(f64, f64)> = q.by_turn.iter().map(|p| (p.x as f64, p.accuracy)).collect();
        let band = Band {
            points: q
                .by_turn
                .iter()
                .map(|p| (p.x as f64, p.accuracy_interval.lo, p.accuracy_interval.hi))
                .collect(),
            color: PALETTE[0].into(),
        };
        let xmax = pts.last().map(|p| p.0).unwrap_or(1.0);
        let mut frame = Frame::new(
            "Accuracy by turn",
            "turn",
            "favourite went on to win",
            (0.0, xmax),
            (0.3, 1.0),
        );
        frame.h_lines = vec![(0.5, "coin flip".into())];
        figure(
            out,
            &line_chart(
                frame,
                &[Series {
                    name: "accuracy".into(),
                    points: pts,
                    color: PALETTE[0].into(),
                    dashed: false,
                }],
                &[band],
            ),
            &format!(
                "Share of sessions whose favourite after that turn went on to win, with a Wilson 95 % band; turns with fewer than 10 sessions still running are left out. Scored on {scope}."
            ),
        );
        let pts: Vec<(f64, f64)> = q.by_turn.iter().map(|p| (p.x as f64, p.log_loss)).collect();
        let band = Band {
            points: q
                .by_turn
                .iter()
                .map(|p| {
                    (
                        p.x as f64,
                        p.log_loss - 1.96 * p.log_loss_se,
                        p.log_loss + 1.96 * p.log_loss_se,
                    )
                })
                .collect(),
            color: PALETTE[1].into(),
        };
        let ymax = pts.iter().map(|p| p.1).fold(0.0, f64::max) * 1.15;
        let frame = Frame::new(
            "Log loss by turn",
            "turn",
            "log loss (lower is better)",
            (0.0, xmax),
            (0.0, ymax.max(0.1)),
        );
        figure(
            out,
            &line_chart(
                frame,
                &[Series {
                    name: "log loss".into(),
                    points: pts,
                    color: PALETTE[1].into(),
                    dashed: false,
                }],
                &[band],
            ),
            "Mean log loss of the chances after each turn, with a 95 % band across sessions.",
        );
    }
    if !q.by_tenth.is_empty() {
        let pts: Vec<(f64, f64)> = q
            .by_tenth
            .iter()
            .map(|p| (p.x as f64 * 10.0, p.accuracy))
            .collect();
        let band = Band {
            points: q
                .by_tenth
                .iter()
                .map(|p| {
                    (
                        p.x as f64 * 10.0,
                        p.accuracy_interval.lo,
                        p.accuracy_interval.hi,
                    )
                })
                .collect(),
            color: PALETTE[2].into(),
        };
        let frame = Frame::new(
            "Accuracy by share of the game",
            "share of the game played (%)",
            "favourite went on to win",
            (0.0, 100.0),
            (0.3, 1.0),
        );
        figure(
            out,
            &line_chart(
                frame,
                &[Series {
                    name: "accuracy".into(),
                    points: pts,
                    color: PALETTE[2].into(),
                    dashed: false,
                }],
                &[band],
            ),
            "The same by tenth of each game's length (known only afterwards, so used for evaluation only, never as a model input).",
        );
    }
    let pts: Vec<(f64, f64)> = q
        .reliability
        .bins
        .iter()
        .filter_map(|b| Some((b.mean_predicted?, b.observed_rate?)))
        .collect();
    let band = Band {
        points: q
            .reliability
            .bins
            .iter()
            .filter_map(|b| Some((b.mean_predicted?, b.interval.lo, b.interval.hi)))
            .collect(),
        color: PALETTE[0].into(),
    };
    let frame = Frame::new(
        "Calibration",
        "predicted win chance",
        "observed win rate",
        (0.0, 1.0),
        (0.0, 1.0),
    );
    figure(
        out,
        &line_chart(
            frame,
            &[
                Series {
                    name: "perfect calibration".into(),
                    points: vec![(0.0, 0.0), (1.0, 1.0)],
                    color: "#999".into(),
                    dashed: true,
                },
                Series {
                    name: "observed".into(),
                    points: pts,
                    color: PALETTE[0].into(),
                    dashed: false,
                },
            ],
            &[band],
        ),
        "When the model says 70 %, does the actor win about 70 % of the time? Points near the dashed diagonal are well calibrated; the band is a Wilson 95 % interval per bin.",
    );
}

fn balance_section(out: &mut String, side: &SideResult) {
    let b = &side.balance;
    let _ = write!(out, "<h3>Is it fair?</h3>");
    for f in &b.findings {
        let _ = write!(out, "<p class=finding>{}</p>", escape(f));
    }
    let bars: Vec<Bar> = b
        .seats
        .iter()
        .enumerate()
        .map(|(i, w)| Bar {
            label: w.who.clone(),
            value: w.rate,
            interval: Some((w.interval.lo, w.interval.hi)),
            color: PALETTE[i % PALETTE.len()].into(),
        })
        .collect();
    let mut frame = Frame::new("Win rate by seat", "", "win rate", (0.0, 1.0), (0.0, 1.0));
    if let Some(w) = b.seats.first() {
        frame.h_lines = vec![(w.fair_rate, "fair share".into())];
    }
    frame.size = (420.0, 240.0);
    figure(
        out,
        &bar_chart(frame, &bars),
        "Win rate of each seat with its Wilson 95 % interval; the dashed line is the share a fair game would give.",
    );
    if !b.actors.is_empty() {
        let _ = write!(
            out,
            "<details><summary>Win rate by actor (names that recur in at least 5 sessions)</summary><table><tr><th>actor</th><th class=num>sessions</th><th class=num>wins</th><th>win rate (95 % CI)</th></tr>"
        );
        for w in &b.actors {
            let _ = write!(
                out,
                "<tr><td>{}</td><td class=num>{}</td><td class=num>{}</td><td>{} ({}–{})</td></tr>",
                escape(&w.who),
                w.sessions,
                w.wins,
                pct(w.rate),
                pct(w.interval.lo),
                pct(w.interval.hi)
            );
        }
        let _ = write!(out, "</table></details>");
    }
    if !b.routes.is_empty() {
        let _ = write!(
            out,
            "<table><tr><th>victory route</th><th class=num>sessions</th><th class=num>share</th></tr>"
        );
        for r in &b.routes {
            let _ = write!(
                out,
                "<tr><td>{}</td><td class=num>{}</td><td class=num>{}</td></tr>",
                escape(&r.route),
                r.count,
                pct(r.share)
            );
        }
        let _ = write!(out, "</table>");
    }
    let l = &b.length;
    let lengths: Vec<(f64, f64, usize)> = l
        .bins
        .iter()
        .map(|x| (x.lo as f64, x.hi as f64, x.count))
        .collect();
    if let (Some(first), Some(last)) = (lengths.first(), lengths.last()) {
        let values: Vec<f64> = lengths
            .iter()
            .flat_map(|(lo, hi, n)| std::iter::repeat_n((lo + hi) / 2.0, *n))
            .collect();
        let frame = Frame::new(
            "Game length",
            "turns",
            "sessions",
            (first.0, last.1),
            (0.0, 1.0),
        );
        figure(
            out,
            &histogram(frame, &values, lengths.len(), PALETTE[4]),
            &format!("Game length in turns: {}.", {
                let q = &l.quartiles;
                format!(
                    "median {:.0}, middle half {:.0}–{:.0}",
                    q.median, q.q1, q.q3
                )
            }),
        );
    }
}

fn swings_section(out: &mut String, side: &SideResult) {
    let _ = write!(
        out,
        "<h3>What swings it?</h3><p>A <b>swing</b> is the change in an actor's win chance across one turn (win probability added). \
        The table credits each turn's swing to the events its actor did that turn; intervals come from 1,000 bootstrap resamples of whole sessions.</p>"
    );
    let _ = write!(
        out,
        "<table><tr><th>event or detail word</th><th class=num>times</th><th class=num>sessions</th><th>mean swing for its actor (95 % CI)</th><th class=num>its actor won</th></tr>"
    );
    for item in side
        .impact
        .items
        .iter()
        .filter(|i| i.mean_swing.is_some())
        .take(25)
    {
        let kind = match item.kind {
            crate::analysis::swings::ItemKind::Label => "",
            crate::analysis::swings::ItemKind::Word => " <span class=muted>(word)</span>",
        };
        let ci = item
            .interval
            .map(|i| format!(" ({:+.3} to {:+.3})", i.lo, i.hi))
            .unwrap_or_default();
        let _ = write!(
            out,
            "<tr><td>{}{kind}</td><td class=num>{}</td><td class=num>{}</td><td>{:+.3}{ci}</td><td class=num>{}</td></tr>",
            escape(&item.name),
            item.occurrences,
            item.sessions,
            item.mean_swing.unwrap_or(0.0),
            item.win_share.map(pct).unwrap_or_default()
        );
    }
    let _ = write!(out, "</table>");
    let lv = &side.leverage;
    if !lv.rows.is_empty() {
        let pts: Vec<(f64, f64)> = lv
            .rows
            .iter()
            .map(|r| (r.turn as f64, r.leverage))
            .collect();
        let xmax = pts.last().map(|p| p.0).unwrap_or(1.0);
        let ymax = pts.iter().map(|p| p.1).fold(1.0, f64::max) * 1.1;
        let mut frame = Frame::new(
            "Leverage by turn",
            "turn",
            "leverage (1 = an average turn)",
            (0.0, xmax),
            (0.0, ymax),
        );
        frame.h_lines = vec![(1.0, "average".into())];
        frame.v_lines = lv
            .quirk_turns
            .iter()
            .map(|t| (*t as f64, format!("turn {t}")))
            .collect();
        let quirk = if lv.quirk_turns.is_empty() {
            "No turn stands far above its neighbours.".to_string()
        } else {
            format!(
                "Marked: turn(s) {} stand far above their neighbours — look for a rule that acts on that turn.",
                lv.quirk_turns
                    .iter()
                    .map(|t| t.to_string())
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        };
        figure(
            out,
            &line_chart(
                frame,
                &[Series {
                    name: "leverage".into(),
                    points: pts,
                    color: PALETTE[5].into(),
                    dashed: false,
                }],
                &[],
            ),
            &format!(
                "Mean size of the swings at each turn number relative to the average turn. {quirk}"
            ),
        );
    }
}

fn trace_chart(study: &Study, t: &Trace, threshold: f64, decided: Option<u32>) -> String {
    let s = &study.sets[t.set].sessions[t.session];
    let series: Vec<Series> = (0..t.actors)
        .map(|a| Series {
            name: format!(
                "{}{}",
                s.actors[a],
                if a == 0 { " (moved first)" } else { "" }
            ),
            points: std::iter::once((0.0, t.start[a]))
                .chain(
                    t.turns
                        .iter()
                        .enumerate()
                        .map(|(i, turn)| (*turn as f64, t.chance(i, a))),
                )
                .collect(),
            color: PALETTE[a % PALETTE.len()].into(),
            dashed: false,
        })
        .collect();
    let xmax = t.turns.last().copied().unwrap_or(1) as f64;
    let mut frame = Frame::new(
        &format!("Win chances in session {}", s.id),
        "turn",
        "win chance",
        (0.0, xmax),
        (0.0, 1.0),
    );
    frame.size = (640.0, 220.0);
    frame.h_lines = vec![(threshold, pct(threshold))];
    if let Some(d) = decided {
        frame.v_lines = vec![(d as f64, "decided".into())];
    }
    line_chart(frame, &series, &[])
}

fn gallery_section(out: &mut String, study: &Study, k: usize) {
    let side = &study.sides[k];
    let (most, least) = gallery(study, k, 3);
    let refs = study.set_refs();
    for (title, traces) in [
        (
            "Most decisive sessions (decided earliest in their game)",
            most,
        ),
        ("Least decisive sessions (decided late or never)", least),
    ] {
        let _ = write!(out, "<h4>{title}</h4>");
        for t in traces {
            let s = &study.sets[t.set].sessions[t.session];
            let d = side
                .decisions
                .decisions
                .sessions
                .iter()
                .find(|d| d.set == t.set && d.session == t.session);
            let decided = d.and_then(|d| d.decided_turn);
            let caption = format!(
                "Session {} ({}), won by {}{}. {} turns; {}.",
                escape(&s.id),
                escape(s.variant().unwrap_or("no variant recorded")),
                escape(s.winner_name()),
                s.victory()
                    .map(|v| format!(" by {}", escape(v)))
                    .unwrap_or_default(),
                t.len(),
                match (decided, d.and_then(|d| d.settled_share)) {
                    (Some(dt), Some(sh)) => format!(
                        "decided at turn {dt}, then {} of the game was settled play",
                        pct(sh)
                    ),
                    _ => "never decided".into(),
                }
            );
            figure(
                out,
                &trace_chart(study, t, study.options.threshold, decided),
                &caption,
            );
            if let Ok(swings) = top_swings(t, &refs, 3) {
                let _ = write!(
                    out,
                    "<table><tr><th class=num>turn</th><th>actor</th><th>swing</th><th>that turn's events</th></tr>"
                );
                for sw in swings {
                    let events: Vec<String> = sw
                        .events
                        .iter()
                        .map(|e| {
                            let who = e.actor.as_deref().unwrap_or("(neutral)");
                            let detail = if e.detail.is_empty() {
                                String::new()
                            } else {
                                format!(" — {}", escape(&e.detail))
                            };
                            format!("{}: {}{detail}", escape(who), escape(&e.label))
                        })
                        .collect();
                    let _ = write!(
                        out,
                        "<tr><td class=num>{}</td><td>{}</td><td>{:+.0} points ({} → {})</td><td>{}</td></tr>",
                        sw.turn,
                        escape(&sw.actor_name),
                        sw.swing * 100.0,
                        pct(sw.before),
                        pct(sw.after),
                        events.join("<br>")
                    );
                }
                let _ = write!(out, "</table>");
            }
        }
    }
}

fn comparison_section(out: &mut String, study: &Study) {
    let Some(c) = &study.comparison else { return };
    let _ = write!(
        out,
        "<h2 id=compare>Did the variant change it? {} against {}</h2>",
        escape(&c.b.name),
        escape(&c.a.name)
    );
    let _ = write!(
        out,
        "<p>Differences are {} − {}. Each side's traces come from its own model: {} — {}; {} — {}.</p>",
        escape(&c.b.name),
        escape(&c.a.name),
        escape(&c.a.name),
        escape(&c.a.model),
        escape(&c.b.name),
        escape(&c.b.model)
    );
    let _ = write!(out, "<ul>");
    for v in &c.verdicts {
        let _ = write!(out, "<li class=verdict>{}</li>", escape(v));
    }
    let _ = write!(
        out,
        "</ul><table><tr><th>measure</th><th>{}</th><th>{}</th><th>difference (95 % CI)</th><th>test</th></tr>",
        escape(&c.a.name),
        escape(&c.b.name)
    );
    for r in [&c.first_mover, &c.false_certainty] {
        let rate = |s: usize, n: usize| {
            if n > 0 {
                format!("{} ({s} of {n})", pct(s as f64 / n as f64))
            } else {
                "–".into()
            }
        };
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>Newcombe hybrid score interval</td></tr>",
            escape(&r.measure),
            rate(r.a_successes, r.a_trials),
            rate(r.b_successes, r.b_trials),
            r.difference
                .map(|d| format!(
                    "{:+.1} points ({:+.1} to {:+.1})",
                    d * 100.0,
                    r.interval.lo * 100.0,
                    r.interval.hi * 100.0
                ))
                .unwrap_or_else(|| "–".into())
        );
    }
    for s in [
        &c.decided_turn,
        &c.settled_share,
        &c.game_length,
        &c.excitement,
    ] {
        let med = |m: Option<f64>| {
            m.map(|v| format!("median {v:.2}"))
                .unwrap_or_else(|| "–".into())
        };
        let _ = write!(
            out,
            "<tr><td>{}</td><td>{} (n={})</td><td>{} (n={})</td><td>{}</td><td>{}</td></tr>",
            escape(&s.measure),
            med(s.a_median),
            s.a_n,
            med(s.b_median),
            s.b_n,
            s.hodges_lehmann
                .as_ref()
                .map(|h| format!(
                    "shift {:+.2} ({:+.2} to {:+.2})",
                    h.shift, h.interval.lo, h.interval.hi
                ))
                .unwrap_or_else(|| "–".into()),
            s.mann_whitney
                .as_ref()
                .map(|m| format!("Mann-Whitney p = {:.3}", m.p_value))
                .unwrap_or_default()
        );
    }
    let _ = write!(
        out,
        "</table><p>{}</p><p>{}</p>",
        escape(&c.victory_mix.verdict),
        escape(&c.sessions_needed.verdict)
    );
    // Decided-turn distributions overlaid.
    let mut series = Vec::new();
    let mut xmax: f64 = 1.0;
    for (k, side) in study.sides.iter().take(2).enumerate() {
        let turns: Vec<f64> = side
            .decisions
            .decisions
            .sessions
            .iter()
            .filter_map(|d| d.decided_turn.map(|t| t as f64))
            .collect();
        xmax = turns.iter().copied().fold(xmax, f64::max);
        let mut sorted = turns.clone();
        sorted.sort_by(f64::total_cmp);
        let n = sorted.len().max(1) as f64;
        let pts: Vec<(f64, f64)> = sorted
            .iter()
            .enumerate()
            .map(|(i, t)| (*t, (i + 1) as f64 / n))
            .collect();
        series.push(Series {
            name: side.name.clone(),
            points: pts,
            color: PALETTE[k].into(),
            dashed: k == 1,
        });
    }
    let frame = Frame::new(
        "Decided turn, both sides",
        "decided turn",
        "share of decided sessions decided by then",
        (0.0, xmax),
        (0.0, 1.0),
    );
    figure(
        out,
        &line_chart(frame, &series, &[]),
        "Cumulative share of decided sessions that were decided by each turn. A curve further right means games are decided later.",
    );
}

/// The whole report page.
pub fn render(study: &Study) -> String {
    let mut out = String::with_capacity(256 * 1024);
    let names: Vec<String> = study.sides.iter().map(|s| s.name.clone()).collect();
    let _ = write!(
        out,
        "<!DOCTYPE html><html lang=en><head><meta charset=utf-8><meta name=viewport content=\"width=device-width,initial-scale=1\"><title>tellturn report — {}</title><style>{STYLE}</style></head><body>",
        escape(&names.join(" vs "))
    );
    let _ = write!(
        out,
        "<h1>tellturn report: {}</h1>",
        escape(&names.join(" compared with "))
    );
    let sets: Vec<String> = study
        .sets
        .iter()
        .map(|s| {
            format!(
                "{} ({} finished, {} in progress)",
                s.name,
                s.finished().count(),
                s.in_progress().count()
            )
        })
        .collect();
    let _ = write!(
        out,
        "<p class=muted>Session sets: {}. Seed {}. Threshold {}. Made by tellturn {}.</p>",
        escape(&sets.join("; ")),
        study.options.train.seed,
        pct(study.options.threshold),
        env!("CARGO_PKG_VERSION")
    );
    let _ = write!(
        out,
        "<div class=caution><b>Caution.</b> {}</div>",
        escape(CAUTION)
    );
    let _ = write!(out, "<h2>Findings</h2>");
    // With two sides the top holds the comparison; each side's own findings open its section.
    let two = study.sides.len() > 1;
    let mut shown: Vec<&str> = Vec::new();
    for f in study
        .findings
        .headlines
        .iter()
        .filter(|f| f.text != CAUTION)
    {
        use crate::analysis::findings::Topic;
        if two && !matches!(f.topic, Topic::Variant | Topic::NotEnoughSessions) {
            continue;
        }
        if shown.contains(&f.text.as_str()) {
            continue;
        }
        shown.push(&f.text);
        let _ = write!(out, "<p class=finding>• {}</p>", escape(&f.text));
    }
    for n in &study.notes {
        let _ = write!(out, "<p class=muted>{}</p>", escape(n));
    }
    for (k, side) in study.sides.iter().enumerate() {
        let _ = write!(out, "<div class=side><h2>{}</h2>", escape(&side.name));
        if study.sides.len() > 1 {
            let mut shown: Vec<&str> = Vec::new();
            for f in side.findings.headlines.iter().filter(|f| f.text != CAUTION) {
                if !shown.contains(&f.text.as_str()) {
                    shown.push(&f.text);
                    let _ = write!(out, "<p class=finding>• {}</p>", escape(&f.text));
                }
            }
        }
        decided_section(&mut out, study, side);
        quality_section(&mut out, side);
        balance_section(&mut out, side);
        swings_section(&mut out, side);
        let _ = write!(out, "<h3>Gallery of traces</h3>");
        gallery_section(&mut out, study, k);
        let _ = write!(out, "</div>");
    }
    comparison_section(&mut out, study);
    let _ = write!(
        out,
        "<h2>Cautions and method</h2><div class=caution>{}</div>",
        escape(CAUTION)
    );
    let _ = write!(
        out,
        "<ul><li>Win chances come from models that never saw the session they describe (<i>out-of-fold</i>): the untouched test share is scored by the final model, the other finished sessions by the model of the folds that left them out. Splits are by session, never by turn.</li>\
        <li>A win chance describes how recorded sessions like this one tended to end. It is not a forecast of any real-world event.</li>\
        <li>Intervals are 95 %: Wilson for single rates, Newcombe's hybrid score for differences of rates, Hodges-Lehmann for shifts, bootstrap over whole sessions for event impact.</li>\
        <li>Turn-by-turn figures use the sessions still running at that turn, so late turns describe long games only.</li></ul>"
    );
    let _ = writeln!(out, "</body></html>");
    out
}
