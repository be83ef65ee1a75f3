//! Vessmire: an invented two-player board game, played here as a simulated playtest.
//!
//! Two lamp-wardens cross the Vessmire fen at night. Each turn both act, the first player and
//! then the second; an action is one of three kinds, and its outcome is tilted by the player's
//! hidden skill (fixed per player across sessions, drawn from the seed), so a skilled player
//! shows it in the rates of good outcomes before the glow score does:
//! - gather glow (the points): `glean` +2, `scrape` +1, `fumble` 0, the rare `wickburn` −1 and
//!   the rare `flare` +3; the `score` column is the actor's glow after such an event;
//! - search for wisp-stones in six colours: `stone_found` (a colour not yet held), `stone_twin`
//!   (one already held, no effect), `stone_miss`, the rare `stone_lost` (drop one) and the rare
//!   `stone_pinch` (take one the rival holds and the actor lacks);
//! - haul the rope of the shared raft: `tow` one step toward one's own landing, the rare `heave`
//!   two, `slack` one step back toward the rival's, `knot` nothing.
//!
//! The brighter lamp helps everywhere: each point of glow lead tilts the leader's stone and rope
//! outcomes a little. Mist hides the stones early, and the fen drains as the night goes on, so
//! searching and hauling grow more frequent with the turn. An action may be followed by a second
//! row with no effect on play (`hum`, `glance`, `lamp_check`).
//!
//! Routes to victory (`victory` in `outcomes.csv`):
//! - `stone_ring`: holding all six colours wins at once;
//! - `raft_home`: the raft reaching one's own landing, [`LANDING`] steps from the middle, wins at
//!   once (the rival's `slack` can bring it home too);
//! - `glow_count`: after turn [`TURN_LIMIT`] the higher glow wins; equal glow is a draw
//!   (`winner` = `draw`, `victory` = `glow_count`).
//!
//! Tempo quirk: on turn [`QUIRK_TURN`] the moon rises (a neutral `moonrise` row) and the first
//! player acts twice before the second player acts; the extra action is a gathering that counts
//! [`MOON_FACTOR`] times (detail `by moonlight`). This gives variant A a first-player advantage
//! (about 59 % of the sessions are won by the first player, 2 % are drawn) and makes that turn
//! matter more than its neighbours.
//!
//! Variant B changes one rule, a catch-up rule: a player trailing by [`CATCH_UP_GAP`] glow or
//! more gains one extra glow on every `glean` and `scrape`. Leads are then less safe, so games are
//! decided later (more of them run to the glow count) and the moonlit head start of the first
//! player mostly melts away (about 53 % first-player wins, 3.5 % draws).
//!
//! Truth: Monte Carlo, [`ROLLOUTS`] rollouts of the rest of the game per (session, turn) from the
//! full state (board and both hidden skills), each with its own stream seeded from
//! (seed, session, turn); exact 1 / 0 once the game is over (0 / 0 for a draw).

use rand::Rng;

use super::rollout_rng::RolloutRng;
use super::{
    DemoOptions, DemoSet, EventRow, Gathered, HiddenSkill, OutcomeRow, SessionRecord, Stream,
    TruthRow, pick, run_sessions, standard_normal, stream_rng, tilted_cumulative,
};
use crate::progress::{Cancel, Cancelled, Progress};

/// The scenario's CLI name.
pub const NAME: &str = "vessmire";

/// The recurring players of the playtest group.
pub const PLAYERS: [&str; 12] = [
    "Orsel", "Tamsik", "Wenlo", "Brisca", "Kettrin", "Dovane", "Ilvy", "Perrad", "Quenna",
    "Halbrek", "Yoret", "Mizzel",
];

/// The spread (standard deviation) of the players' hidden skills.
pub const SKILL_SPREAD: f64 = 0.4;

/// The last turn; after it the glow count decides.
pub const TURN_LIMIT: u32 = 60;

/// The turn on which the moon rises and the first player acts twice.
pub const QUIRK_TURN: u32 = 14;

/// Rollouts per (session, turn) for the truth; a power of two so every estimate prints exactly.
pub const ROLLOUTS: u32 = 256;

/// The moonlit extra gathering of the quirk turn counts this many times.
pub const MOON_FACTOR: i32 = 3;

/// How many wisp-stone colours make a ring.
pub const COLOURS: u32 = 6;

