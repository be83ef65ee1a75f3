//! What swung it: the biggest swings of a session with the events behind them, the mean
//! swing that follows each event label and detail word (with a session bootstrap interval),
//! and leverage by turn number with a detector for turns far above their neighbours.
//!
//! A swing is the change of an actor's win chance across one turn (win probability added).
//! Only finished sessions are used, so that every swing can be set against who won.

use std::collections::{BTreeSet, HashMap};
use std::sync::Mutex;

use serde::Serialize;

use super::error::AnalysisError;
use super::joined::{Joined, join};
use super::traces::Trace;
use crate::progress::{Cancel, Progress};
use crate::sessions::text::tokens;
use crate::sessions::{Event, Session, SessionSet};
use crate::stats::{BootstrapParams, Interval, median, percentile_bootstrap, quantile_of_sorted};

/// One logged event, in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventNote {
    /// The actor's name, `None` for a neutral event.
    pub actor: Option<String>,
    /// The event label.
    pub label: String,
    /// The free-text detail (may be empty).
    pub detail: String,
}

/// One of the biggest swings of a session.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TopSwing {
    /// The log's turn number.
    pub turn: u32,
    /// The actor whose chance moved most on that turn (seat, 0 = moved first).
    pub actor: usize,
    /// That actor's name.
    pub actor_name: String,
    /// Chance before the turn.
    pub before: f64,
    /// Chance after the turn.
    pub after: f64,
    /// after − before.
    pub swing: f64,
    /// Every event logged on that turn, in log order.
    pub events: Vec<EventNote>,
}

/// The events of `session` on `turn` (events are stored in turn order).
fn events_on(session: &Session, turn: u32) -> &[Event] {
    let lo = session.events.partition_point(|e| e.turn < turn);
    let hi = session.events.partition_point(|e| e.turn <= turn);
    &session.events[lo..hi]
}

/// The `count` turns of `trace` with the largest |swing| of any actor, largest first (ties:
/// earlier turn first), each with that turn's events. One entry per turn: the actor whose
/// chance moved most (lowest seat on ties). Errors when the trace does not fit its session.
pub fn top_swings(
    trace: &Trace,
    sets: &[&SessionSet],
    count: usize,
) -> Result<Vec<TopSwing>, AnalysisError> {
    let j = join(&[trace], sets)?[0];
    if trace.actors == 0 {
        return Ok(Vec::new());
    }
    let mut per_turn: Vec<(usize, usize, f64)> = (0..trace.len())
        .map(|t| {
            let mut best = (0, trace.swing(t, 0));
            for a in 1..trace.actors {
                let s = trace.swing(t, a);
                if s.abs() > best.1.abs() {
                    best = (a, s);
                }
            }
            (t, best.0, best.1)
        })
        .collect();
    per_turn.sort_by(|x, y| y.2.abs().total_cmp(&x.2.abs()).then(x.0.cmp(&y.0)));
    Ok(per_turn
        .into_iter()
        .take(count)
        .map(|(t, a, swing)| TopSwing {
            turn: trace.turns[t],
            actor: a,
            actor_name: j.session.actors[a].clone(),
            before: trace.before(t, a),
            after: trace.chance(t, a),
            swing,
            events: events_on(j.session, trace.turns[t])
                .iter()
                .map(|e| EventNote {
                    actor: e.actor.map(|a| j.session.actors[a as usize].clone()),
                    label: j.set.label(e).to_string(),
                    detail: e.detail.to_string(),
                })
                .collect(),
        })
        .collect())
}

/// Whether an impact item is an event label or a word of the detail text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
pub enum ItemKind {
    /// An event label.
    Label,
    /// A lower-cased word of the detail text (see [`crate::sessions::text::tokens`]).
    Word,
}

/// Settings of [`event_impact`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EventImpactParams {
    /// Session bootstrap settings (default 1,000 resamples, seed 0, 95 %).
    pub bootstrap: BootstrapParams,
    /// Items occurring in fewer sessions are not listed (default 3).
    pub min_sessions: usize,
    /// Also score the words of the detail text (default true).
    pub words: bool,
    /// At most this many items are scored, those with the most actor occurrences (default
    /// 200); bounds the bootstrap time when the log's text is rich.
    pub max_items: usize,
}

