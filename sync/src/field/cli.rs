//! Command-line arguments of `groundproof-field` (clap derive).

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};
use uuid::Uuid;

/// Field kit: open a bundle, record reports with photos, pack and push the return.
#[derive(Debug, Parser)]
#[command(name = "groundproof-field", version)]
pub struct Cli {
    /// Workspace folder holding the opened bundle and the outbox.
    #[arg(long, global = true, default_value = super::DEFAULT_WORKSPACE, env = "GROUNDPROOF_FIELD_WORKSPACE")]
    pub workspace: PathBuf,
    #[command(subcommand)]
    pub command: Command,
}

/// One command.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Verify a bundle (signature-free checks, expiry) and unpack it into the workspace.
    Open {
        /// The bundle ZIP from the office.
        bundle: PathBuf,
    },
    /// List events and control points in visit order with their state.
    List,
    /// Show one event or control point; with --from, the distance and bearing to it.
    Show {
        /// Event or control code, e.g. K0417.
        code: String,
        /// Where you are: LAT,LON (decimal degrees).
        #[arg(long, allow_hyphen_values = true)]
        from: Option<String>,
    },
    /// Record a report for an event or control point, or a new clearing.
    Report {
        /// Event or control code (omit with --new-clearing).
        code: Option<String>,
        /// A clearing found on the way, not in the bundle.
        #[arg(long)]
        new_clearing: bool,
        #[command(flatten)]
        fields: ReportArgs,
    },
    /// Record a correction of report ID: a new report that supersedes it. Fields not
    /// given are copied from the original.
    Amend {
        /// Id of the report to correct.
        id: Uuid,
        #[command(flatten)]
        fields: ReportArgs,
    },
    /// Pack the reports not yet acknowledged into a signed return ZIP.
    Pack {
        /// Where to write the return.
        #[arg(long)]
        out: PathBuf,
        /// Include every report, also acknowledged and rejected ones.
        #[arg(long)]
        all: bool,
    },
    /// Pack and push the return to the server (resumable upload).
    Push {
        /// Server base URL, e.g. http://10.0.0.2:8080
        #[arg(long)]
        server: String,
        /// Team token.
        #[arg(long, env = "GROUNDPROOF_TEAM_TOKEN")]
        token: Option<String>,
        /// Chunk size in bytes.
        #[arg(long, default_value_t = crate::client::DEFAULT_CHUNK_BYTES)]
        chunk_bytes: usize,
        /// For an https:// server: PEM file of the certificate authority to trust
        /// (a station's local CA) instead of the usual public ones.
        #[arg(long)]
        ca_file: Option<std::path::PathBuf>,
    },
    /// Show the bundle, the reports and their push state.
    Status,
    /// Show or set the cameras' time zone for this trip, as an offset from UTC (e.g. +03:00):
    /// a photo whose EXIF time has neither an offset nor a GPS time stamp is placed in it.
    /// Until set it is UTC (the bundle does not yet carry the organisation's zone).
    CameraZone {
        /// Offset from UTC, `+HH:MM` or `-HH:MM`.
        #[arg(allow_hyphen_values = true)]
        offset: Option<String>,
    },
}

/// The fields of a report.
#[derive(Debug, Clone, Default, Args)]
pub struct ReportArgs {
    /// confirmed, false_alarm, inconclusive or not_reached; at a control point
    /// (checklist 2): no_clearing_found, clearing_found, inconclusive or not_reached.
    #[arg(long)]
    pub outcome: Option<String>,
    /// Reason (false_alarm or not_reached), from the checklist.
    #[arg(long)]
    pub reason: Option<String>,
    /// Cause (confirmed, clearing_found), from the checklist.
    #[arg(long)]
    pub cause: Option<String>,
    /// Photo files (JPEG); repeat or list several.
    #[arg(long = "photo", num_args = 1..)]
    pub photos: Vec<PathBuf>,
    /// Position LAT,LON[,ACCURACY_M]; without it the photos' GPS is used.
    #[arg(long, allow_hyphen_values = true)]
    pub at: Option<String>,
    /// When you were there (RFC 3339); default: the earliest photo time, else now.
    #[arg(long)]
    pub time: Option<String>,
    /// Estimated cleared area in hectares (needed with clearing_found).
    #[arg(long)]
    pub area_ha: Option<f64>,
    /// Free notes (at most 4000 characters).
    #[arg(long)]
    pub notes: Option<String>,
}
