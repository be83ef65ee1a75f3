//! Did the variant fix it: two groups of sessions side by side (two sets, or two recorded
//! variants within one set), with an interval or a test for every measure and a verdict line.
//!
//! Every difference is B − A: the second side relative to the first.

use std::collections::BTreeSet;

use serde::Serialize;

use super::decision::{Decisions, SessionDecision, decide_sessions};
use super::error::{AnalysisError, check_open_unit, check_threshold};
use super::traces::Trace;
use super::wording::{num, p_value, pct, pct_fine};
use crate::sessions::SessionSet;
use crate::stats::{
    ChiSquareTest, HodgesLehmann, Interval, MannWhitney, MannWhitneyParams, PowerParams,
    StatsError, chi_square_homogeneity, hodges_lehmann, mann_whitney_u,
    newcombe_difference_interval, two_proportion_sample_size,
};

/// One side of a comparison: its name, the model that produced its traces, and the traces.
#[derive(Debug, Clone)]
pub struct CompareSide<'a> {
    /// A short name for sentences (the set or the variant).
    pub name: String,
    /// Which model produced the traces (given by the caller, recorded in the result).
    pub model: String,
    /// The side's traces.
    pub traces: Vec<&'a Trace>,
}

impl<'a> CompareSide<'a> {
    /// The traces of session set `set`.
    pub fn from_set(traces: &[&'a Trace], set: usize, name: &str, model: &str) -> Self {
        Self {
            name: name.to_string(),
            model: model.to_string(),
            traces: traces.iter().copied().filter(|t| t.set == set).collect(),
        }
    }
    /// The traces whose session records `variant` (traces pointing outside `sets` are left
    /// out here and reported by [`compare`] only if they are selected).
    pub fn from_variant(
        traces: &[&'a Trace],
        sets: &[&SessionSet],
        variant: &str,
        model: &str,
    ) -> Self {
        let of_variant = |t: &&Trace| {
            sets.get(t.set)
                .and_then(|s| s.sessions.get(t.session))
                .is_some_and(|s| s.variant() == Some(variant))
        };
        Self {
            name: variant.to_string(),
            model: model.to_string(),
            traces: traces.iter().copied().filter(of_variant).collect(),
        }
    }
}

/// Settings of [`compare`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CompareParams {
    /// Threshold of the decided turn (default 0.9).
    pub threshold: f64,
    /// Confidence of the intervals (default 0.95).
    pub confidence: f64,
    /// Two-sided significance for verdicts and sample sizes (default 0.05).
    pub significance: f64,
    /// Power for the sessions-needed figure (default 0.8).
    pub power: f64,
}

impl Default for CompareParams {
    fn default() -> Self {
        Self {
            threshold: 0.9,
            confidence: 0.95,
            significance: 0.05,
            power: 0.8,
        }
    }
}

impl CompareParams {
    /// Errors unless 0 < threshold ≤ 1 and confidence, significance and power lie in (0, 1).
    pub fn check(&self) -> Result<(), AnalysisError> {
        check_threshold("threshold", self.threshold)?;
        check_open_unit("confidence", self.confidence)?;
        check_open_unit("significance", self.significance)?;
        check_open_unit("power", self.power)
    }
}

/// What one side holds.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SideSummary {
    /// The side's name.
    pub name: String,
    /// The model that produced its traces.
    pub model: String,
    /// Finished sessions.
    pub sessions: usize,
    /// Sessions won by the first seat.
    pub first_mover_wins: usize,
    /// Draws.
    pub draws: usize,
    /// Sessions with a decided turn.
    pub decided: usize,
    /// Traces that were not out-of-fold.
    pub not_out_of_fold: usize,
    /// Unfinished sessions left out.
    pub unfinished_skipped: usize,
}

/// B − A for two proportions, with Newcombe's hybrid score interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RateDifference {
    /// What is counted.
    pub measure: String,
    /// Successes in A.
    pub a_successes: usize,
    /// Trials in A.
    pub a_trials: usize,
    /// Successes in B.
    pub b_successes: usize,
    /// Trials in B.
    pub b_trials: usize,
    /// B's rate minus A's; `None` when a side has no trials.
    pub difference: Option<f64>,
    /// Newcombe hybrid score interval of the difference ([−1, 1] when a side is empty).
    pub interval: Interval,
    /// The verdict line.
    pub verdict: String,
}

