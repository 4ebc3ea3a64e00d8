//! The `twistmode` binary: parse, run, exit.
use std::process::ExitCode;

mod cli;
mod commands;

fn main() -> ExitCode {
    match commands::run(cli::parse()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}
