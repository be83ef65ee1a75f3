//! Is it fair: win rates by seat and by recurring actor name with Wilson intervals, draws,
//! the victory-route mix, game length, decided turn by route, and plain-language findings
//! that state their uncertainty, including the seat edge the set could detect at all.

use std::collections::BTreeMap;

use serde::Serialize;

use super::decision::{
    DecisionSummary, Decisions, GroupKind, NOT_RECORDED, Quartiles, summarize_group,
};
use super::error::{AnalysisError, check_open_unit};
use super::wording::pct;
use crate::sessions::{Session, SessionSet};
use crate::stats::{Interval, normal_cdf, normal_quantile, wilson_interval};

/// Settings of [`balance`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct BalanceParams {
    /// An actor name is reported when it recurs in at least this many sessions (default 5).
    pub min_actor_sessions: usize,
    /// Bins of the game-length histogram (default 10).
    pub length_bins: usize,
    /// Confidence of the intervals (default 0.95).
    pub confidence: f64,
    /// Power for the detectable seat edge (default 0.8).
    pub power: f64,
    /// Two-sided significance for the detectable seat edge (default 0.05).
    pub significance: f64,
}

impl Default for BalanceParams {
    fn default() -> Self {
        Self {
            min_actor_sessions: 5,
            length_bins: 10,
            confidence: 0.95,
            power: 0.8,
            significance: 0.05,
        }
    }
}

impl BalanceParams {
    /// Errors unless confidence, power and significance lie in (0, 1), there is at least one
    /// length bin and `min_actor_sessions` ≥ 1.
    pub fn check(&self) -> Result<(), AnalysisError> {
        check_open_unit("confidence", self.confidence)?;
        check_open_unit("power", self.power)?;
        check_open_unit("significance", self.significance)?;
        if self.length_bins == 0 {
            return Err(AnalysisError::InvalidParam {
                name: "length_bins",
                value: 0.0,
                why: "expected at least 1",
            });
        }
        if self.min_actor_sessions == 0 {
            return Err(AnalysisError::InvalidParam {
                name: "min_actor_sessions",
                value: 0.0,
                why: "expected at least 1",
            });
        }
        Ok(())
    }
}

/// Wins out of sessions with a Wilson interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WinRate {
    /// Seat (1 = moved first) or actor name.
    pub who: String,
    /// Sessions in which it took part.
    pub sessions: usize,
    /// Sessions it won.
    pub wins: usize,
    /// wins / sessions.
    pub rate: f64,
    /// Wilson score interval (no continuity correction).
    pub interval: Interval,
    /// The rate every seat would have in a fair game with these sessions: the mean over its
    /// sessions of (1 − draw) / actors.
    pub fair_rate: f64,
}

/// One victory route's share of the finished sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RouteShare {
    /// The route ([`NOT_RECORDED`] for wins without one, `draw` for draws).
    pub route: String,
    /// Sessions.
    pub count: usize,
    /// count / finished sessions.
    pub share: f64,
}

/// One bin of the game-length histogram: sessions of `lo..=hi` turns.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LengthBin {
    /// Fewest turns in the bin.
    pub lo: usize,
    /// Most turns in the bin.
    pub hi: usize,
    /// Sessions.
    pub count: usize,
}

/// Game length in distinct turns.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LengthSummary {
    /// Shortest session.
    pub min: usize,
    /// Longest session.
    pub max: usize,
    /// Quartiles.
    pub quartiles: Quartiles,
    /// Equal-width bins of whole turns from `min` to `max`.
    pub bins: Vec<LengthBin>,
}

/// The first-seat edge this set could detect.
///
/// A one-sample question (is the first seat's rate the fair one?), so this uses the
/// one-sample normal-approximation power Φ((√n·|p − p₀| − z·√(p₀q₀)) / √(pq)) rather than
/// the two-proportion formula of [`crate::stats::power`], which would compare against a
/// second, equally noisy sample and ask for about twice the sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeatDetectability {
    /// Sessions.
    pub sessions: usize,
    /// The fair first-seat rate p₀.
    pub fair_rate: f64,
    /// The smallest first-seat rate above p₀ detected with the power asked for; `None` if
    /// no rate up to 1 is.
    pub detectable_rate: Option<f64>,
    /// Whether a first-seat rate 5 points above fair (a 55/45 two-player game) is detected.
    pub detects_five_points: bool,
}

