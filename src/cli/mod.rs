//! The command line: one clap struct per subcommand, whose doc comments are the help text.

pub mod check;

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
        None => {
            use clap::CommandFactory;
            Cli::command().print_help()?;
            Ok(0)
        }
    }
}