/// B against A for a measured quantity: Mann-Whitney and the Hodges-Lehmann shift.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShiftComparison {
    /// What is measured.
    pub measure: String,
    /// Values in A.
    pub a_n: usize,
    /// Values in B.
    pub b_n: usize,
    /// Median of A.
    pub a_median: Option<f64>,
    /// Median of B.
    pub b_median: Option<f64>,
    /// Mann-Whitney U test (x = B, y = A), two-sided; `None` when a side is empty.
    pub mann_whitney: Option<MannWhitney>,
    /// Hodges-Lehmann shift of B relative to A with its interval; `None` when a side is
    /// empty.
    pub hodges_lehmann: Option<HodgesLehmann>,
    /// The verdict line.
    pub verdict: String,
}

/// How a measure is put into words: phrases for a larger and a smaller B, a unit and a
/// scale (e.g. 100 to show shares as points).
#[derive(Debug, Clone, Copy)]
pub struct ShiftWords {
    /// e.g. "is decided {x} turns later than".
    pub more: &'static str,
    /// e.g. "is decided {x} turns earlier than".
    pub less: &'static str,
    /// Unit after interval ends, e.g. " turns".
    pub unit: &'static str,
    /// Multiplier applied before printing.
    pub scale: f64,
}

/// Words of the decided-turn comparison.
pub const DECIDED_WORDS: ShiftWords = ShiftWords {
    more: "is decided {x} turns later than",
    less: "is decided {x} turns earlier than",
    unit: " turns",
    scale: 1.0,
};
/// Words of the settled-share comparison.
pub const SETTLED_WORDS: ShiftWords = ShiftWords {
    more: "plays {x} points more of its turns after the decided turn than",
    less: "plays {x} points fewer of its turns after the decided turn than",
    unit: " points",
    scale: 100.0,
};
/// Words of the game-length comparison.
pub const LENGTH_WORDS: ShiftWords = ShiftWords {
    more: "lasts {x} turns longer than",
    less: "lasts {x} turns shorter than",
    unit: " turns",
    scale: 1.0,
};
/// Words of the excitement comparison.
pub const EXCITEMENT_WORDS: ShiftWords = ShiftWords {
    more: "has {x} more excitement (Σ|swing|) than",
    less: "has {x} less excitement (Σ|swing|) than",
    unit: "",
    scale: 1.0,
};

/// Compare values of B against A: two-sided Mann-Whitney (x = B, y = A; exact when small and
/// untied, else normal with continuity correction) and the Hodges-Lehmann shift B − A with
/// its distribution-free interval. The verdict names the shift when p < `significance`,
/// else says no detectable change.
pub fn compare_shift(
    measure: &str,
    words: ShiftWords,
    (a_name, a): (&str, &[f64]),
    (b_name, b): (&str, &[f64]),
    confidence: f64,
    significance: f64,
) -> Result<ShiftComparison, AnalysisError> {
    check_open_unit("confidence", confidence)?;
    check_open_unit("significance", significance)?;
    let median = |v: &[f64]| crate::stats::median(v);
    let mut out = ShiftComparison {
        measure: measure.to_string(),
        a_n: a.len(),
        b_n: b.len(),
        a_median: median(a),
        b_median: median(b),
        mann_whitney: None,
        hodges_lehmann: None,
        verdict: String::new(),
    };
    if a.is_empty() || b.is_empty() {
        let empty = if a.is_empty() { a_name } else { b_name };
        out.verdict = format!("{measure}: not comparable, {empty} has no values");
        return Ok(out);
    }
    let mw = mann_whitney_u(b, a, &MannWhitneyParams::default())?;
    let hl = hodges_lehmann(b, a, confidence)?;
    let conf = pct(confidence);
    out.verdict = if mw.p_value < significance && hl.shift != 0.0 {
        let (phrase, lo, hi) = if hl.shift > 0.0 {
            (words.more, hl.interval.lo, hl.interval.hi)
        } else {
            (words.less, -hl.interval.hi, -hl.interval.lo)
        };
        let s = words.scale;
        format!(
            "{b_name} {} {a_name} ({conf} % CI {}–{}{}; {})",
            phrase.replace("{x}", &num(hl.shift.abs() * s)),
            num(lo * s),
            num(hi * s),
            words.unit,
            p_value(mw.p_value)
        )
    } else {
        format!(
            "{measure}: no detectable change between {a_name} and {b_name} ({})",
            p_value(mw.p_value)
        )
    };
    out.mann_whitney = Some(mw);
    out.hodges_lehmann = Some(hl);
    Ok(out)
}