/// Balance between seats and actors over a group of finished sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Balance {
    /// Finished sessions.
    pub sessions: usize,
    /// Draws.
    pub draws: usize,
    /// draws / sessions.
    pub draw_share: f64,
    /// Win rate by seat (seat 1 moved first).
    pub seats: Vec<WinRate>,
    /// Win rate by actor name, for names in at least `min_actor_sessions` sessions.
    pub actors: Vec<WinRate>,
    /// Victory-route mix, most frequent first.
    pub routes: Vec<RouteShare>,
    /// Game length.
    pub length: LengthSummary,
    /// Decided turn by victory route (when decisions were given).
    pub decided_by_route: Vec<DecisionSummary>,
    /// The first-seat edge this set could detect.
    pub first_seat: SeatDetectability,
    /// Plain-language findings with their uncertainty.
    pub findings: Vec<String>,
}

/// Balance over every finished session of `sets`; decided turn by route from `decisions`.
pub fn balance(
    sets: &[&SessionSet],
    decisions: Option<&Decisions>,
    params: &BalanceParams,
) -> Result<Balance, AnalysisError> {
    let sessions: Vec<&Session> = sets.iter().flat_map(|s| s.finished()).collect();
    balance_of(&sessions, decisions, params)
}

fn fair_share(s: &Session) -> f64 {
    if s.is_draw() {
        0.0
    } else {
        1.0 / s.actors.len().max(1) as f64
    }
}

fn win_rate(
    who: String,
    group: &[&Session],
    won: impl Fn(&Session) -> bool,
    confidence: f64,
) -> Result<WinRate, AnalysisError> {
    let wins = group.iter().filter(|s| won(s)).count();
    let n = group.len();
    Ok(WinRate {
        who,
        sessions: n,
        wins,
        rate: if n > 0 { wins as f64 / n as f64 } else { 0.0 },
        interval: wilson_interval(wins as u64, n as u64, confidence, false)?,
        fair_rate: if n > 0 {
            group.iter().map(|s| fair_share(s)).sum::<f64>() / n as f64
        } else {
            0.0
        },
    })
}

/// One-sample power of a two-sided test of p₀ when the true rate is p.
fn one_sample_power(p0: f64, p: f64, n: f64, z: f64) -> f64 {
    let numerator = n.sqrt() * (p - p0).abs() - z * (p0 * (1.0 - p0)).sqrt();
    let sd = (p * (1.0 - p)).sqrt();
    if sd == 0.0 {
        return if numerator > 0.0 { 1.0 } else { 0.0 };
    }
    normal_cdf(numerator / sd)
}

