//! Tests of the demo simulators: the truth against the simulators' own realised outcomes, the
//! promised game shapes (variant B decided later, the quirk turn, the first-player edge), and
//! determinism and the written files.
//!
//! The heavy sets (hundreds of sessions with Monte Carlo truth) are made once and shared; run
//! these with `cargo test --release demo::`.

use std::collections::{BTreeMap, HashMap};
use std::path::PathBuf;
use std::sync::OnceLock;

use super::*;
use crate::progress::{Cancel, NoProgress};

fn options(
    scenario: Scenario,
    variant: &str,
    sessions: usize,
    seed: u64,
    truth: bool,
) -> DemoOptions {
    DemoOptions {
        scenario,
        variant: variant.to_string(),
        sessions,
        seed,
        truth,
        in_progress: 0,
    }
}

fn make(opts: &DemoOptions) -> DemoSet {
    generate(opts, &NoProgress, &Cancel::new()).expect("valid options")
}

/// 300 variant-A playtests with truth, shared by the truth tests.
fn board_a() -> &'static DemoSet {
    static SET: OnceLock<DemoSet> = OnceLock::new();
    SET.get_or_init(|| make(&options(Scenario::BoardGame, "A", 300, 2024, true)))
}

/// 300 variant-B playtests with truth.
fn board_b() -> &'static DemoSet {
    static SET: OnceLock<DemoSet> = OnceLock::new();
    SET.get_or_init(|| make(&options(Scenario::BoardGame, "B", 300, 2025, true)))
}

/// Each session's truth trace per actor, in turn order.
fn traces(set: &DemoSet) -> HashMap<(String, String), Vec<(u32, f64)>> {
    let mut out: HashMap<(String, String), Vec<(u32, f64)>> = HashMap::new();
    for t in set.truth.as_ref().expect("set made with truth") {
        out.entry((t.session.clone(), t.actor.clone()))
            .or_default()
            .push((t.turn, t.p_true));
    }
    out
}

/// The first turn from which the winner's p_true stays at or above `threshold` to the end
/// (the decided turn of ARCHITECTURE.md's word list).
fn decided_turn(trace: &[(u32, f64)], threshold: f64) -> u32 {
    let mut turn = trace.last().map(|&(t, _)| t).unwrap_or(0);
    for &(t, p) in trace.iter().rev() {
        if p >= threshold {
            turn = t;
        } else {
            break;
        }
    }
    turn
}

fn winners(set: &DemoSet) -> HashMap<String, String> {
    set.outcomes
        .iter()
        .map(|o| (o.session.clone(), o.winner.clone()))
        .collect()
}

/// Reliability check (Murphy & Winkler's reliability diagram, common practice): in each of ten
/// p_true bins the observed win rate must match the bin's mean p_true. The observed outcomes are
/// the simulator's realised games, independent of the rollout streams behind p_true. Rows of one
/// session share its outcome, so the binomial standard error counts sessions, not rows.
fn assert_calibrated(set: &DemoSet) {
    let winners = winners(set);
    // bin -> (sum p, wins, rows, sessions seen)
    let mut bins: Vec<(f64, f64, usize, std::collections::BTreeSet<String>)> =
        (0..10).map(|_| (0.0, 0.0, 0, Default::default())).collect();
    for t in set.truth.as_ref().expect("truth") {
        let Some(winner) = winners.get(&t.session) else {
            continue;
        };
        let k = ((t.p_true * 10.0) as usize).min(9);
        let bin = &mut bins[k];
        bin.0 += t.p_true;
        bin.1 += f64::from(u8::from(*winner == t.actor));
        bin.2 += 1;
        bin.3.insert(t.session.clone());
    }
    let mut checked = 0;
    for (k, (sum_p, wins, rows, sessions)) in bins.iter().enumerate() {
        if *rows < 200 || sessions.len() < 20 {
            continue;
        }
        let predicted = sum_p / *rows as f64;
        let observed = wins / *rows as f64;
        let se = (predicted * (1.0 - predicted) / sessions.len() as f64).sqrt();
        let tolerance = 3.0 * se + 0.02;
        assert!(
            (observed - predicted).abs() < tolerance,
            "bin {k}: observed {observed:.3} vs predicted {predicted:.3} over {rows} rows from {} \
             sessions (tolerance {tolerance:.3})",
            sessions.len()
        );
        checked += 1;
    }
    assert!(checked >= 8, "only {checked} bins had enough rows");
}