const FULL_RING: u8 = (1 << COLOURS) - 1;

const COLOUR_NAMES: [&str; COLOURS as usize] = ["amber", "teal", "ash", "rose", "moss", "slate"];

// The players' policy: base weights of the three kinds of action and how closeness shifts them.
const POLICY_GLOW: f64 = 0.45;
const POLICY_STONE: f64 = 0.22;
const POLICY_STONE_PER_HELD: f64 = 0.04;
const POLICY_STONE_DEFEND: f64 = 0.12;
const POLICY_ROPE: f64 = 0.18;
const POLICY_ROPE_PUSH: f64 = 0.15;
const POLICY_ROPE_DEFEND: f64 = 0.30;

/// How much each point of glow lead tilts the rope outcomes (the brighter lamp pulls harder).
pub const LEAD_PULL: f64 = 0.03;

/// How much each point of glow lead tilts the stone outcomes (the brighter lamp sees more).
pub const LEAD_SEEK: f64 = 0.03;

/// Glow leads beyond this count as this much for stones and rope.
const LEAD_CAP: i32 = 20;

/// The rule variants.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Variant {
    /// The base rules.
    A,
    /// The one change, a catch-up rule: a player who trails by [`CATCH_UP_GAP`] glow or more
    /// gains one extra glow on every `glean` and `scrape`, so leads are less safe, games are
    /// decided later and the first player's moonlit head start matters less.
    B,
}

/// The glow deficit from which variant B's catch-up rule helps the trailing player.
pub const CATCH_UP_GAP: i32 = 6;

/// Steps from the middle of the rope to either landing.
pub const LANDING: i32 = 7;

impl Variant {
    /// Parse `"A"` or `"B"`.
    pub fn from_label(label: &str) -> Option<Variant> {
        match label {
            "A" => Some(Variant::A),
            "B" => Some(Variant::B),
            _ => None,
        }
    }

    fn label(self) -> &'static str {
        match self {
            Variant::A => "A",
            Variant::B => "B",
        }
    }

    fn id_letter(self) -> char {
        match self {
            Variant::A => 'a',
            Variant::B => 'b',
        }
    }
}

/// Every event label the game logs, in a fixed order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Label {
    Glean,
    Scrape,
    Fumble,
    Wickburn,
    Flare,
    StoneFound,
    StoneTwin,
    StoneMiss,
    StoneLost,
    StonePinch,
    Tow,
    Heave,
    Slack,
    Knot,
    Hum,
    Glance,
    LampCheck,
    Moonrise,
}

impl Label {
    fn as_str(self) -> &'static str {
        match self {
            Label::Glean => "glean",
            Label::Scrape => "scrape",
            Label::Fumble => "fumble",
            Label::Wickburn => "wickburn",
            Label::Flare => "flare",
            Label::StoneFound => "stone_found",
            Label::StoneTwin => "stone_twin",
            Label::StoneMiss => "stone_miss",
            Label::StoneLost => "stone_lost",
            Label::StonePinch => "stone_pinch",
            Label::Tow => "tow",
            Label::Heave => "heave",
            Label::Slack => "slack",
            Label::Knot => "knot",
            Label::Hum => "hum",
            Label::Glance => "glance",
            Label::LampCheck => "lamp_check",
            Label::Moonrise => "moonrise",
        }
    }
}

/// Every event label the game can log.
pub const EVENT_LABELS: [&str; 18] = [
    "glean",
    "scrape",
    "fumble",
    "wickburn",
    "flare",
    "stone_found",
    "stone_twin",
    "stone_miss",
    "stone_lost",
    "stone_pinch",
    "tow",
    "heave",
    "slack",
    "knot",
    "hum",
    "glance",
    "lamp_check",
    "moonrise",
];

/// The routes to victory, as written in `outcomes.csv`.
pub const ROUTES: [&str; 3] = ["glow_count", "stone_ring", "raft_home"];

/// Glow outcomes: (label, glow change, base weight, skill tilt).
const GLOW_OUTCOMES: [(Label, i32, f64, f64); 5] = [
    (Label::Glean, 2, 0.44, 0.42),
    (Label::Scrape, 1, 0.30, 0.0),
    (Label::Fumble, 0, 0.18, -0.42),
    (Label::Wickburn, -1, 0.05, -0.6),
    (Label::Flare, 3, 0.03, 0.6),
];

