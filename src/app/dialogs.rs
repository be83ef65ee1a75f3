//! Native file dialogs, run off the UI thread (a portal dialog can take as long as the user
//! likes, and a fallback dialog may block its thread), with the answer sent back on a channel.
//!
//! When no dialog can be shown (no desktop portal), rfd answers "nothing chosen" at once; a
//! reply faster than a person could click is taken as "no dialog available", and the window
//! offers a path field instead.

use std::path::PathBuf;
use std::sync::mpsc::{Receiver, channel};
use std::time::{Duration, Instant};

/// Replies faster than this cannot have come from a person.
const TOO_FAST: Duration = Duration::from_millis(250);

/// What a dialog was asked for.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Ask {
    /// A session-set folder.
    Folder,
    /// An events file (CSV or JSON Lines).
    EventsFile,
    /// A model file to load.
    ModelFile,
    /// Where to save, with a suggested file name and extension.
    SaveAs {
        /// Suggested file name.
        name: String,
        /// Extension without the dot (`png`, `csv`, `json`, `html`).
        extension: String,
    },
}

/// The answer of a dialog.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Answer {
    /// A path was chosen.
    Chosen(PathBuf),
    /// The user closed the dialog without choosing.
    Dismissed,
    /// No dialog could be shown on this desktop.
    Unavailable,
}

/// A dialog in flight.
pub struct Pending {
    rx: Receiver<Answer>,
}

impl Pending {
    /// Show a dialog on its own thread.
    pub fn show(ctx: &egui::Context, ask: Ask) -> Self {
        let (tx, rx) = channel();
        let ctx = ctx.clone();
        std::thread::spawn(move || {
            let started = Instant::now();
            let picked = match &ask {
                Ask::Folder => rfd::FileDialog::new()
                    .set_title("Open a session-set folder")
                    .pick_folder(),
                Ask::EventsFile => rfd::FileDialog::new()
                    .set_title("Open an events file")
                    .add_filter("session events", &["csv", "tsv", "txt", "jsonl", "ndjson"])
                    .pick_file(),
                Ask::ModelFile => rfd::FileDialog::new()
                    .set_title("Load a model file")
                    .add_filter("tellturn model", &["json"])
                    .pick_file(),
                Ask::SaveAs { name, extension } => rfd::FileDialog::new()
                    .set_title("Save as")
                    .set_file_name(name)
                    .add_filter(extension, &[extension.as_str()])
                    .save_file(),
            };
            let answer = match picked {
                Some(p) => Answer::Chosen(p),
                None if started.elapsed() < TOO_FAST => Answer::Unavailable,
                None => Answer::Dismissed,
            };
            let _ = tx.send(answer);
            ctx.request_repaint();
        });
        Self { rx }
    }

    /// The answer, once there is one.
    pub fn poll(&self) -> Option<Answer> {
        self.rx.try_recv().ok()
    }
}
