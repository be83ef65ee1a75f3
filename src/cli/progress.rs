//! Progress on stderr and Ctrl-C as a cancel flag, for the command line.

use std::io::{IsTerminal, Write};
use std::sync::Mutex;
use std::time::{Duration, Instant};
use tellturn::progress::{Cancel, Progress};

/// Draws `stage … 42 %` on stderr, at most every 200 ms (one line per stage when not a terminal).
pub struct StderrProgress {
    state: Mutex<(String, Instant)>,
    terminal: bool,
    quiet: bool,
}

impl StderrProgress {
    /// A new progress line; `quiet` turns it off.
    pub fn new(quiet: bool) -> Self {
        StderrProgress {
            state: Mutex::new((String::new(), Instant::now() - Duration::from_secs(1))),
            terminal: std::io::stderr().is_terminal(),
            quiet,
        }
    }
    /// End the current line.
    pub fn finish(&self) {
        if self.terminal && !self.quiet {
            eprint!("\r\x1b[K");
        }
    }
    /// Print a message line without breaking the progress line.
    pub fn note(&self, message: &str) {
        if self.quiet {
            return;
        }
        self.finish();
        eprintln!("{message}");
    }
}

impl Progress for StderrProgress {
    fn report(&self, stage: &str, fraction: f64) {
        if self.quiet {
            return;
        }
        let Ok(mut state) = self.state.lock() else {
            return;
        };
        let new_stage = state.0 != stage;
        if self.terminal {
            if new_stage || state.1.elapsed() >= Duration::from_millis(200) {
                eprint!(
                    "\r\x1b[K{stage} … {:>3.0} %",
                    (fraction * 100.0).clamp(0.0, 100.0)
                );
                let _ = std::io::stderr().flush();
                state.1 = Instant::now();
            }
        } else if new_stage {
            eprintln!("{stage} …");
        }
        if new_stage {
            state.0 = stage.to_string();
        }
    }
}

/// A cancel flag that Ctrl-C sets (a second Ctrl-C exits at once).
pub fn ctrl_c_cancel() -> Cancel {
    let cancel = Cancel::new();
    let flag = cancel.clone();
    let _ = ctrlc::set_handler(move || {
        if flag.is_cancelled() {
            std::process::exit(130);
        }
        eprintln!("\ntellturn: stopping (Ctrl-C again to quit at once) …");
        flag.cancel();
    });
    cancel
}
