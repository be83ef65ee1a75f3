//! The `tellturn` binary: a thin face over the engine library.

#[cfg(feature = "dashboard")]
mod app;
mod cli;

use clap::Parser;

fn main() {
    let parsed = cli::Cli::parse();
    if parsed.command.is_none() {
        std::process::exit(open_dashboard(parsed.sets));
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

#[cfg(feature = "dashboard")]
fn open_dashboard(sets: Vec<std::path::PathBuf>) -> i32 {
    app::run(sets)
}

#[cfg(not(feature = "dashboard"))]
fn open_dashboard(_sets: Vec<std::path::PathBuf>) -> i32 {
    eprintln!(
        "tellturn: this build has no dashboard (built without the `dashboard` feature); \
         run `tellturn --help` for the commands"
    );
    2
}
