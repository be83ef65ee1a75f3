//! When was it decided: the decided turn of each session, the share of play that followed,
//! false certainty, comebacks, and their summaries by variant and victory route.
//!
//! Everything here is a single pass over the traces, so the dashboard can recompute it at
//! every change of the threshold without retraining (see the `analysis` benchmark).

use std::collections::BTreeMap;

use serde::Serialize;

use super::error::{AnalysisError, check_threshold};
use super::flow::{SuspenseTable, session_flow};
use super::joined::{Joined, join};
use super::traces::Trace;
use super::wording::{pct, pct_fine};
use crate::sessions::SessionSet;
use crate::stats::{Interval, quantile_of_sorted, wilson_interval};

/// The default threshold of a decided turn.
pub const DEFAULT_THRESHOLD: f64 = 0.9;
/// The thresholds a report shows.
pub const REPORT_THRESHOLDS: [f64; 2] = [0.9, 0.75];
/// A winner whose chance fell to this or lower at some turn made a comeback.
pub const COMEBACK_CHANCE: f64 = 0.2;
/// Group name for sessions whose variant or victory route is not recorded.
pub const NOT_RECORDED: &str = "(not recorded)";

/// The index (into [`Trace::turns`]) of the first turn from which `winner_seat`'s chance
/// stays at or above `threshold` through the last turn; `None` if the last turn is below it,
/// the trace is empty, or the seat is not in the trace.
pub fn decided_index(trace: &Trace, winner_seat: usize, threshold: f64) -> Option<usize> {
    if winner_seat >= trace.actors || trace.is_empty() {
        return None;
    }
    // Walk back from the end while the winner stays at or above the threshold.
    let mut first = trace.len();
    while first > 0 && trace.chance(first - 1, winner_seat) >= threshold {
        first -= 1;
    }
    (first < trace.len()).then_some(first)
}

/// The decided turn: the log's turn number of [`decided_index`].
///
/// A winner already at the threshold before any turn (from the seat alone) is decided at the
/// first turn: the measure counts turns, and the first one is played under that belief.
pub fn decided_turn(trace: &Trace, winner_seat: usize, threshold: f64) -> Option<u32> {
    decided_index(trace, winner_seat, threshold).map(|i| trace.turns[i])
}

/// Settled share for a decided turn at index `decided`: turns strictly after it over all
/// turns of the trace.
pub fn settled_share(trace: &Trace, decided: usize) -> f64 {
    let n = trace.len();
    if n == 0 {
        return 0.0;
    }
    (n - 1 - decided.min(n - 1)) as f64 / n as f64
}

/// The first turn at which an actor's chance reached the threshold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ThresholdCrossing {
    /// The actor's seat (0 = moved first).
    pub actor: usize,
    /// The log's turn number.
    pub turn: u32,
    /// The actor's chance after that turn (at least the threshold).
    pub chance: f64,
    /// Whether that actor went on to win.
    pub won: bool,
}

/// When and how one finished session was decided.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionDecision {
    /// The set index.
    pub set: usize,
    /// The session index in its set.
    pub session: usize,
    /// The session id.
    pub id: String,
    /// The recorded variant.
    pub variant: Option<String>,
    /// The winner's name, or `draw`.
    pub winner: String,
    /// The winner's seat (0 = moved first), `None` for a draw.
    pub winner_seat: Option<usize>,
    /// The recorded victory route.
    pub victory: Option<String>,
    /// Number of actors.
    pub actors: usize,
    /// Number of turns in the trace.
    pub turns: usize,
    /// The decided turn (log's number); `None` for draws and never-decided sessions.
    pub decided_turn: Option<u32>,
    /// Share of turns played strictly after the decided turn; `None` when not decided.
    pub settled_share: Option<f64>,
    /// Some actor reached the threshold at some turn and did not win (in a draw, anyone).
    pub false_certainty: bool,
    /// The winner's chance fell to [`COMEBACK_CHANCE`] or lower after some turn.
    pub comeback: bool,
    /// The winner's lowest chance after any turn (start excluded); `None` for draws or
    /// empty traces.
    pub lowest_winner_chance: Option<f64>,
    /// Changes of the favourite (see [`super::flow::lead_changes`]).
    pub lead_changes: usize,
    /// Σ|swing| over turns and actors, divided by the number of actors.
    pub excitement: f64,
    /// Σ of expected Euclidean belief changes (plug-in, see [`super::flow`]).
    pub suspense: f64,
    /// Σ of Euclidean belief changes.
    pub surprise: f64,
    /// Each actor's first turn at or above the threshold, in seat order.
    pub crossings: Vec<ThresholdCrossing>,
    /// Whether the trace came from a model that never saw the session.
    pub out_of_fold: bool,
}

