//! Tarnsluice: an invented tabletop training exercise, played here as simulated sessions.
//!
//! Caution: these are simulated exercise sessions. Any result drawn from them describes the
//! recorded (here: generated) sessions, not real-world events, and says nothing about how a real
//! flood or a real response would go.
//!
//! A response team, the `Weir Desk`, works through a flood-gate failure at an invented reservoir
//! while a scenario cell, the `Squall Cell`, pushes back. Each turn:
//! 1. the exercise control may inject a development (a neutral row, empty actor):
//!    `inject_seep`, `inject_outage`, `inject_rumour` raise the pressure, `inject_lull` lowers it,
//!    `inject_timecheck` changes nothing;
//! 2. the team loses readiness to the pressure, then either works on its current objective
//!    (`crew_sent` +1 progress, the rare `crew_doubled` +2, `stalled`, the rare `crossed_wires`
//!    −10 readiness, `log_update`) or steadies itself (`brief_out` +8 readiness,
//!    `rest_rotation` +4, `handover_slip` −6, `log_update`); finishing an objective adds an
//!    `objective_met` row;
//! 3. the cell acts: `complication` +2 pressure, the rare `escalation` +4, `hold_back`,
//!    `ease_off` −2, or the rare `curveball` that sets the current objective back 2 steps.
//!
//! Numeric state (`score`): the team's `readiness` (0–100, starts at 60) on its rows, the cell's
//! `pressure` (0–20, starts at 3) on its rows, written whenever it changed since that actor's
//! last written value. The team's hidden competence and the cell's hidden craft (drawn per
//! session, never logged) tilt their outcomes; pressure erodes the team's competence.
//!
//! Outcome: the team wins (`victory` = `all_met`) when its three objectives (`shelter`,
//! `supply_line`, `public_notice`, in that order) are met; the cell wins with `overrun` when the
//! team's readiness reaches 0, or with `<objective>_unmet` (the first objective not met) when
//! turn 36 ends first.
//!
//! Truth: Monte Carlo, [`ROLLOUTS`] rollouts per (session, turn) from the full state (hidden
//! traits included), each seeded from (seed, session, turn); exact 1 / 0 once the session is over.

use rand::Rng;

use super::rollout_rng::RolloutRng;
use super::{
    DemoOptions, DemoSet, EventRow, Gathered, OutcomeRow, SessionRecord, Stream, TruthRow, pick,
    run_sessions, standard_normal, stream_rng, tilted_cumulative,
};
use crate::progress::{Cancel, Cancelled, Progress};

/// The scenario's CLI name.
pub const NAME: &str = "tarnsluice";

/// The response team's actor name.
pub const TEAM: &str = "Weir Desk";

/// The scenario cell's actor name.
pub const CELL: &str = "Squall Cell";

/// The last turn of a session.
pub const TURN_LIMIT: u32 = 36;

/// Rollouts per (session, turn) for the truth; a power of two so every estimate prints exactly.
pub const ROLLOUTS: u32 = 256;

/// The team's objectives, in the order it works on them.
pub const OBJECTIVES: [&str; 3] = ["shelter", "supply_line", "public_notice"];

/// Progress steps each objective needs.
const STEPS_PER_OBJECTIVE: i32 = 5;

/// Spread (standard deviation) of the team's hidden competence, drawn per session.
pub const COMPETENCE_SPREAD: f64 = 0.5;
/// Spread (standard deviation) of the cell's hidden craft, drawn per session.
pub const CRAFT_SPREAD: f64 = 0.4;
/// How much each point of pressure lowers the team's effective competence.
const PRESSURE_FOG: f64 = 0.05;
/// Readiness lost each turn: pressure divided by this.
const DRAIN_DIVISOR: i32 = 5;
/// Below this readiness the team steadies itself more often.
const LOW_READINESS: i32 = 35;
const STEADY_WHEN_LOW: f64 = 0.6;
const STEADY_USUAL: f64 = 0.2;
/// The cell's `ease_off` weight grows by one base weight per this many points of pressure.
const CELL_EASE_SCALE: f64 = 8.0;

const START_READINESS: i32 = 60;
const START_PRESSURE: i32 = 3;
const MAX_PRESSURE: i32 = 20;

