//! A seeded synthetic table shaped like per-turn game features: non-negative counts that are
//! mostly zero early in a game and grow with game progress, a few of which drive a binary
//! outcome through a logistic function plus noise. Shared by the benchmarks and by the dump
//! that the LightGBM comparison reads.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::io::Write;
use std::path::Path;

/// A generated table: row-major counts and 0/1 labels.
pub struct CountTable {
    /// Number of rows.
    pub n_rows: usize,
    /// Number of count columns.
    pub n_cols: usize,
    /// Row-major values.
    pub values: Vec<f32>,
    /// Outcome per row (0 or 1).
    pub labels: Vec<f32>,
}

/// Rows generated per RNG stream, so generation is parallel-safe and reproducible.
const ROWS_PER_STREAM: usize = 4096;

/// A Poisson draw (Knuth's multiplication method for small means, normal approximation
/// above 30).
fn poisson(rng: &mut ChaCha8Rng, mean: f64) -> f32 {
    if mean <= 0.0 {
        return 0.0;
    }
    if mean > 30.0 {
        let u1: f64 = 1.0 - rng.r#gen::<f64>();
        let u2: f64 = rng.r#gen::<f64>();
        let z = (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos();
        return (mean + mean.sqrt() * z).round().max(0.0) as f32;
    }
    let limit = (-mean).exp();
    let mut k = 0u32;
    let mut prod = rng.r#gen::<f64>();
    while prod > limit {
        k += 1;
        prod *= rng.r#gen::<f64>();
    }
    k as f32
}

/// Seed of the column rates, shared by every table so train and test rows match.
const COLUMN_SEED: u64 = 20_240_601;

/// Generates `n_rows × n_cols` counts (`n_cols ≥ 8`) and labels; `seed` draws the rows, the
/// column rates are the same for every seed.
pub fn count_table(n_rows: usize, n_cols: usize, seed: u64) -> CountTable {
    assert!(n_cols >= 8, "the outcome uses the first 8 columns");
    // Column rates: log-uniform base rate and a growth exponent.
    let mut rng = ChaCha8Rng::seed_from_u64(COLUMN_SEED);
    let columns: Vec<(f64, f64)> = (0..n_cols)
        .map(|_| {
            let base = (rng.gen_range(0.02f64.ln()..6.0f64.ln())).exp();
            let growth = rng.gen_range(0.5..2.5);
            (base, growth)
        })
        .collect();
    let mut values = Vec::with_capacity(n_rows * n_cols);
    let mut labels = Vec::with_capacity(n_rows);
    for (stream, lo) in (0..n_rows).step_by(ROWS_PER_STREAM).enumerate() {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        rng.set_stream(stream as u64 + 1);
        for _ in lo..(lo + ROWS_PER_STREAM).min(n_rows) {
            // Game progress: 0 at the first turn, 1 at the last.
            let t: f64 = rng.r#gen();
            let start = values.len();
            for &(base, growth) in &columns {
                values.push(poisson(&mut rng, 3.0 * base * t.powf(growth)));
            }
            let x = |j: usize| f64::from(values[start + j]);
            let noise = {
                let u1: f64 = 1.0 - rng.r#gen::<f64>();
                let u2: f64 = rng.r#gen::<f64>();
                (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
            };
            let logit = 0.5 * (x(0) - x(1))
                + 0.7 * (x(2).ln_1p() - x(3).ln_1p())
                + 0.8 * (f64::from(x(4) >= 2.0) - f64::from(x(5) >= 2.0))
                + 0.4 * t * (x(6) - x(7)).clamp(-3.0, 3.0)
                + 0.5 * noise;
            let p = 1.0 / (1.0 + (-logit).exp());
            labels.push(f32::from(rng.r#gen::<f64>() < p));
        }
    }
    CountTable {
        n_rows,
        n_cols,
        values,
        labels,
    }
}

/// Writes `<name>_x.f32` (row-major little-endian f32), `<name>_y.f32` and
/// `<name>_shape.txt` ("rows cols") into `dir`.
pub fn write_table(table: &CountTable, dir: &Path, name: &str) -> std::io::Result<()> {
    std::fs::create_dir_all(dir)?;
    let mut x = std::io::BufWriter::new(std::fs::File::create(dir.join(format!("{name}_x.f32")))?);
    for v in &table.values {
        x.write_all(&v.to_le_bytes())?;
    }
    x.flush()?;
    let mut y = std::io::BufWriter::new(std::fs::File::create(dir.join(format!("{name}_y.f32")))?);
    for v in &table.labels {
        y.write_all(&v.to_le_bytes())?;
    }
    y.flush()?;
    std::fs::write(
        dir.join(format!("{name}_shape.txt")),
        format!("{} {}\n", table.n_rows, table.n_cols),
    )
}
