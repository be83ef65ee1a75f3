//! Saving: ask where (native dialog off the UI thread, or a path field when no dialog can be
//! shown), then write atomically on a worker so a large report never stalls the window.

use super::dialogs::{Answer, Ask, Dialogs, Pending};
use super::jobs::{CANCELLED, Job};
use egui::RichText;
use std::path::{Path, PathBuf};

/// Writes the content to a path; runs on a worker.
pub type Writer = Box<
    dyn FnOnce(
            &Path,
            &dyn tellturn::progress::Progress,
            &tellturn::progress::Cancel,
        ) -> Result<(), String>
        + Send,
>;

/// Something waiting to be saved.
struct Request {
    what: String,
    name: String,
    extension: String,
    write: Writer,
}

/// The save flow's state.
#[derive(Default)]
pub struct Saver {
    request: Option<Request>,
    pending: Option<Pending>,
    asking_path: bool,
    path: String,
    writing: Vec<Job<PathBuf>>,
    /// Who answers the save dialogs.
    pub dialogs: Dialogs,
}

/// Write bytes atomically (temporary file, then rename).
pub fn bytes_writer(bytes: Vec<u8>) -> Writer {
    Box::new(
        move |p: &Path, _: &dyn tellturn::progress::Progress, _: &tellturn::progress::Cancel| {
            tellturn::atomic::write_atomic(p, &bytes).map_err(|e| format!("{}: {e}", p.display()))
        },
    )
}

impl Saver {
    /// A fresh flow whose dialogs are answered by `dialogs`.
    pub fn with_dialogs(dialogs: Dialogs) -> Self {
        Self {
            dialogs,
            ..Self::default()
        }
    }

    /// Start saving `what` (for messages) under a suggested file name.
    pub fn begin(
        &mut self,
        ctx: &egui::Context,
        no_dialogs: bool,
        what: &str,
        name: &str,
        extension: &str,
        write: Writer,
    ) {
        self.request = Some(Request {
            what: what.into(),
            name: name.into(),
            extension: extension.into(),
            write,
        });
        if no_dialogs {
            self.ask_path();
        } else {
            self.pending = Some(self.dialogs.show(
                ctx,
                Ask::SaveAs {
                    name: name.into(),
                    extension: extension.into(),
                },
            ));
        }
    }

    fn ask_path(&mut self) {
        self.asking_path = true;
        if let Some(r) = &self.request {
            let dir = std::env::current_dir().unwrap_or_default();
            self.path = dir.join(&r.name).display().to_string();
        }
    }

    fn write(&mut self, ctx: &egui::Context, path: PathBuf) {
        if let Some(r) = self.request.take() {
            let mut path = path;
            if path.extension().is_none() && !r.extension.is_empty() {
                path.set_extension(&r.extension);
            }
            let write = r.write;
            self.writing.push(Job::spawn_quick(
                ctx,
                format!("saving {}", r.what),
                move |progress, cancel| {
                    write(&path, progress, cancel)?;
                    Ok(path)
                },
            ));
        }
    }

    /// Advance the flow; returns messages (saved to …, or an error) and whether the dialog was
    /// found to be unavailable.
    pub fn poll(&mut self, ctx: &egui::Context) -> (Vec<Result<String, String>>, bool) {
        let mut unavailable = false;
        if let Some(p) = &self.pending
            && let Some(a) = p.poll()
        {
            self.pending = None;
            match a {
                Answer::Chosen(path) => self.write(ctx, path),
                Answer::Dismissed => self.request = None,
                Answer::Unavailable => {
                    unavailable = true;
                    self.ask_path();
                }
            }
        }
        let mut msgs = Vec::new();
        self.writing.retain_mut(|j| match j.poll() {
            Some(Ok(p)) => {
                msgs.push(Ok(format!("saved {}", p.display())));
                false
            }
            Some(Err(e)) if e == CANCELLED => {
                msgs.push(Ok(format!("{} stopped: cancelled", j.title)));
                false
            }
            Some(Err(e)) => {
                msgs.push(Err(format!("could not save: {e}")));
                false
            }
            None => true,
        });
        (msgs, unavailable)
    }

    /// Saves in progress: title, stage, seconds, and whether a cancel was asked for.
    pub fn busy(&self) -> Vec<(String, super::jobs::Stage, f32, bool)> {
        self.writing
            .iter()
            .map(|j| (j.title.clone(), j.stage(), j.seconds(), j.is_cancelling()))
            .collect()
    }

    /// Ask save `i` (in the order of [`Saver::busy`]) to stop; its cancelled result still arrives.
    pub fn cancel(&self, i: usize) {
        if let Some(j) = self.writing.get(i) {
            j.cancel();
        }
    }

    /// Whether anything is waiting for a dialog, a path or a write.
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn is_idle(&self) -> bool {
        self.request.is_none() && self.pending.is_none() && self.writing.is_empty()
    }

    /// The path window, shown when no dialog is available.
    pub fn window(&mut self, ctx: &egui::Context) {
        if !self.asking_path {
            return;
        }
        let what = self
            .request
            .as_ref()
            .map(|r| r.what.clone())
            .unwrap_or_default();
        let mut open = true;
        let mut chosen = None;
        egui::Window::new(format!("Save {what}")).open(&mut open).collapsible(false).show(ctx, |ui| {
            ui.label(RichText::new("No file dialog is available here; type where to save.").color(super::palette::warn(ui.visuals().dark_mode)));
            ui.horizontal(|ui| {
                let l = ui.label("Save to:");
                ui.add(egui::TextEdit::singleline(&mut self.path).desired_width(380.0)).labelled_by(l.id);
                if ui.button("Save").clicked() && !self.path.trim().is_empty() {
                    chosen = Some(PathBuf::from(self.path.trim()));
                }
            });
            ui.small("The file is written next to a temporary copy and renamed, so an existing file is never left half-written.");
        });
        if let Some(p) = chosen {
            self.asking_path = false;
            self.write(ctx, p);
        } else if !open {
            self.asking_path = false;
            self.request = None;
        }
    }
}
