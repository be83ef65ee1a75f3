//! Benchmark of the `models` module on a synthetic count table (run with
//! `cargo bench --bench models_bench`; options after `--`):
//!
//! * boosted trees: 240k × 200 counts, 200 trees, 31 leaves, learning rate 0.1, no early
//!   stopping, 2 threads; prints seconds and the train / held-out log loss;
//! * logistic regression: 120k × 200, ours and (unless `--skip-smartcore`) smartcore's
//!   LogisticRegression on the same standardised data;
//! * `--dump DIR` also writes the boosted tables for `lightgbm_compare.py`;
//!   `--skip-logistic` / `--skip-boosted` skip a part; `--rows N` changes the boosted rows.

#[path = "synthetic.rs"]
mod synthetic;

use std::path::PathBuf;
use std::time::Instant;

use tellturn::models::{BoostedParams, LogisticParams, Matrix};
use tellturn::progress::{Cancel, NoProgress};

struct Options {
    dump: Option<PathBuf>,
    rows: usize,
    skip_smartcore: bool,
    skip_logistic: bool,
    skip_boosted: bool,
}

fn options() -> Options {
    let mut o = Options {
        dump: None,
        rows: 240_000,
        skip_smartcore: false,
        skip_logistic: false,
        skip_boosted: false,
    };
    let mut args = std::env::args().skip(1);
    while let Some(a) = args.next() {
        match a.as_str() {
            "--dump" => o.dump = args.next().map(PathBuf::from),
            "--rows" => o.rows = args.next().and_then(|v| v.parse().ok()).unwrap_or(o.rows),
            "--skip-smartcore" => o.skip_smartcore = true,
            "--skip-logistic" => o.skip_logistic = true,
            "--skip-boosted" => o.skip_boosted = true,
            _ => {} // cargo passes `--bench`
        }
    }
    o
}

/// CPU seconds used by this process so far (user + system), from /proc; 0 where unavailable.
/// Reported beside wall time because the benchmark machine is shared.
fn cpu_seconds() -> f64 {
    let Ok(stat) = std::fs::read_to_string("/proc/self/stat") else {
        return 0.0;
    };
    let after_name = stat.rsplit(')').next().unwrap_or("");
    let fields: Vec<&str> = after_name.split_whitespace().collect();
    let ticks = |i: usize| {
        fields
            .get(i)
            .and_then(|v| v.parse::<f64>().ok())
            .unwrap_or(0.0)
    };
    // Fields 14 and 15 of the file (utime, stime) are 11 and 12 after the name; 100 ticks/s.
    (ticks(11) + ticks(12)) / 100.0
}

fn log_loss(proba: &[f64], y: &[f32]) -> f64 {
    let eps = 1e-15;
    proba
        .iter()
        .zip(y)
        .map(|(&p, &y)| {
            let p = p.clamp(eps, 1.0 - eps);
            -(f64::from(y) * p.ln() + (1.0 - f64::from(y)) * (1.0 - p).ln())
        })
        .sum::<f64>()
        / y.len() as f64
}

fn matrix(t: &synthetic::CountTable) -> Matrix {
    Matrix::new(t.n_rows, t.n_cols, t.values.clone()).expect("generator shape")
}

