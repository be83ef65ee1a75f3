//! The headline findings at the top of a report: fairness, when games are decided and how
//! much play follows, the biggest swing-makers, quirk turns, variant verdicts, and plain
//! statements where the sessions are too few to tell. Each finding carries its numbers.

use std::collections::BTreeMap;

use serde::Serialize;

use super::balance::Balance;
use super::compare::Comparison;
use super::decision::DecisionReport;
use super::swings::{EventImpact, ItemKind, LeverageTable};
use super::wording::{num, num2, pct};

/// The caution every report carries.
pub const CAUTION: &str = "These results describe recorded sessions of a game or exercise, \
not real-world events, and must not drive operational decisions.";

/// What a finding is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
pub enum Topic {
    /// How far the numbers can be trusted.
    Caution,
    /// Seats and actors.
    Fairness,
    /// When games are decided.
    Decision,
    /// Which events swing games.
    Swings,
    /// Turns far above their neighbours.
    Quirks,
    /// Rule-variant comparisons.
    Variant,
    /// Where the sessions are too few to tell.
    NotEnoughSessions,
}

/// One headline: a sentence and the numbers behind it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    /// What it is about.
    pub topic: Topic,
    /// The sentence.
    pub text: String,
    /// The numbers behind it, by name.
    pub numbers: BTreeMap<String, f64>,
}

impl Finding {
    fn new(topic: Topic, text: impl Into<String>) -> Self {
        Self {
            topic,
            text: text.into(),
            numbers: BTreeMap::new(),
        }
    }
    fn with(mut self, name: &str, value: f64) -> Self {
        self.numbers.insert(name.to_string(), value);
        self
    }
}

/// The headlines of a report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Findings {
    /// [`CAUTION`], always shown.
    pub caution: String,
    /// Findings in topic order.
    pub headlines: Vec<Finding>,
}

/// What the findings are assembled from; any part may be missing.
#[derive(Debug, Clone, Copy, Default)]
pub struct FindingsInput<'a> {
    /// Balance of the sessions.
    pub balance: Option<&'a Balance>,
    /// Decision reports, one per threshold (e.g. 0.9 and 0.75).
    pub decisions: &'a [DecisionReport],
    /// Event impact.
    pub impact: Option<&'a EventImpact>,
    /// Leverage by turn.
    pub leverage: Option<&'a LeverageTable>,
    /// Variant comparisons.
    pub comparisons: &'a [Comparison],
    /// How many swing-makers to name (0 means 3).
    pub swing_makers: usize,
}

/// Assemble the headline findings.
pub fn assemble_findings(input: &FindingsInput) -> Findings {
    let mut out = Vec::new();
    let in_sample: usize = input
        .decisions
        .iter()
        .map(|d| d.decisions.not_out_of_fold)
        .max()
        .unwrap_or(0);
    out.push(Finding::new(Topic::Caution, CAUTION));
    if in_sample > 0 {
        out.push(
            Finding::new(
                Topic::Caution,
                format!(
                    "{in_sample} trace(s) were not out-of-fold: a model that saw those sessions scored them, so their chances look more certain than they would on new sessions."
                ),
            )
            .with("in_sample_traces", in_sample as f64),
        );
    }
    if let Some(b) = input.balance {
        fairness(b, &mut out);
    }
    for d in input.decisions {
        decision(d, &mut out);
    }
    if let Some(i) = input.impact {
        swings(i, input.swing_makers, &mut out);
    }
    if let Some(l) = input.leverage {
        quirks(l, &mut out);
    }
    for c in input.comparisons {
        variant(c, &mut out);
    }
    // Stable sort keeps each topic's own order.
    out.sort_by_key(|f| f.topic);
    Findings {
        caution: CAUTION.to_string(),
        headlines: out,
    }
}

