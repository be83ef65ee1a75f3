use super::*;
use crate::progress::Cancel;
use crate::sessions::{EventSource, SessionSet, load_set_from_reader};

const EVENTS: &str = "session,turn,actor,event,detail,score
g1,1,Ama,raid,north gate,2
g1,1,Bex,build,,1
g1,2,Ama,raid,north wall,4
g1,2,,storm,,
g1,3,Bex,raid,gate,3
g1,8,Ama,build,,5
g2,1,Bex,build,gate,1
g2,1,Ama,build,,1
";

fn set() -> SessionSet {
    load_set_from_reader(
        EVENTS.as_bytes(),
        EventSource::Csv,
        Some(b"session,winner\ng1,Ama\ng2,Bex\n"),
    )
}

fn spec_for(set: &SessionSet, min_token_sessions: usize) -> FeatureSpec {
    let params = FeatureParams {
        window: 2,
        min_token_sessions,
        ..FeatureParams::default()
    };
    FeatureSpec::learn(&[set], params, |_, _| true)
}

fn value(table: &TurnTable, turn: u32, actor: u8, column: &str) -> f32 {
    let c = table
        .columns
        .iter()
        .position(|n| n == column)
        .unwrap_or_else(|| panic!("no column {column}"));
    let r = table
        .rows
        .iter()
        .position(|k| k.session == 0 && k.turn == turn && k.actor == actor)
        .expect("row");
    table.row(r)[c]
}

#[test]
fn one_row_per_session_turn_and_actor() {
    let set = set();
    let spec = spec_for(&set, 1);
    let t = build_table(
        &spec,
        &[&set],
        &[(0, 0), (0, 1)],
        TurnSample::All,
        &Cancel::new(),
    )
    .unwrap();
    // g1 has turns 1, 2, 3, 8 and two actors; g2 has turn 1.
    assert_eq!(t.rows.len(), 4 * 2 + 2);
    assert_eq!(t.values.len(), t.rows.len() * spec.width());
    assert_eq!(t.columns.len(), spec.width());
}

#[test]
fn counts_are_cumulative_and_seen_from_each_side() {
    let set = set();
    let spec = spec_for(&set, 1);
    let t = build_table(&spec, &[&set], &[(0, 0)], TurnSample::All, &Cancel::new()).unwrap();
    // After turn 3: Ama raided twice, Bex once; the storm is neutral.
    assert_eq!(value(&t, 3, 0, "self:raid"), 2.0);
    assert_eq!(value(&t, 3, 0, "others:raid"), 1.0);
    assert_eq!(value(&t, 3, 1, "self:raid"), 1.0);
    assert_eq!(value(&t, 3, 1, "self_minus_others:raid"), -1.0);
    assert_eq!(value(&t, 3, 1, "neutral:storm"), 1.0);
    assert_eq!(value(&t, 3, 0, "self_share:raid"), 1.0);
    assert_eq!(value(&t, 3, 1, "self_share:raid"), 0.5);
    assert_eq!(value(&t, 1, 0, "moved_first"), 1.0);
    assert_eq!(value(&t, 1, 1, "moved_first"), 0.0);
}

#[test]
fn state_values_carry_forward_per_actor() {
    let set = set();
    let spec = spec_for(&set, 1);
    let t = build_table(&spec, &[&set], &[(0, 0)], TurnSample::All, &Cancel::new()).unwrap();
    assert_eq!(value(&t, 2, 0, "state_self:score"), 4.0);
    assert_eq!(value(&t, 2, 0, "state_best_other:score"), 1.0);
    assert_eq!(value(&t, 3, 1, "state_self:score"), 3.0);
    assert_eq!(value(&t, 3, 0, "state_self_minus_best_other:score"), 1.0);
}

#[test]
fn recent_window_forgets_turns_older_than_the_window() {
    let set = set();
    let spec = spec_for(&set, 1);
    let t = build_table(&spec, &[&set], &[(0, 0)], TurnSample::All, &Cancel::new()).unwrap();
    // Window of 2 turns: at turn 2 it holds turns 1-2, at turn 3 turns 2-3, at 8 only turn 8.
    assert_eq!(value(&t, 2, 0, "self_last2:raid"), 2.0);
    assert_eq!(value(&t, 3, 0, "self_last2:raid"), 1.0);
    assert_eq!(value(&t, 3, 0, "others_last2:raid"), 1.0);
    assert_eq!(value(&t, 8, 0, "self_last2:raid"), 0.0);
    assert_eq!(value(&t, 8, 0, "self:raid"), 2.0);
}

