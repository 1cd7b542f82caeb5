//! The push client: sends a packed return ([`Package`]) to the server with
//! the resumable upload protocol of RETURN-SPEC (after the IETF draft
//! "Resumable Uploads for HTTP"): create the upload, PATCH chunks at the
//! server's offset, and on any failure ask the server for its offset (HEAD)
//! and resume from there, with exponential backoff and a bounded number of
//! attempts and total time. Then it completes the upload and answers the
//! server's results.
//!
//! The client is handed a package; it never builds one. The field commands
//! ([`crate::field::push`]) pack the workspace, keep the package for a
//! resumed push, and mark the outbox with the results.
//!
//! Transport: ureq 3, plain HTTP or HTTPS (rustls with ring). An `https://`
//! server is checked against the Mozilla root certificates (webpki-roots)
//! or, with [`PushOptions::ca_file`], against the certificate authorities
//! of that PEM file only (a station's own local CA).

mod protocol;
mod retry;

use std::io::IsTerminal;
use std::path::Path;
use std::time::Duration;

use uuid::Uuid;

use crate::SyncError;

pub use protocol::{CompleteResponse, ReportResult};
pub use retry::Backoff;

/// Default chunk size of one PATCH: 1 MiB.
pub const DEFAULT_CHUNK_BYTES: usize = 1 << 20;
/// Largest chunk the server takes: 8 MiB (RETURN-SPEC).
pub const MAX_CHUNK_BYTES: usize = 8 << 20;

/// How to push.
#[derive(Debug, Clone)]
pub struct PushOptions {
    /// Bytes per PATCH, 1..=[`MAX_CHUNK_BYTES`]; default 1 MiB.
    pub chunk_bytes: usize,
    /// Most failed requests in one push before giving up; default 8.
    pub max_failures: u32,
    /// First wait after a failure; doubled each time; default 500 ms.
    pub initial_backoff: Duration,
    /// Longest wait between attempts; default 30 s.
    pub max_backoff: Duration,
    /// Longest a push may take in all; default 30 min.
    pub max_total: Duration,
    /// Timeout of one HTTP exchange; default 120 s.
    pub call_timeout: Duration,
    /// Show a progress bar (only ever drawn on a terminal); default true.
    pub progress: bool,
    /// PEM file of the certificate authorities to trust for `https://`
    /// instead of the Mozilla roots (a station's local CA); default none.
    pub ca_file: Option<std::path::PathBuf>,
}

impl Default for PushOptions {
    fn default() -> Self {
        PushOptions {
            chunk_bytes: DEFAULT_CHUNK_BYTES,
            max_failures: 8,
            initial_backoff: Duration::from_millis(500),
            max_backoff: Duration::from_secs(30),
            max_total: Duration::from_secs(30 * 60),
            call_timeout: Duration::from_secs(120),
            progress: true,
            ca_file: None,
        }
    }
}

impl PushOptions {
    /// Refuses options no push can run with.
    pub fn check(&self) -> Result<(), SyncError> {
        if self.chunk_bytes == 0 || self.chunk_bytes > MAX_CHUNK_BYTES {
            return Err(SyncError::Usage(format!(
                "chunk size must be 1..={MAX_CHUNK_BYTES} bytes"
            )));
        }
        Ok(())
    }
}

/// A packed return ready to send.
#[derive(Debug, Clone, Copy)]
pub struct Package<'a> {
    /// The return file.
    pub path: &'a Path,
    /// The bundle it answers.
    pub bundle_id: Uuid,
    /// SHA-256 of the file, lowercase hex.
    pub sha256: &'a str,
    /// Size of the file in bytes.
    pub size: u64,
}

/// What the server answered to a delivered package.
#[derive(Debug, Clone, PartialEq)]
pub struct Delivery {
    /// Server id of the upload.
    pub upload_id: String,
    /// The results of `complete`.
    pub results: CompleteResponse,
    /// Failed requests that were retried.
    pub retries: u32,
}

/// Sends `package` to `server_url`, resuming where the server stands.
pub fn send(
    package: &Package<'_>,
    server_url: &str,
    token: Option<&str>,
    options: &PushOptions,
) -> Result<Delivery, SyncError> {
    options.check()?;
    let bar = if options.progress && std::io::stderr().is_terminal() {
        indicatif::ProgressBar::new(package.size)
    } else {
        indicatif::ProgressBar::hidden()
    };
    let mut session = protocol::Session::new(server_url, token, options)?;
    let outcome = session.upload(
        package.path,
        package.bundle_id,
        package.sha256,
        package.size,
        &bar,
    );
    bar.finish_and_clear();
    let (upload_id, results) = outcome?;
    Ok(Delivery {
        upload_id,
        results,
        retries: session.failures(),
    })
}
