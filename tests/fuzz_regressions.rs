//! Inputs that once crashed the loaders or broke what they promise (and, at the end, the
//! importers' richest fuzz inputs), replayed through the code the fuzz targets run
//! (tests/common/fuzz_checks.rs; the targets are in fuzz/, see DEVELOPERS.md, "Fuzzing").
//! Each test fails if the input panics again, or if the problem it must produce is no longer
//! reported with its file, line and what was expected.

#[path = "common/fuzz_checks.rs"]
mod fuzz_checks;

use std::path::Path;
use std::sync::mpsc;
use std::time::Duration;
use tellturn::models::file::ModelFileError;
use tellturn::models::win_model::Fitted;
use tellturn::sessions::limits::{MAX_EVENT_LABELS, OTHER_LABEL};
use tellturn::sessions::{Problem, SessionSet};

/// The saved input `tests/inputs/fuzz/NAME`.
fn input(name: &str) -> Vec<u8> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/inputs/fuzz")
        .join(name);
    std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn problems<'a>(set: &'a SessionSet, kind: &str) -> Vec<&'a Problem> {
    set.problems.iter().filter(|p| p.kind == kind).collect()
}

/// Run `f` on its own thread and fail the test if it has not returned after `seconds` (a hang
/// would otherwise hold the whole test run; the thread is left behind when the test fails).
fn within<T: Send + 'static>(seconds: u64, f: impl FnOnce() -> T + Send + 'static) -> T {
    let (send, receive) = mpsc::channel();
    std::thread::spawn(move || {
        let _ = send.send(f());
    });
    match receive.recv_timeout(Duration::from_secs(seconds)) {
        Ok(value) => value,
        Err(mpsc::RecvTimeoutError::Timeout) => panic!("still running after {seconds} s"),
        Err(mpsc::RecvTimeoutError::Disconnected) => panic!("the loader panicked"),
    }
}

/// A set of two finished sessions in which session `b` uses `labels` distinct event labels.
fn many_labels_csv(labels: usize) -> Vec<u8> {
    let mut events = String::from("session,turn,actor,event\na,1,Ama,open\na,2,Bex,open\n");
    for i in 0..labels {
        events.push_str(&format!("b,{},{},label{i}\n", i + 1, ["Ama", "Bex"][i % 2]));
    }
    let mut data = events.into_bytes();
    data.push(fuzz_checks::OUTCOMES_SEPARATOR);
    data.extend_from_slice(b"session,winner\na,Ama\nb,Bex\n");
    data
}

/// Found by reading the label cap while writing the fuzz targets (no fuzz input is large
/// enough to reach it): the first label past [`MAX_EVENT_LABELS`] asked for the merged label
/// through the same capped lookup, which called itself until the stack overflowed and the
/// process aborted.
#[test]
fn labels_past_the_cap_are_merged_into_one_label() {
    let data = many_labels_csv(MAX_EVENT_LABELS + 10);
    let set = within(60, move || fuzz_checks::run_csv(&data));
    assert!(set.is_usable(), "{:#?}", set.problems);
    assert_eq!(set.finished().count(), 2);
    // `open` and label0 … label4094 fill the cap; the merged label is the one past it.
    assert_eq!(set.labels.len(), MAX_EVENT_LABELS + 1);
    assert_eq!(set.labels.last().map(String::as_str), Some(OTHER_LABEL));
    let b = set
        .sessions
        .iter()
        .find(|s| s.id == "b")
        .expect("session b");
    let merged = b
        .events
        .iter()
        .filter(|e| set.label(e) == OTHER_LABEL)
        .count();
    assert_eq!(merged, 11);
    let warned = problems(&set, "too_many_labels");
    assert!(!warned.is_empty());
    assert_eq!(warned[0].file, Path::new("events.csv"));
    // Header, two rows of `a`, then `b`'s label0 on line 4: label4095 is on line 4099.
    assert_eq!(warned[0].line, Some(4099));
    assert_eq!(warned[0].column.as_deref(), Some("event"));
    assert!(
        warned[0]
            .message
            .contains("more than 4096 distinct event labels"),
        "{}",
        warned[0].message
    );
}

/// Found by the model_file target: a boosted model whose leaf value is written
/// `0.409453603807854864` loaded as a neighbouring number, and saving and loading it again
/// changed it once more. serde_json parses floats only approximately unless its
/// `float_roundtrip` feature is on, so about one saved value in eleven came back one unit in
/// the last place off; a model file now loads exactly as it was written.
#[test]
fn a_model_file_loads_its_numbers_exactly() {
    let model = fuzz_checks::run_model(&input("model_file-float-roundtrip.bin"))
        .expect("the input is a valid model file");
    let Fitted::Boosted(trees) = &model.win else {
        panic!("the input holds a boosted model");
    };
    let exact: f64 = "0.409453603807854864".parse().expect("a number");
    assert_eq!(trees.trees[0].leaf_values[5], exact);
}

/// A model file holding a logistic model over the six columns every feature spec has.
fn logistic_model_file(coefficients: [f64; 6], scales: [f64; 6], impute: [f64; 6]) -> Vec<u8> {
    serde_json::to_vec(&serde_json::json!({
        "format": "tellturn-model",
        "version": 1,
        "model": {
            "spec": {
                "params": {"window": 5, "min_token_sessions": 5, "max_tokens": 0, "max_labels": 0},
                "labels": [], "tokens": [], "tokens_before_pruning": 0, "labels_before_cap": 0,
                "state_columns": [], "multi_actor": false
            },
            "win": {"logistic": {
                "means": [0.0, 0.0, 0.0, 0.0, 0.0, 0.0], "scales": scales, "impute": impute,
                "estimated": [true, true, true, true, true, true],
                "coefficients": coefficients, "intercept": 0.1, "l2": 1.0,
                "iterations": 3, "converged": true
            }},
            "draw": null,
            "summary": {
                "created_by": "", "sets": [], "trained_sessions": 0, "trained_rows": 0,
                "test_sessions": 0, "seed": 1, "choice": "", "settings": "", "notes": []
            }
        }
    }))
    .expect("JSON")
}

