//! The exoscreen binary: parse the command line, run, map the outcome to an exit status.

use clap::Parser;
use exoscreen::cli::{AppError, Cli, Outcome, run};
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(Outcome::Computed) => ExitCode::SUCCESS,
        Ok(Outcome::GateFailed) => ExitCode::from(3),
        Err(error) => report(&error),
    }
}

fn report(error: &AppError) -> ExitCode {
    eprintln!("exoscreen: {error}");
    ExitCode::from(error.exit_code())
}