/// Stone outcomes in order: search (found or twin), miss, lost, pinch.
const STONE_OUTCOMES: [(f64, f64); 4] = [(0.42, 0.6), (0.46, -0.4), (0.07, -0.7), (0.05, 0.7)];

/// Rope outcomes: (label, steps toward one's own landing, base weight, skill tilt).
const ROPE_OUTCOMES: [(Label, i32, f64, f64); 4] = [
    (Label::Tow, 1, 0.50, 0.5),
    (Label::Heave, 2, 0.05, 0.8),
    (Label::Slack, -1, 0.15, -0.6),
    (Label::Knot, 0, 0.30, 0.0),
];

/// A player's outcome tables, fixed by the hidden skill (and, for the rope, the glow lead).
#[derive(Debug, Clone, Copy)]
struct SeatTables {
    glow: [f64; 5],
    /// Stone tables by glow lead, from −[`LEAD_CAP`] to +[`LEAD_CAP`].
    stone: [[f64; 4]; (2 * LEAD_CAP + 1) as usize],
    /// Rope tables by glow lead, from −[`LEAD_CAP`] to +[`LEAD_CAP`].
    rope: [[f64; 4]; (2 * LEAD_CAP + 1) as usize],
}

impl SeatTables {
    fn new(skill: f64) -> Self {
        let rope_base = ROPE_OUTCOMES.map(|(_, _, w, t)| (w, t));
        SeatTables {
            glow: tilted_cumulative(GLOW_OUTCOMES.map(|(_, _, w, t)| (w, t)), skill),
            stone: std::array::from_fn(|k| {
                let lead = k as i32 - LEAD_CAP;
                tilted_cumulative(STONE_OUTCOMES, skill + LEAD_SEEK * f64::from(lead))
            }),
            rope: std::array::from_fn(|k| {
                let lead = k as i32 - LEAD_CAP;
                tilted_cumulative(rope_base, skill + LEAD_PULL * f64::from(lead))
            }),
        }
    }

    fn rope_for(&self, lead: i32) -> &[f64; 4] {
        &self.rope[(lead.clamp(-LEAD_CAP, LEAD_CAP) + LEAD_CAP) as usize]
    }

    fn stone_for(&self, lead: i32) -> &[f64; 4] {
        &self.stone[(lead.clamp(-LEAD_CAP, LEAD_CAP) + LEAD_CAP) as usize]
    }
}

/// How a game ended, by seat (0 = the first player).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Ending {
    Win { seat: usize, route: &'static str },
    Draw,
}

/// The full public state of the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Board {
    glow: [i32; 2],
    stones: [u8; 2],
    /// Raft position on the rope: positive toward seat 0's landing.
    raft: i32,
    ending: Option<Ending>,
}

impl Board {
    fn start() -> Self {
        Board {
            glow: [0, 0],
            stones: [0, 0],
            raft: 0,
            ending: None,
        }
    }
}

/// One action's logged result.
#[derive(Debug, Clone, Copy)]
struct Act {
    label: Label,
    /// The stone colour involved, when any.
    colour: Option<u8>,
}

/// What happened during a turn, in log order.
enum Happening {
    Moonrise,
    Action {
        seat: usize,
        act: Act,
        moonlit: bool,
        after: Board,
    },
}

/// The rules and both seats' hidden skills: everything needed to play on from any board.
struct Game {
    landing: i32,
    catch_up: bool,
    seats: [SeatTables; 2],
}

fn nth_set_bit(mask: u8, n: u32) -> u8 {
    let mut seen = 0;
    for bit in 0..8u8 {
        if mask & (1 << bit) != 0 {
            if seen == n {
                return bit;
            }
            seen += 1;
        }
    }
    0
}