/// Per-session decisions at one threshold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Decisions {
    /// The threshold used.
    pub threshold: f64,
    /// One entry per finished session, in the order of the traces.
    pub sessions: Vec<SessionDecision>,
    /// Traces of unfinished sessions, left out (they have no winner yet).
    pub unfinished_skipped: usize,
    /// Traces (of finished sessions) not out-of-fold: in-sample chances look more certain.
    pub not_out_of_fold: usize,
}

/// Decide every finished session at `threshold` (0 < threshold ≤ 1).
///
/// The suspense plug-in is built from all traces given, per set. Errors on a bad threshold
/// or a trace that does not fit its session.
pub fn decide_sessions(
    traces: &[&Trace],
    sets: &[&SessionSet],
    threshold: f64,
) -> Result<Decisions, AnalysisError> {
    check_threshold("threshold", threshold)?;
    let joined = join(traces, sets)?;
    let table = SuspenseTable::build(traces);
    let mut sessions = Vec::with_capacity(joined.len());
    let mut unfinished_skipped = 0;
    let mut not_out_of_fold = 0;
    for j in &joined {
        if !j.session.is_finished() {
            unfinished_skipped += 1;
            continue;
        }
        let d = decide_one(j, threshold, &table);
        if !d.out_of_fold {
            not_out_of_fold += 1;
        }
        sessions.push(d);
    }
    Ok(Decisions {
        threshold,
        sessions,
        unfinished_skipped,
        not_out_of_fold,
    })
}

fn decide_one(j: &Joined, threshold: f64, table: &SuspenseTable) -> SessionDecision {
    let trace = j.trace;
    let winner_seat = j.session.winner_seat();
    let decided = winner_seat.and_then(|w| decided_index(trace, w, threshold));
    let crossings: Vec<ThresholdCrossing> = (0..trace.actors)
        .filter_map(|a| {
            (0..trace.len())
                .find(|&t| trace.chance(t, a) >= threshold)
                .map(|t| ThresholdCrossing {
                    actor: a,
                    turn: trace.turns[t],
                    chance: trace.chance(t, a),
                    won: winner_seat == Some(a),
                })
        })
        .collect();
    let lowest_winner_chance = winner_seat.and_then(|w| {
        (0..trace.len())
            .map(|t| trace.chance(t, w))
            .reduce(f64::min)
    });
    let flow = session_flow(trace, table);
    SessionDecision {
        set: trace.set,
        session: trace.session,
        id: j.session.id.clone(),
        variant: j.session.variant().map(str::to_string),
        winner: j.session.winner_name().to_string(),
        winner_seat,
        victory: j.session.victory().map(str::to_string),
        actors: trace.actors,
        turns: trace.len(),
        decided_turn: decided.map(|i| trace.turns[i]),
        settled_share: decided.map(|i| settled_share(trace, i)),
        false_certainty: crossings.iter().any(|c| !c.won),
        comeback: lowest_winner_chance.is_some_and(|c| c <= COMEBACK_CHANCE),
        lowest_winner_chance,
        lead_changes: flow.lead_changes,
        excitement: flow.excitement,
        suspense: flow.suspense,
        surprise: flow.surprise,
        crossings,
        out_of_fold: trace.source.is_out_of_fold(),
    }
}