/// B − A for two proportions with Newcombe's hybrid score interval; the verdict names the
/// change when the interval excludes 0.
pub fn compare_rates(
    measure: &str,
    (a_name, a_successes, a_trials): (&str, usize, usize),
    (b_name, b_successes, b_trials): (&str, usize, usize),
    confidence: f64,
) -> Result<RateDifference, AnalysisError> {
    let interval = newcombe_difference_interval(
        b_successes as u64,
        b_trials as u64,
        a_successes as u64,
        a_trials as u64,
        confidence,
        false,
    )?;
    let difference = (a_trials > 0 && b_trials > 0)
        .then(|| b_successes as f64 / b_trials as f64 - a_successes as f64 / a_trials as f64);
    let conf = pct(confidence);
    let verdict = match difference {
        None => format!(
            "{measure}: not comparable, {} has none",
            if a_trials == 0 { a_name } else { b_name }
        ),
        Some(d) => {
            let ra = a_successes as f64 / a_trials as f64;
            let rb = b_successes as f64 / b_trials as f64;
            let rates = format!(
                "{} % of {b_trials} vs {} % of {a_trials}",
                pct_fine(rb),
                pct_fine(ra)
            );
            let ci = format!(
                "{conf} % CI {}–{} points",
                num(100.0 * interval.lo),
                num(100.0 * interval.hi)
            );
            if interval.lo > 0.0 || interval.hi < 0.0 {
                let dir = if d > 0.0 { "higher" } else { "lower" };
                format!(
                    "{measure} is {} points {dir} in {b_name} than in {a_name} ({rates}; {ci})",
                    num(100.0 * d.abs())
                )
            } else {
                format!(
                    "{measure}: no detectable change between {a_name} and {b_name} ({rates}; {ci})"
                )
            }
        }
    };
    Ok(RateDifference {
        measure: measure.to_string(),
        a_successes,
        a_trials,
        b_successes,
        b_trials,
        difference,
        interval,
        verdict,
    })
}

/// The victory-route mix of both sides with a chi-square test of homogeneity.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RouteMix {
    /// Routes (draws as `draw`, missing routes as `(not recorded)`), sorted.
    pub routes: Vec<String>,
    /// Sessions per route in A.
    pub a_counts: Vec<u64>,
    /// Sessions per route in B.
    pub b_counts: Vec<u64>,
    /// Pearson chi-square test; `None` when fewer than two routes or an empty side.
    pub test: Option<ChiSquareTest>,
    /// Whether small expected counts make the test doubtful (Cochran's rule).
    pub small_expected: bool,
    /// The verdict line.
    pub verdict: String,
}

fn route_of(d: &SessionDecision) -> String {
    if d.winner_seat.is_none() {
        "draw".into()
    } else {
        d.victory
            .clone()
            .unwrap_or_else(|| super::decision::NOT_RECORDED.into())
    }
}

fn route_mix(
    (a_name, a): (&str, &[SessionDecision]),
    (b_name, b): (&str, &[SessionDecision]),
    significance: f64,
) -> Result<RouteMix, AnalysisError> {
    let routes: Vec<String> = a
        .iter()
        .chain(b)
        .map(route_of)
        .collect::<BTreeSet<_>>()
        .into_iter()
        .collect();
    let count = |side: &[SessionDecision]| -> Vec<u64> {
        routes
            .iter()
            .map(|r| side.iter().filter(|d| &route_of(d) == r).count() as u64)
            .collect()
    };
    let (a_counts, b_counts) = (count(a), count(b));
    let test = match chi_square_homogeneity(&[a_counts.clone(), b_counts.clone()]) {
        Ok(t) => Some(t),
        Err(StatsError::DegenerateTable { .. }) => None,
        Err(e) => return Err(e.into()),
    };
    let small_expected = test.as_ref().is_some_and(|t| t.approximation_doubtful());
    let verdict = match &test {
        None => {
            "victory-route mix: nothing to test (fewer than two routes, or a side without sessions)"
                .to_string()
        }
        Some(t) => {
            let caveat = if small_expected {
                "; small expected counts make the chi-square approximation doubtful"
            } else {
                ""
            };
            if t.p_value < significance {
                format!(
                    "the victory-route mix differs between {a_name} and {b_name} (χ² = {:.2}, df {}, {}{caveat})",
                    t.statistic,
                    t.df,
                    p_value(t.p_value)
                )
            } else {
                format!(
                    "victory-route mix: no detectable change between {a_name} and {b_name} (χ² = {:.2}, df {}, {}{caveat})",
                    t.statistic,
                    t.df,
                    p_value(t.p_value)
                )
            }
        }
    };
    Ok(RouteMix {
        routes,
        a_counts,
        b_counts,
        test,
        small_expected,
        verdict,
    })
}