impl Game {
    /// Play one action of `seat`, changing `board`.
    fn act<R: Rng>(
        &self,
        board: &mut Board,
        seat: usize,
        turn: u32,
        moonlit: bool,
        rng: &mut R,
    ) -> Act {
        let rival = 1 - seat;
        let toward = if seat == 0 { 1 } else { -1 };
        let own_raft = board.raft * toward;
        let held = board.stones[seat].count_ones() as f64;
        let rival_held = board.stones[rival].count_ones();
        // The players' plain policy: lean on a route that is close, defend a raft near the
        // rival's landing, and go pinching when the rival is near a ring.
        let w_glow = POLICY_GLOW;
        // Mist hides the stones early in the night; it thins by the middle of the game.
        let mist = (0.35 + 0.65 * f64::from(turn) / f64::from(TURN_LIMIT / 2)).min(1.2);
        let mut w_stone = (POLICY_STONE + POLICY_STONE_PER_HELD * held) * mist;
        // The fen drains as the night goes on, so the raft gets easier to haul.
        let mut w_rope = POLICY_ROPE * f64::from(turn) / f64::from(TURN_LIMIT / 2);
        if own_raft >= self.landing - 2 {
            w_rope += POLICY_ROPE_PUSH;
        }
        if own_raft <= 2 - self.landing {
            w_rope += POLICY_ROPE_DEFEND;
        }
        if rival_held + 2 >= COLOURS {
            w_stone += POLICY_STONE_DEFEND;
        }
        let tables = &self.seats[seat];
        let u: f64 = rng.r#gen::<f64>() * (w_glow + w_stone + w_rope);
        // The moonlit extra action is always a gathering.
        if moonlit || u < w_glow {
            let (label, gain, _, _) = GLOW_OUTCOMES[pick(&tables.glow, rng)];
            let trailing = board.glow[rival] - board.glow[seat] >= CATCH_UP_GAP;
            let bonus = i32::from(
                self.catch_up && trailing && matches!(label, Label::Glean | Label::Scrape),
            );
            board.glow[seat] += (gain + bonus) * if moonlit { MOON_FACTOR } else { 1 };
            Act {
                label,
                colour: None,
            }
        } else if u < w_glow + w_stone {
            let mine = board.stones[seat];
            let lead = board.glow[seat] - board.glow[rival];
            match pick(tables.stone_for(lead), rng) {
                0 => {
                    let colour = rng.gen_range(0..COLOURS) as u8;
                    let label = if mine & (1 << colour) == 0 {
                        board.stones[seat] |= 1 << colour;
                        Label::StoneFound
                    } else {
                        Label::StoneTwin
                    };
                    Act {
                        label,
                        colour: Some(colour),
                    }
                }
                2 if mine != 0 => {
                    let colour = nth_set_bit(mine, rng.gen_range(0..mine.count_ones()));
                    board.stones[seat] &= !(1 << colour);
                    Act {
                        label: Label::StoneLost,
                        colour: Some(colour),
                    }
                }
                3 if board.stones[rival] & !mine != 0 => {
                    let takeable = board.stones[rival] & !mine;
                    let colour = nth_set_bit(takeable, rng.gen_range(0..takeable.count_ones()));
                    board.stones[seat] |= 1 << colour;
                    board.stones[rival] &= !(1 << colour);
                    Act {
                        label: Label::StonePinch,
                        colour: Some(colour),
                    }
                }
                _ => Act {
                    label: Label::StoneMiss,
                    colour: None,
                },
            }
        } else {
            let lead = board.glow[seat] - board.glow[rival];
            let (label, steps, _, _) = ROPE_OUTCOMES[pick(tables.rope_for(lead), rng)];
            board.raft += steps * toward;
            Act {
                label,
                colour: None,
            }
        }
    }

    /// Settle an instant win after `seat` acted.
    fn settle(&self, board: &mut Board, seat: usize) {
        if board.stones[seat] == FULL_RING {
            board.ending = Some(Ending::Win {
                seat,
                route: "stone_ring",
            });
        } else if board.raft >= self.landing {
            board.ending = Some(Ending::Win {
                seat: 0,
                route: "raft_home",
            });
        } else if board.raft <= -self.landing {
            board.ending = Some(Ending::Win {
                seat: 1,
                route: "raft_home",
            });
        }
    }

