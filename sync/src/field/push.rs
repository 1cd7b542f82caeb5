//! `groundproof-field pack` and `push`: packs the workspace's reports into a
//! signed return; a push packs the unsent ones, hands the package to the
//! push client ([`crate::client::send`]), and marks each report
//! acknowledged or rejected in the outbox.
//!
//! The packed return is kept in `outgoing/pending.zip` with the list of its
//! reports, so a push interrupted by a crash or a flat battery resumes the
//! same upload (same SHA-256) instead of starting a new one.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

use super::workspace::{OUTGOING, Snapshot, camera_zone_record};
use crate::SyncError;
use crate::client::{Package, PushOptions, ReportResult, send};
use crate::outbox::{Outbox, PushState, write_atomic};
use crate::returns::{ReturnHeader, ReturnManifest, pack_return, sha256_file};

/// Pending return file in `outgoing/`.
pub const PENDING_ZIP: &str = "pending.zip";
/// Its description in `outgoing/`.
pub const PENDING_JSON: &str = "pending.json";

/// What a push did.
#[derive(Debug, Clone, PartialEq)]
pub struct PushSummary {
    /// Server id of the upload.
    pub upload_id: String,
    /// Server id of the return taken in.
    pub return_id: i64,
    /// Size of the return in bytes.
    pub bytes: u64,
    /// SHA-256 of the return.
    pub sha256: String,
    /// Reports accepted.
    pub accepted: usize,
    /// Reports the server already had.
    pub duplicate: usize,
    /// Rejected reports with the server's reason.
    pub rejected: Vec<(Uuid, String)>,
    /// Failed requests that were retried.
    pub retries: u32,
}

/// What [`pack_workspace`] wrote.
#[derive(Debug, Clone)]
pub struct PackSummary {
    /// The return file.
    pub path: PathBuf,
    /// Its manifest.
    pub manifest: ReturnManifest,
    /// Ids of the reports in it.
    pub report_ids: Vec<uuid::Uuid>,
}

/// Packs the workspace's reports into a signed return at `out` (written to a
/// temporary file and renamed). Without `all`, acknowledged and rejected reports
/// are left out. Fails when there is nothing to pack.
pub fn pack_workspace(
    ws: &Path,
    out: &Path,
    all: bool,
    now: DateTime<Utc>,
) -> Result<PackSummary, SyncError> {
    let snap = Snapshot::load(ws)?;
    let outbox = Outbox::open(ws)?;
    let reports: Vec<_> = outbox
        .reports()?
        .into_iter()
        .filter(|r| all || matches!(r.state, PushState::NotSent | PushState::Sent))
        .map(|r| r.report)
        .collect();
    if reports.is_empty() {
        return Err(SyncError::Usage(
            "nothing to pack: every report is acknowledged or rejected (use --all to pack them anyway)"
                .into(),
        ));
    }
    let shas: BTreeSet<&str> = reports
        .iter()
        .flat_map(|r| r.photos.iter().map(|p| p.sha256.as_str()))
        .collect();
    let photos: Vec<PathBuf> = shas.iter().map(|s| outbox.photo_path(s)).collect();
    let header = ReturnHeader {
        bundle_id: snap.bundle_id,
        team: snap.team.clone(),
        checklist_version: snap.checklist.version,
        created_at: now,
        camera_zone: Some(camera_zone_record(ws)?),
    };
    let dir = match out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_owned(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir)
        .map_err(|e| SyncError::io(format!("create {}", dir.display()), e))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".return-")
        .tempfile_in(&dir)
        .map_err(|e| SyncError::io("create temporary return", e))?;
    let manifest = pack_return(
        std::io::BufWriter::new(tmp.as_file_mut()),
        &header,
        &snap.upload_key()?,
        &reports,
        &photos,
    )?;
    tmp.as_file()
        .sync_all()
        .map_err(|e| SyncError::io("fsync return", e))?;
    tmp.persist(out)
        .map_err(|e| SyncError::io(format!("write {}", out.display()), e.error))?;
    crate::outbox::sync_dir(&dir)?;
    Ok(PackSummary {
        path: out.to_owned(),
        manifest,
        report_ids: reports.iter().map(|r| r.report_id).collect(),
    })
}

#[derive(Debug, Serialize, Deserialize, PartialEq)]
struct Pending {
    report_ids: Vec<Uuid>,
    sha256: String,
    size: u64,
}