fn fairness(b: &Balance, out: &mut Vec<Finding>) {
    // A balance always holds the first seat and its two opening sentences; stay quiet if not.
    let (Some(first), Some(rate_text), Some(detect_text)) =
        (b.seats.first(), b.findings.first(), b.findings.get(1))
    else {
        return;
    };
    let mut f = Finding::new(Topic::Fairness, rate_text.clone())
        .with("first_seat_rate", first.rate)
        .with("first_seat_ci_lo", first.interval.lo)
        .with("first_seat_ci_hi", first.interval.hi)
        .with("fair_rate", first.fair_rate)
        .with("sessions", b.sessions as f64);
    if let Some(r) = b.first_seat.detectable_rate {
        f = f.with("detectable_first_seat_rate", r);
    }
    out.push(f);
    let topic = if b.first_seat.detects_five_points {
        Topic::Fairness
    } else {
        Topic::NotEnoughSessions
    };
    out.push(Finding::new(topic, detect_text.clone()).with("sessions", b.sessions as f64));
    if b.draws > 0 {
        out.push(
            Finding::new(
                Topic::Fairness,
                format!(
                    "{} of {} sessions ({} %) ended in a draw.",
                    b.draws,
                    b.sessions,
                    pct(b.draw_share)
                ),
            )
            .with("draw_share", b.draw_share),
        );
    }
}

fn decision(r: &DecisionReport, out: &mut Vec<Finding>) {
    let a = &r.all;
    let at = pct(r.threshold);
    let mut f = Finding::new(Topic::Decision, String::new())
        .with("threshold", r.threshold)
        .with("sessions", a.sessions as f64)
        .with("decided", a.decided as f64)
        .with("never_decided", a.never_decided as f64)
        .with("draws", a.draws as f64);
    let mut text = format!(
        "At a {at} % threshold, {} of {} sessions were decided",
        a.decided, a.sessions
    );
    if let (Some(t), Some(s)) = (a.decided_turn, a.settled_share) {
        text += &format!(
            "; half by turn {} (quartiles {}–{}), after which a median {} % of their turns were still played",
            num(t.median),
            num(t.q1),
            num(t.q3),
            pct(s.median)
        );
        f = f
            .with("decided_turn_median", t.median)
            .with("settled_share_median", s.median);
    }
    text += &format!(
        ". {} were never decided and {} ended in a draw.",
        a.never_decided, a.draws
    );
    f.text = text;
    out.push(f);
    let fc = &a.false_certainty;
    let mut f = Finding::new(
        Topic::Decision,
        format!("False certainty at {at} %: {}.", fc.verdict),
    )
    .with("crossings", fc.crossings as f64)
    .with("lost", fc.lost as f64);
    if let (Some(rate), Some(implied)) = (fc.rate, fc.implied_rate) {
        f = f
            .with("rate", rate)
            .with("ci_lo", fc.interval.lo)
            .with("ci_hi", fc.interval.hi)
            .with("implied_rate", implied);
    }
    out.push(f);
    if a.comebacks > 0 {
        out.push(
            Finding::new(
                Topic::Decision,
                format!(
                    "{} winner(s) came back from a win chance of {} % or less.",
                    a.comebacks,
                    pct(super::decision::COMEBACK_CHANCE)
                ),
            )
            .with("comebacks", a.comebacks as f64),
        );
    }
}