    /// Play turn `turn` from `board`, reporting each happening to `note` (a no-op in rollouts).
    fn play_turn<R: Rng, F: FnMut(Happening)>(
        &self,
        board: &mut Board,
        turn: u32,
        rng: &mut R,
        mut note: F,
    ) {
        let order: &[(usize, bool)] = if turn == QUIRK_TURN {
            note(Happening::Moonrise);
            &[(0, false), (0, true), (1, false)]
        } else {
            &[(0, false), (1, false)]
        };
        for &(seat, moonlit) in order {
            let act = self.act(board, seat, turn, moonlit, rng);
            self.settle(board, seat);
            note(Happening::Action {
                seat,
                act,
                moonlit,
                after: *board,
            });
            if board.ending.is_some() {
                return;
            }
        }
        if turn >= TURN_LIMIT {
            board.ending = Some(match board.glow[0].cmp(&board.glow[1]) {
                std::cmp::Ordering::Greater => Ending::Win {
                    seat: 0,
                    route: "glow_count",
                },
                std::cmp::Ordering::Less => Ending::Win {
                    seat: 1,
                    route: "glow_count",
                },
                std::cmp::Ordering::Equal => Ending::Draw,
            });
        }
    }

    /// Play on from `board` after turn `turn` to the end; `None` for a draw.
    fn rollout<R: Rng>(&self, mut board: Board, turn: u32, rng: &mut R) -> Option<usize> {
        let mut t = turn;
        while board.ending.is_none() {
            t += 1;
            self.play_turn(&mut board, t, rng, |_| {});
        }
        match board.ending {
            Some(Ending::Win { seat, .. }) => Some(seat),
            _ => None,
        }
    }

    /// Each seat's chance to win from `board` after turn `turn`.
    fn win_chances(&self, board: &Board, turn: u32, rng: &mut RolloutRng) -> [f64; 2] {
        match board.ending {
            Some(Ending::Win { seat, .. }) => {
                let mut p = [0.0; 2];
                p[seat] = 1.0;
                p
            }
            Some(Ending::Draw) => [0.0, 0.0],
            None => {
                let mut wins = [0u32; 2];
                for _ in 0..ROLLOUTS {
                    if let Some(seat) = self.rollout(*board, turn, rng) {
                        wins[seat] += 1;
                    }
                }
                wins.map(|w| f64::from(w) / f64::from(ROLLOUTS))
            }
        }
    }
}

/// The players' hidden skills for a seed.
fn roster(seed: u64) -> [f64; 12] {
    let mut rng = stream_rng(seed, Stream::Roster, 0, 0);
    std::array::from_fn(|_| SKILL_SPREAD * standard_normal(&mut rng))
}

const NOISE_DETAILS: [&str; 4] = ["by the reeds", "under willow", "at the bend", "again"];

/// Turn a happening into a log row (plus an optional no-effect row), with its words.
fn log_rows<R: Rng>(
    happening: &Happening,
    session: &str,
    turn: u32,
    names: [&str; 2],
    landing: i32,
    text: &mut R,
    rows: &mut Vec<EventRow>,
) {
    let row = |actor: &str, label: Label, detail: String, score: Option<f64>| EventRow {
        session: session.to_string(),
        turn,
        actor: actor.to_string(),
        event: label.as_str().to_string(),
        detail,
        score,
    };
    let (seat, act, moonlit, after) = match happening {
        Happening::Moonrise => {
            rows.push(row("", Label::Moonrise, "moon up".to_string(), None));
            return;
        }
        Happening::Action {
            seat,
            act,
            moonlit,
            after,
        } => (*seat, *act, *moonlit, after),
    };
    let colour = act.colour.map(|c| COLOUR_NAMES[c as usize]).unwrap_or("");
    let near_bank = (landing - after.raft.abs()) <= 2;
    // Some words carry information (a colour, a raft near a bank, a ring one short), some none.
    let detail = match act.label {
        _ if moonlit => "by moonlight".to_string(),
        Label::StoneFound if after.stones[seat].count_ones() == COLOURS - 1 => {
            format!("{colour} one short")
        }
        Label::StoneFound | Label::StoneTwin | Label::StoneLost | Label::StonePinch => {
            colour.to_string()
        }
        Label::Tow | Label::Heave | Label::Slack if near_bank => "near bank".to_string(),
        Label::Glean | Label::Scrape | Label::Fumble if text.gen_bool(0.12) => {
            NOISE_DETAILS[text.gen_range(0..NOISE_DETAILS.len())].to_string()
        }
        Label::Flare if text.gen_bool(0.5) => "whole lamp".to_string(),
        Label::Wickburn if text.gen_bool(0.5) => "gust".to_string(),
        _ => String::new(),
    };
    let glow_changed = matches!(
        act.label,
        Label::Glean | Label::Scrape | Label::Wickburn | Label::Flare
    );
    let score = glow_changed.then(|| f64::from(after.glow[seat]));
    rows.push(row(names[seat], act.label, detail, score));
    if after.ending.is_none() && text.gen_bool(0.3) {
        let label = [Label::Hum, Label::Glance, Label::LampCheck][text.gen_range(0..3)];
        let detail = if text.gen_bool(0.2) { "quietly" } else { "" };
        rows.push(row(names[seat], label, detail.to_string(), None));
    }
}

