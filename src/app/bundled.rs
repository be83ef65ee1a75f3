//! The sample session sets the dashboard opens when started with no set named: the
//! `sample_sessions/` folder beside the current directory or the program when there is one,
//! else the copies built into the program.

use std::path::{Path, PathBuf};

/// Sets inside a `sample_sessions/` folder near the current directory or the executable.
pub fn sample_folders() -> Vec<PathBuf> {
    let mut roots = Vec::new();
    if let Ok(cwd) = std::env::current_dir() {
        roots.push(cwd.join("sample_sessions"));
    }
    if let Ok(exe) = std::env::current_exe() {
        for dir in exe.ancestors().skip(1).take(4) {
            roots.push(dir.join("sample_sessions"));
        }
    }
    for root in roots {
        let sets = sets_in(&root);
        if !sets.is_empty() {
            return sets;
        }
    }
    Vec::new()
}

/// Sub-folders of `root` that look like session sets, in name order.
fn sets_in(root: &Path) -> Vec<PathBuf> {
    let Ok(entries) = std::fs::read_dir(root) else {
        return Vec::new();
    };
    let mut sets: Vec<PathBuf> = entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| {
            p.is_dir()
                && (p.join("events.csv").is_file()
                    || p.join("events.jsonl").is_file()
                    || p.join("sessions").is_dir())
        })
        .collect();
    // The two variants of the board game first, so Compare opens on them.
    let rank = |p: &PathBuf| {
        let n = p
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        (
            ["vessmire-a", "vessmire-b", "vessmire-weekend"]
                .iter()
                .position(|k| *k == n)
                .unwrap_or(9),
            n,
        )
    };
    sets.sort_by_key(rank);
    sets
}

/// A sample built into the program: its name, events CSV and outcomes CSV.
pub struct Embedded {
    /// The set's name.
    pub name: &'static str,
    /// `events.csv` bytes.
    pub events: &'static [u8],
    /// `outcomes.csv` bytes.
    pub outcomes: &'static [u8],
}

/// The samples built into the program.
pub fn embedded() -> Vec<Embedded> {
    vec![
        Embedded {
            name: "vessmire-a",
            events: include_bytes!("../../sample_sessions/vessmire-a/events.csv"),
            outcomes: include_bytes!("../../sample_sessions/vessmire-a/outcomes.csv"),
        },
        Embedded {
            name: "vessmire-b",
            events: include_bytes!("../../sample_sessions/vessmire-b/events.csv"),
            outcomes: include_bytes!("../../sample_sessions/vessmire-b/outcomes.csv"),
        },
        Embedded {
            name: "vessmire-weekend",
            events: include_bytes!("../../sample_sessions/vessmire-weekend/events.csv"),
            outcomes: include_bytes!("../../sample_sessions/vessmire-weekend/outcomes.csv"),
        },
        Embedded {
            name: "tarnsluice-exercise",
            events: include_bytes!("../../sample_sessions/tarnsluice-exercise/events.csv"),
            outcomes: include_bytes!("../../sample_sessions/tarnsluice-exercise/outcomes.csv"),
        },
    ]
}