#[test]
fn board_game_truth_is_calibrated_against_realised_outcomes() {
    assert_calibrated(board_a());
    assert_calibrated(board_b());
}

#[test]
fn exercise_truth_is_calibrated_against_realised_outcomes() {
    let set = make(&options(Scenario::Exercise, "A", 400, 77, true));
    assert_calibrated(&set);
}

#[test]
fn last_turn_truth_is_certain_for_the_winner() {
    for set in [board_a(), board_b()] {
        let traces = traces(set);
        for o in &set.outcomes {
            for ((session, actor), trace) in traces.iter().filter(|((s, _), _)| *s == o.session) {
                let last = trace.last().expect("a trace has turns").1;
                let expected = if o.winner == *actor { 1.0 } else { 0.0 };
                assert_eq!(last, expected, "{session} {actor}: winner {}", o.winner);
            }
        }
    }
}

#[test]
fn truth_covers_every_turn_and_actor_and_never_sums_above_one() {
    let set = board_a();
    let mut turns: BTreeMap<(String, u32), usize> = BTreeMap::new();
    for e in &set.events {
        turns.entry((e.session.clone(), e.turn)).or_insert(0);
    }
    let mut sums: BTreeMap<(String, u32), f64> = BTreeMap::new();
    for t in set.truth.as_ref().expect("truth") {
        assert!((0.0..=1.0).contains(&t.p_true));
        *turns
            .get_mut(&(t.session.clone(), t.turn))
            .expect("truth turn is a logged turn") += 1;
        *sums.entry((t.session.clone(), t.turn)).or_insert(0.0) += t.p_true;
    }
    assert!(
        turns.values().all(|&n| n == 2),
        "two actors per logged turn"
    );
    assert!(sums.values().all(|&s| s <= 1.0 + 1e-12));
    // A draw is possible, so some sums fall short of one.
    assert!(sums.values().any(|&s| s < 1.0));
}

#[test]
fn variant_b_is_decided_later_than_variant_a() {
    let mean_decided = |set: &DemoSet| {
        let traces = traces(set);
        let decided: Vec<f64> = set
            .outcomes
            .iter()
            .filter(|o| o.winner != "draw")
            .map(|o| {
                f64::from(decided_turn(
                    &traces[&(o.session.clone(), o.winner.clone())],
                    0.9,
                ))
            })
            .collect();
        decided.iter().sum::<f64>() / decided.len() as f64
    };
    let a = mean_decided(board_a());
    let b = mean_decided(board_b());
    // Decided turns spread over ~15 turns, so the mean of ~290 has a standard error near 1 turn;
    // a 4-turn margin is several standard errors.
    assert!(b > a + 4.0, "mean decided turn A {a:.1}, B {b:.1}");
}

#[test]
fn first_player_wins_more_often_in_variant_a_than_in_b() {
    let share = |variant: &str| {
        let set = make(&options(Scenario::BoardGame, variant, 2000, 99, false));
        let first = set.outcomes.iter().filter(|o| o.winner == o.first).count();
        first as f64 / set.outcomes.len() as f64
    };
    let a = share("A");
    let b = share("B");
    // Binomial standard error of each share over 2,000 sessions is about 0.011.
    assert!((0.54..=0.63).contains(&a), "A first-player share {a:.3}");
    assert!(a > b + 0.03, "first-player share A {a:.3}, B {b:.3}");
}

#[test]
fn draws_are_rare() {
    for variant in ["A", "B"] {
        let set = make(&options(Scenario::BoardGame, variant, 2000, 5, false));
        let draws = set.outcomes.iter().filter(|o| o.winner == "draw").count();
        let share = draws as f64 / set.outcomes.len() as f64;
        assert!(
            (0.003..=0.05).contains(&share),
            "{variant}: draw share {share:.3}"
        );
    }
}