/// Simulate session `index`: its log, its outcome (unless in progress) and its truth.
fn simulate(
    opts: &DemoOptions,
    variant: Variant,
    skills: &[f64; 12],
    index: usize,
    cancel: &Cancel,
) -> Result<SessionRecord, Cancelled> {
    let seed = opts.seed;
    let mut play = stream_rng(seed, Stream::Play, index as u64, 0);
    let mut text = stream_rng(seed, Stream::Text, index as u64, 0);
    let session = format!("f{}{:04}", variant.id_letter(), index + 1);
    let a = play.gen_range(0..PLAYERS.len());
    let b = (a + play.gen_range(1..PLAYERS.len())) % PLAYERS.len();
    let seat_players = if play.gen_bool(0.5) { [a, b] } else { [b, a] };
    let names = seat_players.map(|p| PLAYERS[p]);
    let game = Game {
        landing: LANDING,
        catch_up: variant == Variant::B,
        seats: seat_players.map(|p| SeatTables::new(skills[p])),
    };

    let mut board = Board::start();
    let mut boards = Vec::with_capacity(TURN_LIMIT as usize);
    let mut events = Vec::new();
    let mut turn = 0;
    while board.ending.is_none() {
        turn += 1;
        game.play_turn(&mut board, turn, &mut play, |h| {
            log_rows(
                &h,
                &session,
                turn,
                names,
                game.landing,
                &mut text,
                &mut events,
            )
        });
        boards.push(board);
    }
    let last_turn = turn;

    let (in_progress, kept) = super::kept_turns(opts, index, last_turn, 4);
    events.retain(|e| e.turn <= kept);

    let outcome = (!in_progress).then(|| {
        let (winner, victory) = match board.ending {
            Some(Ending::Win { seat, route }) => (names[seat], route),
            _ => ("draw", "glow_count"),
        };
        OutcomeRow {
            session: session.clone(),
            winner: winner.to_string(),
            victory: victory.to_string(),
            variant: variant.label().to_string(),
            first: names[0].to_string(),
        }
    });

    let mut truth = Vec::new();
    if opts.truth {
        truth.reserve(2 * kept as usize);
        for (t, after) in (1..=kept).zip(&boards) {
            cancel.check()?;
            let mut seeder = stream_rng(seed, Stream::Truth, index as u64, u64::from(t));
            let mut rng = RolloutRng::from_chacha(&mut seeder);
            let p = game.win_chances(after, t, &mut rng);
            for seat in 0..2 {
                truth.push(TruthRow {
                    session: session.clone(),
                    turn: t,
                    actor: names[seat].to_string(),
                    p_true: p[seat],
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

/// Generate a Vessmire playtest set (options already checked).
pub(super) fn generate(
    opts: &DemoOptions,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<DemoSet, Cancelled> {
    // `check()` admits only "A" and "B".
    let variant = Variant::from_label(&opts.variant).unwrap_or(Variant::A);
    let skills = roster(opts.seed);
    let Gathered {
        events,
        outcomes,
        truth,
    } = run_sessions(
        opts.sessions,
        opts.truth,
        "simulating vessmire sessions",
        progress,
        cancel,
        |index| simulate(opts, variant, &skills, index, cancel),
    )?;
    Ok(DemoSet {
        options: opts.clone(),
        events,
        outcomes,
        truth,
        truth_method: format!(
            "Monte Carlo: {ROLLOUTS} rollouts of the rest of the game per (session, turn) from \
             the simulator's full state, hidden skills included, each seeded from (seed, \
             session, turn); exact 1/0 once the game is over"
        ),
        hidden_skills: PLAYERS
            .iter()
            .zip(skills)
            .map(|(name, skill)| HiddenSkill {
                actor: name.to_string(),
                skill,
            })
            .collect(),
    })
}
