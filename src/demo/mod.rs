//! Demo session sets: invented simulators that write session sets with ground truth.
//!
//! Tests, benchmarks and the bundled samples need session logs whose true win chances are known.
//! Each scenario here is a simulator of our own; it plays sessions, logs them in the session-set
//! format (`events.csv`, `outcomes.csv`) and, on request, records `truth.csv`: for every session,
//! turn and actor, the chance that the actor wins given the simulator's full state after that
//! turn (hidden skills included).
//!
//! - [`Scenario::BoardGame`] (CLI name `vessmire`): a two-player board-game playtest, see
//!   [`vessmire`].
//! - [`Scenario::Exercise`] (CLI name `tarnsluice`): a tabletop training exercise, see
//!   [`tarnsluice`].
//!
//! Determinism: every session is simulated with its own random stream seeded from
//! `(seed, session index)`, and every truth estimate with its own stream seeded from
//! `(seed, session index, turn)`; rows are gathered in session order. The same options therefore
//! give byte-identical files at any rayon thread count.

mod rollout_rng;
pub mod tarnsluice;
pub mod vessmire;
mod write;

use std::sync::atomic::{AtomicUsize, Ordering};

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::progress::{Cancel, Cancelled, Progress};

pub use write::{EVENTS_HEADER, OUTCOMES_HEADER, TRUTH_HEADER, write_set};

/// The most sessions one demo set may hold; far beyond any sample, it only guards memory.
pub const MAX_SESSIONS: usize = 1_000_000;

/// Which invented simulator to run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Scenario {
    /// Vessmire: a two-player board-game playtest with a recurring pool of players.
    BoardGame,
    /// Tarnsluice: a tabletop flood-response training exercise, a team against a scenario cell.
    /// Results drawn from it describe the recorded (simulated) sessions, not real-world events.
    Exercise,
}

impl Scenario {
    /// Every scenario, in the order the CLI lists them.
    pub const ALL: [Scenario; 2] = [Scenario::BoardGame, Scenario::Exercise];

    /// The scenario's CLI name.
    pub fn name(self) -> &'static str {
        match self {
            Scenario::BoardGame => vessmire::NAME,
            Scenario::Exercise => tarnsluice::NAME,
        }
    }

    /// The CLI names of every scenario.
    pub fn names() -> &'static [&'static str] {
        &[vessmire::NAME, tarnsluice::NAME]
    }

    /// Look a scenario up by its CLI name (case-insensitive, surrounding spaces ignored).
    pub fn from_name(name: &str) -> Result<Scenario, DemoError> {
        let wanted = name.trim();
        Scenario::ALL
            .into_iter()
            .find(|s| s.name().eq_ignore_ascii_case(wanted))
            .ok_or_else(|| DemoError::UnknownScenario {
                name: name.to_string(),
                known: Scenario::names().join(", "),
            })
    }

    /// The rule variants this scenario knows.
    pub fn variants(self) -> &'static [&'static str] {
        match self {
            Scenario::BoardGame => &["A", "B"],
            Scenario::Exercise => &["A"],
        }
    }
}

/// What to generate: which scenario, which rule variant, how many sessions, and whether to
/// record the ground truth.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct DemoOptions {
    /// Which simulator to run.
    pub scenario: Scenario,
    /// Rule variant: `"A"` or `"B"` for the board game, `"A"` for the exercise.
    pub variant: String,
    /// Sessions in the set, the unfinished ones included.
    pub sessions: usize,
    /// Seed of everything random: player skills, sessions and truth rollouts.
    pub seed: u64,
    /// Whether to compute `truth.csv` (Monte Carlo, much slower than the sessions alone).
    pub truth: bool,
    /// How many of the sessions (the last ones) are still being played: their log is cut at a
    /// random turn and they get no outcome row.
    pub in_progress: usize,
}

impl DemoOptions {
    /// The defaults for a scenario: 600 finished variant-A playtests for the board game; one
    /// exercise weekend (16 finished sessions and 1 in progress) for the exercise. Seed 1, no
    /// truth.
    pub fn for_scenario(scenario: Scenario) -> Self {
        let (sessions, in_progress) = match scenario {
            Scenario::BoardGame => (600, 0),
            Scenario::Exercise => (17, 1),
        };
        DemoOptions {
            scenario,
            variant: "A".to_string(),
            sessions,
            seed: 1,
            truth: false,
            in_progress,
        }
    }