fn bench_boosted(o: &Options, pool: &rayon::ThreadPool) {
    let t0 = Instant::now();
    let train = synthetic::count_table(o.rows, 200, 7);
    let test = synthetic::count_table(60_000, 200, 8);
    let zeros = train.values.iter().filter(|&&v| v == 0.0).count() as f64;
    println!(
        "generated {}×{} train + 60000 test rows in {:.2} s ({:.0} % zeros, {:.1} % positive)",
        train.n_rows,
        train.n_cols,
        t0.elapsed().as_secs_f64(),
        100.0 * zeros / train.values.len() as f64,
        100.0 * train.labels.iter().sum::<f32>() as f64 / train.n_rows as f64
    );
    if let Some(dir) = &o.dump {
        synthetic::write_table(&train, dir, "train").expect("write train table");
        synthetic::write_table(&test, dir, "test").expect("write test table");
        println!("wrote tables to {}", dir.display());
    }
    let (x, xt) = (matrix(&train), matrix(&test));
    let params = BoostedParams {
        max_rounds: 200,
        max_leaves: 31,
        learning_rate: 0.1,
        min_rows_per_leaf: 20,
        l2_leaf: 1.0,
        max_bins: 255,
        ..BoostedParams::default()
    };
    let t0 = Instant::now();
    let c0 = cpu_seconds();
    let model = pool.install(|| {
        params
            .fit(&x, &train.labels, None, None, &NoProgress, &Cancel::new())
            .expect("boosted fit")
    });
    let seconds = t0.elapsed().as_secs_f64();
    let cpu = cpu_seconds() - c0;
    let train_loss = log_loss(&model.predict_proba(&x), &train.labels);
    let test_loss = log_loss(&model.predict_proba(&xt), &test.labels);
    println!(
        "boosted: {} trees in {seconds:.3} s wall, {cpu:.2} s CPU (2 threads); log loss train {train_loss:.5} test {test_loss:.5}",
        model.trees.len()
    );
    println!(
        "RESULT {{\"seconds\": {seconds}, \"cpu_seconds\": {cpu}, \"train_logloss\": {train_loss}, \"test_logloss\": {test_loss}}}"
    );
}

fn bench_logistic(o: &Options, pool: &rayon::ThreadPool) {
    let table = synthetic::count_table(120_000, 200, 9);
    let x = matrix(&table);
    let params = LogisticParams::default();
    let t0 = Instant::now();
    let c0 = cpu_seconds();
    let model = pool.install(|| {
        params
            .fit(&x, &table.labels, None, &NoProgress, &Cancel::new())
            .expect("logistic fit")
    });
    let ours = t0.elapsed().as_secs_f64();
    let ours_cpu = cpu_seconds() - c0;
    let loss = log_loss(&model.predict_proba(&x), &table.labels);
    println!(
        "logistic (ours): 120000×200 in {ours:.3} s wall, {ours_cpu:.2} s CPU (2 threads), {} Newton iterations, converged {}, train log loss {loss:.5}",
        model.iterations, model.converged
    );
    if o.skip_smartcore {
        return;
    }
    use smartcore::linalg::basic::arrays::Array;
    use smartcore::linalg::basic::matrix::DenseMatrix;
    use smartcore::linear::logistic_regression::{
        LogisticRegression, LogisticRegressionParameters,
    };
    let (n, p) = (x.n_rows(), x.n_cols());
    let standardised: Vec<f64> = (0..n)
        .flat_map(|i| {
            let row = x.row(i).to_vec();
            let (m, s) = (model.means.clone(), model.scales.clone());
            (0..p).map(move |j| (f64::from(row[j]) - m[j]) / s[j])
        })
        .collect();
    let xs = DenseMatrix::new(n, p, standardised, false).expect("shape");
    let ys: Vec<u32> = table.labels.iter().map(|&v| v as u32).collect();
    let t0 = Instant::now();
    let c0 = cpu_seconds();
    let reference = LogisticRegression::fit(
        &xs,
        &ys,
        LogisticRegressionParameters::default().with_alpha(n as f64 * params.l2),
    )
    .expect("smartcore fit");
    let theirs = t0.elapsed().as_secs_f64();
    let theirs_cpu = cpu_seconds() - c0;
    let max_diff = (0..p)
        .map(|j| (reference.coefficients().get((0, j)) - model.coefficients[j]).abs())
        .fold(0.0f64, f64::max);
    println!(
        "logistic (smartcore 0.4, L-BFGS, single-threaded): {theirs:.3} s wall, {theirs_cpu:.2} s CPU; ratio smartcore/ours wall {:.1}, CPU {:.1}; max |Δ coefficient| {max_diff:.2e}",
        theirs / ours,
        theirs_cpu / ours_cpu.max(1e-9)
    );
}

fn main() {
    let o = options();
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build()
        .expect("thread pool");
    if !o.skip_boosted {
        bench_boosted(&o, &pool);
    }
    if !o.skip_logistic {
        bench_logistic(&o, &pool);
    }
}
