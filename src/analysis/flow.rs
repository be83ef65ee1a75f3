//! Game-flow measures of one session: surprise, suspense, excitement and lead changes.
//!
//! Surprise and suspense follow Ely, Frankel & Kamenica (2015), "Suspense and Surprise",
//! J. Political Economy 123:215-260. The definitions here are written from memory, not from
//! the paper's text: surprise is the size of the belief change across each turn, suspense the
//! size of the change that was to be expected before the turn, both summed over the session.
//! EFK allow a general distance between beliefs; this module uses the Euclidean distance
//! between the outcome vectors (each actor's win chance and the draw chance).
//!
//! A trace shows only the path that happened, not the spread of paths that could have, so the
//! expected change before a turn is a plug-in estimate: the mean observed change over all
//! turns (of the traces given, in the same session set) whose leader held a win chance in the
//! same tenth of [0, 1] before the turn. By construction a set's summed suspense equals its
//! summed surprise; sessions differ in how their suspense is spread.
//!
//! Excitement is Σ|swing| (common practice, no formal source), averaged over actors.
//!
//! The per-trace functions expect a well-formed trace (as [`super::joined::join`] checks);
//! [`flow_measures`] checks first.

use serde::Serialize;

use super::error::AnalysisError;
use super::joined::join;
use super::traces::Trace;
use crate::sessions::SessionSet;

/// Number of bins of the leader's chance used by the suspense plug-in (tenths of [0, 1]).
pub const SUSPENSE_BINS: usize = 10;

/// The chance of a draw after turn index `t` (zero when the trace holds no draw chances).
pub fn draw_after(trace: &Trace, t: usize) -> f64 {
    trace.draw.get(t).copied().unwrap_or(0.0)
}

/// The chance of a draw before turn index `t`: after `t − 1`, and before the first turn what
/// the start chances leave over (zero when they sum to 1).
pub fn draw_before(trace: &Trace, t: usize) -> f64 {
    if t == 0 {
        (1.0 - trace.start.iter().sum::<f64>()).clamp(0.0, 1.0)
    } else {
        draw_after(trace, t - 1)
    }
}

/// Euclidean size of the belief change across turn index `t`: the length of the change of
/// the vector (chance of each actor, chance of a draw).
pub fn belief_change(trace: &Trace, t: usize) -> f64 {
    let mut sq = 0.0;
    for a in 0..trace.actors {
        let d = trace.swing(t, a);
        sq += d * d;
    }
    let d = draw_after(trace, t) - draw_before(trace, t);
    (sq + d * d).sqrt()
}

/// Excitement: Σ over turns and actors of |swing|, divided by the number of actors.
///
/// With two actors and no draws both actors' swings have the same size, so this equals the
/// usual Σ_t |ΔWP_t| of one side. Zero for an empty trace.
pub fn excitement(trace: &Trace) -> f64 {
    if trace.actors == 0 {
        return 0.0;
    }
    let total: f64 = (0..trace.len())
        .flat_map(|t| (0..trace.actors).map(move |a| (t, a)))
        .map(|(t, a)| trace.swing(t, a).abs())
        .sum();
    total / trace.actors as f64
}

/// Surprise: Σ over turns of [`belief_change`].
pub fn surprise(trace: &Trace) -> f64 {
    (0..trace.len()).map(|t| belief_change(trace, t)).sum()
}

/// The single actor with the highest chance in `chances`, or `None` on a tie for the top.
fn strict_leader(chances: impl Iterator<Item = f64>) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    let mut tied = false;
    for (a, c) in chances.enumerate() {
        match best {
            None => best = Some((a, c)),
            Some((_, b)) if c > b => {
                best = Some((a, c));
                tied = false;
            }
            Some((_, b)) if c == b => tied = true,
            _ => {}
        }
    }
    if tied { None } else { best.map(|(a, _)| a) }
}