/// Sessions per variant needed to detect the observed first-mover difference.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionsNeeded {
    /// First-mover win rate in A.
    pub a_rate: Option<f64>,
    /// First-mover win rate in B.
    pub b_rate: Option<f64>,
    /// Sessions per variant (rounded up); `None` when not computable.
    pub per_variant: Option<u64>,
    /// The verdict line.
    pub verdict: String,
}

fn sessions_needed(
    a: &SideSummary,
    b: &SideSummary,
    params: &CompareParams,
) -> Result<SessionsNeeded, AnalysisError> {
    let rate =
        |s: &SideSummary| (s.sessions > 0).then(|| s.first_mover_wins as f64 / s.sessions as f64);
    let (ra, rb) = (rate(a), rate(b));
    let design = format!(
        "{} % power, two-sided {} %",
        pct(params.power),
        pct(params.significance)
    );
    let (per_variant, verdict) = match (ra, rb) {
        (Some(pa), Some(pb)) if (pa - pb).abs() > 1e-9 => {
            let power = PowerParams {
                significance: params.significance,
                two_sided: true,
                continuity_correction: false,
            };
            match two_proportion_sample_size(pa, pb, params.power, &power) {
                Ok(n) => {
                    let n = n.ceil() as u64;
                    (
                        Some(n),
                        format!(
                            "detecting a first-mover win rate of {} % vs {} % at {design} needs about {n} sessions per variant ({} has {}, {} has {})",
                            pct(pb),
                            pct(pa),
                            b.name,
                            b.sessions,
                            a.name,
                            a.sessions
                        ),
                    )
                }
                Err(StatsError::NoDifference(_)) => (
                    None,
                    "sessions needed: not computable, the first-mover win rates are the same"
                        .to_string(),
                ),
                Err(e) => return Err(e.into()),
            }
        }
        (Some(_), Some(_)) => (
            None,
            "sessions needed: not computable, the first-mover win rates are the same".to_string(),
        ),
        _ => (
            None,
            "sessions needed: not computable, a side has no sessions".to_string(),
        ),
    };
    Ok(SessionsNeeded {
        a_rate: ra,
        b_rate: rb,
        per_variant,
        verdict,
    })
}

/// The comparison of two sides.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Comparison {
    /// The threshold of the decided turn.
    pub threshold: f64,
    /// Side A (the reference).
    pub a: SideSummary,
    /// Side B (the variant).
    pub b: SideSummary,
    /// First-mover win rate (seat 1 wins over finished sessions, draws included), B − A.
    pub first_mover: RateDifference,
    /// Decided turn over decided sessions.
    pub decided_turn: ShiftComparison,
    /// Settled share over decided sessions.
    pub settled_share: ShiftComparison,
    /// Game length in turns.
    pub game_length: ShiftComparison,
    /// Victory-route mix.
    pub victory_mix: RouteMix,
    /// False certainty: crossings of the threshold by an actor who did not win, over all
    /// crossings (see [`super::decision::FalseCertainty`]), B − A.
    pub false_certainty: RateDifference,
    /// Excitement per session.
    pub excitement: ShiftComparison,
    /// Sessions per variant needed to detect the observed first-mover difference.
    pub sessions_needed: SessionsNeeded,
    /// One verdict line per measure, in the order above.
    pub verdicts: Vec<String>,
}

fn side_summary(side: &CompareSide, d: &Decisions) -> SideSummary {
    SideSummary {
        name: side.name.clone(),
        model: side.model.clone(),
        sessions: d.sessions.len(),
        first_mover_wins: d
            .sessions
            .iter()
            .filter(|s| s.winner_seat == Some(0))
            .count(),
        draws: d
            .sessions
            .iter()
            .filter(|s| s.winner_seat.is_none())
            .count(),
        decided: d
            .sessions
            .iter()
            .filter(|s| s.decided_turn.is_some())
            .count(),
        not_out_of_fold: d.not_out_of_fold,
        unfinished_skipped: d.unfinished_skipped,
    }
}

