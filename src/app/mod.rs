//! The desktop dashboard (eframe/egui): a face over the same engine calls as the CLI. It lives in
//! the binary, so the engine library has no GUI dependency.

mod bundled;
mod dashboard;
mod dialogs;
mod facts;
mod follow;
mod jobs;
mod opener;
mod palette;
mod prefs;
mod saver;
#[cfg(test)]
mod soft_render;
#[cfg(test)]
mod tests;
mod views;
mod workspace;

#[allow(unused_imports)] // `Tab` is used by the frame benchmark, which includes this module.
pub use dashboard::{Dashboard, Setup, Tab};
#[allow(unused_imports)] // used by the frame benchmark, which includes this module.
pub use prefs::Prefs;

/// The logistic model kind (for benchmarks, which cannot name private modules).
#[allow(dead_code)]
pub fn prefs_logistic() -> prefs::ModelPick {
    prefs::ModelPick::Logistic
}

use std::path::PathBuf;

/// The eframe app: the dashboard plus saving its settings.
struct App(Dashboard);

impl eframe::App for App {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        self.0.ui(ui);
    }
    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        prefs::save(storage, &self.0.prefs);
    }
}

/// Open the dashboard on the sets named (or on the sample sessions); returns the exit code.
pub fn run(paths: Vec<PathBuf>) -> i32 {
    let options = eframe::NativeOptions {
        viewport: egui::ViewportBuilder::default()
            .with_title("tellturn — when was it decided?")
            .with_inner_size([1280.0, 800.0])
            .with_min_inner_size([720.0, 480.0])
            .with_drag_and_drop(true),
        ..Default::default()
    };
    let result = eframe::run_native(
        "tellturn",
        options,
        Box::new(move |cc| {
            let prefs = prefs::load(cc.storage);
            let setup = Setup {
                paths,
                ..Setup::default()
            };
            Ok(Box::new(App(Dashboard::new(&cc.egui_ctx, prefs, setup))))
        }),
    );
    match result {
        Ok(()) => 0,
        Err(e) => {
            eprintln!(
                "tellturn: the dashboard could not start: {e}\n(the command-line tools still work: see `tellturn --help`)"
            );
            1
        }
    }
}
