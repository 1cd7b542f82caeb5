//! The clean-up run at start: what a crash can leave behind in the data
//! directory (the folders are listed in [`super::layout`]).

use super::IntakeError;
use super::layout::{EVIDENCE_DIR, INCOMING_DIR, THUMBS_DIR, UPLOADS_DIR, intake_lock};
use crate::domain::Sha256Digest;
use crate::platform::storage::Db;
use std::collections::HashSet;
use std::path::{Path, PathBuf};

/// What [`cleanup`] removed.
#[derive(Debug, Clone, Default, PartialEq, Eq, serde::Serialize)]
pub struct CleanupSummary {
    /// Evidence files (photos and thumbnails) no photo row names.
    pub evidence_files: usize,
    /// Upload data files of uploads that are no longer open.
    pub upload_files: usize,
    /// Open uploads untouched for longer than the upload lifetime.
    pub expired_uploads: usize,
    /// Refused packages past the age or size budget of `returns/rejected/`.
    pub rejected_packages: usize,
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

/// Removes what a crash can leave behind: evidence files and temp files that
/// no committed photo row names, data of uploads that are finished or gone,
/// and open uploads idle for more than [`super::layout::UPLOAD_IDLE_HOURS`].
/// Call it at start, before serving (it holds the intake lock while it runs).
/// Received packages in `returns/incoming/` are never removed; refused ones
/// in `returns/rejected/` are kept within their budget
/// ([`super::layout::prune_rejected`]).
pub fn cleanup(db: &Db, data_dir: &Path) -> Result<CleanupSummary, IntakeError> {
    let _guard = intake_lock();
    let mut out = CleanupSummary {
        expired_uploads: super::uploads::expire_idle(db, data_dir)?,
        rejected_packages: super::layout::prune_rejected(data_dir)?,
        ..CleanupSummary::default()
    };

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
    // Station entry drafts untouched past their lifetime.
    super::station::draft::remove_expired(data_dir, chrono::Utc::now())?;
    Ok(out)
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
