//! thetaseek command line: parse → run the subcommand → exit code.

mod cli;
mod commands;

use clap::Parser;
use std::process::ExitCode;

/// mimalloc instead of the system allocator (see Cargo.toml for the measurements).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> ExitCode {
    let cli = cli::Cli::parse();
    thetaseek::output::clean_up_on_signals();
    let result = match &cli.command {
        cli::Command::Analyze(args) => commands::analyze::run(args),
        cli::Command::Plan(args) => commands::plan::run(args),
        cli::Command::Next(args) => commands::next::run(args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("thetaseek: {error}");
            ExitCode::from(error.exit_code() as u8)
        }
    }
}
