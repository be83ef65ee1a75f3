//! The corpus of broken inputs under tests/inputs/: what each one gets.

use std::path::{Path, PathBuf};
use tellturn::sessions::{
    EventSource, Problem, SessionSet, Severity, load_set, load_set_from_reader,
};

fn case(name: &str) -> SessionSet {
    load_set(
        &Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/inputs")
            .join(name),
    )
}

fn kinds(set: &SessionSet, severity: Severity) -> Vec<&'static str> {
    set.problems
        .iter()
        .filter(|p| p.severity == severity)
        .map(|p| p.kind)
        .collect()
}

fn only_problem<'a>(set: &'a SessionSet, kind: &str) -> &'a Problem {
    let found: Vec<&Problem> = set.problems.iter().filter(|p| p.kind == kind).collect();
    assert_eq!(
        found.len(),
        1,
        "expected one `{kind}` problem, got {:#?}",
        set.problems
    );
    found[0]
}

#[test]
fn empty_file_makes_the_set_unusable() {
    let set = case("empty");
    assert!(!set.is_usable());
    assert_eq!(kinds(&set, Severity::Unusable), ["empty_file"]);
    assert!(set.sessions.is_empty());
}

#[test]
fn header_only_file_has_no_rows() {
    let set = case("header_only");
    assert!(!set.is_usable());
    assert_eq!(kinds(&set, Severity::Unusable), ["no_rows"]);
}

#[test]
fn missing_required_column_is_named_with_what_was_found() {
    let set = case("missing_column");
    assert!(!set.is_usable());
    let p = only_problem(&set, "missing_column");
    assert_eq!(p.line, Some(1));
    assert!(p.message.contains("`turn`"), "{}", p.message);
    assert!(
        p.message.contains("found: session, actor, event"),
        "{}",
        p.message
    );
}

#[test]
fn bad_turn_sets_only_that_session_aside() {
    let set = case("bad_turn");
    assert!(set.is_usable());
    assert_eq!(set.sessions.len(), 1);
    assert_eq!(set.set_aside.len(), 1);
    assert_eq!(set.set_aside[0].session, "s2");
    let p = only_problem(&set, "session_set_aside");
    assert_eq!((p.line, p.session.as_deref()), (Some(9), Some("s2")));
    assert!(p.message.contains("`two` is not a whole number"));
    assert!(p.file.ends_with("events.csv"));
}

#[test]
fn turns_out_of_order_set_the_session_aside() {
    let set = case("disorder");
    let p = only_problem(&set, "session_set_aside");
    assert_eq!(p.line, Some(10));
    assert!(
        p.message.contains("turn 2 comes after turn 3"),
        "{}",
        p.message
    );
    assert_eq!(set.sessions.len(), 1);
}

#[test]
fn duplicated_outcome_rows_set_the_session_aside() {
    let set = case("duplicates");
    let p = only_problem(&set, "session_set_aside");
    assert!(p.file.ends_with("outcomes.csv"));
    assert!(p.message.contains("lines 3, 4"), "{}", p.message);
    assert_eq!(set.finished().count(), 1);
}

#[test]
fn winner_not_among_actors_sets_the_session_aside() {
    let set = case("unknown_winner");
    let p = only_problem(&set, "session_set_aside");
    assert_eq!(p.line, Some(3));
    assert!(
        p.message
            .contains("`Quill` is not among the session's actors (Bex, Ama)"),
        "{}",
        p.message
    );
}

#[test]
fn empty_winner_sets_the_session_aside() {
    let set = case("empty_winner");
    let p = only_problem(&set, "session_set_aside");
    assert!(p.message.contains("winner is empty"));
}

#[test]
fn session_without_outcome_is_in_progress_not_trained_on() {
    let set = case("in_progress");
    assert_eq!(set.finished().count(), 2);
    let open: Vec<&str> = set.in_progress().map(|s| s.id.as_str()).collect();
    assert_eq!(open, ["s3"]);
    assert!(set.is_usable());
}

