//! The `groundproof-field` commands: open a bundle into a workspace, list and
//! show the stops, record and amend reports with photos, pack a signed
//! return, push it to the server, and show the status. The binary only calls
//! [`run`]; every command is a library function so tests can drive it.

mod cli;
mod commands;
mod geo_calc;
mod push;
mod record;
pub mod workspace;

use std::ffi::OsString;
use std::process::ExitCode;

use clap::Parser;

pub use cli::{Cli, Command, ReportArgs};
pub use geo_calc::{distance_bearing, parse_lat_lon};
pub use push::{PENDING_JSON, PENDING_ZIP, PackSummary, PushSummary, pack_workspace, push};
pub use workspace::{FieldControl, FieldEvent, Snapshot, Stop};

use crate::SyncError;

/// Default workspace folder.
pub const DEFAULT_WORKSPACE: &str = "./groundproof-field";

/// Parses `args` (the first is the program name) and runs the command. Help and
/// usage errors are printed by clap and give its exit code; a refused command
/// is an `Err` the binary prints.
pub fn run<I, T>(args: I) -> Result<ExitCode, SyncError>
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    match Cli::try_parse_from(args) {
        Ok(cli) => commands::execute(cli).map(|()| ExitCode::SUCCESS),
        Err(e) => {
            let code = e.exit_code();
            // If printing the help fails there is nowhere left to report it.
            let _ = e.print();
            Ok(ExitCode::from(u8::try_from(code).unwrap_or(2)))
        }
    }
}