#[test]
fn quirk_turn_moves_win_chances_more_than_its_neighbours() {
    let set = board_a();
    let traces = traces(set);
    let mut swing: BTreeMap<u32, (f64, usize)> = BTreeMap::new();
    for o in &set.outcomes {
        let trace = &traces[&(o.session.clone(), o.first.clone())];
        for pair in trace.windows(2) {
            let entry = swing.entry(pair[1].0).or_insert((0.0, 0));
            entry.0 += (pair[1].1 - pair[0].1).abs();
            entry.1 += 1;
        }
    }
    let mean = |turn: u32| swing[&turn].0 / swing[&turn].1 as f64;
    let quirk = mean(vessmire::QUIRK_TURN);
    for neighbour in [12, 13, 15, 16] {
        let other = mean(neighbour);
        assert!(
            quirk > 1.3 * other,
            "mean |Δp| at turn {} is {quirk:.4}, at turn {neighbour} {other:.4}",
            vessmire::QUIRK_TURN
        );
    }
}

#[test]
fn skilled_players_show_it_in_their_glean_rate() {
    let set = make(&options(Scenario::BoardGame, "A", 600, 31, false));
    let mut counts: HashMap<&str, (f64, f64)> = HashMap::new();
    for e in &set.events {
        if matches!(
            e.event.as_str(),
            "glean" | "scrape" | "fumble" | "wickburn" | "flare"
        ) {
            let c = counts.entry(e.actor.as_str()).or_insert((0.0, 0.0));
            c.0 += f64::from(u8::from(e.event == "glean"));
            c.1 += 1.0;
        }
    }
    let pairs: Vec<(f64, f64)> = set
        .hidden_skills
        .iter()
        .map(|h| {
            let (g, n) = counts[h.actor.as_str()];
            (h.skill, g / n)
        })
        .collect();
    // Pearson correlation across the twelve players.
    let n = pairs.len() as f64;
    let (mx, my) = (
        pairs.iter().map(|p| p.0).sum::<f64>() / n,
        pairs.iter().map(|p| p.1).sum::<f64>() / n,
    );
    let cov: f64 = pairs.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let vx: f64 = pairs.iter().map(|p| (p.0 - mx).powi(2)).sum();
    let vy: f64 = pairs.iter().map(|p| (p.1 - my).powi(2)).sum();
    let r = cov / (vx * vy).sqrt();
    assert!(r > 0.7, "skill vs glean-rate correlation {r:.3}");
}

