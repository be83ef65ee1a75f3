//! Inputs that cost far more memory or time than their size: each loads with a clear warning,
//! at a cost in proportion to the input. Found by reading the importers while writing the fuzz
//! targets (the fuzzers' inputs, a few KiB, are too small to show them; see DEVELOPERS.md,
//! "Fuzzing").
//!
//! Memory is measured by counting the bytes this test binary allocates, so the tests take a
//! lock and run one at a time.

use std::alloc::{GlobalAlloc, Layout, System};
use std::path::Path;
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::Duration;
use tellturn::sessions::limits::MAX_COLUMNS;
use tellturn::sessions::{EventSource, SessionSet, load_set_from_reader};

/// The system allocator, counting the bytes live now and the most live since the last reset.
struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            let live = LIVE.fetch_add(layout.size(), Ordering::SeqCst) + layout.size();
            PEAK.fetch_max(live, Ordering::SeqCst);
        }
        p
    }
    unsafe fn dealloc(&self, p: *mut u8, layout: Layout) {
        unsafe { System.dealloc(p, layout) };
        LIVE.fetch_sub(layout.size(), Ordering::SeqCst);
    }
}

#[global_allocator]
static ALLOCATOR: Counting = Counting;

static ONE_AT_A_TIME: Mutex<()> = Mutex::new(());

/// The set `load` returns, and the most memory it had allocated at once beyond what was live
/// when it started.
fn peak_while(load: impl FnOnce() -> SessionSet) -> (SessionSet, usize) {
    let before = LIVE.load(Ordering::SeqCst);
    PEAK.store(before, Ordering::SeqCst);
    let set = load();
    (set, PEAK.load(Ordering::SeqCst) - before)
}

const MIB: usize = 1024 * 1024;

/// A JSON Lines file whose first line is 64 MiB long, then one good line.
#[test]
fn an_oversized_json_line_is_skipped_without_being_kept() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let mut data = vec![b'x'; 64 * MIB];
    data.extend_from_slice(
        b"\n{\"session\":\"s\",\"turn\":1,\"actor\":\"Ama\",\"event\":\"go\"}\n",
    );
    let (set, peak) = peak_while(|| load_set_from_reader(&data, EventSource::JsonLines, None));
    // The rest of the line used to be read into memory whole just to be thrown away.
    assert!(
        peak < 4 * MIB,
        "skipping a 64 MiB line allocated {peak} bytes"
    );
    let skipped: Vec<_> = set
        .problems
        .iter()
        .filter(|p| p.kind == "field_truncated")
        .collect();
    assert_eq!(skipped.len(), 1, "{:#?}", set.problems);
    assert_eq!(skipped[0].line, Some(1));
    assert_eq!(skipped[0].file, Path::new("events.jsonl"));
    assert!(
        skipped[0].message.contains("skipped"),
        "{}",
        skipped[0].message
    );
    assert_eq!(set.event_rows, 1, "the good line after it still loads");
    assert_eq!(set.sessions.len(), 1);
}

/// A header naming two million (empty) columns: 2 MB of commas.
#[test]
fn a_header_with_millions_of_columns_reads_only_the_first_ones() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let mut data = b"session,turn,actor,event".to_vec();
    data.extend(std::iter::repeat_n(b',', 2_000_000));
    data.extend_from_slice(b"\ns,1,Ama,go\ns,2,Bex,go\n");
    let (set, peak) = peak_while(|| load_set_from_reader(&data, EventSource::Csv, None));
    // The csv crate holds the header row whole, at 8 bytes per field and twice that while its
    // buffer grows (about 50 MB here); three strings per column on top of that came to about
    // 200 MB.
    assert!(peak < 80 * MIB, "a 2 MB header allocated {peak} bytes");
    let wide: Vec<_> = set
        .problems
        .iter()
        .filter(|p| p.kind == "header_too_wide")
        .collect();
    assert_eq!(wide.len(), 1, "{:#?}", set.problems);
    assert_eq!(wide[0].line, Some(1));
    assert_eq!(wide[0].file, Path::new("events.csv"));
    assert!(
        wide[0].message.contains(&format!(
            "names 2000004 columns; only the first {MAX_COLUMNS} are read"
        )),
        "{}",
        wide[0].message
    );
    assert_eq!(set.event_rows, 2, "the rows still load");
}

/// A 50,000-column header over 300,000 short rows (2.5 MB) once took minutes: every row
/// cleared every column the header named.
#[test]
fn short_rows_under_a_wide_header_cost_what_the_rows_hold() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let mut data = b"session,turn,actor,event".to_vec();
    data.extend(std::iter::repeat_n(b',', 50_000));
    data.push(b'\n');
    for i in 0..300_000 {
        let (session, turn, actor) = (i / 1000, i % 1000 / 2, ["Ama", "Bex"][i % 2]);
        data.extend_from_slice(format!("s{session},{turn},{actor},go\n").as_bytes());
    }
    let (send, receive) = mpsc::channel();
    std::thread::spawn(move || {
        // The test has failed by then if nobody receives it.
        let _ = send.send(load_set_from_reader(&data, EventSource::Csv, None));
    });
    // Well under a second here; the bound only catches the old behaviour (minutes).
    let set = receive
        .recv_timeout(Duration::from_secs(30))
        .expect("loading finished within 30 s");
    assert_eq!(set.event_rows, 300_000);
    assert_eq!(set.sessions.len(), 300);
    assert!(set.sessions.iter().all(|s| s.events.len() == 1000));
}