/// The smallest rate above `p0` detected with `power` by `n` sessions (bisection; the power
/// rises with the rate on this side).
fn detectable_rate(p0: f64, n: usize, power: f64, significance: f64) -> Option<f64> {
    if n == 0 || p0 >= 1.0 {
        return None;
    }
    let z = normal_quantile(1.0 - significance / 2.0);
    let nf = n as f64;
    if one_sample_power(p0, 1.0, nf, z) < power {
        return None;
    }
    let (mut lo, mut hi) = (p0, 1.0);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if one_sample_power(p0, mid, nf, z) >= power {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some(hi)
}

fn length_summary(lengths: &[usize], bins: usize) -> Option<LengthSummary> {
    let min = *lengths.iter().min()?;
    let max = *lengths.iter().max()?;
    let as_f64: Vec<f64> = lengths.iter().map(|&l| l as f64).collect();
    let span = max - min + 1;
    let width = span.div_ceil(bins).max(1);
    let mut out: Vec<LengthBin> = (0..span.div_ceil(width))
        .map(|i| LengthBin {
            lo: min + i * width,
            hi: min + (i + 1) * width - 1,
            count: 0,
        })
        .collect();
    for &l in lengths {
        out[(l - min) / width].count += 1;
    }
    Some(LengthSummary {
        min,
        max,
        quartiles: Quartiles::of(&as_f64)?,
        bins: out,
    })
}

/// Balance over the given finished sessions (unfinished ones are ignored).
///
/// Errors on bad params or when no session is finished.
pub fn balance_of(
    sessions: &[&Session],
    decisions: Option<&Decisions>,
    params: &BalanceParams,
) -> Result<Balance, AnalysisError> {
    params.check()?;
    let sessions: Vec<&Session> = sessions
        .iter()
        .copied()
        .filter(|s| s.is_finished())
        .collect();
    let n = sessions.len();
    if n == 0 {
        return Err(AnalysisError::NoSessions("the sessions given".into()));
    }
    let conf = params.confidence;
    let draws = sessions.iter().filter(|s| s.is_draw()).count();
    let max_actors = sessions.iter().map(|s| s.actors.len()).max().unwrap_or(0);
    if max_actors == 0 {
        return Err(AnalysisError::NoSessions(
            "the sessions given (no session names an actor)".into(),
        ));
    }
    let mut seats = Vec::with_capacity(max_actors);
    for seat in 0..max_actors {
        let group: Vec<&Session> = sessions
            .iter()
            .copied()
            .filter(|s| s.actors.len() > seat)
            .collect();
        seats.push(win_rate(
            (seat + 1).to_string(),
            &group,
            |s| s.winner_seat() == Some(seat),
            conf,
        )?);
    }
    let mut by_name: BTreeMap<&str, Vec<&Session>> = BTreeMap::new();
    for s in &sessions {
        let mut names: Vec<&str> = s.actors.iter().map(String::as_str).collect();
        names.sort_unstable();
        names.dedup();
        for name in names {
            by_name.entry(name).or_default().push(s);
        }
    }
    let mut actors = Vec::new();
    for (name, group) in by_name {
        if group.len() >= params.min_actor_sessions {
            actors.push(win_rate(
                name.to_string(),
                &group,
                |s| s.winner_seat().is_some_and(|w| s.actors[w] == name),
                conf,
            )?);
        }
    }
    let mut route_counts: BTreeMap<String, usize> = BTreeMap::new();
    for s in &sessions {
        let route = if s.is_draw() {
            "draw".to_string()
        } else {
            s.victory().unwrap_or(NOT_RECORDED).to_string()
        };
        *route_counts.entry(route).or_default() += 1;
    }
    let mut routes: Vec<RouteShare> = route_counts
        .into_iter()
        .map(|(route, count)| RouteShare {
            route,
            count,
            share: count as f64 / n as f64,
        })
        .collect();
    routes.sort_by(|a, b| b.count.cmp(&a.count).then_with(|| a.route.cmp(&b.route)));
    let lengths: Vec<usize> = sessions.iter().map(|s| s.turn_count()).collect();
    let length = length_summary(&lengths, params.length_bins)
        .ok_or_else(|| AnalysisError::NoSessions("the sessions given".into()))?;
    let decided_by_route = match decisions {
        None => Vec::new(),
        Some(d) => {
            let mut groups: BTreeMap<String, Vec<_>> = BTreeMap::new();
            for s in &d.sessions {
                let key = s.victory.as_deref().unwrap_or(NOT_RECORDED).to_string();
                groups.entry(key).or_default().push(s);
            }
            groups
                .iter()
                .map(|(k, g)| summarize_group(GroupKind::Victory, k, g, d.threshold))
                .collect::<Result<_, _>>()?
        }
    };
    let first = &seats[0];
    let detect = detectable_rate(first.fair_rate, n, params.power, params.significance);
    let first_seat = SeatDetectability {
        sessions: n,
        fair_rate: first.fair_rate,
        detectable_rate: detect,
        detects_five_points: detect.is_some_and(|r| r <= first.fair_rate + 0.05 + 1e-12),
    };
    let findings = balance_findings(
        &sessions,
        &seats,
        &actors,
        &routes,
        &length,
        &first_seat,
        draws,
        params,
    );
    Ok(Balance {
        sessions: n,
        draws,
        draw_share: draws as f64 / n as f64,
        seats,
        actors,
        routes,
        length,
        decided_by_route,
        first_seat,
        findings,
    })
}

/// The sentence for a win rate and its interval against the fair rate.
fn rate_sentence(subject: &str, r: &WinRate, confidence: f64) -> String {
    let conf = pct(confidence);
    let against = if r.interval.lo > r.fair_rate {
        format!("more than the fair {} %", pct(r.fair_rate))
    } else if r.interval.hi < r.fair_rate {
        format!("less than the fair {} %", pct(r.fair_rate))
    } else {
        format!("the interval includes the fair {} %", pct(r.fair_rate))
    };
    format!(
        "{subject} wins {} % ({conf} % CI {}–{} %) of {} sessions; {against}.",
        pct(r.rate),
        pct(r.interval.lo),
        pct(r.interval.hi),
        r.sessions
    )
}

#[allow(clippy::too_many_arguments)]
fn balance_findings(
    sessions: &[&Session],
    seats: &[WinRate],
    actors: &[WinRate],
    routes: &[RouteShare],
    length: &LengthSummary,
    detect: &SeatDetectability,
    draws: usize,
    params: &BalanceParams,
) -> Vec<String> {
    let n = sessions.len();
    let mut out = vec![rate_sentence(
        "The first player",
        &seats[0],
        params.confidence,
    )];
    let fair = detect.fair_rate;
    let edge = if (fair - 0.5).abs() < 1e-9 {
        "a 55/45 game from a fair one".to_string()
    } else {
        format!(
            "a first-seat win rate of {} % from a fair {} %",
            pct(fair + 0.05),
            pct(fair)
        )
    };
    let design = format!(
        "{} % power, two-sided {} %",
        pct(params.power),
        pct(params.significance)
    );
    let first_interval = seats[0].interval;
    let edge_is_clear = !first_interval.contains(fair);
    out.push(match detect.detectable_rate {
        // An interval that already excludes the fair share says more than detectability.
        _ if edge_is_clear => format!(
            "The first-seat edge is clear: its 95 % interval ({}–{} %) leaves out the fair {} %.",
            pct(first_interval.lo),
            pct(first_interval.hi),
            pct(fair)
        ),
        Some(r) if detect.detects_five_points => format!(
            "With {n} sessions the set detects a first-seat win rate of {} % or more against a fair {} % ({design}), so it can tell {edge}.",
            pct(r),
            pct(fair)
        ),
        Some(r) => format!(
            "With {n} sessions this cannot tell {edge}: at {design} it only detects a first-seat win rate of {} % or more.",
            pct(r)
        ),
        None => format!(
            "With {n} sessions this cannot tell {edge}: no first-seat edge is detected at {design}."
        ),
    });
    for seat in seats.iter().skip(1) {
        out.push(rate_sentence(
            &format!("Seat {}", seat.who),
            seat,
            params.confidence,
        ));
    }
    if draws > 0 {
        out.push(format!(
            "{draws} of {n} sessions ({} %) ended in a draw.",
            pct(draws as f64 / n as f64)
        ));
    }
    if let Some(best) = actors
        .iter()
        .max_by(|a, b| a.rate.total_cmp(&b.rate).then_with(|| b.who.cmp(&a.who)))
        && actors.len() > 1
    {
        out.push(rate_sentence(
            &format!(
                "Of the {} actor names that recur in {} or more sessions, {}",
                actors.len(),
                params.min_actor_sessions,
                best.who
            ),
            best,
            params.confidence,
        ));
    }
    if !routes.is_empty() {
        let mix: Vec<String> = routes
            .iter()
            .map(|r| format!("{} {} % ({})", r.route, pct(r.share), r.count))
            .collect();
        out.push(format!("Victory routes: {}.", mix.join(", ")));
    }
    let q = length.quartiles;
    out.push(format!(
        "Games last a median of {} turns (quartiles {}–{}, range {}–{}).",
        super::wording::num(q.median),
        super::wording::num(q.q1),
        super::wording::num(q.q3),
        length.min,
        length.max
    ));
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testkit::{Plan, set_of};

    /// `n` one-turn sessions, the first `first_wins` won by the first seat, the rest by the
    /// second.
    fn seat_set(n: usize, first_wins: usize) -> SessionSet {
        let plans: Vec<Plan> = (0..n)
            .map(|i| Plan {
                turns: 1,
                winner: Some(if i < first_wins { 0 } else { 1 }),
                victory: "",
                variant: "",
            })
            .collect();
        set_of(&plans)
    }

    #[test]
    fn first_seat_interval_reproduces_newcombe_1998_table_i() {
        // Newcombe R.G. (1998), Statistics in Medicine 17:857-872, Table I (confirmed):
        // 81/263 → Wilson 0.2553 – 0.3662.
        let set = seat_set(263, 81);
        let b = balance(&[&set], None, &BalanceParams::default()).unwrap();
        let first = &b.seats[0];
        assert_eq!((first.wins, first.sessions), (81, 263));
        assert!(
            (first.interval.lo - 0.2553).abs() < 0.5e-4,
            "{:?}",
            first.interval
        );
        assert!(
            (first.interval.hi - 0.3662).abs() < 0.5e-4,
            "{:?}",
            first.interval
        );
        assert_eq!(first.fair_rate, 0.5);
        assert!(
            b.findings[0].contains("less than the fair 50 %"),
            "{}",
            b.findings[0]
        );
    }

    #[test]
    fn twenty_sessions_cannot_tell_a_55_45_game_from_a_fair_one_but_2000_can() {
        let small = seat_set(20, 11);
        let b = balance(&[&small], None, &BalanceParams::default()).unwrap();
        assert!(
            b.findings[0]
                .starts_with("The first player wins 55 % (95 % CI 34–74 %) of 20 sessions"),
            "{}",
            b.findings[0]
        );
        assert!(
            b.findings[1].contains("cannot tell a 55/45 game from a fair one"),
            "{}",
            b.findings[1]
        );
        assert!(!b.first_seat.detects_five_points);
        let large = seat_set(2000, 1100);
        let b = balance(&[&large], None, &BalanceParams::default()).unwrap();
        assert!(!b.findings[1].contains("cannot tell"), "{}", b.findings[1]);
        // 1,100 of 2,000 is itself outside the fair share's interval, so the finding says the
        // edge is clear (which implies the set can tell 55/45 from fair).
        assert!(
            b.findings[1].contains("can tell a 55/45 game from a fair one")
                || b.findings[1].starts_with("The first-seat edge is clear"),
            "{}",
            b.findings[1]
        );
        assert!(b.first_seat.detects_five_points);
        assert!(b.first_seat.detects_five_points);
    }

    #[test]
    fn detectable_rate_matches_the_one_sample_sample_size_formula() {
        // One-sample normal-approximation sample size n = ((z_{α/2}√(p₀q₀) + z_β√(pq))/d)²
        // (textbook formula, e.g. Chow, Shao & Wang, Sample Size Calculations in Clinical
        // Research, §4.1 — from memory). By hand for p₀ = 0.5, p = 0.6, α = 0.05 two-sided,
        // power 0.8: ((1.959964·0.5 + 0.841621·√0.24)/0.1)² = 193.85, so 194 sessions
        // detect 60 % and 193 do not.
        let at_194 = detectable_rate(0.5, 194, 0.8, 0.05).unwrap();
        let at_193 = detectable_rate(0.5, 193, 0.8, 0.05).unwrap();
        assert!(at_194 <= 0.6 && at_193 > 0.6, "{at_194} {at_193}");
        assert!(at_194 > 0.599, "{at_194}");
        // One session cannot detect anything: even a certain win gives no power.
        assert_eq!(detectable_rate(0.5, 1, 0.8, 0.05), None);
    }

    #[test]
    fn routes_draws_lengths_and_actor_names_match_hand_counts() {
        let spec = [
            (2, Some(0), "siege"),
            (3, Some(1), "siege"),
            (3, None, ""),
            (5, Some(0), "treaty"),
            (8, Some(0), ""),
            (10, Some(1), "siege"),
        ];
        let plans: Vec<Plan> = spec
            .iter()
            .map(|&(turns, winner, victory)| Plan {
                turns,
                winner,
                victory,
                variant: "",
            })
            .collect();
        let set = set_of(&plans);
        let params = BalanceParams {
            length_bins: 4,
            ..BalanceParams::default()
        };
        let b = balance(&[&set], None, &params).unwrap();
        assert_eq!((b.sessions, b.draws), (6, 1));
        let routes: Vec<(&str, usize)> = b
            .routes
            .iter()
            .map(|r| (r.route.as_str(), r.count))
            .collect();
        assert_eq!(
            routes,
            [("siege", 3), (NOT_RECORDED, 1), ("draw", 1), ("treaty", 1)]
        );
        // Lengths 2, 3, 3, 5, 8, 10: span 9 in bins of ⌈9/4⌉ = 3 turns → 2–4: 3, 5–7: 1,
        // 8–10: 2. Type-7 quartiles by hand: 3, 4, 7.25.
        let bins: Vec<(usize, usize, usize)> = b
            .length
            .bins
            .iter()
            .map(|x| (x.lo, x.hi, x.count))
            .collect();
        assert_eq!(bins, [(2, 4, 3), (5, 7, 1), (8, 10, 2)]);
        let q = b.length.quartiles;
        assert_eq!((q.q1, q.median, q.q3), (3.0, 4.0, 7.25));
        // Fair share with one draw in six: (5/6)·(1/2).
        assert!((b.seats[0].fair_rate - 5.0 / 12.0).abs() < 1e-12);
        // Both names recur in all six sessions: north won 3, south 2.
        let names: Vec<(&str, usize)> = b.actors.iter().map(|a| (a.who.as_str(), a.wins)).collect();
        assert_eq!(names, [("north", 3), ("south", 2)]);
        // Five sessions is the default minimum; a higher one drops both names.
        let strict = BalanceParams {
            min_actor_sessions: 7,
            ..params
        };
        assert!(balance(&[&set], None, &strict).unwrap().actors.is_empty());
        assert!(
            b.findings
                .iter()
                .any(|f| f.starts_with("1 of 6 sessions (17 %) ended in a draw"))
        );
    }

    #[test]
    fn bad_params_and_empty_input_are_errors() {
        let set = seat_set(3, 1);
        let bad = BalanceParams {
            power: 1.0,
            ..BalanceParams::default()
        };
        assert!(matches!(
            balance(&[&set], None, &bad),
            Err(AnalysisError::InvalidParam { name: "power", .. })
        ));
        assert!(matches!(
            balance(&[], None, &BalanceParams::default()),
            Err(AnalysisError::NoSessions(_))
        ));
    }
}