#[test]
fn board_game_sessions_have_the_promised_shape() {
    let set = make(&options(Scenario::BoardGame, "A", 600, 3, false));
    let mut last_turn: HashMap<&str, u32> = HashMap::new();
    let mut rows_per_actor_turn: HashMap<(&str, u32, &str), usize> = HashMap::new();
    let labels: std::collections::BTreeSet<&str> =
        set.events.iter().map(|e| e.event.as_str()).collect();
    for e in &set.events {
        last_turn.insert(&e.session, e.turn);
        if !e.actor.is_empty() {
            *rows_per_actor_turn
                .entry((&e.session, e.turn, &e.actor))
                .or_default() += 1;
        }
    }
    let lengths: Vec<u32> = last_turn.values().copied().collect();
    let short = lengths.iter().filter(|&&l| l < 25).count() as f64 / lengths.len() as f64;
    assert!(short < 0.03, "share of sessions under 25 turns: {short:.3}");
    assert!(lengths.iter().all(|&l| l <= vessmire::TURN_LIMIT));
    assert!((10..=25).contains(&labels.len()), "{} labels", labels.len());
    assert!(labels.iter().all(|l| vessmire::EVENT_LABELS.contains(l)));
    // One or two rows per action; the first player has up to four on the quirk turn.
    for (&(_, turn, _), &rows) in &rows_per_actor_turn {
        let most = if turn == vessmire::QUIRK_TURN { 4 } else { 2 };
        assert!((1..=most).contains(&rows), "{rows} rows on turn {turn}");
    }
    let routes: std::collections::BTreeSet<&str> =
        set.outcomes.iter().map(|o| o.victory.as_str()).collect();
    assert_eq!(routes.len(), 3, "every route occurs: {routes:?}");
    let dir = temp_dir("size");
    write_set(&set, &dir).expect("write");
    let bytes = std::fs::metadata(dir.join("events.csv"))
        .expect("events.csv")
        .len();
    assert!(
        bytes <= 4_000_000,
        "events.csv of 600 sessions is {bytes} bytes"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn same_seed_gives_identical_sets_at_any_thread_count() {
    let opts = DemoOptions {
        in_progress: 3,
        ..options(Scenario::BoardGame, "B", 24, 11, true)
    };
    let on = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("thread pool")
            .install(|| make(&opts))
    };
    let one = on(1);
    let two = on(2);
    assert_eq!(one, two);
    assert_eq!(one, make(&opts));
    let (d1, d2) = (temp_dir("det1"), temp_dir("det2"));
    write_set(&one, &d1).expect("write");
    write_set(&two, &d2).expect("write");
    for file in ["events.csv", "outcomes.csv", "truth.csv"] {
        let a = std::fs::read(d1.join(file)).expect("read");
        let b = std::fs::read(d2.join(file)).expect("read");
        assert!(a == b, "{file} differs");
    }
    let other_seed = make(&DemoOptions {
        seed: 12,
        ..opts.clone()
    });
    assert_ne!(one.events, other_seed.events);
    let _ = std::fs::remove_dir_all(&d1);
    let _ = std::fs::remove_dir_all(&d2);
}

fn temp_dir(tag: &str) -> PathBuf {
    std::env::temp_dir().join(format!("tellturn-demo-test-{tag}-{}", std::process::id()))
}

#[test]
fn written_files_parse_back_with_the_expected_headers() {
    let opts = DemoOptions {
        in_progress: 1,
        ..DemoOptions::for_scenario(Scenario::Exercise)
    };
    let set = make(&DemoOptions {
        truth: true,
        ..opts
    });
    let dir = temp_dir("parse");
    write_set(&set, &dir).expect("write");

    let mut events = csv::Reader::from_path(dir.join("events.csv")).expect("events.csv");
    assert_eq!(events.headers().expect("header"), EVENTS_HEADER.as_slice());
    let parsed: Vec<EventRow> = events
        .deserialize()
        .collect::<Result<_, _>>()
        .expect("rows");
    assert_eq!(parsed, set.events);

    let mut outcomes = csv::Reader::from_path(dir.join("outcomes.csv")).expect("outcomes.csv");
    assert_eq!(
        outcomes.headers().expect("header"),
        OUTCOMES_HEADER.as_slice()
    );
    let parsed: Vec<OutcomeRow> = outcomes
        .deserialize()
        .collect::<Result<_, _>>()
        .expect("rows");
    assert_eq!(parsed, set.outcomes);

    let mut truth = csv::Reader::from_path(dir.join("truth.csv")).expect("truth.csv");
    assert_eq!(truth.headers().expect("header"), TRUTH_HEADER.as_slice());
    let parsed: Vec<TruthRow> = truth.deserialize().collect::<Result<_, _>>().expect("rows");
    assert_eq!(Some(parsed), set.truth);

    // Writing a set without truth removes the stale truth.csv.
    write_set(&DemoSet { truth: None, ..set }, &dir).expect("rewrite");
    assert!(!dir.join("truth.csv").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn default_exercise_weekend_has_sixteen_finished_sessions_and_one_in_progress() {
    let opts = DemoOptions {
        truth: true,
        ..DemoOptions::for_scenario(Scenario::Exercise)
    };
    let set = make(&opts);
    let sessions: std::collections::BTreeSet<&str> =
        set.events.iter().map(|e| e.session.as_str()).collect();
    assert_eq!(sessions.len(), 17);
    assert_eq!(set.outcomes.len(), 16);
    for o in &set.outcomes {
        assert!([tarnsluice::TEAM, tarnsluice::CELL].contains(&o.winner.as_str()));
        assert!(
            tarnsluice::ROUTES.contains(&o.victory.as_str()),
            "{}",
            o.victory
        );
        assert_eq!(o.first, tarnsluice::TEAM);
    }
    let neutral = set.events.iter().filter(|e| e.actor.is_empty()).count();
    assert!(neutral > 0, "injects are neutral rows");
    for t in set.truth.as_ref().expect("truth") {
        assert!((0.0..=1.0).contains(&t.p_true));
    }
    // The team's and the cell's chances add up to one at every turn: the exercise has no draw.
    let mut sums: BTreeMap<(&str, u32), f64> = BTreeMap::new();
    for t in set.truth.as_ref().expect("truth") {
        *sums.entry((t.session.as_str(), t.turn)).or_insert(0.0) += t.p_true;
    }
    assert!(sums.values().all(|s| (s - 1.0).abs() < 1e-12));
}

#[test]
fn exercise_sessions_last_twenty_to_forty_turns_mostly() {
    let set = make(&options(Scenario::Exercise, "A", 1000, 8, false));
    let mut last: HashMap<&str, u32> = HashMap::new();
    for e in &set.events {
        last.insert(&e.session, e.turn);
    }
    let lengths: Vec<u32> = last.values().copied().collect();
    let inside = lengths.iter().filter(|&&l| (18..=40).contains(&l)).count() as f64;
    assert!(inside / lengths.len() as f64 > 0.9);
    let team = set
        .outcomes
        .iter()
        .filter(|o| o.winner == tarnsluice::TEAM)
        .count() as f64;
    let share = team / set.outcomes.len() as f64;
    assert!((0.3..=0.7).contains(&share), "team wins {share:.3}");
}

#[test]
fn unfinished_sessions_have_no_outcome_and_a_cut_log() {
    let full = make(&options(Scenario::BoardGame, "A", 30, 4, true));
    let cut = make(&DemoOptions {
        in_progress: 5,
        ..options(Scenario::BoardGame, "A", 30, 4, true)
    });
    assert_eq!(cut.outcomes.len(), 25);
    assert_eq!(cut.outcomes[..], full.outcomes[..25]);
    let last = |set: &DemoSet, session: &str| {
        set.events
            .iter()
            .filter(|e| e.session == session)
            .map(|e| e.turn)
            .max()
    };
    for o in &full.outcomes[25..] {
        let full_last = last(&full, &o.session).expect("logged");
        let cut_last = last(&cut, &o.session).expect("still logged");
        assert!(
            cut_last < full_last,
            "{}: cut at {cut_last} of {full_last}",
            o.session
        );
        // The kept part of the log and its truth are unchanged by the cut.
        let kept: Vec<&EventRow> = full
            .events
            .iter()
            .filter(|e| e.session == o.session && e.turn <= cut_last)
            .collect();
        let got: Vec<&EventRow> = cut
            .events
            .iter()
            .filter(|e| e.session == o.session)
            .collect();
        assert_eq!(kept, got);
        let truth_turns = cut
            .truth
            .as_ref()
            .expect("truth")
            .iter()
            .filter(|t| t.session == o.session)
            .map(|t| t.turn)
            .max();
        assert_eq!(truth_turns, Some(cut_last));
    }
}

#[test]
fn bad_options_get_precise_errors() {
    let err = Scenario::from_name("nosuch").expect_err("unknown");
    assert!(err.to_string().contains("vessmire") && err.to_string().contains("nosuch"));
    assert_eq!(Scenario::from_name(" Vessmire "), Ok(Scenario::BoardGame));
    assert_eq!(Scenario::from_name("tarnsluice"), Ok(Scenario::Exercise));

    let bad_variant = options(Scenario::BoardGame, "C", 10, 1, false);
    assert!(matches!(
        generate(&bad_variant, &NoProgress, &Cancel::new()),
        Err(DemoError::UnknownVariant { .. })
    ));
    let exercise_b = options(Scenario::Exercise, "B", 10, 1, false);
    assert!(exercise_b.check().is_err());
    assert_eq!(
        options(Scenario::BoardGame, "A", 0, 1, false).check(),
        Err(DemoError::NoSessions)
    );
    let too_many = DemoOptions {
        in_progress: 11,
        ..options(Scenario::BoardGame, "A", 10, 1, false)
    };
    assert_eq!(
        too_many.check(),
        Err(DemoError::TooManyInProgress {
            in_progress: 11,
            sessions: 10
        })
    );
    assert!(DemoOptions::default().check().is_ok());
}

#[test]
fn a_cancelled_run_stops_with_cancelled() {
    let cancel = Cancel::new();
    cancel.cancel();
    let result = generate(
        &options(Scenario::BoardGame, "A", 50, 1, true),
        &NoProgress,
        &cancel,
    );
    assert_eq!(result, Err(DemoError::Cancelled(Cancelled)));
}
