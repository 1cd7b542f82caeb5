//! The `groundproof` command: a thin layer over the library. Parses the
//! command line, runs the command, and decides the exit code in one place.

mod cli;

use std::process::ExitCode;

fn main() -> ExitCode {
    cli::init_logging();
    match cli::run() {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::FAILURE
        }
    }
}