impl Default for EventImpactParams {
    fn default() -> Self {
        Self {
            bootstrap: BootstrapParams {
                resamples: 1000,
                seed: 0,
                confidence: 0.95,
            },
            min_sessions: 3,
            words: true,
            max_items: 200,
        }
    }
}

impl EventImpactParams {
    /// Errors on bad bootstrap settings, `min_sessions` = 0 or `max_items` = 0.
    pub fn check(&self) -> Result<(), AnalysisError> {
        self.bootstrap.check()?;
        if self.min_sessions == 0 {
            return Err(AnalysisError::InvalidParam {
                name: "min_sessions",
                value: 0.0,
                why: "expected at least 1",
            });
        }
        if self.max_items == 0 {
            return Err(AnalysisError::InvalidParam {
                name: "max_items",
                value: 0.0,
                why: "expected at least 1",
            });
        }
        Ok(())
    }
}

/// The swing that follows one event label or detail word.
///
/// Each event done by an actor is credited with that actor's swing across the event's turn;
/// several events of one actor in one turn each get the whole swing. Neutral events (no
/// actor) have nobody to credit: they are counted in `occurrences` and
/// `neutral_occurrences` but take no part in the mean swing or the win share.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImpactItem {
    /// Label or word.
    pub kind: ItemKind,
    /// The label text or the word.
    pub name: String,
    /// Events carrying it (a word counts once per event).
    pub occurrences: usize,
    /// Sessions it occurs in.
    pub sessions: usize,
    /// Of the occurrences, those on neutral events.
    pub neutral_occurrences: usize,
    /// Mean swing of the acting actor over the actor occurrences; `None` if all are neutral.
    pub mean_swing: Option<f64>,
    /// Percentile bootstrap interval of the mean swing, resampling sessions; `None` if all
    /// occurrences are neutral or too few resamples held it.
    pub interval: Option<Interval>,
    /// Resamples in which the item occurred (the interval uses only these).
    pub valid_resamples: usize,
    /// Share of actor occurrences whose actor went on to win.
    pub win_share: Option<f64>,
}

/// Event impact over a group of sessions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventImpact {
    /// Sorted by |mean swing|, largest first; items without a mean swing last.
    pub items: Vec<ImpactItem>,
    /// Finished sessions used.
    pub sessions: usize,
    /// Items left out because they occurred in fewer than `min_sessions` sessions.
    pub rare_items: usize,
    /// Items left out by `max_items`.
    pub capped_items: usize,
    /// Events whose turn the trace does not hold (not scored).
    pub unmatched_events: usize,
    /// The settings used.
    pub params: EventImpactParams,
}

/// Per-item tallies while reading the sessions.
#[derive(Default)]
struct Tally {
    occurrences: usize,
    neutral: usize,
    wins: usize,
    sessions: usize,
    last_session: Option<usize>,
    /// (session position, swing sum, actor occurrences) in session order.
    per_session: Vec<(usize, f64, u32)>,
}

impl Tally {
    fn add(&mut self, session: usize, credited: Option<(f64, bool)>) {
        self.occurrences += 1;
        if self.last_session != Some(session) {
            self.sessions += 1;
            self.last_session = Some(session);
        }
        match credited {
            None => self.neutral += 1,
            Some((swing, won)) => {
                self.wins += usize::from(won);
                match self.per_session.last_mut() {
                    Some(last) if last.0 == session => {
                        last.1 += swing;
                        last.2 += 1;
                    }
                    _ => self.per_session.push((session, swing, 1)),
                }
            }
        }
    }
    fn actor_occurrences(&self) -> usize {
        self.occurrences - self.neutral
    }
}

/// The tally of `name`, created on first sight.
fn tally_of<'m>(map: &'m mut HashMap<String, Tally>, name: &str) -> &'m mut Tally {
    map.entry(name.to_string()).or_default()
}

/// Reports the bootstrap's progress under this job's stage name.
struct Staged<'a>(&'a dyn Progress);

impl Progress for Staged<'_> {
    fn report(&self, _stage: &str, fraction: f64) {
        self.0.report("event impact", fraction);
    }
}

