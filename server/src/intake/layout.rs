//! Where intake keeps its files in the data directory, the upload lifetime,
//! and the process-wide intake lock: the bottom of the intake, imported by
//! [`super::files`], [`super::pipeline`] and [`super::uploads`] and importing
//! none of them.
//!
//! | path | what |
//! |---|---|
//! | `uploads/<upload id>.part` | bytes of a resumable upload so far (fsynced before each acknowledgement) |
//! | `returns/incoming/<sha256>.zip` | a return package, durable before it is parsed; kept as received |
//! | `returns/rejected/<sha256>.zip` | a package refused as a whole (kept for inspection) |
//! | `evidence/<ab>/<sha256>.jpg` | a photo, named by the SHA-256 of its bytes, never modified |
//! | `evidence/thumbs/<ab>/<sha256>.jpg` | its 320-pixel thumbnail (derived) |
//!
//! `<ab>` is the first two hex digits of the hash. Every file is written with
//! [`crate::platform::durable::write_durably`] (temp file, fsync, rename, folder fsync)
//! before any database row names it.

use super::IntakeError;
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

static INTAKE: Mutex<()> = Mutex::new(());

/// The process-wide intake lock (one package at a time).
pub(crate) fn intake_lock() -> MutexGuard<'static, ()> {
    INTAKE.lock().unwrap_or_else(|p| p.into_inner())
}

/// Days an open upload may stay untouched before the clean-up removes it.
pub const UPLOAD_MAX_AGE_DAYS: i64 = 7;

/// Folder of resumable upload data.
pub const UPLOADS_DIR: &str = "uploads";
/// Folder of received packages.
pub const INCOMING_DIR: &str = "returns/incoming";
/// Folder of refused packages.
pub const REJECTED_DIR: &str = "returns/rejected";
/// Folder of evidence photos.
pub const EVIDENCE_DIR: &str = "evidence";
/// Folder of thumbnails inside [`EVIDENCE_DIR`].
pub const THUMBS_DIR: &str = "thumbs";

/// `evidence/ab/<sha>.jpg` under `data_dir`; `sha` must be 64 lowercase hex digits.
pub fn photo_path(data_dir: &Path, sha: &str) -> PathBuf {
    data_dir
        .join(EVIDENCE_DIR)
        .join(&sha[..2])
        .join(format!("{sha}.jpg"))
}

/// `evidence/thumbs/ab/<sha>.jpg` under `data_dir`.
pub fn thumb_path(data_dir: &Path, sha: &str) -> PathBuf {
    data_dir
        .join(EVIDENCE_DIR)
        .join(THUMBS_DIR)
        .join(&sha[..2])
        .join(format!("{sha}.jpg"))
}

/// `uploads/<id>.part` under `data_dir`; `id` is server-made (hex).
pub fn upload_path(data_dir: &Path, id: &str) -> PathBuf {
    data_dir.join(UPLOADS_DIR).join(format!("{id}.part"))
}

/// `returns/incoming/<sha>.zip`.
pub fn incoming_path(data_dir: &Path, sha: &str) -> PathBuf {
    data_dir.join(INCOMING_DIR).join(format!("{sha}.zip"))
}

/// `returns/rejected/<sha>.zip`.
pub fn rejected_path(data_dir: &Path, sha: &str) -> PathBuf {
    data_dir.join(REJECTED_DIR).join(format!("{sha}.zip"))
}

/// Rename `from` to `to` durably (fsync of both folders).
pub fn move_durably(from: &Path, to: &Path) -> Result<(), IntakeError> {
    let dir = to.parent().unwrap_or(Path::new("."));
    std::fs::create_dir_all(dir)
        .map_err(|e| crate::Error::io(format!("creating {}", dir.display()), e))?;
    std::fs::rename(from, to).map_err(|e| {
        crate::Error::io(format!("moving {} to {}", from.display(), to.display()), e)
    })?;
    crate::platform::durable::sync_dir(dir)?;
    if let Some(src) = from.parent()
        && src != dir
    {
        crate::platform::durable::sync_dir(src)?;
    }
    Ok(())
}