/// Lead changes: turns after which the favourite differs from the favourite before the turn,
/// starting from the start chances.
///
/// The favourite is the single actor with the highest chance. An exact tie at the top names
/// no favourite and keeps the last one, so an even start (0.5, 0.5) followed by a lead is not
/// a change, and neither is a lead that dips to a tie and returns.
pub fn lead_changes(trace: &Trace) -> usize {
    let mut leader = strict_leader(trace.start.iter().copied());
    let mut changes = 0;
    for t in 0..trace.len() {
        if let Some(now) = strict_leader((0..trace.actors).map(|a| trace.chance(t, a))) {
            if leader.is_some_and(|l| l != now) {
                changes += 1;
            }
            leader = Some(now);
        }
    }
    changes
}

/// The leader's chance before turn index `t` (the highest of the actors' chances).
pub fn leader_chance_before(trace: &Trace, t: usize) -> f64 {
    (0..trace.actors)
        .map(|a| trace.before(t, a))
        .fold(0.0, f64::max)
}

fn bin_of(chance: f64) -> usize {
    ((chance * SUSPENSE_BINS as f64) as usize).min(SUSPENSE_BINS - 1)
}

/// The plug-in table of expected belief change for one session set.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SuspenseBins {
    /// The set index.
    pub set: usize,
    /// Mean observed belief change per bin of the leader's chance before the turn
    /// (bin k holds chances in [k/10, (k+1)/10), the last bin includes 1); `None` when empty.
    pub mean_change: Vec<Option<f64>>,
    /// Turns in each bin.
    pub turns: Vec<usize>,
}

/// Expected belief change by the leader's chance, per session set: the suspense plug-in.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SuspenseTable {
    /// One entry per set that has traces, by set index.
    pub sets: Vec<SuspenseBins>,
}

impl SuspenseTable {
    /// Build the table from the traces given (their turns are the only evidence used).
    pub fn build(traces: &[&Trace]) -> SuspenseTable {
        let mut sums: std::collections::BTreeMap<
            usize,
            ([f64; SUSPENSE_BINS], [usize; SUSPENSE_BINS]),
        > = Default::default();
        for trace in traces {
            let (sum, count) = sums.entry(trace.set).or_default();
            for t in 0..trace.len() {
                let b = bin_of(leader_chance_before(trace, t));
                sum[b] += belief_change(trace, t);
                count[b] += 1;
            }
        }
        let sets = sums
            .into_iter()
            .map(|(set, (sum, count))| SuspenseBins {
                set,
                mean_change: (0..SUSPENSE_BINS)
                    .map(|b| (count[b] > 0).then(|| sum[b] / count[b] as f64))
                    .collect(),
                turns: count.to_vec(),
            })
            .collect();
        SuspenseTable { sets }
    }

    /// The expected belief change before a turn whose leader holds `leader_chance`, in
    /// `set`; zero when the table has no turn of that set and bin.
    pub fn expected_change(&self, set: usize, leader_chance: f64) -> f64 {
        self.sets
            .binary_search_by_key(&set, |s| s.set)
            .ok()
            .and_then(|i| self.sets[i].mean_change[bin_of(leader_chance)])
            .unwrap_or(0.0)
    }
}

/// Suspense: Σ over turns of the expected belief change before the turn, read from `table`.
pub fn suspense(trace: &Trace, table: &SuspenseTable) -> f64 {
    (0..trace.len())
        .map(|t| table.expected_change(trace.set, leader_chance_before(trace, t)))
        .sum()
}

/// The game-flow measures of one session.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SessionFlow {
    /// The set index.
    pub set: usize,
    /// The session index in its set.
    pub session: usize,
    /// Σ of Euclidean belief changes ([`surprise`]).
    pub surprise: f64,
    /// Σ of expected belief changes ([`suspense`]).
    pub suspense: f64,
    /// Σ|swing| over turns and actors, divided by the actors ([`excitement`]).
    pub excitement: f64,
    /// Changes of the favourite ([`lead_changes`]).
    pub lead_changes: usize,
}