    /// Check the options, with a precise error for the first thing wrong.
    pub fn check(&self) -> Result<(), DemoError> {
        let known = self.scenario.variants();
        if !known.contains(&self.variant.as_str()) {
            return Err(DemoError::UnknownVariant {
                scenario: self.scenario.name(),
                variant: self.variant.clone(),
                known: known.join(", "),
            });
        }
        if self.sessions == 0 {
            return Err(DemoError::NoSessions);
        }
        if self.sessions > MAX_SESSIONS {
            return Err(DemoError::TooManySessions {
                sessions: self.sessions,
                max: MAX_SESSIONS,
            });
        }
        if self.in_progress > self.sessions {
            return Err(DemoError::TooManyInProgress {
                in_progress: self.in_progress,
                sessions: self.sessions,
            });
        }
        Ok(())
    }
}

impl Default for DemoOptions {
    /// The board game's defaults (see [`DemoOptions::for_scenario`]).
    fn default() -> Self {
        DemoOptions::for_scenario(Scenario::BoardGame)
    }
}

/// Why a demo set could not be made.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum DemoError {
    /// No scenario has this CLI name.
    #[error("unknown demo scenario '{name}'; known scenarios: {known}")]
    UnknownScenario {
        /// The name asked for.
        name: String,
        /// The known names, comma-separated.
        known: String,
    },
    /// The scenario has no such rule variant.
    #[error("scenario '{scenario}' has no rule variant '{variant}'; known variants: {known}")]
    UnknownVariant {
        /// The scenario's CLI name.
        scenario: &'static str,
        /// The variant asked for.
        variant: String,
        /// The known variants, comma-separated.
        known: String,
    },
    /// Zero sessions were asked for.
    #[error("a demo set needs at least one session")]
    NoSessions,
    /// More sessions than [`MAX_SESSIONS`] were asked for.
    #[error("{sessions} sessions asked for; a demo set holds at most {max}")]
    TooManySessions {
        /// Sessions asked for.
        sessions: usize,
        /// The limit.
        max: usize,
    },
    /// More unfinished sessions than sessions.
    #[error("{in_progress} sessions in progress asked for, but the set has only {sessions}")]
    TooManyInProgress {
        /// Unfinished sessions asked for.
        in_progress: usize,
        /// Sessions in the set.
        sessions: usize,
    },
    /// The work was cancelled.
    #[error(transparent)]
    Cancelled(#[from] Cancelled),
}

/// One logged event: a row of `events.csv`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EventRow {
    /// Session id.
    pub session: String,
    /// The log's turn counter, from 1.
    pub turn: u32,
    /// Who acted; empty for a neutral event.
    pub actor: String,
    /// The event label.
    pub event: String,
    /// A few words of free text, often empty.
    pub detail: String,
    /// The actor's numeric state after the event; `None` when the event left it unchanged.
    pub score: Option<f64>,
}

/// How a finished session ended: a row of `outcomes.csv`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct OutcomeRow {
    /// Session id.
    pub session: String,
    /// The winning actor, or `draw`.
    pub winner: String,
    /// The route to victory (or the failure mode).
    pub victory: String,
    /// The rule variant played.
    pub variant: String,
    /// The actor who moved first.
    pub first: String,
}

/// One ground-truth win chance: a row of `truth.csv`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TruthRow {
    /// Session id.
    pub session: String,
    /// Turn after whose events the chance holds.
    pub turn: u32,
    /// The actor.
    pub actor: String,
    /// The chance that the actor wins, from the simulator's full state.
    pub p_true: f64,
}

/// A hidden trait of a recurring actor, known to the simulator and never logged.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HiddenSkill {
    /// The actor.
    pub actor: String,
    /// The skill: 0 is average; each unit tilts the log-odds of good outcomes by about one.
    pub skill: f64,
}

/// A generated session set, held in memory.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoSet {
    /// The options it was made with.
    pub options: DemoOptions,
    /// Every event, session by session, in turn order.
    pub events: Vec<EventRow>,
    /// One row per finished session.
    pub outcomes: Vec<OutcomeRow>,
    /// The ground truth, when it was asked for.
    pub truth: Option<Vec<TruthRow>>,
    /// How the truth was computed (for reports and file notes).
    pub truth_method: String,
    /// The recurring actors' hidden skills (the board game's player pool; empty for the exercise).
    pub hidden_skills: Vec<HiddenSkill>,
}