/// Every item's mean swing over the resampled sessions `idx`: Σ sums / Σ counts, `None`
/// where the item does not occur.
fn item_means(
    by_session: &[Vec<(u32, f64, u32)>],
    items: usize,
    idx: &[usize],
) -> Vec<Option<f64>> {
    let mut sums = vec![0.0; items];
    let mut counts = vec![0u64; items];
    for &g in idx {
        for &(i, s, c) in &by_session[g] {
            sums[i as usize] += s;
            counts[i as usize] += u64::from(c);
        }
    }
    sums.iter()
        .zip(&counts)
        .map(|(&s, &c)| (c > 0).then(|| s / c as f64))
        .collect()
}

/// One item's (mean swing, percentile interval, resamples holding the item).
type ItemBootstrap = (Option<f64>, Option<Interval>, usize);

/// (mean, percentile interval, valid resamples) of every item from ONE run of
/// [`percentile_bootstrap`]: each resample computes all items at once and records them.
///
/// The records arrive in thread order, but a percentile interval depends only on the multiset
/// of resampled values, and each item's values are sorted before the quantiles are read, so
/// the result is the same at any thread count. The bootstrap also evaluates the statistic
/// once on the original sessions; that record is recognised by value (it is recomputed here
/// with the same arithmetic, so it matches bit for bit) and one copy is removed per item.
/// Quantiles are type 7 at α/2 and 1 − α/2, as in [`percentile_bootstrap`].
fn bootstrap_all(
    by_session: &[Vec<(u32, f64, u32)>],
    items: usize,
    params: &BootstrapParams,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Vec<ItemBootstrap>, AnalysisError> {
    let n = by_session.len();
    if items == 0 {
        return Ok(Vec::new());
    }
    let records: Mutex<Vec<Vec<Option<f64>>>> =
        Mutex::new(Vec::with_capacity(params.resamples + 1));
    let stat = |idx: &[usize]| {
        let means = item_means(by_session, items, idx);
        records
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .push(means);
        // The shared statistic is a placeholder: the intervals come from the records.
        Some(0.0)
    };
    percentile_bootstrap(n, stat, params, &Staged(progress), cancel)?;
    let records = records.into_inner().unwrap_or_else(|p| p.into_inner());
    let identity: Vec<usize> = (0..n).collect();
    let estimate = item_means(by_session, items, &identity);
    let alpha = 1.0 - params.confidence;
    let same = |a: Option<f64>, b: Option<f64>| a.map(f64::to_bits) == b.map(f64::to_bits);
    let mut out = Vec::with_capacity(items);
    for (i, &est) in estimate.iter().enumerate() {
        let mut column: Vec<Option<f64>> = records.iter().map(|r| r[i]).collect();
        if let Some(pos) = column.iter().position(|&v| same(v, est)) {
            column.swap_remove(pos);
        }
        let mut valid: Vec<f64> = column
            .into_iter()
            .flatten()
            .filter(|v| v.is_finite())
            .collect();
        valid.sort_by(f64::total_cmp);
        let interval = if est.is_some() && valid.len() >= 2 {
            let lo = quantile_of_sorted(&valid, alpha / 2.0);
            let hi = quantile_of_sorted(&valid, 1.0 - alpha / 2.0);
            lo.zip(hi).map(|(lo, hi)| Interval::new(lo, hi))
        } else {
            None
        };
        out.push((est, interval, valid.len()));
    }
    Ok(out)
}

/// Only finished sessions, whose swings can be set against the winner.
fn finished<'a>(
    traces: &[&'a Trace],
    sets: &[&'a SessionSet],
) -> Result<Vec<Joined<'a>>, AnalysisError> {
    Ok(join(traces, sets)?
        .into_iter()
        .filter(|j| j.session.is_finished())
        .collect())
}

/// Mean swing, session-bootstrap interval and win share of every event label and detail word.
///
/// The per-session swing sums and counts of every item are gathered once; the sessions are
/// resampled once (one run of [`percentile_bootstrap`]) and each resample updates every item
/// in a single pass over its sessions, so all items share the same resamples (their
/// intervals are paired). A resample's mean of an item is Σ sums / Σ counts over the
/// resampled sessions; resamples without the item are left out of its interval. The result
/// is the same at any thread count. Errors on bad params, a trace that does not fit its
/// session, no finished session, or cancellation.
pub fn event_impact(
    traces: &[&Trace],
    sets: &[&SessionSet],
    params: &EventImpactParams,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<EventImpact, AnalysisError> {
    params.check()?;
    let joined = finished(traces, sets)?;
    if joined.is_empty() {
        return Err(AnalysisError::NoSessions("the traces given".into()));
    }
    let mut labels: HashMap<String, Tally> = HashMap::new();
    let mut word_tallies: HashMap<String, Tally> = HashMap::new();
    let mut unmatched_events = 0;
    let mut words: BTreeSet<String> = BTreeSet::new();
    for (s, j) in joined.iter().enumerate() {
        let winner = j.session.winner_seat();
        for e in &j.session.events {
            let Ok(t) = j.trace.turns.binary_search(&e.turn) else {
                unmatched_events += 1;
                continue;
            };
            let credited = e.actor.map(|a| {
                let a = usize::from(a);
                (j.trace.swing(t, a), winner == Some(a))
            });
            tally_of(&mut labels, j.set.label(e)).add(s, credited);
            if params.words {
                // A word counts once per event, however often the detail repeats it.
                words.clear();
                words.extend(tokens(&e.detail));
                for w in &words {
                    tally_of(&mut word_tallies, w).add(s, credited);
                }
            }
        }
    }
    let mut listed: Vec<((ItemKind, String), Tally)> = labels
        .into_iter()
        .map(|(k, t)| ((ItemKind::Label, k), t))
        .chain(
            word_tallies
                .into_iter()
                .map(|(k, t)| ((ItemKind::Word, k), t)),
        )
        .collect();
    let before = listed.len();
    listed.retain(|(_, t)| t.sessions >= params.min_sessions);
    let rare_items = before - listed.len();
    // Most actor occurrences first, then by kind and name, so the cap is deterministic.
    listed.sort_by(|a, b| {
        b.1.actor_occurrences()
            .cmp(&a.1.actor_occurrences())
            .then_with(|| a.0.cmp(&b.0))
    });
    let capped_items = listed.len().saturating_sub(params.max_items);
    listed.truncate(params.max_items);

    let n = joined.len();
    // Session-major contributions (item, swing sum, actor occurrences), so one pass over a
    // resample's sessions updates every item.
    let mut by_session: Vec<Vec<(u32, f64, u32)>> = vec![Vec::new(); n];
    for (i, (_, tally)) in listed.iter().enumerate() {
        for &(s, sum, c) in &tally.per_session {
            by_session[s].push((i as u32, sum, c));
        }
    }
    let stats = bootstrap_all(
        &by_session,
        listed.len(),
        &params.bootstrap,
        progress,
        cancel,
    )?;
    let mut items = Vec::with_capacity(listed.len());
    for (((kind, name), tally), (mean_swing, interval, valid_resamples)) in listed.iter().zip(stats)
    {
        let actor_occ = tally.actor_occurrences();
        items.push(ImpactItem {
            kind: *kind,
            name: name.clone(),
            occurrences: tally.occurrences,
            sessions: tally.sessions,
            neutral_occurrences: tally.neutral,
            mean_swing,
            interval,
            valid_resamples,
            win_share: (actor_occ > 0).then(|| tally.wins as f64 / actor_occ as f64),
        });
    }
    items.sort_by(|a, b| {
        let key = |x: &ImpactItem| x.mean_swing.map(f64::abs);
        match (key(a), key(b)) {
            (Some(x), Some(y)) => y.total_cmp(&x),
            (Some(_), None) => std::cmp::Ordering::Less,
            (None, Some(_)) => std::cmp::Ordering::Greater,
            (None, None) => std::cmp::Ordering::Equal,
        }
        .then_with(|| (a.kind, &a.name).cmp(&(b.kind, &b.name)))
    });
    Ok(EventImpact {
        items,
        sessions: n,
        rare_items,
        capped_items,
        unmatched_events,
        params: *params,
    })
}

/// Settings of [`leverage_by_turn`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LeverageParams {
    /// A turn number needs this many sessions to be judged or to serve as a neighbour
    /// (default 20).
    pub min_sessions: usize,
    /// Neighbours looked at on each side (default 4).
    pub neighbours: usize,
    /// A turn is a quirk when its mean |swing| is at least this multiple of its neighbours'
    /// median (default 1.5).
    pub factor: f64,
}

impl Default for LeverageParams {
    fn default() -> Self {
        Self {
            min_sessions: 20,
            neighbours: 4,
            factor: 1.5,
        }
    }
}

impl LeverageParams {
    /// Errors unless `neighbours` ≥ 1 and `factor` > 1 (finite).
    pub fn check(&self) -> Result<(), AnalysisError> {
        if self.neighbours == 0 {
            return Err(AnalysisError::InvalidParam {
                name: "neighbours",
                value: 0.0,
                why: "expected at least 1",
            });
        }
        if !(self.factor > 1.0 && self.factor.is_finite()) {
            return Err(AnalysisError::InvalidParam {
                name: "factor",
                value: self.factor,
                why: "expected a finite multiple above 1",
            });
        }
        Ok(())
    }
}

/// Leverage of one turn number.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeverageRow {
    /// The log's turn number.
    pub turn: u32,
    /// Sessions that reached this turn.
    pub sessions: usize,
    /// Mean |swing| over those sessions and their actors.
    pub mean_abs_swing: f64,
    /// mean_abs_swing / the overall mean |swing| (Tango's leverage index; mean 1 over all
    /// session × turn × actor observations).
    pub leverage: f64,
    /// Median mean |swing| of the up to `neighbours` judged turns on each side.
    pub neighbour_median: Option<f64>,
    /// Far above its neighbours: at least `min_sessions` sessions, at least two neighbours,
    /// and mean |swing| ≥ factor × neighbour median.
    pub quirk: bool,
}

