//! The `tellturn` binary: a thin face over the engine library.

mod app;
mod cli;

use clap::Parser;

fn main() {
    let parsed = cli::Cli::parse();
    if parsed.command.is_none() {
        std::process::exit(app::run(parsed.sets));
    }
    let code = match cli::run(parsed) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("tellturn: {e:#}");
            2
        }
    };
    std::process::exit(code);
}