fn swings(i: &EventImpact, count: usize, out: &mut Vec<Finding>) {
    let count = if count == 0 { 3 } else { count };
    let clear: Vec<_> = i
        .items
        .iter()
        .filter(|it| {
            it.interval
                .is_some_and(|iv| it.mean_swing.is_some() && !iv.contains(0.0))
        })
        .collect();
    for it in clear.iter().take(count) {
        let (Some(m), Some(iv)) = (it.mean_swing, it.interval) else {
            continue;
        };
        let kind = match it.kind {
            ItemKind::Label => "The event",
            ItemKind::Word => "The word",
        };
        let mut f = Finding::new(
            Topic::Swings,
            format!(
                "{kind} “{}” moves its actor's win chance by {} on average ({} % CI {}–{}; {} occurrences in {} sessions){}.",
                it.name,
                if m >= 0.0 { format!("+{}", num2(m)) } else { num2(m) },
                pct(i.params.bootstrap.confidence),
                num2(iv.lo),
                num2(iv.hi),
                it.occurrences,
                it.sessions,
                it.win_share
                    .map(|w| format!("; its actor went on to win {} % of the time", pct(w)))
                    .unwrap_or_default()
            ),
        )
        .with("mean_swing", m)
        .with("ci_lo", iv.lo)
        .with("ci_hi", iv.hi)
        .with("occurrences", it.occurrences as f64)
        .with("sessions", it.sessions as f64);
        if let Some(w) = it.win_share {
            f = f.with("win_share", w);
        }
        out.push(f);
    }
    if clear.is_empty() {
        out.push(
            Finding::new(
                Topic::NotEnoughSessions,
                format!(
                    "No event label or word moves win chances clearly: with {} sessions every interval includes zero.",
                    i.sessions
                ),
            )
            .with("sessions", i.sessions as f64),
        );
    }
}

fn quirks(l: &LeverageTable, out: &mut Vec<Finding>) {
    let flagged: Vec<_> = l.rows.iter().filter(|r| r.quirk).collect();
    if flagged.is_empty() {
        out.push(Finding::new(
            Topic::Quirks,
            format!(
                "No turn swings far more than the turns around it ({}× their median or more, with {} or more sessions).",
                num(l.params.factor),
                l.params.min_sessions
            ),
        ));
    }
    for r in flagged {
        let ratio = r
            .neighbour_median
            .map_or(f64::INFINITY, |m| r.mean_abs_swing / m);
        out.push(
            Finding::new(
                Topic::Quirks,
                format!(
                    "Turn {} swings win chances {}× as much as the turns around it (leverage {} over {} sessions): look at what the rules do on that turn.",
                    r.turn,
                    num(ratio),
                    num2(r.leverage),
                    r.sessions
                ),
            )
            .with("turn", f64::from(r.turn))
            .with("leverage", r.leverage)
            .with("ratio_to_neighbours", ratio)
            .with("sessions", r.sessions as f64),
        );
    }
}

