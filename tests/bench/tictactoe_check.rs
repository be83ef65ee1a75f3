//! The full-size tic-tac-toe check: 100,000 random-play games, tellturn's own boosted trees,
//! held-out chances against exact enumeration (bar: mean absolute error ≤ 0.02, empty board
//! 737/1260 — rec.puzzles FAQ). Run: `cargo bench --bench tictactoe_check`.

#[path = "../common/tictactoe.rs"]
mod tictactoe;

fn main() {
    let games: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(100_000);
    let t0 = std::time::Instant::now();
    let c = tictactoe::check(games, 2026);
    println!(
        "tic-tac-toe check: {games} games, {} held-out positions, MAE {:.4} (bar 0.02), empty board {:.4} (exact {:.4}), {:.1} s\n  {}",
        c.positions,
        c.mae,
        c.empty_board,
        737.0 / 1260.0,
        t0.elapsed().as_secs_f64(),
        c.model
    );
}
