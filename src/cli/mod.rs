//! The command line: one clap struct per subcommand, whose doc comments are the help text.

pub mod check;
pub mod demo;
pub mod features;
pub mod progress;
pub mod report;
pub mod score;
pub mod train;

use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;

/// tellturn — learn when recorded games were decided, what swung them, whether they are fair,
/// and whether a rule variant changed that.
///
/// With no subcommand, opens the dashboard on the sets named (or on the bundled sample sessions).
/// Results describe recorded sessions; they are not forecasts of real-world events.
#[derive(Debug, Parser)]
#[command(name = "tellturn", version, about, long_about)]
pub struct Cli {
    /// What to do; none opens the dashboard.
    #[command(subcommand)]
    pub command: Option<Command>,
    /// Session-set folders to open in the dashboard.
    pub sets: Vec<PathBuf>,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Read session sets and report what they hold and every problem found (file:line: message).
    Check(CheckArgs),
    /// Learn per-turn win chances from finished sessions, check them on held-out sessions, and
    /// save the model.
    Train(TrainArgs),
    /// Train with cross-fitting, analyse when games were decided, what swung them, balance and
    /// (with --vs or a variant column) the comparison, and write report.html with its tables.
    Report(ReportArgs),
    /// Write every session's win chances, turn by turn, from a saved model.
    Score(ScoreArgs),
    /// Export the turn table (one row per session, turn and actor) with readable column names.
    Features(FeaturesArgs),
    /// Write an invented demo session set (a board-game playtest or a training exercise),
    /// optionally with the simulator's true win chances.
    Demo(DemoArgs),
}

/// Options of `tellturn demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Which simulator: `vessmire` (a two-player board-game playtest) or `tarnsluice` (a
    /// tabletop flood-response exercise).
    #[arg(long, default_value = "vessmire")]
    pub scenario: String,
    /// Rule variant (`A` or `B` for the board game; B changes one rule so games are decided later).
    #[arg(long)]
    pub variant: Option<String>,
    /// Sessions to write (default: 600 for the board game, 17 for the exercise).
    #[arg(long)]
    pub sessions: Option<usize>,
    /// How many of them are still in progress (no outcome; the log stops mid-game).
    #[arg(long)]
    pub in_progress: Option<usize>,
    /// Seed (same seed, same files).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Also write truth.csv: each actor's true win chance after every turn, from the simulator's
    /// full state (for checking what tellturn recovers).
    #[arg(long)]
    pub truth: bool,
    /// The folder to write (created if needed).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// No progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Model kinds on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ModelArg {
    /// Choose by session-grouped validation.
    Auto,
    /// Gradient-boosted trees.
    #[value(alias = "gbdt")]
    Boosted,
    /// L2-penalised logistic regression.
    Logistic,
}

