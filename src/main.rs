//! The `tellturn` binary: a thin face over the engine library.

mod cli;

use clap::Parser;

fn main() {
    let parsed = cli::Cli::parse();
    let code = match cli::run(parsed) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("tellturn: {e:#}");
            2
        }
    };
    std::process::exit(code);
}