/// Lower quartile, median and upper quartile (type-7 quantiles).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Quartiles {
    /// 25 % quantile.
    pub q1: f64,
    /// Median.
    pub median: f64,
    /// 75 % quantile.
    pub q3: f64,
}

impl Quartiles {
    /// Quartiles of a sample, `None` when it is empty or holds NaN.
    pub fn of(values: &[f64]) -> Option<Quartiles> {
        if values.iter().any(|v| v.is_nan()) {
            return None;
        }
        let mut sorted = values.to_vec();
        sorted.sort_by(f64::total_cmp);
        Some(Quartiles {
            q1: quantile_of_sorted(&sorted, 0.25)?,
            median: quantile_of_sorted(&sorted, 0.5)?,
            q3: quantile_of_sorted(&sorted, 0.75)?,
        })
    }
}

/// How often an actor who reached the threshold still did not win, against what a
/// calibrated model implies.
///
/// Counted per actor: each actor's first turn at or above the threshold is one crossing. If
/// the chances are calibrated, an actor at chance p goes on to lose with probability 1 − p,
/// so the expected share of lost crossings is the mean of 1 − (chance at the crossing), a
/// little below 1 − threshold because crossings overshoot.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FalseCertainty {
    /// Actors whose chance reached the threshold.
    pub crossings: usize,
    /// Of those, actors who did not win.
    pub lost: usize,
    /// Sessions with at least one lost crossing.
    pub sessions: usize,
    /// lost / crossings; `None` without crossings.
    pub rate: Option<f64>,
    /// Wilson 95 % interval of the rate ([0, 1] without crossings).
    pub interval: Interval,
    /// The rate a calibrated model implies: mean of 1 − chance at the crossings.
    pub implied_rate: Option<f64>,
    /// 1 − threshold, the rough figure the implied rate sits just below.
    pub threshold_complement: f64,
    /// Whether the observed interval contains, exceeds or falls below the implied rate.
    pub verdict: String,
}

fn false_certainty(
    group: &[&SessionDecision],
    threshold: f64,
) -> Result<FalseCertainty, AnalysisError> {
    let crossings: Vec<&ThresholdCrossing> = group.iter().flat_map(|d| &d.crossings).collect();
    let lost = crossings.iter().filter(|c| !c.won).count();
    let n = crossings.len();
    let interval = wilson_interval(lost as u64, n as u64, 0.95, false)?;
    let rate = (n > 0).then(|| lost as f64 / n as f64);
    let implied_rate =
        (n > 0).then(|| crossings.iter().map(|c| 1.0 - c.chance).sum::<f64>() / n as f64);
    let at = pct(threshold);
    let verdict = match (rate, implied_rate) {
        (Some(rate), Some(implied)) => {
            let observed = format!(
                "{lost} of {n} actors who reached {at} % did not win ({} %, 95 % CI {}–{} %); \
                 a calibrated model implies about {} %",
                pct_fine(rate),
                pct_fine(interval.lo),
                pct_fine(interval.hi),
                pct_fine(implied)
            );
            if interval.contains(implied) {
                format!("in line with a calibrated model: {observed}")
            } else if interval.lo > implied {
                format!(
                    "more often than a calibrated model implies, so chances of {at} % are overconfident: {observed}"
                )
            } else {
                format!(
                    "less often than a calibrated model implies, so chances of {at} % are cautious: {observed}"
                )
            }
        }
        _ => format!("no actor's chance reached {at} %, so there is nothing to check"),
    };
    Ok(FalseCertainty {
        crossings: n,
        lost,
        sessions: group.iter().filter(|d| d.false_certainty).count(),
        rate,
        interval,
        implied_rate,
        threshold_complement: 1.0 - threshold,
        verdict,
    })
}

/// Which sessions a summary covers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum GroupKind {
    /// Every finished session.
    All,
    /// Sessions of one recorded variant.
    Variant,
    /// Sessions won by one victory route.
    Victory,
}