/// Flow measures of every trace, in the order given; the suspense plug-in is built from the
/// same traces. Errors when a trace does not fit its session (see [`join`]).
pub fn flow_measures(
    traces: &[&Trace],
    sets: &[&SessionSet],
) -> Result<Vec<SessionFlow>, AnalysisError> {
    join(traces, sets)?;
    let table = SuspenseTable::build(traces);
    Ok(traces.iter().map(|t| session_flow(t, &table)).collect())
}

/// Flow measures of one trace with a given suspense table.
pub fn session_flow(trace: &Trace, table: &SuspenseTable) -> SessionFlow {
    SessionFlow {
        set: trace.set,
        session: trace.session,
        surprise: surprise(trace),
        suspense: suspense(trace, table),
        excitement: excitement(trace),
        lead_changes: lead_changes(trace),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::testkit::{duel, trace};

    #[test]
    fn surprise_is_the_euclidean_change_of_the_outcome_vector_including_draws() {
        // Hand-computed: start (0.4, 0.4) leaves a draw chance of 0.2. Turn 1 → (0.5, 0.3),
        // draw 0.2: change (0.1, −0.1, 0) of length √0.02. Turn 2 → (0.6, 0.1), draw 0.3:
        // change (0.1, −0.2, 0.1) of length √0.06.
        let mut t = trace(0, 0, &[0.4, 0.4], &[vec![0.5, 0.3], vec![0.6, 0.1]]);
        t.draw = vec![0.2, 0.3];
        assert!((draw_before(&t, 0) - 0.2).abs() < 1e-12);
        assert!((surprise(&t) - (0.02f64.sqrt() + 0.06f64.sqrt())).abs() < 1e-12);
        // Excitement ignores the draw: (|0.1| + |−0.1| + |0.1| + |−0.2|) / 2 actors = 0.25.
        assert!((excitement(&t) - 0.25).abs() < 1e-12);
    }

    #[test]
    fn suspense_uses_the_mean_change_of_turns_with_the_same_leader_chance() {
        // Hand-computed. A: north 0.7, 0.9 → turn 1 from a leader at 0.5 (bin 5) changes by
        // √2·0.2, turn 2 from 0.7 (bin 7) by √2·0.2. B: north 0.5, 0.8 → both turns start
        // from a leader at 0.5 (bin 5), changes 0 and √2·0.3. Bin 5 mean √2·0.5/3, bin 7
        // √2·0.2.
        let a = duel(0, 0, &[0.7, 0.9]);
        let b = duel(0, 1, &[0.5, 0.8]);
        let other_set = duel(1, 0, &[0.99, 0.01]);
        let table = SuspenseTable::build(&[&a, &b, &other_set]);
        let r2 = 2f64.sqrt();
        assert!((suspense(&a, &table) - (r2 * 0.5 / 3.0 + r2 * 0.2)).abs() < 1e-12);
        assert!((suspense(&b, &table) - 2.0 * r2 * 0.5 / 3.0).abs() < 1e-12);
        // The plug-in makes a set's summed suspense equal its summed surprise.
        let total_surprise = surprise(&a) + surprise(&b);
        let total_suspense = suspense(&a, &table) + suspense(&b, &table);
        assert!((total_surprise - total_suspense).abs() < 1e-12);
        assert_eq!(table.sets[0].turns[5], 3);
        assert_eq!(table.sets[0].turns[7], 1);
    }

    #[test]
    fn lead_changes_count_changes_of_the_single_favourite() {
        // Three actors, hand-counted: start favourite 0; after turns 0, 1 (change), tie of 1
        // and 2 (kept: 1), 2 (change), 2 → 2 changes.
        let rows = vec![
            vec![0.5, 0.3, 0.2],
            vec![0.3, 0.5, 0.2],
            vec![0.2, 0.4, 0.4],
            vec![0.2, 0.3, 0.5],
            vec![0.1, 0.2, 0.7],
        ];
        let t = trace(0, 0, &[0.4, 0.3, 0.3], &rows);
        assert_eq!(lead_changes(&t), 2);
        assert_eq!(lead_changes(&duel(0, 0, &[])), 0);
    }
}