/// Leverage by turn number.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LeverageTable {
    /// Mean |swing| over every session × turn × actor observation.
    pub overall_mean_abs_swing: f64,
    /// One row per turn number, in order.
    pub rows: Vec<LeverageRow>,
    /// Turn numbers marked as quirks.
    pub quirk_turns: Vec<u32>,
    /// The settings used.
    pub params: LeverageParams,
}

/// Mean |swing| by turn number relative to the overall mean, with the quirk detector.
///
/// Tango's leverage index (Tango 2006, as cited in CHECK_VALUES.md) is E[|ΔWP| in this
/// situation] / E[|ΔWP|]; here the situation is the turn number. Errors on bad params, a
/// trace that does not fit its session, or no finished session with a turn.
pub fn leverage_by_turn(
    traces: &[&Trace],
    sets: &[&SessionSet],
    params: &LeverageParams,
) -> Result<LeverageTable, AnalysisError> {
    params.check()?;
    let joined = finished(traces, sets)?;
    // turn → (Σ|swing|, observations, sessions)
    let mut by_turn: std::collections::BTreeMap<u32, (f64, usize, usize)> = Default::default();
    let (mut total, mut observations) = (0.0, 0usize);
    for j in &joined {
        let tr = j.trace;
        for t in 0..tr.len() {
            let e = by_turn.entry(tr.turns[t]).or_default();
            for a in 0..tr.actors {
                let s = tr.swing(t, a).abs();
                e.0 += s;
                total += s;
            }
            e.1 += tr.actors;
            e.2 += 1;
            observations += tr.actors;
        }
    }
    if observations == 0 {
        return Err(AnalysisError::NoSessions(
            "the traces given (no finished session has a turn)".into(),
        ));
    }
    let overall = total / observations as f64;
    let mut rows: Vec<LeverageRow> = by_turn
        .into_iter()
        .map(|(turn, (sum, obs, sessions))| {
            let mean = sum / obs as f64;
            LeverageRow {
                turn,
                sessions,
                mean_abs_swing: mean,
                leverage: if overall > 0.0 { mean / overall } else { 1.0 },
                neighbour_median: None,
                quirk: false,
            }
        })
        .collect();
    let judged: Vec<usize> = (0..rows.len())
        .filter(|&i| rows[i].sessions >= params.min_sessions)
        .collect();
    for (k, &i) in judged.iter().enumerate() {
        let left = &judged[k.saturating_sub(params.neighbours)..k];
        let right = &judged[k + 1..(k + 1 + params.neighbours).min(judged.len())];
        let around: Vec<f64> = left
            .iter()
            .chain(right)
            .map(|&n| rows[n].mean_abs_swing)
            .collect();
        let med = median(&around);
        rows[i].neighbour_median = med;
        rows[i].quirk = around.len() >= 2
            && med.is_some_and(|m| {
                rows[i].mean_abs_swing > 0.0 && rows[i].mean_abs_swing >= params.factor * m
            });
    }
    let quirk_turns = rows.iter().filter(|r| r.quirk).map(|r| r.turn).collect();
    Ok(LeverageTable {
        overall_mean_abs_swing: overall,
        rows,
        quirk_turns,
        params: *params,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testkit::{Plan, duel, load, refs, set_of};
    use crate::progress::NoProgress;
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    fn item<'a>(impact: &'a EventImpact, kind: ItemKind, name: &str) -> &'a ImpactItem {
        impact
            .items
            .iter()
            .find(|i| i.kind == kind && i.name == name)
            .unwrap_or_else(|| panic!("no item {name}"))
    }

    #[test]
    fn swings_telescope_to_the_last_minus_the_start_chance() {
        // Win probability added sums over a game to WP_end − WP_start (Mills & Mills 1970, as
        // cited in CHECK_VALUES.md). One `tick` by north per turn credits every north swing
        // to `tick`, so its mean × occurrences is that sum: 0.83 − 0.5.
        let north = [0.55, 0.31, 0.47, 0.9, 0.62, 0.83];
        let mut events = String::from("session,turn,actor,event\n");
        for t in 1..=north.len() {
            events += &format!("g,{t},n,tick\ng,{t},s,tock\n");
        }
        let set = load(&events, "session,winner\ng,n\n");
        let t = duel(0, 0, &north);
        let sum: f64 = (0..t.len()).map(|i| t.swing(i, 0)).sum();
        assert!((sum - (0.83 - 0.5)).abs() < 1e-12);
        let params = EventImpactParams {
            min_sessions: 1,
            ..EventImpactParams::default()
        };
        let r = event_impact(&[&t], &[&set], &params, &NoProgress, &Cancel::new()).unwrap();
        let tick = item(&r, ItemKind::Label, "tick");
        assert!((tick.mean_swing.unwrap() * tick.occurrences as f64 - 0.33).abs() < 1e-12);
        let tock = item(&r, ItemKind::Label, "tock");
        assert!((tock.mean_swing.unwrap() * tock.occurrences as f64 + 0.33).abs() < 1e-12);
        // North won: every tick's actor won, no tock's did.
        assert_eq!((tick.win_share, tock.win_share), (Some(1.0), Some(0.0)));
    }

    #[test]
    fn top_swings_list_the_largest_moves_with_their_events() {
        let events = "session,turn,actor,event,detail\n\
                      g,1,n,scout,\ng,2,s,ambush,Took the ford\ng,2,,storm,\ng,3,n,rest,\n";
        let set = load(events, "session,winner\ng,s\n");
        // North 0.55, 0.2, 0.25 and south 0.45, 0.6, 0.75 from 0.5 each (the rest is the
        // draw): the largest move is north's −0.35 on turn 2; turns 1 and 3 move by 0.05
        // and 0.15.
        let mut t = crate::analysis::testkit::trace(
            0,
            0,
            &[0.5, 0.5],
            &[vec![0.55, 0.45], vec![0.2, 0.6], vec![0.25, 0.75]],
        );
        t.draw = vec![0.0, 0.2, 0.0];
        let top = top_swings(&t, &[&set], 2).unwrap();
        assert_eq!(top.len(), 2);
        assert_eq!((top[0].turn, top[0].actor), (2, 0));
        assert!((top[0].swing + 0.35).abs() < 1e-12);
        let labels: Vec<&str> = top[0].events.iter().map(|e| e.label.as_str()).collect();
        assert_eq!(labels, ["ambush", "storm"]);
        assert_eq!(top[0].events[0].actor.as_deref(), Some("s"));
        assert_eq!(top[0].events[1].actor, None);
        assert_eq!(top[0].events[0].detail, "Took the ford");
        // Then turn 3, where south's +0.15 is the larger move.
        assert_eq!((top[1].turn, top[1].actor), (3, 1));
    }

    /// 80 sessions of 10 turns, in 40 pairs. Odd turns: a random actor `strike`s ("hard
    /// strike") and gains 0.3 ± 0.05. Even turns: an actor `wait`s ("pause") while north's
    /// chance resets to 0.35 or 0.65 for the next striker, a swing of about −0.3, 0 or +0.3.
    /// The two sessions of a pair have the same chances and strikers, but the other actor
    /// waits, so every wait swing has its exact opposite and the true wait mean is 0.
    /// Every session opens with a `muster` by each actor (fixing the seat order) and a
    /// neutral `dawn`.
    fn strike_and_wait() -> (SessionSet, Vec<Trace>) {
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        let mut events = String::from("session,turn,actor,event,detail\n");
        let mut outcomes = String::from("session,winner\n");
        let mut traces = Vec::new();
        let name = |a: usize| if a == 0 { "n" } else { "s" };
        for pair in 0..40 {
            let mut north = Vec::new();
            let mut lines = [String::new(), String::new()];
            let mut striker: usize = rng.gen_range(0..2);
            // North's chance before a strike: 0.35 if north strikes, 0.65 if south does.
            let mut p = if striker == 0 { 0.35 } else { 0.65 };
            let start = p;
            for t in 1..=10u32 {
                if t % 2 == 1 {
                    let gain = 0.3 + rng.gen_range(-0.05..0.05);
                    p += if striker == 0 { gain } else { -gain };
                    for l in &mut lines {
                        *l += &format!("{t},{},strike,hard strike\n", name(striker));
                    }
                } else {
                    let waiter: usize = rng.gen_range(0..2);
                    striker = rng.gen_range(0..2);
                    p = if striker == 0 { 0.35 } else { 0.65 };
                    lines[0] += &format!("{t},{},wait,pause\n", name(waiter));
                    lines[1] += &format!("{t},{},wait,pause\n", name(1 - waiter));
                }
                north.push(p);
            }
            let rows: Vec<Vec<f64>> = north.iter().map(|&x| vec![x, 1.0 - x]).collect();
            for (k, body) in lines.iter().enumerate() {
                let s = 2 * pair + k;
                events += &format!("g{s},1,n,muster,\ng{s},1,s,muster,\ng{s},1,,dawn,\n");
                for line in body.lines() {
                    events += &format!("g{s},{line}\n");
                }
                let winner = if rng.gen_bool(0.5) { "n" } else { "s" };
                outcomes += &format!("g{s},{winner}\n");
                traces.push(crate::analysis::testkit::trace(
                    0,
                    s,
                    &[start, 1.0 - start],
                    &rows,
                ));
            }
        }
        (load(&events, &outcomes), traces)
    }

    #[test]
    fn a_label_that_always_precedes_a_gain_gets_that_mean_and_noise_gets_zero() {
        // Synthetic data with a known answer (built above): strike ≈ +0.3, wait exactly 0.
        let (set, traces) = strike_and_wait();
        let params = EventImpactParams::default();
        let r = event_impact(
            &refs(&traces),
            &[&set],
            &params,
            &NoProgress,
            &Cancel::new(),
        )
        .unwrap();
        let strike = item(&r, ItemKind::Label, "strike");
        let m = strike.mean_swing.unwrap();
        let iv = strike.interval.unwrap();
        assert!((m - 0.3).abs() < 0.01, "strike mean {m}");
        assert!(
            iv.contains(0.3) && iv.width() < 0.02,
            "strike interval {iv:?}"
        );
        assert_eq!(strike.occurrences, 400);
        let wait = item(&r, ItemKind::Label, "wait");
        let wi = wait.interval.unwrap();
        assert!(wait.mean_swing.unwrap().abs() < 1e-12);
        assert!(
            wi.contains(0.0) && wi.width() > 0.01,
            "wait interval {wi:?}"
        );
        // The detail word follows its label exactly.
        let word = item(&r, ItemKind::Word, "strike");
        assert_eq!(word.mean_swing, strike.mean_swing);
        // Neutral events are counted but not credited.
        let dawn = item(&r, ItemKind::Label, "dawn");
        assert_eq!((dawn.occurrences, dawn.neutral_occurrences), (80, 80));
        assert_eq!((dawn.mean_swing, dawn.interval), (None, None));
        // Sorted by |mean swing|: strike (or its word) leads.
        assert!(r.items[0].name == "strike");
        assert_eq!(r.items.last().map(|i| i.name.as_str()), Some("dawn"));
    }

    #[test]
    fn one_shared_bootstrap_matches_a_separate_bootstrap_per_item() {
        // Cross-check against the library path: stats::percentile_bootstrap run on its own
        // for one label (dense per-session sums, its own percentile reading) draws the same
        // resamples from the same seed, so the intervals must agree exactly.
        let (set, traces) = strike_and_wait();
        let params = EventImpactParams {
            bootstrap: BootstrapParams {
                resamples: 400,
                seed: 5,
                confidence: 0.9,
            },
            ..EventImpactParams::default()
        };
        let r = event_impact(
            &refs(&traces),
            &[&set],
            &params,
            &NoProgress,
            &Cancel::new(),
        )
        .unwrap();
        for name in ["strike", "wait", "muster"] {
            let mut sums = vec![0.0; traces.len()];
            let mut counts = vec![0.0; traces.len()];
            for (s, tr) in traces.iter().enumerate() {
                for e in &set.sessions[s].events {
                    if let (true, Some(a)) = (set.label(e) == name, e.actor) {
                        let t = tr.turns.binary_search(&e.turn).unwrap();
                        sums[s] += tr.swing(t, usize::from(a));
                        counts[s] += 1.0;
                    }
                }
            }
            let stat = |idx: &[usize]| {
                let (mut sw, mut c) = (0.0, 0.0);
                for &g in idx {
                    sw += sums[g];
                    c += counts[g];
                }
                (c > 0.0).then(|| sw / c)
            };
            let alone = percentile_bootstrap(
                traces.len(),
                stat,
                &params.bootstrap,
                &NoProgress,
                &Cancel::new(),
            )
            .unwrap();
            let it = item(&r, ItemKind::Label, name);
            assert_eq!(it.interval, Some(alone.interval), "{name}");
            assert_eq!(it.valid_resamples, alone.valid_resamples, "{name}");
            assert_eq!(it.mean_swing, alone.estimate, "{name}");
        }
    }

    #[test]
    fn event_impact_is_identical_at_one_and_two_threads() {
        let (set, traces) = strike_and_wait();
        let params = EventImpactParams {
            bootstrap: BootstrapParams {
                resamples: 300,
                seed: 11,
                confidence: 0.9,
            },
            ..EventImpactParams::default()
        };
        let run = |threads: usize| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .unwrap()
                .install(|| {
                    event_impact(
                        &refs(&traces),
                        &[&set],
                        &params,
                        &NoProgress,
                        &Cancel::new(),
                    )
                    .unwrap()
                })
        };
        let one = run(1);
        let two = run(2);
        assert_eq!(one, two);
        let bits = |r: &EventImpact| -> Vec<(u64, u64)> {
            r.items
                .iter()
                .filter_map(|i| i.interval)
                .map(|iv| (iv.lo.to_bits(), iv.hi.to_bits()))
                .collect()
        };
        assert_eq!(bits(&one), bits(&two));
    }

    #[test]
    fn cancelled_event_impact_stops_with_an_error() {
        let (set, traces) = strike_and_wait();
        let cancel = Cancel::new();
        cancel.cancel();
        let r = event_impact(
            &refs(&traces),
            &[&set],
            &EventImpactParams::default(),
            &NoProgress,
            &cancel,
        );
        assert!(matches!(r, Err(AnalysisError::Cancelled(_))));
    }

    #[test]
    fn leverage_flags_the_one_turn_with_big_swings_and_only_it() {
        // Synthetic: 30 sessions of 15 turns with small swings (0.01–0.03) except turn 7
        // (±0.15).
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        let plans: Vec<Plan> = (0..30)
            .map(|_| Plan {
                turns: 15,
                winner: Some(0),
                victory: "",
                variant: "",
            })
            .collect();
        let set = set_of(&plans);
        let traces: Vec<Trace> = (0..30)
            .map(|s| {
                let mut p: f64 = 0.5;
                let north: Vec<f64> = (1..=15)
                    .map(|t| {
                        let size = if t == 7 {
                            0.15
                        } else {
                            rng.gen_range(0.01..0.03)
                        };
                        // Move toward the middle so the chance stays well inside (0, 1).
                        p += if p > 0.5 { -size } else { size };
                        p
                    })
                    .collect();
                duel(0, s, &north)
            })
            .collect();
        let table = leverage_by_turn(&refs(&traces), &[&set], &LeverageParams::default()).unwrap();
        assert_eq!(table.quirk_turns, vec![7]);
        // Tango's leverage index has mean 1 over all observations (CHECK_VALUES.md, Tango
        // 2006): every turn holds the same number of observations here, so the plain mean.
        let mean: f64 = table.rows.iter().map(|r| r.leverage).sum::<f64>() / 15.0;
        assert!((mean - 1.0).abs() < 1e-12);
        // With too few sessions nothing is judged.
        let few =
            leverage_by_turn(&refs(&traces[..10]), &[&set], &LeverageParams::default()).unwrap();
        assert!(few.quirk_turns.is_empty());
    }
}