/// Decision measures of a group of sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DecisionSummary {
    /// What the group is.
    pub kind: GroupKind,
    /// The variant or route (`all` for everything, [`NOT_RECORDED`] when missing).
    pub name: String,
    /// Sessions = decided + never decided + draws.
    pub sessions: usize,
    /// Sessions with a winner and a decided turn.
    pub decided: usize,
    /// Sessions with a winner whose chance was below the threshold after the last turn.
    pub never_decided: usize,
    /// Draws (counted apart: nobody is decided to win).
    pub draws: usize,
    /// Quartiles of the decided turn over decided sessions.
    pub decided_turn: Option<Quartiles>,
    /// Quartiles of the settled share over decided sessions.
    pub settled_share: Option<Quartiles>,
    /// False certainty against a calibrated model.
    pub false_certainty: FalseCertainty,
    /// Sessions whose winner's chance fell to [`COMEBACK_CHANCE`] or lower.
    pub comebacks: usize,
    /// Mean lead changes per session.
    pub mean_lead_changes: Option<f64>,
    /// Mean excitement per session.
    pub mean_excitement: Option<f64>,
    /// Mean surprise per session.
    pub mean_surprise: Option<f64>,
    /// Mean suspense per session.
    pub mean_suspense: Option<f64>,
}

fn mean_of(values: impl Iterator<Item = f64>) -> Option<f64> {
    let (sum, n) = values.fold((0.0, 0usize), |(s, n), v| (s + v, n + 1));
    (n > 0).then(|| sum / n as f64)
}

/// Summarise a group of sessions at `threshold` (the threshold their decisions used).
pub fn summarize_group(
    kind: GroupKind,
    name: &str,
    group: &[&SessionDecision],
    threshold: f64,
) -> Result<DecisionSummary, AnalysisError> {
    let decided_turns: Vec<f64> = group
        .iter()
        .filter_map(|d| d.decided_turn.map(f64::from))
        .collect();
    let shares: Vec<f64> = group.iter().filter_map(|d| d.settled_share).collect();
    let draws = group.iter().filter(|d| d.winner_seat.is_none()).count();
    Ok(DecisionSummary {
        kind,
        name: name.to_string(),
        sessions: group.len(),
        decided: decided_turns.len(),
        never_decided: group.len() - draws - decided_turns.len(),
        draws,
        decided_turn: Quartiles::of(&decided_turns),
        settled_share: Quartiles::of(&shares),
        false_certainty: false_certainty(group, threshold)?,
        comebacks: group.iter().filter(|d| d.comeback).count(),
        mean_lead_changes: mean_of(group.iter().map(|d| d.lead_changes as f64)),
        mean_excitement: mean_of(group.iter().map(|d| d.excitement)),
        mean_surprise: mean_of(group.iter().map(|d| d.surprise)),
        mean_suspense: mean_of(group.iter().map(|d| d.suspense)),
    })
}

/// Decision summaries overall, per variant and per victory route, with the sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DecisionReport {
    /// The threshold used.
    pub threshold: f64,
    /// Every finished session.
    pub all: DecisionSummary,
    /// One summary per recorded variant (sorted by name).
    pub by_variant: Vec<DecisionSummary>,
    /// One summary per victory route (sorted by name; draws fall under [`NOT_RECORDED`]).
    pub by_victory: Vec<DecisionSummary>,
    /// The per-session decisions.
    pub decisions: Decisions,
}

fn grouped(
    decisions: &[SessionDecision],
    key: impl Fn(&SessionDecision) -> Option<&str>,
) -> BTreeMap<String, Vec<&SessionDecision>> {
    let mut groups: BTreeMap<String, Vec<&SessionDecision>> = BTreeMap::new();
    for d in decisions {
        let k = key(d).unwrap_or(NOT_RECORDED).to_string();
        groups.entry(k).or_default().push(d);
    }
    groups
}