fn variant(c: &Comparison, out: &mut Vec<Finding>) {
    let head = format!("{} vs {}", c.b.name, c.a.name);
    for v in &c.verdicts {
        out.push(Finding::new(Topic::Variant, format!("{head}: {v}.")));
    }
    let fm = &c.first_mover;
    let undetected = fm.difference.is_some() && fm.interval.contains(0.0);
    if let Some(n) = c.sessions_needed.per_variant
        && undetected
        && (n as usize > c.a.sessions || n as usize > c.b.sessions)
    {
        out.push(
            Finding::new(
                Topic::NotEnoughSessions,
                format!(
                    "{head}: not enough sessions to tell whether the first-mover edge changed; about {n} per variant would be needed."
                ),
            )
            .with("sessions_needed", n as f64)
            .with("a_sessions", c.a.sessions as f64)
            .with("b_sessions", c.b.sessions as f64),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::balance::{BalanceParams, balance};
    use crate::analysis::compare::{CompareParams, CompareSide, compare};
    use crate::analysis::decision::decision_report;
    use crate::analysis::swings::{LeverageParams, leverage_by_turn};
    use crate::analysis::testkit::{Plan, clinched, duel, refs, set_of};
    use crate::analysis::traces::Trace;

    fn plans(n: usize, turns: u32, variant: &'static str) -> Vec<Plan> {
        (0..n)
            .map(|i| Plan {
                turns,
                winner: Some(usize::from(i % 9 >= 5)),
                victory: if i % 3 == 0 { "treaty" } else { "siege" },
                variant,
            })
            .collect()
    }

    #[test]
    fn a_small_set_says_it_cannot_tell_and_always_carries_the_caution() {
        // 20 sessions, first seat wins 12: too few to tell 55/45 from fair (see balance).
        let set = set_of(&plans(20, 12, "base"));
        let traces: Vec<Trace> = (0..20)
            .map(|i| {
                let w = set.sessions[i].winner_seat().unwrap();
                clinched(0, i, 12, 4 + (i % 5) as u32, w)
            })
            .collect();
        let b = balance(&[&set], None, &BalanceParams::default()).unwrap();
        let reports = [
            decision_report(&refs(&traces), &[&set], 0.9).unwrap(),
            decision_report(&refs(&traces), &[&set], 0.75).unwrap(),
        ];
        let f = assemble_findings(&FindingsInput {
            balance: Some(&b),
            decisions: &reports,
            ..FindingsInput::default()
        });
        assert_eq!(f.caution, CAUTION);
        assert_eq!(f.headlines[0].topic, Topic::Caution);
        assert!(
            f.headlines[0]
                .text
                .contains("must not drive operational decisions")
        );
        let unsure: Vec<&Finding> = f
            .headlines
            .iter()
            .filter(|h| h.topic == Topic::NotEnoughSessions)
            .collect();
        assert!(
            unsure
                .iter()
                .any(|h| h.text.contains("cannot tell a 55/45 game from a fair one"))
        );
        let decided: Vec<&Finding> = f
            .headlines
            .iter()
            .filter(|h| h.topic == Topic::Decision)
            .collect();
        // Decided at turns 4..8 of 12 in equal numbers: median turn 6, settled share 6/12.
        assert!(
            decided[0]
                .text
                .starts_with("At a 90 % threshold, 20 of 20 sessions were decided; half by turn 6"),
            "{}",
            decided[0].text
        );
        assert_eq!(decided[0].numbers["decided_turn_median"], 6.0);
        assert!(
            decided
                .iter()
                .any(|h| h.text.starts_with("At a 75 % threshold"))
        );
    }

    #[test]
    fn quirk_turns_and_variant_verdicts_become_headlines() {
        let n = 40;
        let set_a = set_of(&plans(n, 10, "a"));
        let set_b = set_of(&plans(n, 10, "b"));
        // Small swings everywhere except a jump on turn 6 in every session.
        let make = |set: usize| -> Vec<Trace> {
            (0..n)
                .map(|i| {
                    let north: Vec<f64> = (1..=10)
                        .map(|t| {
                            let wiggle = if (t + i) % 2 == 0 { 0.52 } else { 0.48 };
                            if t >= 6 { wiggle + 0.3 } else { wiggle }
                        })
                        .collect();
                    duel(set, i, &north)
                })
                .collect()
        };
        let ta = make(0);
        let tb = make(1);
        let all: Vec<&Trace> = ta.iter().chain(&tb).collect();
        let sets = [&set_a, &set_b];
        let lev = leverage_by_turn(&refs(&ta), &sets, &LeverageParams::default()).unwrap();
        let c = compare(
            &sets,
            &CompareSide::from_set(&all, 0, "A", "m"),
            &CompareSide::from_set(&all, 1, "B", "m"),
            &CompareParams::default(),
        )
        .unwrap();
        let f = assemble_findings(&FindingsInput {
            leverage: Some(&lev),
            comparisons: std::slice::from_ref(&c),
            ..FindingsInput::default()
        });
        let quirks: Vec<&Finding> = f
            .headlines
            .iter()
            .filter(|h| h.topic == Topic::Quirks)
            .collect();
        assert_eq!(quirks.len(), 1);
        assert!(
            quirks[0].text.starts_with("Turn 6 swings"),
            "{}",
            quirks[0].text
        );
        let variant: Vec<&Finding> = f
            .headlines
            .iter()
            .filter(|h| h.topic == Topic::Variant)
            .collect();
        assert_eq!(variant.len(), c.verdicts.len());
        assert!(variant.iter().all(|h| h.text.starts_with("B vs A: ")));
        // Identical sides: the first-mover rate cannot change, so nothing to size.
        assert!(variant.iter().any(|h| {
            h.text
                .contains("the first-mover win rate: no detectable change")
        }));
    }
}
