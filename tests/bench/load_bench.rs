//! Loading speed: `load_set` on a 1 M-row events file against a bare csv-crate pass over the same
//! bytes (the reference: reading every record and nothing else), measured in the same run.
//! Run: `cargo bench --bench load_bench` (optionally `-- ROWS`).

use std::time::Instant;
use tellturn::demo::{DemoOptions, Scenario, generate, write_set};
use tellturn::progress::{Cancel, NoProgress};

fn main() {
    let rows: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(1_000_000);
    let dir = std::env::temp_dir().join(format!("tellturn-load-bench-{}", std::process::id()));
    // About 137 event rows per board-game session.
    let sessions = rows / 137 + 1;
    let opts = DemoOptions {
        sessions,
        seed: 5,
        ..DemoOptions::for_scenario(Scenario::BoardGame)
    };
    let set = generate(&opts, &NoProgress, &Cancel::new()).expect("demo");
    write_set(&set, &dir).expect("write");
    let events = dir.join("events.csv");
    let bytes = std::fs::metadata(&events).map(|m| m.len()).unwrap_or(0);

    let mut best_ref = f64::INFINITY;
    let mut best_load = f64::INFINITY;
    let mut loaded_rows = 0;
    for _ in 0..3 {
        let t0 = Instant::now();
        let mut rdr = csv::ReaderBuilder::new().from_path(&events).unwrap();
        let mut rec = csv::ByteRecord::new();
        let mut n = 0u64;
        while rdr.read_byte_record(&mut rec).unwrap() {
            n += rec.len() as u64;
        }
        std::hint::black_box(n);
        best_ref = best_ref.min(t0.elapsed().as_secs_f64());
        let t0 = Instant::now();
        let s = tellturn::sessions::load_set(&dir);
        best_load = best_load.min(t0.elapsed().as_secs_f64());
        loaded_rows = s.event_rows;
    }
    println!(
        "load_set: {loaded_rows} event rows ({:.1} MB) in {best_load:.3} s ({:.1} MB/s); bare csv pass {best_ref:.3} s; ratio {:.2}× the csv crate alone",
        bytes as f64 / 1e6,
        bytes as f64 / 1e6 / best_load,
        best_load / best_ref
    );
    let _ = std::fs::remove_dir_all(&dir);
}