/// Generate a demo set. Sessions run in parallel; the result depends only on `opts`.
pub fn generate(
    opts: &DemoOptions,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<DemoSet, DemoError> {
    opts.check()?;
    let set = match opts.scenario {
        Scenario::BoardGame => vessmire::generate(opts, progress, cancel)?,
        Scenario::Exercise => tarnsluice::generate(opts, progress, cancel)?,
    };
    Ok(set)
}

/// What one simulated session contributes to a set.
pub(crate) struct SessionRecord {
    /// Its events, in order.
    pub events: Vec<EventRow>,
    /// Its outcome, `None` while in progress.
    pub outcome: Option<OutcomeRow>,
    /// Its truth rows (empty without truth).
    pub truth: Vec<TruthRow>,
}

/// Every session's rows, gathered in session order.
pub(crate) struct Gathered {
    /// All events.
    pub events: Vec<EventRow>,
    /// All outcomes of finished sessions.
    pub outcomes: Vec<OutcomeRow>,
    /// All truth rows, when asked for.
    pub truth: Option<Vec<TruthRow>>,
}

/// Run `simulate` for every session index in parallel and gather the rows in session order,
/// so scheduling never changes the result.
pub(crate) fn run_sessions<F>(
    sessions: usize,
    with_truth: bool,
    stage: &str,
    progress: &dyn Progress,
    cancel: &Cancel,
    simulate: F,
) -> Result<Gathered, Cancelled>
where
    F: Fn(usize) -> Result<SessionRecord, Cancelled> + Sync,
{
    let done = AtomicUsize::new(0);
    progress.report(stage, 0.0);
    let records: Vec<SessionRecord> = (0..sessions)
        .into_par_iter()
        .map(|index| {
            cancel.check()?;
            let record = simulate(index)?;
            let finished = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress.report(stage, finished as f64 / sessions as f64);
            Ok(record)
        })
        .collect::<Result<_, Cancelled>>()?;
    let mut events = Vec::with_capacity(records.iter().map(|r| r.events.len()).sum());
    let mut outcomes = Vec::with_capacity(records.len());
    let mut truth = Vec::with_capacity(records.iter().map(|r| r.truth.len()).sum());
    for record in records {
        events.extend(record.events);
        outcomes.extend(record.outcome);
        truth.extend(record.truth);
    }
    Ok(Gathered {
        events,
        outcomes,
        truth: with_truth.then_some(truth),
    })
}

/// Independent random streams of one set, so that e.g. truth rollouts never shift the sessions.
#[derive(Debug, Clone, Copy)]
#[repr(u64)]
pub(crate) enum Stream {
    /// The recurring actors' hidden skills.
    Roster = 0x5249_0001,
    /// The game's own randomness in one session.
    Play = 0x5249_0002,
    /// Free-text details and no-effect rows (never consulted by the rules).
    Text = 0x5249_0003,
    /// Where an unfinished session's log is cut.
    Cut = 0x5249_0004,
    /// Truth rollouts after one turn.
    Truth = 0x5249_0005,
}

/// SplitMix64's finaliser: a fixed, well-mixed 64-bit hash step.
fn mix64(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A random stream seeded from the set seed, a stream tag and up to two indices.
pub(crate) fn stream_rng(seed: u64, stream: Stream, index: u64, sub: u64) -> ChaCha8Rng {
    let mut h = mix64(seed);
    h = mix64(h ^ stream as u64);
    h = mix64(h ^ index);
    h = mix64(h ^ sub);
    ChaCha8Rng::seed_from_u64(h)
}

/// Cumulative probabilities for outcomes whose base weights are tilted by a skill:
/// weight_k · exp(tilt_k · skill), normalised. Positive tilt = a good outcome.
pub(crate) fn tilted_cumulative<const N: usize>(base: [(f64, f64); N], skill: f64) -> [f64; N] {
    let mut out = [0.0; N];
    let mut total = 0.0;
    for (k, (weight, tilt)) in base.into_iter().enumerate() {
        total += weight * (tilt * skill).exp();
        out[k] = total;
    }
    for c in &mut out {
        *c /= total;
    }
    // Rounding must never leave the last bucket unreachable.
    out[N - 1] = 1.0;
    out
}

/// Pick an index from a cumulative table with one uniform draw.
pub(crate) fn pick<const N: usize, R: rand::Rng>(table: &[f64; N], rng: &mut R) -> usize {
    let u: f64 = rng.r#gen();
    table.iter().position(|&c| u < c).unwrap_or(N - 1)
}

/// A standard normal draw (Box-Muller), so no distribution crate is needed.
pub(crate) fn standard_normal<R: rand::Rng>(rng: &mut R) -> f64 {
    let u1: f64 = 1.0 - rng.r#gen::<f64>();
    let u2: f64 = rng.r#gen();
    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
}

#[cfg(test)]
mod tests;

/// The last turn kept of session `index`: the whole log for finished sessions; for the last
/// `opts.in_progress` sessions (still being played), a seeded cut between
/// `last_turn / earliest_part` and the end.
pub(crate) fn kept_turns(
    opts: &DemoOptions,
    index: usize,
    last_turn: u32,
    earliest_part: u32,
) -> (bool, u32) {
    use rand::Rng;
    let in_progress = index >= opts.sessions - opts.in_progress;
    let kept = if in_progress && last_turn >= 2 {
        let mut cut = stream_rng(opts.seed, Stream::Cut, index as u64, 0);
        cut.gen_range((last_turn / earliest_part).max(1)..last_turn)
    } else {
        last_turn
    };
    (in_progress, kept)
}
