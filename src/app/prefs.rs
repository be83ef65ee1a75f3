//! What the dashboard remembers between runs (eframe storage): recent sets, threshold, theme
//! and model kind. Window size and panel layout are kept by eframe itself.

use serde::{Deserialize, Serialize};
use std::path::PathBuf;
use tellturn::evaluate::train::ModelChoice;

/// Most recent sets remembered.
pub const MAX_RECENT: usize = 8;

/// The key the remembered settings are stored under.
const KEY: &str = "tellturn-prefs";

/// The settings remembered in `storage`, or the defaults when there are none (or they cannot
/// be read, e.g. after an incompatible change).
pub fn load(storage: Option<&dyn eframe::Storage>) -> Prefs {
    storage
        .and_then(|s| eframe::get_value(s, KEY))
        .unwrap_or_default()
}

/// Remember the settings in `storage` (eframe writes it to disk on exit and every 30 s).
pub fn save(storage: &mut dyn eframe::Storage, prefs: &Prefs) {
    eframe::set_value(storage, KEY, prefs);
}

/// The model kinds offered.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum ModelPick {
    /// Let validation choose.
    Auto,
    /// Gradient-boosted trees.
    Boosted,
    /// Logistic regression.
    Logistic,
}

impl ModelPick {
    /// The engine's choice.
    pub fn choice(self) -> ModelChoice {
        match self {
            ModelPick::Auto => ModelChoice::Auto,
            ModelPick::Boosted => ModelChoice::Boosted,
            ModelPick::Logistic => ModelChoice::Logistic,
        }
    }
    /// The words in the menu.
    pub fn words(self) -> &'static str {
        match self {
            ModelPick::Auto => "best of both (auto)",
            ModelPick::Boosted => "boosted trees",
            ModelPick::Logistic => "logistic regression",
        }
    }
}

/// The remembered settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Prefs {
    /// Sets opened recently, newest first.
    pub recent: Vec<PathBuf>,
    /// The decided-turn threshold.
    pub threshold: f64,
    /// Dark theme.
    pub dark: bool,
    /// Model kind.
    pub model: ModelPick,
}

impl Default for Prefs {
    fn default() -> Self {
        Self {
            recent: Vec::new(),
            threshold: 0.75,
            dark: true,
            model: ModelPick::Auto,
        }
    }
}

impl Prefs {
    /// Put a set at the top of the recent list.
    pub fn remember(&mut self, path: &std::path::Path) {
        let p = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        self.recent.retain(|r| r != &p);
        self.recent.insert(0, p);
        self.recent.truncate(MAX_RECENT);
    }
}