fn invalid_reason(bytes: &[u8]) -> String {
    match fuzz_checks::run_model(bytes) {
        Err(ModelFileError::Invalid { reason, .. }) => reason,
        other => panic!("expected an inconsistent model, got {other:?}"),
    }
}

/// Found while writing the model_file target's check: a logistic model with a finite but
/// tiny scale (or a huge coefficient) passed validation, and its coefficient on the feature
/// scale (coefficient / scale) was infinite, so its raw chances were NaN: as the win model it
/// silently gave every actor the same chance, as the draw model it made every chance NaN.
#[test]
fn a_logistic_model_whose_chances_would_be_nan_is_refused() {
    let usual = fuzz_checks::run_model(&logistic_model_file([0.5; 6], [1.0; 6], [0.0; 6]));
    assert!(usual.is_ok(), "{usual:?}");
    let tiny_scale = [1e-310, 1.0, 1.0, 1.0, 1.0, 1.0];
    let reason = invalid_reason(&logistic_model_file([0.5; 6], tiny_scale, [0.0; 6]));
    assert!(
        reason.starts_with("win model: column 0 has coefficient 0.5 at scale 1e-310"),
        "{reason}"
    );
    assert!(reason.contains("on the feature scale"), "{reason}");
    let huge = [1e300, 0.5, 0.5, 0.5, 0.5, 0.5];
    let reason = invalid_reason(&logistic_model_file(huge, [1e-10; 6], [0.0; 6]));
    assert!(reason.contains("column 0 has coefficient"), "{reason}");
    let fill_in = [0.0, 0.0, 1e300, 0.0, 0.0, 0.0];
    let reason = invalid_reason(&logistic_model_file([0.5; 6], [1.0; 6], fill_in));
    assert!(
        reason.contains("column 2 fills in missing values with 1e300"),
        "{reason}"
    );
}

/// Found while writing the import targets' checks: a state value beyond the 32-bit range
/// (`1e39`) was accepted as finite and became infinite in the feature table.
#[test]
fn a_state_value_too_large_for_a_feature_is_ignored_with_a_warning() {
    let data =
        b"session,turn,actor,event,score\ns,1,Ama,go,1e39\ns,1,Bex,go,2\n\0session,winner\ns,Ama\n";
    let set = fuzz_checks::run_csv(data);
    let found = problems(&set, "out_of_range");
    assert_eq!(found.len(), 1, "{:#?}", set.problems);
    assert_eq!(found[0].line, Some(2));
    assert_eq!(found[0].column.as_deref(), Some("score"));
    assert!(
        found[0]
            .message
            .starts_with("`1e39` in column `score` is larger than 3.4028234663852886e38"),
        "{}",
        found[0].message
    );
    let s = &set.sessions[0];
    assert!(s.events[0].state.is_empty(), "the value is ignored");
    assert_eq!(s.events[1].state.len(), 1, "the next value is kept");
    assert!(s.is_finished());
}

/// Found by the model_file target: a boosted tree whose threshold is written
/// `444444444444444444444444444444444444445` (past the 32-bit range) loaded with an infinite
/// threshold, which saving writes as `null`, so the saved model no longer loaded.
#[test]
fn a_tree_threshold_past_the_32_bit_range_is_refused() {
    let reason = invalid_reason(&input("model_file-infinite-threshold.bin"));
    assert!(
        reason.starts_with("win model: tree 0 node 2 has no threshold"),
        "{reason}"
    );
    assert!(reason.contains("read as inf"), "{reason}");
}

/// The saved inputs whose names start with `prefix`, by name.
fn inputs_starting(prefix: &str) -> Vec<(String, Vec<u8>)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/inputs/fuzz");
    let mut names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| {
            e.expect("a folder entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .filter(|n| n.starts_with(prefix))
        .collect();
    names.sort();
    names.into_iter().map(|n| (n.clone(), input(&n))).collect()
}

/// Not crashes: no importer crash was found. These are the inputs of the import_csv and
/// import_jsonl corpora that reached the most code on their own (mangled slices of the sample
/// sets, a few KiB in all), replayed so a change that breaks what a loaded set promises on odd
/// input fails here and not only under the fuzzer.
#[test]
fn the_importers_richest_fuzz_inputs_load_with_their_problems_reported() {
    let csv = inputs_starting("import_csv-corpus-");
    let jsonl = inputs_starting("import_jsonl-corpus-");
    assert_eq!(
        (csv.len(), jsonl.len()),
        (4, 3),
        "the saved inputs are all there"
    );
    let loaded = csv
        .iter()
        .map(|(name, data)| (name, fuzz_checks::run_csv(data)))
        .chain(
            jsonl
                .iter()
                .map(|(name, data)| (name, fuzz_checks::run_jsonl(data))),
        );
    for (name, set) in loaded {
        assert!(set.event_rows > 0, "{name}: no event row was read");
        assert!(
            set.problems.iter().any(|p| p.line.is_some()),
            "{name}: a mangled file gets at least one problem with its line: {:#?}",
            set.problems
        );
    }
}
