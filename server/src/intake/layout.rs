//! Where intake keeps its files in the data directory, the upload lifetime,
//! and the process-wide intake lock: the bottom of the intake, imported by
//! [`super::files`], [`super::pipeline`] and [`super::uploads`] and importing
//! none of them.
//!
//! Every one of them is a key of the evidence store
//! ([`crate::platform::evidence`]): a path under the data directory for
//! local files, a key under the prefix on S3. Only `returns/incoming/` is
//! also a local folder in both cases: a package is parsed from a file on
//! this machine (the spool), and on S3 kept in the store as well.
//!
//! | key | what |
//! |---|---|
//! | `uploads/<upload id>/<offset>` | one received chunk of a resumable upload, stored before its offset is (the offset, 20 digits, is where it starts; any instance can read them) |
//! | `uploads/<upload id>.part` | bytes of a resumable upload made before chunks were kept apart (read as the chunk at 0) |
//! | `returns/incoming/<sha256>.zip` | a return package, durable before it is parsed; kept as received |
//! | `returns/rejected/<sha256>.zip` | a package refused as a whole, or whose every report was rejected (kept for inspection within [`REJECTED_MAX_BYTES`] and [`REJECTED_MAX_AGE_DAYS`]; why it was refused stays in the database) |
//! | `evidence/<ab>/<sha256>.jpg` | a photo, named by the SHA-256 of its bytes, never modified |
//! | `evidence/thumbs/<ab>/<sha256>.jpg` | its 320-pixel thumbnail (derived) |
//!
//! `<ab>` is the first two hex digits of the hash. Every file is written with
//! [`crate::platform::durable::write_durably`] (temp file, fsync, rename, folder fsync)
//! before any database row names it.

use super::IntakeError;
use crate::platform::evidence::{Evidence, Listed};
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

/// `evidence/ab/<sha>.jpg`: the evidence store's key of a photo.
pub fn photo_key(sha: &str) -> String {
    format!("{EVIDENCE_DIR}/{}/{sha}.jpg", &sha[..2])
}

/// `evidence/thumbs/ab/<sha>.jpg`: the key of its thumbnail.
pub fn thumb_key(sha: &str) -> String {
    format!("{EVIDENCE_DIR}/{THUMBS_DIR}/{}/{sha}.jpg", &sha[..2])
}

/// `returns/incoming/<sha>.zip`: the key of a kept package.
pub fn incoming_key(sha: &str) -> String {
    format!("{INCOMING_DIR}/{sha}.zip")
}

/// `returns/rejected/<sha>.zip`: the key of a refused package.
pub fn rejected_key(sha: &str) -> String {
    format!("{REJECTED_DIR}/{sha}.zip")
}

/// `uploads/<id>/`: the keys of an upload's chunks start with this.
pub fn upload_prefix(id: &str) -> String {
    format!("{UPLOADS_DIR}/{id}/")
}

/// `uploads/<id>/<offset, 20 digits>`: the chunk that starts at `offset`.
pub fn chunk_key(id: &str, offset: u64) -> String {
    format!("{UPLOADS_DIR}/{id}/{offset:020}")
}

/// `uploads/<id>.part`: an upload's bytes as kept before chunks.
pub fn legacy_part_key(id: &str) -> String {
    format!("{UPLOADS_DIR}/{id}.part")
}

/// The upload a key under `uploads/` belongs to, and the offset its chunk
/// starts at (`None` for anything else).
pub fn chunk_of(key: &str) -> Option<(&str, u64)> {
    let rest = key.strip_prefix(UPLOADS_DIR)?.strip_prefix('/')?;
    if let Some(id) = rest.strip_suffix(".part").filter(|id| !id.contains('/')) {
        return Some((id, 0));
    }
    let (id, off) = rest.split_once('/')?;
    if off.len() != 20 || !off.bytes().all(|c| c.is_ascii_digit()) {
        return None;
    }
    off.parse().ok().map(|o| (id, o))
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

/// Keeps `returns/rejected/` of the evidence store within its budget:
/// packages older than [`REJECTED_MAX_AGE_DAYS`] are removed, then the
/// oldest until the rest take at most [`REJECTED_MAX_BYTES`]. Returns how
/// many were removed.
pub fn prune_rejected(store: &Evidence) -> Result<usize, IntakeError> {
    let listed = store.list(&format!("{REJECTED_DIR}/"))?;
    let doomed = to_prune(
        listed,
        REJECTED_MAX_BYTES,
        std::time::Duration::from_secs(REJECTED_MAX_AGE_DAYS * 86_400),
        std::time::SystemTime::now(),
    );
    for k in &doomed {
        store.delete(k)?;
    }
    Ok(doomed.len())
}

/// The objects to remove: those modified before `now - max_age`, then the
/// oldest until the rest take at most `max_bytes`.
fn to_prune(
    mut files: Vec<Listed>,
    max_bytes: u64,
    max_age: std::time::Duration,
    now: std::time::SystemTime,
) -> Vec<String> {
    files.sort_by(|a, b| (a.modified, &a.key).cmp(&(b.modified, &b.key)));
    let mut total: u64 = files.iter().map(|f| f.size).sum();
    let mut out = Vec::new();
    for f in files {
        let old = now
            .duration_since(f.modified)
            .is_ok_and(|age| age > max_age);
        if !old && total <= max_bytes {
            continue;
        }
        total = total.saturating_sub(f.size);
        out.push(f.key);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::{Duration, SystemTime};

    #[test]
    fn old_packages_go_then_the_oldest_until_the_rest_fit() {
        let now = SystemTime::now();
        let day = Duration::from_secs(86_400);
        let put = |key: &str, size: u64, age_days: u32| Listed {
            key: key.into(),
            size,
            modified: now - day * age_days,
        };
        let files = vec![
            put("d-new.zip", 400, 1),
            put("a-very-old.zip", 10, 30),
            put("c-newer.zip", 400, 3),
            put("b-old.zip", 400, 5),
        ];
        let gone = to_prune(files.clone(), 1000, day * 14, now);
        assert_eq!(gone, ["a-very-old.zip", "b-old.zip"]);
        // One package over the whole budget is not kept either.
        let mut more = files;
        more.push(put("e-huge.zip", 2000, 0));
        assert_eq!(to_prune(more, 1000, day * 14, now).len(), 5);
        assert!(to_prune(Vec::new(), 1, day, now).is_empty());
    }

    #[test]
    fn chunk_keys_name_their_upload_and_offset() {
        let id = "a".repeat(32);
        assert_eq!(
            chunk_key(&id, 42),
            format!("uploads/{id}/00000000000000000042")
        );
        assert_eq!(chunk_of(&chunk_key(&id, 42)), Some((id.as_str(), 42)));
        assert_eq!(chunk_of(&legacy_part_key(&id)), Some((id.as_str(), 0)));
        assert_eq!(chunk_of(&format!("uploads/{id}/x")), None);
        assert_eq!(chunk_of("evidence/ab/x.jpg"), None);
        let sha = "ab".repeat(32);
        assert_eq!(photo_key(&sha), format!("evidence/ab/{sha}.jpg"));
        assert_eq!(thumb_key(&sha), format!("evidence/thumbs/ab/{sha}.jpg"));
    }
}
