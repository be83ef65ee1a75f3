//! Opening sets: the native dialog (off the UI thread), a path field that always works, the
//! recent sets, and files or folders dropped onto the window.

use super::dialogs::{Answer, Ask, Dialogs, Pending};
use egui::{RichText, Ui};
use std::path::PathBuf;

/// The Open window's state.
#[derive(Default)]
pub struct Opener {
    /// Whether the window is shown.
    pub open: bool,
    path: String,
    pending: Option<Pending>,
    /// Set once a dialog answered faster than a person could: no dialog on this desktop.
    pub no_dialogs: bool,
    note: Option<String>,
    /// Who answers the dialogs.
    pub dialogs: Dialogs,
}

/// What the Open window was asked to open.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Opened {
    /// A session-set folder or events file.
    Set(PathBuf),
    /// A model file, to score the chosen set with.
    Model(PathBuf),
}

impl Opener {
    /// A fresh flow whose dialogs are answered by `dialogs`.
    pub fn with_dialogs(dialogs: Dialogs) -> Self {
        Self {
            dialogs,
            ..Self::default()
        }
    }

    /// Show the window, optionally with a note (why it opened).
    pub fn show(&mut self, note: Option<String>) {
        self.open = true;
        self.note = note;
    }

    /// Ask the native dialog for a folder or file.
    pub fn browse(&mut self, ctx: &egui::Context, ask: Ask) {
        if self.no_dialogs {
            self.show(Some(
                "No file dialog can be shown on this desktop; type or paste the path below.".into(),
            ));
            return;
        }
        self.pending = Some(self.dialogs.show(ctx, ask));
    }

    /// Paths chosen this frame (from the dialog or from the path field).
    pub fn poll(&mut self) -> Vec<PathBuf> {
        let mut out = Vec::new();
        if let Some(p) = &self.pending
            && let Some(answer) = p.poll()
        {
            self.pending = None;
            match answer {
                Answer::Chosen(path) => out.push(path),
                Answer::Dismissed => {}
                Answer::Unavailable => {
                    self.no_dialogs = true;
                    self.show(Some(
                        "No file dialog could be shown here (no desktop portal). Type or paste the path of a session-set folder or an events file below, or drop it onto the window.".into(),
                    ));
                }
            }
        }
        out
    }

    /// Draw the window; returns what to open.
    pub fn window(&mut self, ctx: &egui::Context, recent: &[PathBuf]) -> Vec<Opened> {
        let mut out = Vec::new();
        if !self.open {
            return out;
        }
        let mut open = self.open;
        egui::Window::new("Open session sets")
            .open(&mut open)
            .collapsible(false)
            .default_width(520.0)
            .show(ctx, |ui| {
                if let Some(n) = &self.note {
                    ui.label(RichText::new(n).color(super::palette::warn(ui.visuals().dark_mode)));
                    ui.add_space(4.0);
                }
                ui.label("A session set is a folder holding events.csv (or events.jsonl, or sessions/<id>.csv) and outcomes.csv. You can also name the events file itself.");
                ui.horizontal(|ui| {
                    let l = ui.label("Path:");
                    let r = ui
                        .add(egui::TextEdit::singleline(&mut self.path).desired_width(360.0).hint_text("/path/to/set-folder"))
                        .labelled_by(l.id)
                        .on_hover_text("The folder of a session set, or its events file. Press Enter or click Open.");
                    let enter = r.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
                    if (ui.button("Open").clicked() || enter) && !self.path.trim().is_empty() {
                        out.push(Opened::Set(PathBuf::from(self.path.trim())));
                        self.path.clear();
                    }
                    if ui
                        .button("Load as model")
                        .on_hover_text("The path is a model file saved earlier (Export → Save model, or `tellturn train`): score the chosen set with it instead of training here.")
                        .clicked()
                        && !self.path.trim().is_empty()
                    {
                        out.push(Opened::Model(PathBuf::from(self.path.trim())));
                        self.path.clear();
                    }
                });
                if !self.no_dialogs {
                    ui.horizontal(|ui| {
                        if ui.button("Choose a folder…").clicked() {
                            self.pending = Some(self.dialogs.show(ui.ctx(), Ask::Folder));
                        }
                        if ui.button("Choose an events file…").clicked() {
                            self.pending = Some(self.dialogs.show(ui.ctx(), Ask::EventsFile));
                        }
                        if self.pending.is_some() {
                            ui.spinner();
                            ui.label("waiting for the dialog…");
                        }
                    });
                }
                if !recent.is_empty() {
                    ui.separator();
                    ui.label("Recent sets:");
                    for p in recent {
                        if ui.link(p.display().to_string()).on_hover_text("Open this set again").clicked() {
                            out.push(Opened::Set(p.clone()));
                        }
                    }
                }
                ui.separator();
                ui.small("Tip: drag folders or files from your file manager onto the window to open them. Several sets can be open at once; the Compare tab puts two side by side.");
            });
        self.open = open && out.is_empty();
        out
    }

    /// Folders and files dropped onto the window this frame.
    pub fn dropped(ui: &Ui) -> Vec<PathBuf> {
        ui.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .collect()
        })
    }
}
