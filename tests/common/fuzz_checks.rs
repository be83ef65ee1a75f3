//! What the fuzz targets (fuzz/fuzz_targets/) do with one input, shared with
//! tests/fuzz_regressions.rs so a saved input is replayed through exactly the same code.
//!
//! Each `run_*` feeds the bytes to the library's own bytes-level entry point and then checks the
//! result's invariants: a panic anywhere here is a bug, whether it comes from the loader or from
//! a check that found a loaded set or model the rest of the engine could not use.
#![allow(dead_code)]

use std::path::Path;
use tellturn::features::start_table;
use tellturn::models::Matrix;
use tellturn::models::file::{MODEL_FORMAT, MODEL_VERSION, ModelFileError, model_from_bytes};
use tellturn::models::win_model::WinModel;
use tellturn::sessions::limits::{
    MAX_ACTORS, MAX_EVENT_LABELS, MAX_EVENTS_PER_SESSION, MAX_STATE_COLUMNS, MAX_TURN, MIN_ACTORS,
};
use tellturn::sessions::{EventSource, SessionSet, Severity, load_set_from_reader, summarize};

/// The byte that splits a CSV fuzz input into events (before) and outcomes (after). Without it
/// the whole input is the events file and there is no outcomes file.
pub const OUTCOMES_SEPARATOR: u8 = 0;

/// Split a CSV fuzz input at the first [`OUTCOMES_SEPARATOR`].
pub fn split_events_outcomes(data: &[u8]) -> (&[u8], Option<&[u8]>) {
    match data.iter().position(|&b| b == OUTCOMES_SEPARATOR) {
        Some(i) => (&data[..i], Some(&data[i + 1..])),
        None => (data, None),
    }
}

/// Load CSV events (and outcomes, after the separator) and check the set.
pub fn run_csv(data: &[u8]) -> SessionSet {
    let (events, outcomes) = split_events_outcomes(data);
    let set = load_set_from_reader(events, EventSource::Csv, outcomes);
    check_set(&set);
    set
}

/// Load JSON Lines events (no outcomes file) and check the set.
pub fn run_jsonl(data: &[u8]) -> SessionSet {
    let set = load_set_from_reader(data, EventSource::JsonLines, None);
    check_set(&set);
    set
}

/// The name model-file messages are given in the fuzz targets and their regression tests.
pub const MODEL_FILE_NAME: &str = "fuzz.model.json";

/// Load model-file bytes; a model that loads must predict usable chances and survive a round trip.
pub fn run_model(data: &[u8]) -> Result<WinModel, ModelFileError> {
    let path = Path::new(MODEL_FILE_NAME);
    let result = model_from_bytes(data, path);
    match &result {
        Ok(model) => check_model(model, path),
        Err(e) => assert!(
            e.to_string().starts_with(MODEL_FILE_NAME),
            "a model-file error names the file: {e}"
        ),
    }
    result
}

/// A loaded model is used right away: its chances before the first turn must be probabilities
/// that sum to 1 (and so must each fitted model's own, which the normalising of the chances could
/// hide), and writing it out and reading it back must give the same model.
pub fn check_model(model: &WinModel, path: &Path) {
    for actors in [2, 3] {
        let table = start_table(&model.spec, actors);
        let x = Matrix::new(table.rows.len(), table.width(), table.values.clone())
            .expect("a start table fills its matrix");
        for fitted in std::iter::once(&model.win).chain(model.draw.as_ref()) {
            for p in fitted.predict_proba(&x) {
                assert!(
                    p.is_finite() && (0.0..=1.0).contains(&p),
                    "a loaded {} model gave the raw chance {p}",
                    fitted.kind().name()
                );
            }
        }
        let (win, draw) = model.start_chances(actors);
        assert_eq!(win.len(), actors);
        for p in win.iter().chain([&draw]) {
            assert!(
                p.is_finite() && (0.0..=1.0).contains(p),
                "a loaded model gave the chance {p} for {actors} actors"
            );
        }
        let total: f64 = win.iter().sum::<f64>() + draw;
        assert!((total - 1.0).abs() < 1e-9, "chances sum to {total}");
    }
    let file = serde_json::json!({
        "format": MODEL_FORMAT,
        "version": MODEL_VERSION,
        "model": model,
    });
    let bytes = serde_json::to_vec(&file).expect("a loaded model serialises");
    let again = model_from_bytes(&bytes, path).expect("a saved model loads again");
    assert_eq!(&again, model, "a model changed on a save and load");
}

/// What every loaded set promises the rest of the engine, whatever the input was.
pub fn check_set(set: &SessionSet) {
    assert!(
        set.labels.len() <= MAX_EVENT_LABELS + 1,
        "{} labels",
        set.labels.len()
    );
    assert!(set.state_columns.len() <= MAX_STATE_COLUMNS);
    let mut ids = std::collections::HashSet::new();
    for s in &set.sessions {
        assert!(
            !s.id.is_empty() && s.id.trim() == s.id,
            "session id {:?}",
            s.id
        );
        assert!(ids.insert(s.id.as_str()), "session {:?} loaded twice", s.id);
        assert!(!s.actors.is_empty() && s.actors.len() <= MAX_ACTORS);
        if s.is_finished() {
            assert!(
                s.actors.len() >= MIN_ACTORS,
                "finished with {} actors",
                s.actors.len()
            );
        }
        if let Some(w) = s.winner_seat() {
            assert!(w < s.actors.len());
        }
        assert!(s.events.len() <= MAX_EVENTS_PER_SESSION);
        assert!(
            s.events.windows(2).all(|w| w[0].turn <= w[1].turn),
            "turns out of order"
        );
        for e in &s.events {
            assert!(u64::from(e.turn) <= MAX_TURN);
            assert!(e.actor.is_none_or(|a| usize::from(a) < s.actors.len()));
            assert!((e.label as usize) < set.labels.len());
            for &(c, v) in e.state.iter() {
                // Feature tables hold 32-bit numbers: a value must stay finite there too.
                assert!((c as usize) < set.state_columns.len() && (v as f32).is_finite());
            }
        }
        let _ = (s.winner_name(), s.turns(), s.turn_count(), s.variant());
    }
    for a in &set.set_aside {
        assert!(
            !ids.contains(a.session.as_str()),
            "{:?} both loaded and set aside",
            a.session
        );
    }
    for p in &set.problems {
        assert!(!p.message.is_empty(), "a problem without a message: {p:?}");
        assert!(
            !p.file.as_os_str().is_empty(),
            "a problem without a file: {p:?}"
        );
        if p.severity == Severity::SetAside {
            assert!(
                p.session.is_some(),
                "a set-aside problem names no session: {p:?}"
            );
        }
    }
    let _ = (set.main_variant(), set.is_usable(), summarize(set));
}
