//! Where intake keeps its files in the data directory, and the clean-up run
//! at start.
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
use crate::domain::Sha256Digest;
use crate::platform::storage::Db;
use std::collections::HashSet;
use std::path::{Path, PathBuf};

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

/// `evidence/ab/<sha>.jpg` under `data_dir`; `sha` must pass
/// [`Sha256Digest::is_valid`].
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

/// What [`cleanup`] removed.
#[derive(Debug, Clone, Default, PartialEq, Eq, serde::Serialize)]
pub struct CleanupSummary {
    /// Evidence files (photos and thumbnails) no photo row names.
    pub evidence_files: usize,
    /// Upload data files of uploads that are no longer open.
    pub upload_files: usize,
    /// Open uploads untouched for longer than the upload lifetime.
    pub expired_uploads: usize,
}

fn files_in(dir: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .map(|it| {
            it.filter_map(|e| e.ok())
                .map(|e| e.path())
                .filter(|p| p.is_file())
                .collect()
        })
        .unwrap_or_default()
}

fn remove(p: &Path) -> Result<(), IntakeError> {
    match std::fs::remove_file(p) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(crate::Error::io(format!("removing {}", p.display()), e).into()),
    }
}

/// Removes what a crash can leave behind: evidence files and temp files that
/// no committed photo row names, data of uploads that are finished or gone,
/// and open uploads idle for more than [`super::uploads::UPLOAD_MAX_AGE_DAYS`].
/// Call it at start, before serving (it holds the intake lock while it runs).
/// Received packages in `returns/` are never removed.
pub fn cleanup(db: &Db, data_dir: &Path) -> Result<CleanupSummary, IntakeError> {
    let _guard = super::pipeline::intake_lock();
    let mut out = CleanupSummary::default();
    let cutoff = chrono::Utc::now() - chrono::Duration::days(super::uploads::UPLOAD_MAX_AGE_DAYS);
    let expired = db.write(|tx| tx.expire_uploads(&cutoff.to_rfc3339()))?;
    out.expired_uploads = expired.len();

    let known: HashSet<String> = db.read(|r| r.photo_shas())?.into_iter().collect();
    let evidence = data_dir.join(EVIDENCE_DIR);
    let mut dirs: Vec<PathBuf> = Vec::new();
    for base in [evidence.clone(), evidence.join(THUMBS_DIR)] {
        if let Ok(it) = std::fs::read_dir(&base) {
            for e in it.filter_map(|e| e.ok()) {
                let p = e.path();
                let name = e.file_name().to_string_lossy().into_owned();
                if p.is_dir() && name.len() == 2 {
                    dirs.push(p);
                }
            }
        }
    }
    for dir in dirs {
        for f in files_in(&dir) {
            let name = f
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default();
            let sha = name.strip_suffix(".jpg").unwrap_or("");
            if !(Sha256Digest::is_valid(sha) && known.contains(sha)) {
                remove(&f)?;
                out.evidence_files += 1;
            }
        }
    }

    let open: HashSet<String> = db
        .read(|r| r.upload_ids())?
        .into_iter()
        .filter(|(_, state)| state == "open")
        .map(|(id, _)| id)
        .collect();
    for f in files_in(&data_dir.join(UPLOADS_DIR)) {
        let name = f
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let keep = name
            .strip_suffix(".part")
            .is_some_and(|id| open.contains(id));
        if !keep {
            remove(&f)?;
            out.upload_files += 1;
        }
    }
    // Temp files of an interrupted browser upload or durable write.
    for f in files_in(&data_dir.join(INCOMING_DIR)) {
        let name = f
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        if name.starts_with('.') {
            remove(&f)?;
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_content_addressed() {
        let sha = "ab".repeat(32);
        assert!(Sha256Digest::is_valid(&sha));
        let d = Path::new("/data");
        assert_eq!(
            photo_path(d, &sha),
            Path::new("/data/evidence/ab").join(format!("{sha}.jpg"))
        );
        assert_eq!(
            thumb_path(d, &sha),
            Path::new("/data/evidence/thumbs/ab").join(format!("{sha}.jpg"))
        );
    }
}
