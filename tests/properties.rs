//! Property tests: import never panics on arbitrary bytes; per-turn chances always lie in [0, 1]
//! and, with the draw chance, sum to 1; a session's swings telescope.

use proptest::prelude::*;
use tellturn::analysis::traces::{Trace, TraceSource};
use tellturn::features::RowKey;
use tellturn::models::win_model::normalise;
use tellturn::sessions::{EventSource, load_set_from_reader};

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn csv_import_never_panics_on_arbitrary_bytes(events in proptest::collection::vec(any::<u8>(), 0..2000),
                                                  outcomes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let set = load_set_from_reader(&events, EventSource::Csv, Some(&outcomes));
        // Whatever came in, every problem can be printed and the counts are consistent.
        for p in &set.problems {
            let _ = p.to_string();
        }
        prop_assert!(set.finished().count() <= set.sessions.len());
    }

    #[test]
    fn json_lines_import_never_panics_on_arbitrary_bytes(events in proptest::collection::vec(any::<u8>(), 0..2000)) {
        let set = load_set_from_reader(&events, EventSource::JsonLines, None);
        prop_assert!(set.in_progress().count() <= set.sessions.len());
    }

    #[test]
    fn csv_like_text_never_panics(lines in proptest::collection::vec("[a-c0-9,;\"\\t -]{0,30}", 0..40)) {
        let text = format!("session,turn,actor,event,score\n{}", lines.join("\n"));
        let _ = load_set_from_reader(text.as_bytes(), EventSource::Csv, Some(b"session,winner\na,b\n"));
    }

    #[test]
    fn chances_and_draw_sum_to_one_in_every_turn(raw in proptest::collection::vec(0.0f64..1.0, 1..40),
                                                 draw in 0.0f64..1.0, actors in 2usize..6) {
        let n = raw.len() / actors * actors;
        prop_assume!(n > 0);
        let keys: Vec<RowKey> = (0..n).map(|i| RowKey { set: 0, session: 0, turn: (i / actors) as u32 + 1, actor: (i % actors) as u8, actors: actors as u8 }).collect();
        let d = vec![draw; n];
        let c = normalise(&keys, &raw[..n], Some(&d));
        for t in 0..n / actors {
            let s: f64 = c.win[t * actors..(t + 1) * actors].iter().sum::<f64>() + c.draw[t * actors];
            prop_assert!((s - 1.0).abs() < 1e-9);
            prop_assert!(c.win[t * actors..(t + 1) * actors].iter().all(|p| (0.0..=1.0).contains(p)));
        }
    }

    #[test]
    fn swings_telescope(chances in proptest::collection::vec(0.0f64..1.0, 2..60), start in 0.0f64..1.0) {
        // Win probability added (Mills & Mills 1970, as cited in CHECK_VALUES.md): the swings of a
        // session sum to its last chance minus its first.
        let turns = chances.len();
        let trace = Trace {
            set: 0, session: 0, actors: 1,
            turns: (1..=turns as u32).collect(),
            start: vec![start],
            chances: chances.clone(),
            draw: vec![0.0; turns],
            source: TraceSource::Test,
        };
        let total: f64 = (0..turns).map(|t| trace.swing(t, 0)).sum();
        prop_assert!((total - (chances[turns - 1] - start)).abs() < 1e-9);
    }
}
