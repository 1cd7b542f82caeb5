//! The clean-up run at start: what a crash can leave behind in the evidence
//! store and the data directory (the keys are listed in [`super::layout`]).

use super::IntakeError;
use super::layout::{
    EVIDENCE_DIR, INCOMING_DIR, UPLOADS_DIR, chunk_of, intake_lock, photo_key, thumb_key,
};
use crate::domain::Sha256Digest;
use crate::platform::evidence::{Evidence, Listed};
use crate::platform::storage::Db;
use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime};

/// Folder of issued bundles in the evidence store.
const BUNDLES_DIR: &str = "bundles";

/// What [`cleanup`] removed.
#[derive(Debug, Clone, Default, PartialEq, Eq, serde::Serialize)]
pub struct CleanupSummary {
    /// Evidence objects (photos and thumbnails) no photo row names.
    pub evidence_files: usize,
    /// Upload chunks of uploads that are no longer open.
    pub upload_files: usize,
    /// Open uploads untouched for longer than the upload lifetime.
    pub expired_uploads: usize,
    /// Refused packages past the age or size budget of `returns/rejected/`.
    pub rejected_packages: usize,
    /// Bundle files no bundle row names (an issue cut short).
    pub bundle_files: usize,
    /// Half-written files of a local store (staging and temp files).
    pub staging_files: usize,
    /// Station draft photos no stored draft names (a discard cut short).
    pub draft_files: usize,
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
        Err(e) => Err(crate::Error::io(format!("removing {}", p.display()), e)),
    }
}

/// [`cleanup_after`] with no grace: for a store only this process writes.
pub fn cleanup(db: &Db, data_dir: &Path) -> Result<CleanupSummary, IntakeError> {
    cleanup_after(db, data_dir, Duration::ZERO)
}

/// Removes what a crash can leave behind: evidence objects no committed
/// photo row names, bundle files no bundle row names, chunks of uploads
/// that are finished or gone, and open uploads idle for more than
/// [`super::layout::UPLOAD_IDLE_HOURS`]. Objects written less than `grace`
/// ago are kept (another server instance on the same store may be about
/// to commit the row that names them). Call it at start, before serving (it
/// holds the intake lock while it runs). Received packages in
/// `returns/incoming/` are never removed; refused ones in
/// `returns/rejected/` are kept within their budget
/// ([`super::layout::prune_rejected`]).
pub fn cleanup_after(
    db: &Db,
    data_dir: &Path,
    grace: Duration,
) -> Result<CleanupSummary, IntakeError> {
    let _guard = intake_lock();
    let store = crate::platform::evidence::of(data_dir)?;
    let cutoff = SystemTime::now() - grace;
    let old = |l: &Listed| l.modified <= cutoff;
    let mut out = CleanupSummary {
        expired_uploads: super::uploads::expire_idle(db, data_dir)?,
        rejected_packages: super::layout::prune_rejected(&store)?,
        staging_files: store.sweep_staging(&[EVIDENCE_DIR, UPLOADS_DIR, BUNDLES_DIR, "returns"])?,
        ..CleanupSummary::default()
    };

    let known: HashSet<String> = db.read(|r| r.photo_shas())?.into_iter().collect();
    let named = |k: &str| {
        let sha = k
            .rsplit('/')
            .next()
            .and_then(|n| n.strip_suffix(".jpg"))
            .unwrap_or("");
        Sha256Digest::is_valid(sha)
            && known.contains(sha)
            && (k == photo_key(sha) || k == thumb_key(sha))
    };
    let orphans = store.list_where(&format!("{EVIDENCE_DIR}/"), |l| old(l) && !named(&l.key))?;
    out.evidence_files = remove_all(&store, &orphans)?;

    let open: HashSet<String> = db
        .read(|r| r.upload_ids())?
        .into_iter()
        .filter(|(_, state)| state == "open")
        .map(|(id, _)| id)
        .collect();
    let stale = store.list_where(&format!("{UPLOADS_DIR}/"), |l| {
        !chunk_of(&l.key).is_some_and(|(id, _)| open.contains(id))
    })?;
    out.upload_files = remove_all(&store, &stale)?;
    if let Some(dir) = store.local_path(UPLOADS_DIR) {
        for e in std::fs::read_dir(dir).into_iter().flatten().flatten() {
            let _ = std::fs::remove_dir(e.path()); // only when empty
        }
    }

    let bundles: HashSet<String> = db
        .read(|r| r.bundles())?
        .into_iter()
        .map(|b| format!("{BUNDLES_DIR}/{}", b.file_name))
        .collect();
    let unnamed = store.list_where(&format!("{BUNDLES_DIR}/"), |l| {
        old(l) && !bundles.contains(&l.key)
    })?;
    out.bundle_files = remove_all(&store, &unnamed)?;

    // Temp files of an interrupted browser upload or durable write (this
    // machine's spool of packages being parsed).
    for f in files_in(&data_dir.join(INCOMING_DIR)) {
        let name = f
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        if name.starts_with('.') {
            remove(&f)?;
        }
    }
    // Photos a station entry was packing when the process stopped.
    remove_station_copies(&data_dir.join(INCOMING_DIR));
    // Station entry drafts: those of the old local folder taken in, those
    // untouched past their lifetime removed, photos of no draft swept.
    super::station::draft::take_in_local(db, data_dir, &store)?;
    super::station::draft::remove_expired(db, &store, chrono::Utc::now())?;
    out.draft_files = super::station::draft::sweep(db, &store, grace)?;
    Ok(out)
}

/// Removes the temp folders (`.station-photos-*`) a station entry copies
/// its photos into while packing, left by a stop mid-save.
fn remove_station_copies(incoming: &Path) {
    for e in std::fs::read_dir(incoming).into_iter().flatten().flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        if name.starts_with(".station-photos-") && e.path().is_dir() {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

fn remove_all(store: &Evidence, found: &[Listed]) -> Result<usize, IntakeError> {
    for l in found {
        store.delete(&l.key)?;
    }
    Ok(found.len())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::intake::layout::{photo_path, thumb_path};

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