#[test]
fn detail_words_are_pruned_to_those_seen_in_enough_sessions() {
    let set = set();
    // "gate" is in both sessions; "north" and "wall" only in g1.
    let spec = spec_for(&set, 2);
    assert_eq!(spec.tokens, ["gate"]);
    assert_eq!(spec.tokens_before_pruning, 3);
    let t = build_table(&spec, &[&set], &[(0, 0)], TurnSample::All, &Cancel::new()).unwrap();
    assert_eq!(value(&t, 3, 0, "word_self:gate"), 1.0);
    assert_eq!(value(&t, 3, 0, "word_others:gate"), 1.0);
}

#[test]
fn later_events_never_change_earlier_rows() {
    let set_full = set();
    let cut = EVENTS.lines().take(5).collect::<Vec<_>>().join("\n") + "\n";
    let set_cut = load_set_from_reader(cut.as_bytes(), EventSource::Csv, None);
    let spec = spec_for(&set_full, 1);
    let full = build_table(
        &spec,
        &[&set_full],
        &[(0, 0)],
        TurnSample::All,
        &Cancel::new(),
    )
    .unwrap();
    let part = session_table(&spec, &set_cut, 0);
    // The cut log holds turns 1-2; their rows must equal the full log's rows for turns 1-2.
    assert_eq!(part.rows.len(), 4);
    for (i, key) in part.rows.iter().enumerate() {
        let j = full
            .rows
            .iter()
            .position(|k| k.turn == key.turn && k.actor == key.actor)
            .unwrap();
        assert_eq!(
            part.row(i),
            full.row(j),
            "turn {} actor {}",
            key.turn,
            key.actor
        );
    }
}

#[test]
fn turn_sampling_is_deterministic_and_keeps_about_the_share_asked() {
    let set = set();
    let spec = spec_for(&set, 1);
    let sample = TurnSample::OneIn { every: 2, seed: 7 };
    let a = build_table(&spec, &[&set], &[(0, 0), (0, 1)], sample, &Cancel::new()).unwrap();
    let b = build_table(&spec, &[&set], &[(0, 0), (0, 1)], sample, &Cancel::new()).unwrap();
    assert_eq!(a.rows, b.rows);
    assert!(a.rows.len() < 10);
}

#[test]
fn rows_kept_from_an_every_turn_table_are_the_rows_a_sampled_build_gives() {
    // Sessions whose logs start at turn 0 (so start rows and turn-0 rows both carry turn 0),
    // with three actors and some turns where only one acts.
    let mut events = String::from("session,turn,actor,event,detail,score\n");
    let actors = ["Ama", "Bex", "Cole"];
    for g in 0..7 {
        for t in 0..(20 + 3 * g) {
            for (a, name) in actors.iter().enumerate() {
                if (t + a + g) % 3 != 1 {
                    events.push_str(&format!("s{g},{t},{name},raid,gate {t},{}\n", t + a));
                }
            }
        }
    }
    let outcomes = "session,winner\ns0,Ama\ns1,Bex\ns2,Cole\ns3,Ama\ns4,Bex\ns5,Cole\ns6,Ama\n";
    let set = load_set_from_reader(
        events.as_bytes(),
        EventSource::Csv,
        Some(outcomes.as_bytes()),
    );
    assert!(set.is_usable(), "{:?}", set.problems);
    let spec = spec_for(&set, 1);
    let sessions: Vec<(usize, usize)> = (0..7).rev().map(|k| (0, k)).collect();
    let cancel = Cancel::new();
    let base = TurnSample::OneIn { every: 1, seed: 3 };
    let full = build_training_table(&spec, &[&set], &sessions, TurnSample::All, &cancel).unwrap();
    for sample in [
        TurnSample::All,
        TurnSample::All.thinned(2, 11),
        TurnSample::All.thinned(3, 5),
        base.thinned(2, 3),
    ] {
        for starts in [true, false] {
            let kept = rows_kept(&full.rows, &[&set], sample, starts);
            let picked: Vec<usize> = (0..full.rows.len()).filter(|&i| kept[i]).collect();
            let built = if starts {
                build_training_table(&spec, &[&set], &sessions, sample, &cancel).unwrap()
            } else {
                build_table(&spec, &[&set], &sessions, sample, &cancel).unwrap()
            };
            assert_eq!(picked.len(), built.rows.len(), "{sample:?} starts {starts}");
            for (r, &i) in picked.iter().enumerate() {
                assert_eq!(full.rows[i], built.rows[r]);
                assert_eq!(full.row(i), built.row(r));
            }
        }
    }
}
