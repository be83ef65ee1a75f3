//! Native file dialogs, run off the UI thread (a portal dialog can take as long as the user
//! likes, and a fallback dialog may block its thread), with the answer sent back on a channel.
//!
//! When no dialog can be shown (no desktop portal), rfd answers "nothing chosen" at once; a
//! reply faster than a person could click is taken as "no dialog available", and the window
//! offers a path field instead.
//!
//! Who answers is a [`Chooser`]: the native dialogs in the program, a scripted list of answers
//! in tests.

use std::path::PathBuf;
use std::sync::Arc;
use std::sync::mpsc::{Receiver, TryRecvError, channel};
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
        /// Extension without the dot (`png`, `csv`, `json`, `html`); empty for a folder.
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

/// Whatever answers the dialogs. It is called on a thread of its own and may block.
pub trait Chooser: Send + Sync {
    /// Show a dialog for `ask` and wait for its answer.
    fn choose(&self, ask: &Ask) -> Answer;
}

/// The desktop's native dialogs (through rfd).
pub struct Native;

impl Chooser for Native {
    fn choose(&self, ask: &Ask) -> Answer {
        let started = Instant::now();
        let picked = match ask {
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
            Ask::SaveAs { name, extension } => {
                let d = rfd::FileDialog::new()
                    .set_title("Save as")
                    .set_file_name(name);
                if extension.is_empty() {
                    d.save_file()
                } else {
                    d.add_filter(extension, &[extension.as_str()]).save_file()
                }
            }
        };
        match picked {
            Some(p) => Answer::Chosen(p),
            None if started.elapsed() < TOO_FAST => Answer::Unavailable,
            None => Answer::Dismissed,
        }
    }
}

/// The dialogs a dashboard uses (cheap to clone; shared by the Open and Save flows).
#[derive(Clone)]
pub struct Dialogs(Arc<dyn Chooser>);

impl Default for Dialogs {
    fn default() -> Self {
        Self(Arc::new(Native))
    }
}

impl std::fmt::Debug for Dialogs {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Dialogs")
    }
}

impl Dialogs {
    /// Dialogs answered by `chooser` instead of the desktop.
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn with(chooser: Arc<dyn Chooser>) -> Self {
        Self(chooser)
    }

    /// Show a dialog on its own thread.
    pub fn show(&self, ctx: &egui::Context, ask: Ask) -> Pending {
        let (tx, rx) = channel();
        let ctx = ctx.clone();
        let chooser = self.0.clone();
        std::thread::spawn(move || {
            let answer = chooser.choose(&ask);
            let _ = tx.send(answer);
            ctx.request_repaint();
        });
        Pending { rx }
    }
}

/// A dialog in flight.
pub struct Pending {
    rx: Receiver<Answer>,
}

impl Pending {
    /// The answer, once there is one. A dialog thread that died without answering counts as
    /// "no dialog available", so the window offers its path field instead of waiting forever.
    pub fn poll(&self) -> Option<Answer> {
        match self.rx.try_recv() {
            Ok(a) => Some(a),
            Err(TryRecvError::Empty) => None,
            Err(TryRecvError::Disconnected) => Some(Answer::Unavailable),
        }
    }
}