/// Every event label the exercise can log.
pub const EVENT_LABELS: [&str; 19] = [
    "inject_seep",
    "inject_outage",
    "inject_rumour",
    "inject_lull",
    "inject_timecheck",
    "crew_sent",
    "crew_doubled",
    "stalled",
    "crossed_wires",
    "log_update",
    "brief_out",
    "rest_rotation",
    "handover_slip",
    "objective_met",
    "complication",
    "escalation",
    "hold_back",
    "ease_off",
    "curveball",
];

/// The outcome routes: the team's one and the cell's failure modes.
pub const ROUTES: [&str; 5] = [
    "all_met",
    "overrun",
    "shelter_unmet",
    "supply_line_unmet",
    "public_notice_unmet",
];

/// Injects: (label, pressure change, chance per turn).
const INJECTS: [(&str, i32, f64); 5] = [
    ("inject_seep", 2, 0.12),
    ("inject_outage", 3, 0.06),
    ("inject_rumour", 1, 0.10),
    ("inject_lull", -2, 0.08),
    ("inject_timecheck", 0, 0.06),
];

/// Work outcomes: (label, progress, readiness change, base weight, competence tilt).
const WORK: [(&str, i32, i32, f64, f64); 5] = [
    ("crew_sent", 1, 0, 0.60, 0.5),
    ("crew_doubled", 2, 0, 0.08, 0.8),
    ("stalled", 0, 0, 0.20, -0.4),
    ("crossed_wires", 0, -10, 0.07, -0.8),
    ("log_update", 0, 0, 0.05, 0.0),
];

/// Steadying outcomes: (label, readiness change, base weight, competence tilt).
const STEADY: [(&str, i32, f64, f64); 4] = [
    ("brief_out", 8, 0.50, 0.5),
    ("rest_rotation", 4, 0.30, 0.0),
    ("handover_slip", -6, 0.15, -0.6),
    ("log_update", 0, 0.05, 0.0),
];

/// Cell outcomes: (label, pressure change, progress set-back, base weight, craft tilt).
const CELL_MOVES: [(&str, i32, i32, f64, f64); 5] = [
    ("complication", 2, 0, 0.30, 0.4),
    ("escalation", 4, 0, 0.05, 0.7),
    ("hold_back", 0, 0, 0.30, 0.0),
    ("ease_off", -2, 0, 0.29, -0.4),
    ("curveball", 0, 2, 0.06, 0.7),
];

/// How a session ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Ending {
    Team,
    Overrun,
    Unmet(usize),
}

/// The full state of the exercise table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Table {
    readiness: i32,
    pressure: i32,
    /// Index of the objective being worked on (3 = all met).
    objective: usize,
    progress: i32,
    ending: Option<Ending>,
}

/// What happened, in log order.
enum Happening {
    Inject(usize),
    Team {
        label: &'static str,
        objective: usize,
    },
    Met(usize),
    Cell {
        label: &'static str,
        objective: usize,
    },
}

const PRESSURE_LEVELS: usize = MAX_PRESSURE as usize + 1;

/// One session's outcome tables, fixed by its hidden traits, by pressure level.
struct Exercise {
    work: [[f64; 5]; PRESSURE_LEVELS],
    steady: [[f64; 4]; PRESSURE_LEVELS],
    cell: [[f64; 5]; PRESSURE_LEVELS],
}

impl Exercise {
    /// Tables for a team of hidden `competence` against a cell of hidden `craft`.
    fn new(competence: f64, craft: f64) -> Self {
        // Pressure clouds the team's judgement ...
        let effective = |level: usize| competence - PRESSURE_FOG * level as f64;
        Exercise {
            work: std::array::from_fn(|level| {
                tilted_cumulative(WORK.map(|(_, _, _, w, t)| (w, t)), effective(level))
            }),
            steady: std::array::from_fn(|level| {
                tilted_cumulative(STEADY.map(|(_, _, w, t)| (w, t)), effective(level))
            }),
            // ... and a cell, told to keep the exercise playable, eases off more under high
            // pressure.
            cell: std::array::from_fn(|level| {
                let ease = 1.0 + level as f64 / CELL_EASE_SCALE;
                let base = CELL_MOVES
                    .map(|(label, _, _, w, t)| (if label == "ease_off" { w * ease } else { w }, t));
                tilted_cumulative(base, craft)
            }),
        }
    }