#[test]
fn latin1_text_is_decoded_with_a_warning() {
    let set = case("latin1");
    let p = only_problem(&set, "not_utf8");
    assert_eq!(p.severity, Severity::Warning);
    assert_eq!(p.line, Some(2));
    let s1 = &set.sessions[0];
    assert_eq!(s1.actors[0], "Zoë");
    assert_eq!(&*s1.events[0].detail, "café corner");
    // The UTF-8 outcome file names the same actor, so the winner is found.
    assert_eq!(s1.winner_name(), "Zoë");
}

#[test]
fn quoted_fields_keep_commas_newlines_and_line_numbers() {
    let set = case("quoted_newlines");
    let s1 = &set.set_aside;
    assert_eq!(s1[0].session, "s1");
    // The quoted field spans lines 2-3, so the bad turn is on line 5.
    assert_eq!(only_problem(&set, "session_set_aside").line, Some(5));
    let raw = std::fs::read(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/inputs/quoted_newlines/events.csv"),
    )
    .unwrap();
    let events = "session,turn,actor,event,detail\ns1,1,Ama,draw_tile,\"took two, then\nsaid \"\"done\"\"\"\ns1,1,Bex,pass,\n";
    assert!(raw.starts_with(events.as_bytes()));
    let set = load_set_from_reader(events.as_bytes(), EventSource::Csv, None);
    assert_eq!(
        &*set.sessions[0].events[0].detail,
        "took two, then\nsaid \"done\""
    );
    assert_eq!(set.sessions[0].events[1].line, 4);
}

fn same_as_plain(name: &str) {
    let set = case(name);
    assert!(set.is_usable(), "{name}: {:#?}", set.problems);
    assert!(set.problems.is_empty(), "{name}: {:#?}", set.problems);
    assert_eq!(set.finished().count(), 2);
    let s1 = &set.sessions[0];
    assert_eq!(s1.actors, ["Ama", "Bex"]);
    assert_eq!(s1.events.len(), 6);
    assert_eq!(set.state_columns, ["score"]);
    assert_eq!(&*s1.events[2].detail, "north ridge");
    assert_eq!(s1.events[2].state.as_ref(), &[(0u16, 3.0)]);
    assert_eq!(set.sessions[1].winner_seat(), Some(1));
}

#[test]
fn crlf_line_ends_read_like_lf() {
    same_as_plain("crlf");
}

#[test]
fn utf8_bom_is_skipped() {
    same_as_plain("bom");
}

#[test]
fn semicolon_delimiter_is_detected() {
    same_as_plain("semicolons");
}

#[test]
fn tab_delimiter_is_detected() {
    same_as_plain("tabs");
}

#[test]
fn mixed_actor_counts_load_with_a_note_and_nine_actors_are_set_aside() {
    let set = case("mixed_players");
    let p = only_problem(&set, "session_set_aside");
    assert!(p.message.contains("more than 8 actors"));
    assert_eq!(p.session.as_deref(), Some("s4"));
    let note = only_problem(&set, "mixed_actor_counts");
    assert!(
        note.message.contains("2 with 2 actors, 1 with 3 actors"),
        "{}",
        note.message
    );
    assert_eq!(set.finished().count(), 3);
}

#[test]
fn all_draws_is_unusable_and_one_seat_always_winning_is_a_warning() {
    let draws = case("single_class_draws");
    assert!(!draws.is_usable());
    assert_eq!(kinds(&draws, Severity::Unusable), ["single_class"]);
    let seat = case("single_class_seat");
    assert!(seat.is_usable());
    assert_eq!(
        only_problem(&seat, "single_class").severity,
        Severity::Warning
    );
}

#[test]
fn nan_and_infinite_state_values_are_ignored_with_warnings() {
    let set = case("nan");
    let lines: Vec<Option<u64>> = set
        .problems
        .iter()
        .filter(|p| p.kind == "non_finite")
        .map(|p| p.line)
        .collect();
    assert_eq!(lines, [Some(8), Some(9)]);
    let s2 = &set.sessions[1];
    assert!(s2.events[0].state.is_empty());
    assert_eq!(s2.events[2].state.as_ref(), &[(0u16, 4.0)]);
}