/// Packs (or reuses the pending return of) `workspace`, hands it to the
/// push client for `server_url`, and marks the reports in the outbox with
/// the server's results.
pub fn push(
    workspace: &Path,
    server_url: &str,
    token: Option<&str>,
    options: &PushOptions,
) -> Result<PushSummary, SyncError> {
    options.check()?;
    let snap = Snapshot::load(workspace)?;
    let mut outbox = Outbox::open(workspace)?;
    let outgoing = workspace.join(OUTGOING);
    let zip_path = outgoing.join(PENDING_ZIP);
    let json_path = outgoing.join(PENDING_JSON);
    let to_send = unsent_report_ids(&outbox)?;
    let pending = pending_return(workspace, &zip_path, &json_path, &to_send)?;
    let size = check_pending_unchanged(&zip_path, &json_path, &pending)?;
    let now = Utc::now();
    outbox.set_state(
        &pending
            .report_ids
            .iter()
            .map(|id| (*id, PushState::Sent))
            .collect::<Vec<_>>(),
        now,
    )?;

    let package = Package {
        path: &zip_path,
        bundle_id: snap.bundle_id,
        sha256: &pending.sha256,
        size,
    };
    let delivery = send(&package, server_url, token, options)?;
    let results = delivery.results;

    let tally = tally_results(&results.results, &pending.report_ids);
    let done = Utc::now();
    outbox.set_state(&tally.updates, done)?;
    outbox.set_last_push(done)?;
    // The return is taken in; a later push packs anew.
    remove_pending(&json_path, &zip_path)?;
    Ok(PushSummary {
        upload_id: delivery.upload_id,
        return_id: results.return_id,
        bytes: size,
        sha256: pending.sha256,
        accepted: tally.accepted,
        duplicate: tally.duplicate,
        rejected: tally.rejected,
        retries: delivery.retries,
    })
}

/// Ids of the reports not yet acknowledged or rejected, sorted.
fn unsent_report_ids(outbox: &Outbox) -> Result<Vec<Uuid>, SyncError> {
    let mut to_send: Vec<Uuid> = outbox
        .reports()?
        .into_iter()
        .filter(|r| matches!(r.state, PushState::NotSent | PushState::Sent))
        .map(|r| r.report.report_id)
        .collect();
    to_send.sort();
    Ok(to_send)
}

/// The pending return when it holds exactly `to_send`; otherwise packs the
/// workspace anew into `zip_path` and records it in `json_path`.
fn pending_return(
    workspace: &Path,
    zip_path: &Path,
    json_path: &Path,
    to_send: &[Uuid],
) -> Result<Pending, SyncError> {
    let reuse = std::fs::read(json_path)
        .ok()
        .and_then(|b| serde_json::from_slice::<Pending>(&b).ok())
        .filter(|p| p.report_ids == to_send && zip_path.exists());
    if let Some(p) = reuse {
        return Ok(p);
    }
    let packed = pack_workspace(workspace, zip_path, false, Utc::now())?;
    let mut ids = packed.report_ids;
    ids.sort();
    let (sha256, size) = sha256_file(zip_path)?;
    let p = Pending {
        report_ids: ids,
        sha256,
        size,
    };
    let bytes = serde_json::to_vec_pretty(&p)
        .map_err(|e| SyncError::InvalidInput(format!("pending: {e}")))?;
    write_atomic(json_path, &bytes)?;
    Ok(p)
}

/// Checks that the pending return on disk is the one recorded, and returns
/// its size.
fn check_pending_unchanged(
    zip_path: &Path,
    json_path: &Path,
    pending: &Pending,
) -> Result<u64, SyncError> {
    let (sha, size) = sha256_file(zip_path)?;
    if sha != pending.sha256 || size != pending.size {
        return Err(SyncError::Push(format!(
            "{} changed on disk; delete it and {} and push again",
            zip_path.display(),
            json_path.display()
        )));
    }
    Ok(size)
}

/// The server's results counted, with the outbox state of each report sent.
struct Tally {
    updates: Vec<(Uuid, PushState)>,
    accepted: usize,
    duplicate: usize,
    rejected: Vec<(Uuid, String)>,
}

/// Counts the server's results and turns those about `sent` reports into
/// outbox states.
fn tally_results(results: &[ReportResult], sent: &[Uuid]) -> Tally {
    let mut updates = Vec::new();
    let (mut accepted, mut duplicate, mut rejected) = (0, 0, Vec::new());
    for r in results {
        let state = match r.status.as_str() {
            "accepted" => {
                accepted += 1;
                PushState::Acknowledged
            }
            "duplicate" => {
                duplicate += 1;
                PushState::Acknowledged
            }
            _ => {
                let reason = r.reason.clone().unwrap_or_else(|| "no reason given".into());
                rejected.push((r.report_id, reason.clone()));
                PushState::Rejected(reason)
            }
        };
        if sent.contains(&r.report_id) {
            updates.push((r.report_id, state));
        }
    }
    Tally {
        updates,
        accepted,
        duplicate,
        rejected,
    }
}

/// Removes the pending return and its description (either may be gone already).
fn remove_pending(json_path: &Path, zip_path: &Path) -> Result<(), SyncError> {
    for p in [json_path, zip_path] {
        if let Err(e) = std::fs::remove_file(p)
            && e.kind() != std::io::ErrorKind::NotFound
        {
            return Err(SyncError::io(format!("remove {}", p.display()), e));
        }
    }
    Ok(())
}
