//! Random-play tic-tac-toe: exact chances by enumeration, game generation, and a check of a
//! trained model's held-out chances against the exact values. Shared by tests/tictactoe.rs and
//! the benchmark tests/bench/tictactoe_check.rs.
//!
//! The rules are public domain. With every move uniform over the empty cells, the exact chance
//! that X wins from any position is enumerable; from the empty board it is 737/1260 ≈ 0.58492
//! (rec.puzzles FAQ, confirmed; reproducible by enumeration — see CHECK_VALUES in the design notes).
#![allow(dead_code)]

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::HashMap;

const LINES: [[usize; 3]; 8] = [
    [0, 1, 2],
    [3, 4, 5],
    [6, 7, 8],
    [0, 3, 6],
    [1, 4, 7],
    [2, 5, 8],
    [0, 4, 8],
    [2, 4, 6],
];

pub fn winner(b: &[u8; 9]) -> u8 {
    for l in LINES {
        if b[l[0]] != 0 && b[l[0]] == b[l[1]] && b[l[1]] == b[l[2]] {
            return b[l[0]];
        }
    }
    0
}

/// Exact (P(X wins), P(O wins)) from a position with `to_move` (1 = X, 2 = O) to move, under
/// uniformly random play, by enumeration with memoisation.
pub fn exact(b: [u8; 9], to_move: u8, memo: &mut HashMap<([u8; 9], u8), (f64, f64)>) -> (f64, f64) {
    match winner(&b) {
        1 => return (1.0, 0.0),
        2 => return (0.0, 1.0),
        _ => {}
    }
    let empty: Vec<usize> = (0..9).filter(|&i| b[i] == 0).collect();
    if empty.is_empty() {
        return (0.0, 0.0);
    }
    if let Some(&v) = memo.get(&(b, to_move)) {
        return v;
    }
    let mut acc = (0.0, 0.0);
    for &i in &empty {
        let mut next = b;
        next[i] = to_move;
        let (x, o) = exact(next, 3 - to_move, memo);
        acc.0 += x / empty.len() as f64;
        acc.1 += o / empty.len() as f64;
    }
    memo.insert((b, to_move), acc);
    acc
}

/// One random-play game.
pub struct Game {
    /// Cells in move order (X first).
    pub moves: Vec<usize>,
    /// 1 = X won, 2 = O won, 0 = draw.
    pub result: u8,
}

pub fn play(rng: &mut ChaCha8Rng) -> Game {
    let mut b = [0u8; 9];
    let mut moves = Vec::new();
    let mut to_move = 1u8;
    loop {
        let empty: Vec<usize> = (0..9).filter(|&i| b[i] == 0).collect();
        if empty.is_empty() || winner(&b) != 0 {
            return Game {
                moves,
                result: winner(&b),
            };
        }
        let cell = empty[rng.gen_range(0..empty.len())];
        b[cell] = to_move;
        moves.push(cell);
        to_move = 3 - to_move;
    }
}

/// Outcome of [`check`].
pub struct Check {
    /// Positions scored (held-out games).
    pub positions: usize,
    /// Mean absolute error of the held-out win chances against the exact values.
    pub mae: f64,
    /// The model's chance for X before any move.
    pub empty_board: f64,
    /// The model chosen.
    pub model: String,
}

/// Generate `games` random games, train like any session set, and compare held-out chances
/// (the untouched test share) with the exact values.
pub fn check(games: usize, seed: u64) -> Check {
    use tellturn::analysis::traces::TraceSource;
    use tellturn::evaluate::train::{ModelChoice, TrainOptions, train};
    use tellturn::progress::{Cancel, NoProgress};
    use tellturn::sessions::{EventSource, load_set_from_reader};
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut events = String::from("session,turn,actor,event\n");
    let mut outcomes = String::from("session,winner,first\n");
    let mut played = Vec::new();
    for g in 0..games {
        let game = play(&mut rng);
        for (t, cell) in game.moves.iter().enumerate() {
            let actor = if t % 2 == 0 { "X" } else { "O" };
            events.push_str(&format!("t{g},{},{actor},cell{cell}\n", t + 1));
        }
        let w = match game.result {
            1 => "X",
            2 => "O",
            _ => "draw",
        };
        outcomes.push_str(&format!("t{g},{w},X\n"));
        played.push(game);
    }
    let set = load_set_from_reader(
        events.as_bytes(),
        EventSource::Csv,
        Some(outcomes.as_bytes()),
    );
    assert!(set.is_usable(), "{:?}", set.problems);
    let options = TrainOptions {
        choice: ModelChoice::Boosted,
        cross_fit: false,
        learning_curve: false,
        ..TrainOptions::default()
    };
    let training = train(&[&set], &options, &NoProgress, &Cancel::new()).unwrap();
    let mut memo = HashMap::new();
    let mut errors = Vec::new();
    for t in training
        .traces
        .iter()
        .filter(|t| t.source == TraceSource::Test)
    {
        let id = &set.sessions[t.session].id;
        let g: usize = id[1..].parse().unwrap();
        let mut b = [0u8; 9];
        for (i, cell) in played[g].moves.iter().enumerate() {
            b[*cell] = if i % 2 == 0 { 1 } else { 2 };
            let to_move = if i % 2 == 0 { 2 } else { 1 };
            let (x, o) = exact(b, to_move, &mut memo);
            // Seat 0 is X (it moved first).
            errors.push((t.chance(i, 0) - x).abs());
            errors.push((t.chance(i, 1) - o).abs());
        }
    }
    let (start, _) = training.model.start_chances(2);
    Check {
        positions: errors.len() / 2,
        mae: errors.iter().sum::<f64>() / errors.len() as f64,
        empty_board: start[0],
        model: training.model.summary.choice.clone(),
    }
}