    /// Play turn `turn` from `table`, reporting each happening to `note` (a no-op in rollouts).
    fn play_turn<R: Rng, F: FnMut(Happening, &Table)>(
        &self,
        table: &mut Table,
        turn: u32,
        rng: &mut R,
        mut note: F,
    ) {
        // 1. Exercise control's inject.
        let u: f64 = rng.r#gen();
        let mut acc = 0.0;
        for (k, (_, pressure, chance)) in INJECTS.iter().enumerate() {
            acc += chance;
            if u < acc {
                table.pressure = (table.pressure + pressure).clamp(0, MAX_PRESSURE);
                note(Happening::Inject(k), table);
                break;
            }
        }

        // 2. The team: pressure wears readiness down and clouds judgement.
        table.readiness -= table.pressure / DRAIN_DIVISOR;
        let level = table.pressure as usize;
        let steady_chance = if table.readiness < LOW_READINESS {
            STEADY_WHEN_LOW
        } else {
            STEADY_USUAL
        };
        let objective = table.objective;
        if rng.r#gen::<f64>() < steady_chance {
            let (label, change, _, _) = STEADY[pick(&self.steady[level], rng)];
            table.readiness = (table.readiness + change).min(100);
            if table.readiness <= 0 {
                table.ending = Some(Ending::Overrun);
            }
            note(Happening::Team { label, objective }, table);
        } else {
            let (label, progress, change, _, _) = WORK[pick(&self.work[level], rng)];
            table.readiness = (table.readiness + change).min(100);
            table.progress += progress;
            let met = table.progress >= STEPS_PER_OBJECTIVE;
            if met {
                table.objective += 1;
                table.progress = 0;
            }
            if table.objective == OBJECTIVES.len() {
                table.ending = Some(Ending::Team);
            } else if table.readiness <= 0 {
                table.ending = Some(Ending::Overrun);
            }
            note(Happening::Team { label, objective }, table);
            if met {
                note(Happening::Met(objective), table);
            }
        }
        if table.ending.is_some() {
            return;
        }

        // 3. The cell.
        let level = table.pressure as usize;
        let (label, pressure, setback, _, _) = CELL_MOVES[pick(&self.cell[level], rng)];
        table.pressure = (table.pressure + pressure).clamp(0, MAX_PRESSURE);
        table.progress = (table.progress - setback).max(0);
        note(
            Happening::Cell {
                label,
                objective: table.objective,
            },
            table,
        );

        if turn >= TURN_LIMIT {
            table.ending = Some(Ending::Unmet(table.objective));
        }
    }

    /// Whether the team wins, playing on from `table` after turn `turn`.
    fn rollout<R: Rng>(&self, mut table: Table, turn: u32, rng: &mut R) -> bool {
        let mut t = turn;
        while table.ending.is_none() {
            t += 1;
            self.play_turn(&mut table, t, rng, |_, _| {});
        }
        table.ending == Some(Ending::Team)
    }

    /// The team's chance to win from `table` after turn `turn`.
    fn team_chance(&self, table: &Table, turn: u32, rng: &mut RolloutRng) -> f64 {
        match table.ending {
            Some(ending) => f64::from(u8::from(ending == Ending::Team)),
            None => {
                let wins = (0..ROLLOUTS)
                    .filter(|_| self.rollout(*table, turn, rng))
                    .count();
                wins as f64 / f64::from(ROLLOUTS)
            }
        }
    }
}

const PLACES: [&str; 4] = ["north gate", "east bank", "pump house", "spillway"];

