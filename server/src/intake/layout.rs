//! Where intake keeps its files in the data directory, the upload lifetime,
//! and the process-wide intake lock: the bottom of the intake, imported by
//! [`super::files`], [`super::pipeline`] and [`super::uploads`] and importing
//! none of them.
//!
//! | path | what |
//! |---|---|
//! | `uploads/<upload id>.part` | bytes of a resumable upload so far (fsynced before each acknowledgement) |
//! | `returns/incoming/<sha256>.zip` | a return package, durable before it is parsed; kept as received |
//! | `returns/rejected/<sha256>.zip` | a package refused as a whole, or whose every report was rejected (kept for inspection within [`REJECTED_MAX_BYTES`] and [`REJECTED_MAX_AGE_DAYS`]; why it was refused stays in the database) |
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

/// Hours an open upload may stay untouched before it is removed (at the
/// next upload created, and by the clean-up at start).
pub const UPLOAD_IDLE_HOURS: i64 = 12;

/// Most bytes of packages kept in [`REJECTED_DIR`]; the oldest go first
/// (our choice: a disk reserve for one full package).
pub const REJECTED_MAX_BYTES: u64 = 1 << 30;
/// Days a package stays in [`REJECTED_DIR`] (our choice: time to look
/// into a refusal with the team).
pub const REJECTED_MAX_AGE_DAYS: u64 = 14;

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

/// Keeps `returns/rejected/` within its budget: packages older than
/// [`REJECTED_MAX_AGE_DAYS`] are removed, then the oldest until the rest
/// take at most [`REJECTED_MAX_BYTES`]. Returns how many were removed.
pub fn prune_rejected(data_dir: &Path) -> Result<usize, IntakeError> {
    prune_dir(
        &data_dir.join(REJECTED_DIR),
        REJECTED_MAX_BYTES,
        std::time::Duration::from_secs(REJECTED_MAX_AGE_DAYS * 86_400),
        std::time::SystemTime::now(),
    )
}

/// Removes files of `dir` modified before `now - max_age`, then the oldest
/// until the rest take at most `max_bytes`.
fn prune_dir(
    dir: &Path,
    max_bytes: u64,
    max_age: std::time::Duration,
    now: std::time::SystemTime,
) -> Result<usize, IntakeError> {
    let Ok(it) = std::fs::read_dir(dir) else {
        return Ok(0);
    };
    let mut files: Vec<(std::time::SystemTime, u64, PathBuf)> = it
        .filter_map(|e| e.ok())
        .filter_map(|e| {
            let m = e.metadata().ok().filter(|m| m.is_file())?;
            Some((m.modified().ok()?, m.len(), e.path()))
        })
        .collect();
    files.sort();
    let mut total: u64 = files.iter().map(|f| f.1).sum();
    let mut removed = 0;
    for (modified, len, path) in files {
        let old = now.duration_since(modified).is_ok_and(|age| age > max_age);
        if !old && total <= max_bytes {
            continue;
        }
        match std::fs::remove_file(&path) {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => return Err(crate::Error::io(format!("removing {}", path.display()), e)),
        }
        total = total.saturating_sub(len);
        removed += 1;
    }
    Ok(removed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::{Duration, SystemTime};

    #[test]
    fn old_packages_go_then_the_oldest_until_the_rest_fit() {
        let dir = tempfile::tempdir().unwrap();
        let now = SystemTime::now();
        let day = Duration::from_secs(86_400);
        let put = |name: &str, len: usize, age_days: u32| {
            let p = dir.path().join(name);
            std::fs::write(&p, vec![0u8; len]).unwrap();
            let f = std::fs::File::options().write(true).open(&p).unwrap();
            f.set_modified(now - day * age_days).unwrap();
        };
        put("a-very-old.zip", 10, 30);
        put("b-old.zip", 400, 5);
        put("c-newer.zip", 400, 3);
        put("d-new.zip", 400, 1);
        let removed = prune_dir(dir.path(), 1000, day * 14, now).unwrap();
        assert_eq!(removed, 2);
        let mut left: Vec<String> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        left.sort();
        assert_eq!(left, ["c-newer.zip", "d-new.zip"]);
        // One package over the whole budget is not kept either.
        put("e-huge.zip", 2000, 0);
        assert_eq!(prune_dir(dir.path(), 1000, day * 14, now).unwrap(), 3);
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
        assert_eq!(prune_dir(&dir.path().join("none"), 1, day, now).unwrap(), 0);
    }
}