/// Summarise per-session decisions overall, per variant and per victory route.
pub fn summarize_decisions(decisions: Decisions) -> Result<DecisionReport, AnalysisError> {
    let threshold = decisions.threshold;
    let all: Vec<&SessionDecision> = decisions.sessions.iter().collect();
    let summaries = |kind, groups: BTreeMap<String, Vec<&SessionDecision>>| {
        groups
            .iter()
            .map(|(name, g)| summarize_group(kind, name, g, threshold))
            .collect::<Result<Vec<_>, _>>()
    };
    let by_variant = summaries(
        GroupKind::Variant,
        grouped(&decisions.sessions, |d| d.variant.as_deref()),
    )?;
    let by_victory = summaries(
        GroupKind::Victory,
        grouped(&decisions.sessions, |d| d.victory.as_deref()),
    )?;
    Ok(DecisionReport {
        threshold,
        all: summarize_group(GroupKind::All, "all", &all, threshold)?,
        by_variant,
        by_victory,
        decisions,
    })
}

/// [`decide_sessions`] then [`summarize_decisions`]: the whole decision view at one threshold.
pub fn decision_report(
    traces: &[&Trace],
    sets: &[&SessionSet],
    threshold: f64,
) -> Result<DecisionReport, AnalysisError> {
    summarize_decisions(decide_sessions(traces, sets, threshold)?)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testkit::{Plan, duel, refs, set_of, trace, trace_at};

    fn plan(turns: u32, winner: Option<usize>) -> Plan {
        Plan {
            turns,
            winner,
            victory: "siege",
            variant: "base",
        }
    }

    #[test]
    fn decided_turn_is_the_first_turn_the_winner_stays_above_the_threshold() {
        // Hand-built: north 0.5, 0.6, 0.92, 0.95, 1.0 → first at or above 0.9 for good at
        // turn 3; turns 4 and 5 follow, settled share 2/5.
        let t = duel(0, 0, &[0.5, 0.6, 0.92, 0.95, 1.0]);
        assert_eq!(decided_turn(&t, 0, 0.9), Some(3));
        assert_eq!(settled_share(&t, decided_index(&t, 0, 0.9).unwrap()), 0.4);
        // At 0.6 (reached at turn 2 and kept) it is decided a turn earlier: share 3/5.
        assert_eq!(decided_turn(&t, 0, 0.6), Some(2));
        // The loser is never decided to win.
        assert_eq!(decided_turn(&t, 1, 0.9), None);
    }

    #[test]
    fn a_dip_below_the_threshold_moves_the_decided_turn_past_it() {
        // Hand-built: 0.91 at turn 2, dip to 0.85 at turn 3, then 0.93, 0.97, 0.99 → decided
        // at turn 4, two of six turns after it.
        let t = duel(0, 0, &[0.5, 0.91, 0.85, 0.93, 0.97, 0.99]);
        assert_eq!(decided_turn(&t, 0, 0.9), Some(4));
        let share = settled_share(&t, decided_index(&t, 0, 0.9).unwrap());
        assert!((share - 2.0 / 6.0).abs() < 1e-12);
    }

    #[test]
    fn a_winner_below_the_threshold_at_the_end_is_never_decided() {
        // Hand-built: reaches 0.95 at turn 3 but ends at 0.8.
        let t = duel(0, 0, &[0.5, 0.7, 0.95, 0.8]);
        assert_eq!(decided_turn(&t, 0, 0.9), None);
        // Turn numbers are the log's own, not positions.
        let rows: Vec<Vec<f64>> = [0.4, 0.95, 0.97, 0.99]
            .iter()
            .map(|&p| vec![p, 1.0 - p])
            .collect();
        let t = trace_at(0, 0, &[0.5, 0.5], &rows, vec![2, 5, 9, 14]);
        assert_eq!(decided_turn(&t, 0, 0.9), Some(5));
        assert_eq!(settled_share(&t, 1), 0.5);
        // A seat that is not in the trace is never decided (no panic).
        assert_eq!(decided_turn(&t, 7, 0.9), None);
    }

    #[test]
    fn draws_and_never_decided_sessions_are_counted_apart() {
        let set = set_of(&[
            plan(5, Some(0)),
            plan(4, Some(0)),
            plan(4, None),
            plan(6, Some(1)),
        ]);
        let traces = vec![
            duel(0, 0, &[0.5, 0.6, 0.92, 0.95, 1.0]), // decided at 3, share 0.4
            duel(0, 1, &[0.5, 0.7, 0.95, 0.8]),       // never decided
            duel(0, 2, &[0.5, 0.95, 0.5, 0.5]),       // draw, north reached 0.95
            duel(0, 3, &[0.5, 0.85, 0.6, 0.3, 0.05, 0.02]), // south: 0.5, 0.15, …, 0.95, 0.98
        ];
        let r = decision_report(&refs(&traces), &[&set], 0.9).unwrap();
        let a = &r.all;
        assert_eq!(
            (a.sessions, a.decided, a.never_decided, a.draws),
            (4, 2, 1, 1)
        );
        // Decided turns 3 and 5 (south is at or above 0.9 from turn 5 of 6). Type-7
        // quartiles of {3, 5} by hand: 3.5, 4, 4.5. Settled shares 0.4 and 1/6.
        let q = a.decided_turn.unwrap();
        assert_eq!((q.q1, q.median, q.q3), (3.5, 4.0, 4.5));
        let s = a.settled_share.unwrap();
        assert!((s.median - (0.4 + 1.0 / 6.0) / 2.0).abs() < 1e-12);
        let d = &r.decisions.sessions;
        assert_eq!(d[2].winner, "draw");
        assert_eq!(d[2].decided_turn, None);
        // In the draw north reached 0.95 and did not win: false certainty.
        assert!(d[2].false_certainty);
        // Session 1: north won from 0.5 lows, the loser never reached 0.9.
        assert!(!d[1].false_certainty);
        // Session 3: south won after falling to 0.15 ≤ 0.2: a comeback.
        assert!(d[3].comeback);
        assert!((d[3].lowest_winner_chance.unwrap() - 0.15).abs() < 1e-12);
        assert_eq!(a.comebacks, 1);
        // Crossings: s0 north (won), s1 north (won), s2 north (lost), s3 south (won).
        assert_eq!(
            (a.false_certainty.crossings, a.false_certainty.lost),
            (4, 1)
        );
    }

    #[test]
    fn lead_changes_and_excitement_match_hand_counts() {
        let set = set_of(&[plan(5, Some(0))]);
        // North 0.6, 0.4, 0.3, 0.5, 0.7 from an even start: leaders N, S, S, (tie), N → two
        // changes (the tie keeps south). Swings of north 0.1, −0.2, −0.1, 0.2, 0.2 → Σ|·| =
        // 0.8 for each actor, excitement 0.8.
        let t = duel(0, 0, &[0.6, 0.4, 0.3, 0.5, 0.7]);
        let d = decide_sessions(&[&t], &[&set], 0.9).unwrap();
        let s = &d.sessions[0];
        assert_eq!(s.lead_changes, 2);
        assert!((s.excitement - 0.8).abs() < 1e-12);
        // Surprise: each turn's Euclidean change is √2·|Δ| for two actors → √2 · 0.8.
        assert!((s.surprise - 2f64.sqrt() * 0.8).abs() < 1e-12);
    }

    #[test]
    fn false_certainty_is_judged_against_the_calibrated_rate() {
        // 40 sessions in which the eventual loser reached 0.9 in 20: observed 20 of 60
        // crossings lost (Wilson 95 % roughly 22–46 %), far above the ≈ 7 % a calibrated
        // model implies at these crossing chances.
        let mut plans = Vec::new();
        let mut traces = Vec::new();
        for i in 0..40 {
            plans.push(plan(4, Some(0)));
            let north = if i % 2 == 0 {
                vec![0.5, 0.05, 0.5, 0.95] // south reached 0.95, lost
            } else {
                vec![0.5, 0.6, 0.7, 0.91]
            };
            traces.push(duel(0, i, &north));
        }
        let set = set_of(&plans);
        let r = decision_report(&refs(&traces), &[&set], 0.9).unwrap();
        let fc = &r.all.false_certainty;
        assert_eq!((fc.crossings, fc.lost, fc.sessions), (60, 20, 20));
        // Implied: mean of 1 − chance at the crossings = (20·0.05 + 20·0.05 + 20·0.09)/60.
        assert!((fc.implied_rate.unwrap() - 3.8 / 60.0).abs() < 1e-12);
        assert!(
            fc.verdict
                .starts_with("more often than a calibrated model implies"),
            "{}",
            fc.verdict
        );

        // Calibrated-looking: 1 lost crossing in 20 (5 %) with chances 0.95 → in line.
        let mut plans = Vec::new();
        let mut traces = Vec::new();
        for i in 0..20 {
            plans.push(plan(3, Some(if i == 0 { 1 } else { 0 })));
            traces.push(duel(0, i, &[0.5, 0.95, 0.95]));
        }
        let set = set_of(&plans);
        let r = decision_report(&refs(&traces), &[&set], 0.9).unwrap();
        let fc = &r.all.false_certainty;
        assert_eq!((fc.crossings, fc.lost), (20, 1));
        assert!(
            fc.verdict.starts_with("in line with a calibrated model"),
            "{}",
            fc.verdict
        );
    }

    #[test]
    fn groups_by_variant_and_route_cover_every_session() {
        let mut plans = Vec::new();
        let mut traces = Vec::new();
        for i in 0..6 {
            plans.push(Plan {
                turns: 3,
                winner: Some(0),
                victory: if i < 4 { "siege" } else { "" },
                variant: if i % 2 == 0 { "a" } else { "b" },
            });
            traces.push(duel(0, i, &[0.5, 0.95, 0.99]));
        }
        let set = set_of(&plans);
        let r = decision_report(&refs(&traces), &[&set], 0.9).unwrap();
        let names: Vec<&str> = r.by_variant.iter().map(|g| g.name.as_str()).collect();
        assert_eq!(names, ["a", "b"]);
        let routes: Vec<(&str, usize)> = r
            .by_victory
            .iter()
            .map(|g| (g.name.as_str(), g.sessions))
            .collect();
        assert_eq!(routes, [(NOT_RECORDED, 2), ("siege", 4)]);
    }

    #[test]
    fn unfinished_sessions_are_skipped_and_bad_input_is_an_error() {
        let set = crate::analysis::testkit::load(
            "session,turn,actor,event\na,1,n,x\na,1,s,y\nb,1,n,x\nb,1,s,y\n",
            "session,winner\na,n\n",
        );
        let ta = duel(0, 0, &[0.95]);
        let tb = duel(0, 1, &[0.5]);
        let d = decide_sessions(&[&ta, &tb], &[&set], 0.9).unwrap();
        assert_eq!((d.sessions.len(), d.unfinished_skipped), (1, 1));
        assert!(matches!(
            decide_sessions(&[&ta], &[&set], 1.5),
            Err(AnalysisError::InvalidParam { .. })
        ));
        let far = duel(3, 0, &[0.5]);
        assert!(matches!(
            decide_sessions(&[&far], &[&set], 0.9),
            Err(AnalysisError::SetOutOfRange { set: 3, .. })
        ));
        let mut nan = duel(0, 0, &[0.5]);
        nan.chances[0] = f64::NAN;
        assert!(matches!(
            decide_sessions(&[&nan], &[&set], 0.9),
            Err(AnalysisError::MalformedTrace { .. })
        ));
        let three = trace(0, 0, &[0.3, 0.3, 0.4], &[vec![0.3, 0.3, 0.4]]);
        assert!(matches!(
            decide_sessions(&[&three], &[&set], 0.9),
            Err(AnalysisError::MalformedTrace { .. })
        ));
    }
}
