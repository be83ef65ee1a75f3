//! Results depend only on the sessions and the seed: not on the order sessions appear in the
//! files, and not on the number of threads. Both are checked on whole `tellturn report`
//! outputs (report.html, summary.json and every CSV), byte for byte.

use rand::SeedableRng;
use rand::seq::SliceRandom;
use std::path::{Path, PathBuf};
use std::process::Command;

fn scratch(name: &str) -> PathBuf {
    let p = std::env::temp_dir().join(format!("tellturn-det-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&p);
    std::fs::create_dir_all(&p).unwrap();
    p
}

fn tellturn(args: &[&str], threads: Option<&str>, dir: &Path) -> std::process::Output {
    let mut c = Command::new(env!("CARGO_BIN_EXE_tellturn"));
    c.args(args).current_dir(dir);
    if let Some(t) = threads {
        c.env("RAYON_NUM_THREADS", t);
    }
    let out = c.output().expect("run tellturn");
    assert!(
        out.status.success(),
        "tellturn {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

/// Every output file of a report folder, by name.
fn outputs(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .map(|p| {
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read(&p).unwrap(),
            )
        })
        .collect();
    v.sort();
    v
}

fn assert_same_outputs(a: &Path, b: &Path, what: &str) {
    let (oa, ob) = (outputs(a), outputs(b));
    assert_eq!(oa.len(), 6, "{oa:?}");
    assert_eq!(
        oa.iter().map(|x| &x.0).collect::<Vec<_>>(),
        ob.iter().map(|x| &x.0).collect::<Vec<_>>()
    );
    for ((name, x), (_, y)) in oa.iter().zip(&ob) {
        assert!(x == y, "{name} differs {what}");
    }
}

/// Rewrites a set's events.csv with whole sessions in a shuffled order (each session's own
/// rows keep their order) and outcomes.csv with its rows shuffled differently.
fn shuffled_copy(from: &Path, to: &Path, seed: u64) {
    std::fs::create_dir_all(to).unwrap();
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let events = std::fs::read_to_string(from.join("events.csv")).unwrap();
    let mut lines = events.lines();
    let header = lines.next().unwrap();
    let mut order: Vec<&str> = Vec::new();
    let mut rows: std::collections::HashMap<&str, Vec<&str>> = Default::default();
    for l in lines {
        let id = l.split(',').next().unwrap();
        rows.entry(id)
            .or_insert_with(|| {
                order.push(id);
                Vec::new()
            })
            .push(l);
    }
    let before = order.clone();
    order.shuffle(&mut rng);
    assert_ne!(order, before, "the shuffle must change the order");
    let mut out = format!("{header}\n");
    for id in &order {
        for l in &rows[id] {
            out.push_str(l);
            out.push('\n');
        }
    }
    std::fs::write(to.join("events.csv"), out).unwrap();
    let outcomes = std::fs::read_to_string(from.join("outcomes.csv")).unwrap();
    let mut lines: Vec<&str> = outcomes.lines().collect();
    let header = lines.remove(0);
    lines.shuffle(&mut rng);
    std::fs::write(
        to.join("outcomes.csv"),
        format!("{header}\n{}\n", lines.join("\n")),
    )
    .unwrap();
}

#[test]
fn shuffling_the_order_of_sessions_in_the_files_changes_no_result() {
    // 100 sessions: enough for the boosted candidates, tuning, cross-fitting and bootstrap.
    let root = scratch("shuffle");
    let (a, b) = (root.join("a"), root.join("b"));
    std::fs::create_dir_all(&a).unwrap();
    tellturn(
        &[
            "demo",
            "--sessions",
            "100",
            "--seed",
            "3",
            "--out",
            "playtest",
            "-q",
        ],
        None,
        &a,
    );
    // Same folder name in both places: the set name appears in the report.
    shuffled_copy(&a.join("playtest"), &b.join("playtest"), 9);
    for dir in [&a, &b] {
        tellturn(&["report", "playtest", "--out", "out", "-q"], None, dir);
    }
    assert_same_outputs(&a.join("out"), &b.join("out"), "after shuffling sessions");
    let _ = std::fs::remove_dir_all(&root);
}

#[test]
fn reports_are_byte_identical_at_one_and_two_threads() {
    // Two variants, so the comparison (and its bootstrap) is covered too.
    let root = scratch("threads");
    for (v, seed) in [("A", "4"), ("B", "5")] {
        tellturn(
            &[
                "demo",
                "--sessions",
                "80",
                "--variant",
                v,
                "--seed",
                seed,
                "--out",
                &format!("set-{v}"),
                "-q",
            ],
            None,
            &root,
        );
    }
    for t in ["1", "2"] {
        tellturn(
            &[
                "report",
                "set-A",
                "--vs",
                "set-B",
                "--out",
                &format!("out-{t}"),
                "-q",
            ],
            Some(t),
            &root,
        );
    }
    assert_same_outputs(
        &root.join("out-1"),
        &root.join("out-2"),
        "between 1 and 2 threads",
    );
    let _ = std::fs::remove_dir_all(&root);
}