/// Simulate session `index`: its log, its outcome (unless in progress) and its truth.
fn simulate(opts: &DemoOptions, index: usize, cancel: &Cancel) -> Result<SessionRecord, Cancelled> {
    let seed = opts.seed;
    let mut play = stream_rng(seed, Stream::Play, index as u64, 0);
    let mut text = stream_rng(seed, Stream::Text, index as u64, 0);
    let session = format!("x{:04}", index + 1);
    let competence = COMPETENCE_SPREAD * standard_normal(&mut play);
    let craft = CRAFT_SPREAD * standard_normal(&mut play);
    let exercise = Exercise::new(competence, craft);

    let mut table = Table {
        readiness: START_READINESS,
        pressure: START_PRESSURE,
        objective: 0,
        progress: 0,
        ending: None,
    };
    let mut tables = Vec::with_capacity(TURN_LIMIT as usize);
    let mut events = Vec::new();
    let mut shown = [START_READINESS, START_PRESSURE];
    let mut turn = 0;
    while table.ending.is_none() {
        turn += 1;
        exercise.play_turn(&mut table, turn, &mut play, |h, now| {
            let (actor, label, detail): (&str, &str, String) = match h {
                Happening::Inject(k) => {
                    let place = if text.gen_bool(0.6) {
                        PLACES[text.gen_range(0..PLACES.len())]
                    } else {
                        ""
                    };
                    ("", INJECTS[k].0, place.to_string())
                }
                Happening::Team { label, objective } => {
                    let detail = match label {
                        "crew_sent" | "crew_doubled" => OBJECTIVES[objective].to_string(),
                        "brief_out" if text.gen_bool(0.3) => "all hands".to_string(),
                        _ => String::new(),
                    };
                    (TEAM, label, detail)
                }
                Happening::Met(objective) => (TEAM, "objective_met", OBJECTIVES[objective].into()),
                Happening::Cell { label, objective } => {
                    let detail = match label {
                        "curveball" => OBJECTIVES[objective].to_string(),
                        "complication" if text.gen_bool(0.3) => {
                            PLACES[text.gen_range(0..PLACES.len())].to_string()
                        }
                        _ => String::new(),
                    };
                    (CELL, label, detail)
                }
            };
            // Each actor's state is written whenever it moved since that actor's last value.
            let score = match actor {
                TEAM => {
                    let r = now.readiness.max(0);
                    (r != shown[0]).then(|| {
                        shown[0] = r;
                        f64::from(r)
                    })
                }
                CELL => (now.pressure != shown[1]).then(|| {
                    shown[1] = now.pressure;
                    f64::from(now.pressure)
                }),
                _ => None,
            };
            events.push(EventRow {
                session: session.clone(),
                turn,
                actor: actor.to_string(),
                event: label.to_string(),
                detail,
                score,
            });
        });
        tables.push(table);
    }
    let last_turn = turn;

    let (in_progress, kept) = super::kept_turns(opts, index, last_turn, 3);
    events.retain(|e| e.turn <= kept);

    let outcome = (!in_progress).then(|| {
        let (winner, victory) = match table.ending {
            Some(Ending::Team) => (TEAM, "all_met".to_string()),
            Some(Ending::Overrun) => (CELL, "overrun".to_string()),
            Some(Ending::Unmet(k)) => (CELL, format!("{}_unmet", OBJECTIVES[k])),
            None => (CELL, "overrun".to_string()),
        };
        OutcomeRow {
            session: session.clone(),
            winner: winner.to_string(),
            victory,
            variant: opts.variant.clone(),
            first: TEAM.to_string(),
        }
    });

    let mut truth = Vec::new();
    if opts.truth {
        truth.reserve(2 * kept as usize);
        for (t, after) in (1..=kept).zip(&tables) {
            cancel.check()?;
            let mut seeder = stream_rng(seed, Stream::Truth, index as u64, u64::from(t));
            let mut rng = RolloutRng::from_chacha(&mut seeder);
            let team = exercise.team_chance(after, t, &mut rng);
            for (actor, p_true) in [(TEAM, team), (CELL, 1.0 - team)] {
                truth.push(TruthRow {
                    session: session.clone(),
                    turn: t,
                    actor: actor.to_string(),
                    p_true,
                });
            }
        }
    }
    Ok(SessionRecord {
        events,
        outcome,
        truth,
    })
}

/// Generate a Tarnsluice exercise set (options already checked).
pub(super) fn generate(
    opts: &DemoOptions,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<DemoSet, Cancelled> {
    let Gathered {
        events,
        outcomes,
        truth,
    } = run_sessions(
        opts.sessions,
        opts.truth,
        "simulating tarnsluice sessions",
        progress,
        cancel,
        |index| simulate(opts, index, cancel),
    )?;
    Ok(DemoSet {
        options: opts.clone(),
        events,
        outcomes,
        truth,
        truth_method: format!(
            "Monte Carlo: {ROLLOUTS} rollouts of the rest of the session per (session, turn) from \
             the simulator's full state, hidden traits included, each seeded from (seed, session, \
             turn); exact 1/0 once the session is over"
        ),
        hidden_skills: Vec::new(),
    })
}