#[test]
fn a_one_megabyte_field_is_truncated_with_a_warning() {
    let big = "x".repeat(1 << 20);
    let events = format!(
        "session,turn,actor,event,detail\ns1,1,Ama,pass,{big}\ns1,1,Bex,pass,\ns2,1,Ama,pass,\ns2,1,Bex,pass,\n"
    );
    let set = load_set_from_reader(
        events.as_bytes(),
        EventSource::Csv,
        Some(b"session,winner\ns1,Ama\ns2,Bex\n"),
    );
    let p = only_problem(&set, "field_truncated");
    assert_eq!((p.line, p.column.as_deref()), (Some(2), Some("detail")));
    assert_eq!(
        set.sessions[0].events[0].detail.len(),
        tellturn::sessions::limits::MAX_FIELD_BYTES
    );
    assert_eq!(set.finished().count(), 2);
}

#[test]
fn outcome_without_events_is_a_warning() {
    let set = case("outcome_without_events");
    let p = only_problem(&set, "outcome_without_events");
    assert_eq!((p.line, p.severity), (Some(4), Severity::Warning));
}

#[test]
fn text_column_is_not_a_state_value() {
    let set = case("text_column");
    assert!(set.state_columns.is_empty());
    let p = only_problem(&set, "text_column");
    assert_eq!(p.line, Some(3));
}

#[test]
fn missing_outcomes_file_leaves_everything_in_progress_and_unusable() {
    let set = case("no_outcomes");
    assert_eq!(set.in_progress().count(), 1);
    assert_eq!(kinds(&set, Severity::Unusable), ["no_finished_session"]);
}

#[test]
fn unknown_first_mover_is_a_warning_and_first_reorders_seats() {
    let set = case("first_unknown");
    assert_eq!(only_problem(&set, "first_unknown").line, Some(2));
    // s2's log starts with Bex, but `first` says Ama moved first: Ama takes seat 0.
    let s2 = &set.sessions[1];
    assert_eq!(s2.actors, ["Ama", "Bex"]);
    assert_eq!(s2.events[0].actor, Some(1));
}

#[test]
fn json_lines_load_with_bad_lines_skipped() {
    let set = case("jsonl");
    let lines: Vec<Option<u64>> = set
        .problems
        .iter()
        .filter(|p| p.kind == "bad_json")
        .map(|p| p.line)
        .collect();
    assert_eq!(lines, [Some(3), Some(7)]);
    assert_eq!(set.finished().count(), 2);
    assert_eq!(set.state_columns, ["score"]);
    assert_eq!(set.sessions[0].events.len(), 3);
    assert_eq!(&*set.sessions[0].events[2].detail, "north ridge");
}

#[test]
fn a_folder_of_one_file_per_session_loads_with_ids_from_file_names() {
    let set = case("per_session");
    assert!(set.problems.is_empty(), "{:#?}", set.problems);
    let ids: Vec<&str> = set.sessions.iter().map(|s| s.id.as_str()).collect();
    assert_eq!(ids, ["s1", "s2"]);
    assert_eq!(set.sessions[1].actors, ["Bex", "Ama"]);
}

#[test]
fn a_missing_folder_is_unusable_with_a_clear_message() {
    let set = load_set(&PathBuf::from("/nonexistent/tellturn/set"));
    assert_eq!(kinds(&set, Severity::Unusable), ["not_found"]);
}

#[test]
fn problems_print_as_file_line_message() {
    let set = case("bad_turn");
    let text = only_problem(&set, "session_set_aside").to_string();
    assert!(text.ends_with("events.csv:9: turn `two` is not a whole number from 0 to 1000000; expected a turn counter such as 1, 2, 3"), "{text}");
}

#[test]
fn reading_never_modifies_the_input_files() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/inputs/bad_turn");
    let stamp = |f: &str| {
        let p = dir.join(f);
        (
            std::fs::read(&p).unwrap(),
            std::fs::metadata(&p).unwrap().modified().unwrap(),
        )
    };
    let before = (stamp("events.csv"), stamp("outcomes.csv"));
    let _ = load_set(&dir);
    assert_eq!(before, (stamp("events.csv"), stamp("outcomes.csv")));
}