/// Options of `tellturn train`.
#[derive(Debug, Args)]
pub struct TrainArgs {
    /// Session-set folders to train on.
    #[arg(required = true, value_name = "SET")]
    pub sets: Vec<PathBuf>,
    /// Where to write the model file (JSON).
    #[arg(long, value_name = "FILE")]
    pub model_out: PathBuf,
    /// Training settings.
    #[command(flatten)]
    pub train: TrainSettings,
    /// No progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Training settings shared by `train` and `report`.
#[derive(Debug, Args)]
pub struct TrainSettings {
    /// Which model to fit; `auto` picks the one with the lower validation log loss.
    #[arg(long, value_enum, default_value = "auto")]
    pub model: ModelArg,
    /// Seed of the session split, bins, subsampling and bootstrap (same seed, same results).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Share of finished sessions held out as the untouched test set.
    #[arg(long, default_value_t = 0.2)]
    pub test_share: f64,
    /// Folds for session-grouped cross-validation and cross-fitting.
    #[arg(long, default_value_t = 5)]
    pub folds: usize,
    /// Early stopping: evaluations of 10 trees without improvement before boosting stops.
    #[arg(long, default_value_t = 3)]
    pub patience: usize,
    /// Skip the learning curve (held-out loss against the number of training sessions).
    #[arg(long)]
    pub no_learning_curve: bool,
    /// Print seconds spent per stage.
    #[arg(long)]
    pub timings: bool,
}

impl TrainSettings {
    /// The engine's training options from these arguments.
    pub fn options(&self) -> tellturn::evaluate::train::TrainOptions {
        use tellturn::evaluate::train::{ModelChoice, TrainOptions};
        let defaults = TrainOptions::default();
        TrainOptions {
            choice: match self.model {
                ModelArg::Auto => ModelChoice::Auto,
                ModelArg::Boosted => ModelChoice::Boosted,
                ModelArg::Logistic => ModelChoice::Logistic,
            },
            seed: self.seed,
            test_share: self.test_share,
            folds: self.folds,
            boosted: tellturn::models::BoostedParams {
                patience: self.patience,
                ..defaults.boosted.clone()
            },
            cross_fit: false,
            learning_curve: !self.no_learning_curve,
            ..defaults
        }
    }
}

/// Options of `tellturn report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Session-set folders (side A; with one set holding two variants, each variant is a side).
    #[arg(required = true, value_name = "SET")]
    pub sets: Vec<PathBuf>,
    /// Session-set folders to compare against (side B, with its own model).
    #[arg(long, num_args = 1.., value_name = "SET")]
    pub vs: Vec<PathBuf>,
    /// Win chance the eventual winner must keep to the end for a game to count as decided.
    #[arg(long, default_value_t = 0.9)]
    pub threshold: f64,
    /// Bootstrap resamples (of whole sessions) for event-impact intervals.
    #[arg(long, default_value_t = 1000)]
    pub bootstrap: usize,
    /// Do not split one set by its `variant` column into sides with their own models.
    #[arg(long)]
    pub no_variant_split: bool,
    /// The folder to write (created if needed; never an input folder).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Training settings.
    #[command(flatten)]
    pub train: TrainSettings,
    /// No progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Options of `tellturn score`.
#[derive(Debug, Args)]
pub struct ScoreArgs {
    /// A model file written by `tellturn train`.
    #[arg(long, value_name = "FILE")]
    pub model: PathBuf,
    /// Session-set folders to score (in-progress sessions included).
    #[arg(required = true, value_name = "SET")]
    pub sets: Vec<PathBuf>,
    /// Where to write `session,turn,actor,p_win` rows.
    #[arg(long, value_name = "FILE.csv")]
    pub out: PathBuf,
    /// No progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Options of `tellturn features`.
#[derive(Debug, Args)]
pub struct FeaturesArgs {
    /// The session-set folder.
    #[arg(value_name = "SET")]
    pub set: PathBuf,
    /// Where to write the table (CSV).
    #[arg(long, value_name = "FILE.csv")]
    pub out: PathBuf,
    /// Turns in the recent-window counts.
    #[arg(long, default_value_t = 5)]
    pub window: u32,
    /// Keep a detail word only when it appears in at least this many sessions.
    #[arg(long, default_value_t = 5)]
    pub min_word_sessions: usize,
    /// No progress on stderr.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Load sets, stopping with a clear error when one is unusable; warnings are summarised.
pub fn load_sets(
    paths: &[PathBuf],
    progress: &progress::StderrProgress,
) -> anyhow::Result<Vec<tellturn::sessions::SessionSet>> {
    let mut sets = Vec::new();
    for path in paths {
        let set = tellturn::sessions::load_set(path);
        if !set.is_usable() {
            let first = set
                .problems
                .iter()
                .find(|p| p.severity == tellturn::sessions::Severity::Unusable)
                .map(|p| p.to_string())
                .unwrap_or_default();
            anyhow::bail!(
                "{} cannot be used: {first}\n(run `tellturn check {}` for every problem)",
                path.display(),
                path.display()
            );
        }
        let finished = set.finished().count();
        progress.note(&format!(
            "loaded {}: {} sessions ({finished} finished, {} in progress, {} set aside){}",
            path.display(),
            set.sessions.len(),
            set.sessions.len() - finished,
            set.set_aside.len(),
            if set.problems.is_empty() {
                String::new()
            } else {
                format!("; {} problem(s) — see `tellturn check`", set.problems.len())
            }
        ));
        sets.push(set);
    }
    Ok(sets)
}

/// Options of `tellturn check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Session-set folders (or events files) to check.
    #[arg(required = true, value_name = "SET")]
    pub sets: Vec<PathBuf>,
    /// Print the same information as JSON.
    #[arg(long)]
    pub json: bool,
}

/// Run a parsed command line; returns the process exit code.
pub fn run(cli: Cli) -> anyhow::Result<i32> {
    match cli.command {
        Some(Command::Check(args)) => check::run(&args),
        Some(Command::Train(args)) => train::run(&args),
        Some(Command::Report(args)) => report::run(&args),
        Some(Command::Score(args)) => score::run(&args),
        Some(Command::Features(args)) => features::run(&args),
        Some(Command::Demo(args)) => demo::run(&args),
        None => {
            use clap::CommandFactory;
            Cli::command().print_help()?;
            Ok(0)
        }
    }
}