fn crossings(d: &Decisions) -> (usize, usize) {
    let all = d.sessions.iter().flat_map(|s| &s.crossings);
    let (mut lost, mut n) = (0, 0);
    for c in all {
        n += 1;
        lost += usize::from(!c.won);
    }
    (lost, n)
}

/// Compare side B against side A. Errors on bad params, a trace that does not fit its
/// session, or a side with no finished session.
pub fn compare(
    sets: &[&SessionSet],
    a: &CompareSide,
    b: &CompareSide,
    params: &CompareParams,
) -> Result<Comparison, AnalysisError> {
    params.check()?;
    let da = decide_sessions(&a.traces, sets, params.threshold)?;
    let db = decide_sessions(&b.traces, sets, params.threshold)?;
    for (side, d) in [(a, &da), (b, &db)] {
        if d.sessions.is_empty() {
            return Err(AnalysisError::NoSessions(format!("side `{}`", side.name)));
        }
    }
    let (sa, sb) = (side_summary(a, &da), side_summary(b, &db));
    let (an, bn) = (a.name.as_str(), b.name.as_str());
    let conf = params.confidence;
    let sig = params.significance;
    let first_mover = compare_rates(
        "the first-mover win rate",
        (an, sa.first_mover_wins, sa.sessions),
        (bn, sb.first_mover_wins, sb.sessions),
        conf,
    )?;
    let values = |d: &Decisions, f: &dyn Fn(&SessionDecision) -> Option<f64>| -> Vec<f64> {
        d.sessions.iter().filter_map(f).collect()
    };
    let decided = |s: &SessionDecision| s.decided_turn.map(f64::from);
    let settled = |s: &SessionDecision| s.settled_share;
    let length = |s: &SessionDecision| Some(s.turns as f64);
    let excitement = |s: &SessionDecision| Some(s.excitement);
    let shift = |measure: &str, words, f: &dyn Fn(&SessionDecision) -> Option<f64>| {
        compare_shift(
            measure,
            words,
            (an, &values(&da, f)),
            (bn, &values(&db, f)),
            conf,
            sig,
        )
    };
    let decided_turn = shift("decided turn", DECIDED_WORDS, &decided)?;
    let settled_share = shift("settled share", SETTLED_WORDS, &settled)?;
    let game_length = shift("game length", LENGTH_WORDS, &length)?;
    let excitement = shift("excitement", EXCITEMENT_WORDS, &excitement)?;
    let victory_mix = route_mix((an, &da.sessions), (bn, &db.sessions), sig)?;
    let (al, ac) = crossings(&da);
    let (bl, bc) = crossings(&db);
    let false_certainty = compare_rates(
        &format!("false certainty at {} %", pct(params.threshold)),
        (an, al, ac),
        (bn, bl, bc),
        conf,
    )?;
    let sessions_needed = sessions_needed(&sa, &sb, params)?;
    let verdicts = vec![
        first_mover.verdict.clone(),
        decided_turn.verdict.clone(),
        settled_share.verdict.clone(),
        game_length.verdict.clone(),
        victory_mix.verdict.clone(),
        false_certainty.verdict.clone(),
        excitement.verdict.clone(),
        sessions_needed.verdict.clone(),
    ];
    Ok(Comparison {
        threshold: params.threshold,
        a: sa,
        b: sb,
        first_mover,
        decided_turn,
        settled_share,
        game_length,
        victory_mix,
        false_certainty,
        excitement,
        sessions_needed,
        verdicts,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testkit::{Plan, clinched, refs, set_of};
    use crate::stats::PValueMethod;

    /// A set of sessions (one per entry of `decided`), each `turns` long and clinched by
    /// `winner(i)` at `decided[i]`, with traces for set index `set`.
    fn side(
        set: usize,
        turns: u32,
        decided: &[u32],
        winner: impl Fn(usize) -> usize,
        victory: impl Fn(usize) -> &'static str,
    ) -> (SessionSet, Vec<Trace>) {
        let plans: Vec<Plan> = (0..decided.len())
            .map(|i| Plan {
                turns,
                winner: Some(winner(i)),
                victory: victory(i),
                variant: "",
            })
            .collect();
        let traces = decided
            .iter()
            .enumerate()
            .map(|(i, &d)| clinched(set, i, turns, d, winner(i)))
            .collect();
        (set_of(&plans), traces)
    }

    fn run(a: &(SessionSet, Vec<Trace>), b: &(SessionSet, Vec<Trace>)) -> Comparison {
        let traces: Vec<&Trace> = a.1.iter().chain(&b.1).collect();
        let sa = CompareSide::from_set(&traces, 0, "A", "boosted-cv");
        let sb = CompareSide::from_set(&traces, 1, "B", "logistic-cv");
        compare(&[&a.0, &b.0], &sa, &sb, &CompareParams::default()).unwrap()
    }

    #[test]
    fn first_mover_difference_reproduces_newcombe_1998_table_ii() {
        // Newcombe R.G. (1998), Statistics in Medicine 17:873-890, Table II, method 10
        // (confirmed): 56/70 − 48/80 → 0.0524 – 0.3339. B = 56/70, A = 48/80.
        let a = side(0, 4, &[2; 80], |i| usize::from(i >= 48), |_| "siege");
        let b = side(1, 4, &[2; 70], |i| usize::from(i >= 56), |_| "siege");
        let c = run(&a, &b);
        let fm = &c.first_mover;
        assert_eq!(
            (fm.b_successes, fm.b_trials, fm.a_successes, fm.a_trials),
            (56, 70, 48, 80)
        );
        assert!(
            (fm.interval.lo - 0.0524).abs() < 0.5e-4,
            "{:?}",
            fm.interval
        );
        assert!(
            (fm.interval.hi - 0.3339).abs() < 0.5e-4,
            "{:?}",
            fm.interval
        );
        assert!(
            fm.verdict
                .starts_with("the first-mover win rate is 20 points higher in B than in A"),
            "{}",
            fm.verdict
        );
        assert_eq!(
            (c.a.model.as_str(), c.b.model.as_str()),
            ("boosted-cv", "logistic-cv")
        );
    }

    #[test]
    fn decided_turns_reproduce_the_scipy_mann_whitney_example() {
        // SciPy mannwhitneyu documentation example (Shier 2004), confirmed: x = 19, 22, 16,
        // 29, 24; y = 20, 11, 17, 12 → U(x) = 17, exact two-sided p = 0.111111; HL shift
        // 7.0 (recomputed). Here x are B's decided turns, y are A's.
        let a = side(0, 30, &[20, 11, 17, 12], |_| 0, |_| "siege");
        let b = side(1, 30, &[19, 22, 16, 29, 24], |_| 0, |_| "siege");
        let c = run(&a, &b);
        let mw = c.decided_turn.mann_whitney.unwrap();
        assert_eq!((mw.u_x, mw.u_y), (17.0, 3.0));
        assert_eq!(mw.method, PValueMethod::Exact);
        assert!((mw.p_value - 0.111_111).abs() < 1e-6);
        assert_eq!(c.decided_turn.hodges_lehmann.unwrap().shift, 7.0);
        assert!(
            c.decided_turn.verdict.contains("no detectable change")
                && c.decided_turn.verdict.contains("p = 0.111"),
            "{}",
            c.decided_turn.verdict
        );
    }

    #[test]
    fn shift_comparison_reproduces_the_r_wilcox_test_example() {
        // R wilcox.test help (Hollander & Wolfe 1973, p. 69): W = 35, exact one-sided
        // p = 0.1272, so two-sided 0.2544 by the symmetry of the null law; HL shift 0.305
        // (recomputed).
        let x = [0.80, 0.83, 1.89, 1.04, 1.45, 1.38, 1.91, 1.64, 0.73, 1.46];
        let y = [1.15, 0.88, 0.90, 0.74, 1.21];
        let s = compare_shift("value", LENGTH_WORDS, ("Y", &y), ("X", &x), 0.95, 0.05).unwrap();
        let mw = s.mann_whitney.unwrap();
        assert_eq!(mw.u_x, 35.0);
        assert!((mw.p_value - 0.2544).abs() < 1e-4, "{}", mw.p_value);
        assert!((s.hodges_lehmann.unwrap().shift - 0.305).abs() < 1e-9);
    }

    #[test]
    fn a_clear_shift_gets_a_verdict_with_its_interval() {
        // A decided at turns 10..29, B at 22..41: every pairwise difference is 12 + (i − j),
        // whose median is 12 (hand count); the samples barely overlap, so p is tiny.
        let ad: Vec<u32> = (10..30).collect();
        let bd: Vec<u32> = (22..42).collect();
        let a = side(0, 50, &ad, |_| 0, |_| "siege");
        let b = side(1, 50, &bd, |_| 0, |_| "siege");
        let c = run(&a, &b);
        assert_eq!(c.decided_turn.hodges_lehmann.unwrap().shift, 12.0);
        assert!(
            c.decided_turn
                .verdict
                .starts_with("B is decided 12 turns later than A (95 % CI "),
            "{}",
            c.decided_turn.verdict
        );
        // Settled share: (50 − d)/50, so B plays 24 points less of its turns after it.
        assert!(
            c.settled_share
                .verdict
                .starts_with("B plays 24 points fewer of its turns"),
            "{}",
            c.settled_share.verdict
        );
        // Same length everywhere: no change, p = 1.
        assert!(
            c.game_length.verdict.contains("no detectable change"),
            "{}",
            c.game_length.verdict
        );
    }

    #[test]
    fn sessions_needed_reproduce_r_power_prop_test() {
        // R power.prop.test documentation: 0.5 vs 0.6, two-sided 5 %, power 0.8 → 387.3 per
        // group, 388 rounded up (confirmed, R source).
        let a = side(0, 4, &[2; 100], |i| usize::from(i >= 50), |_| "siege");
        let b = side(1, 4, &[2; 100], |i| usize::from(i >= 60), |_| "siege");
        let c = run(&a, &b);
        assert_eq!(c.sessions_needed.per_variant, Some(388));
        assert!(
            c.first_mover.verdict.contains("no detectable change"),
            "{}",
            c.first_mover.verdict
        );
        // Equal rates: not computable.
        let same = side(1, 4, &[2; 100], |i| usize::from(i >= 50), |_| "siege");
        let c = run(&a, &same);
        assert_eq!(c.sessions_needed.per_variant, None);
        assert!(c.sessions_needed.verdict.contains("not computable"));
    }

    #[test]
    fn route_mix_is_tested_for_homogeneity() {
        // Hand table [[10, 20], [30, 40]]: X² = 4/12 + 4/18 + 4/28 + 4/42 = 0.793651, df 1
        // (hand computation; p 0.372998 recomputed with SciPy in stats::chisq).
        let a = side(
            0,
            4,
            &[2; 30],
            |_| 0,
            |i| if i < 10 { "siege" } else { "treaty" },
        );
        let b = side(
            1,
            4,
            &[2; 70],
            |_| 0,
            |i| if i < 30 { "siege" } else { "treaty" },
        );
        let c = run(&a, &b);
        let t = c.victory_mix.test.clone().unwrap();
        let hand = 4.0 / 12.0 + 4.0 / 18.0 + 4.0 / 28.0 + 4.0 / 42.0;
        assert!((t.statistic - hand).abs() < 1e-12);
        assert_eq!(c.victory_mix.routes, ["siege", "treaty"]);
        assert!(!c.victory_mix.small_expected);
        // One route only: nothing to test.
        let one = side(1, 4, &[2; 5], |_| 0, |_| "siege");
        let c = run(&side(0, 4, &[2; 5], |_| 0, |_| "siege"), &one);
        assert!(c.victory_mix.test.is_none());
    }

    #[test]
    fn variants_within_one_set_are_split_by_their_recorded_name() {
        let plans: Vec<Plan> = (0..10)
            .map(|i| Plan {
                turns: 3,
                winner: Some(i % 2),
                victory: "siege",
                variant: if i < 4 { "old" } else { "new" },
            })
            .collect();
        let set = set_of(&plans);
        let traces: Vec<Trace> = (0..10).map(|i| clinched(0, i, 3, 2, i % 2)).collect();
        let all = refs(&traces);
        let old = CompareSide::from_variant(&all, &[&set], "old", "m");
        let new = CompareSide::from_variant(&all, &[&set], "new", "m");
        assert_eq!((old.traces.len(), new.traces.len()), (4, 6));
        let c = compare(&[&set], &old, &new, &CompareParams::default()).unwrap();
        assert_eq!((c.a.sessions, c.b.sessions), (4, 6));
        assert_eq!(c.verdicts.len(), 8);
        let none = CompareSide::from_variant(&all, &[&set], "missing", "m");
        assert!(matches!(
            compare(&[&set], &old, &none, &CompareParams::default()),
            Err(AnalysisError::NoSessions(_))
        ));
    }
}
