//! The station's draft area: what an operator has uploaded and typed for one
//! trip before confirming. Kept on the server, under
//! `DATA/station/drafts/<key>/` (`draft.json`, `photos/<sha256>.jpg`,
//! `thumbs/<sha256>.jpg`), keyed to the user and the trip, so that a reload,
//! another tab or another browser of the same user finds the same entry.
//! Why the server and not the browser's storage: the camera's photos are
//! tens of megabytes each (beyond what a browser's local storage holds),
//! the server must read them anyway to propose their stops, and the page
//! then works without scripts.
//!
//! Nothing here is a fact: no statistic, event or report reads the drafts,
//! and a draft untouched for [`DRAFT_TTL_HOURS`] is removed
//! ([`remove_expired`], run when a draft is opened). Bounds:
//! [`MAX_DRAFT_PHOTOS`] photos and [`MAX_DRAFT_BYTES`] bytes per draft,
//! [`MAX_DRAFTS`] drafts on the server, each photo at most the return
//! format's photo limit.

use crate::error::{Error, Result};
use crate::platform::durable::write_durably;
use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};
use uuid::Uuid;

/// Photos one draft may hold (our choice: a day of camera work is well
/// under a hundred photos; a return holds 20 per report).
pub const MAX_DRAFT_PHOTOS: usize = 200;
/// Bytes of photos one draft may hold: 1 GiB, the return file's limit.
pub const MAX_DRAFT_BYTES: u64 = 1 << 30;
/// Drafts the server keeps at once (each user and trip has at most one).
pub const MAX_DRAFTS: usize = 50;
/// A draft untouched this long is removed: 7 days.
pub const DRAFT_TTL_HOURS: i64 = 7 * 24;
/// Longest text the operator may type into one field (notes are bounded
/// again by the return format).
pub const MAX_FIELD_CHARS: usize = 4_000;

const DRAFTS_DIR: &str = "station/drafts";
const DRAFT_FILE: &str = "draft.json";

/// One photo of a draft and what its EXIF said (read as intake reads it).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DraftPhoto {
    pub sha256: String,
    pub original_name: String,
    pub bytes: u64,
    /// EXIF time as read with UTC for a camera's local time
    /// (`groundproof_sync::photo::read_photo_meta`); see `camera_local`.
    pub exif_time: Option<DateTime<Utc>>,
    /// The time is the camera's local time (no offset, no GPS stamp): the
    /// draft's camera offset applies.
    pub camera_local: bool,
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub direction_deg: Option<f64>,
    /// The operator's choice: `Some(code)` puts it at that stop,
    /// `Some("")` sets it aside; `None` follows the proposal.
    pub moved_to: Option<String>,
}

/// What the operator copied from the paper sheet for one stop.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct StopEntry {
    /// Fixed when the stop is first filled in, so that saving twice sends
    /// the same report.
    pub report_id: Option<Uuid>,
    pub outcome: String,
    /// The reason (false alarm, not reached) or the cause (confirmed).
    pub detail: String,
    pub notes: String,
    /// Who observed, as written on the sheet (goes into the notes).
    pub observer: String,
    /// The time written on the sheet (`YYYY-MM-DDTHH:MM`, the trip's local time).
    pub time: String,
    /// The position written on the sheet (`lat, lon` in decimal degrees).
    pub position: String,
    pub area_ha: String,
}

/// One user's unconfirmed entry for one trip.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Draft {
    pub bundle_id: String,
    pub user: String,
    pub created_at: DateTime<Utc>,
    pub updated_at: DateTime<Utc>,
    /// The sheet identifier the operator read off the paper.
    pub sheet: String,
    /// Offset of the trip's local time from UTC (`+03:00`): the sheet's
    /// times and the camera's clock when its photos carry no offset.
    pub local_offset: String,
    pub photos: Vec<DraftPhoto>,
    pub stops: BTreeMap<String, StopEntry>,
    /// The return this draft was saved as, once confirmed.
    pub saved_return: Option<i64>,
}

impl Draft {
    /// An empty draft of `user` for `bundle_id`.
    pub fn new(bundle_id: &str, user: &str, now: DateTime<Utc>) -> Draft {
        Draft {
            bundle_id: bundle_id.to_string(),
            user: user.to_string(),
            created_at: now,
            updated_at: now,
            sheet: String::new(),
            local_offset: "+00:00".into(),
            photos: Vec::new(),
            stops: BTreeMap::new(),
            saved_return: None,
        }
    }

    /// Bytes of the draft's photos.
    pub fn photo_bytes(&self) -> u64 {
        self.photos.iter().map(|p| p.bytes).sum()
    }
}

/// One draft at a time is read, changed and written.
pub fn draft_lock() -> MutexGuard<'static, ()> {
    static LOCK: Mutex<()> = Mutex::new(());
    LOCK.lock().unwrap_or_else(|e| e.into_inner())
}

/// The folder of `user`'s draft for `bundle_id` (a hash: user names never
/// become paths).
pub fn draft_dir(data_dir: &Path, user: &str, bundle_id: &str) -> PathBuf {
    let key = hex::encode(Sha256::digest(format!("{user}\n{bundle_id}").as_bytes()));
    data_dir.join(DRAFTS_DIR).join(&key[..32])
}

/// Where a draft photo is kept.
pub fn photo_file(dir: &Path, sha256: &str) -> PathBuf {
    dir.join("photos").join(format!("{sha256}.jpg"))
}

/// Where a draft photo's thumbnail is kept.
pub fn thumb_file(dir: &Path, sha256: &str) -> PathBuf {
    dir.join("thumbs").join(format!("{sha256}.jpg"))
}

/// The draft in `dir`, if there is one.
pub fn load(dir: &Path) -> Result<Option<Draft>> {
    let path = dir.join(DRAFT_FILE);
    match std::fs::read(&path) {
        Ok(bytes) => serde_json::from_slice(&bytes)
            .map(Some)
            .map_err(|e| Error::Internal(format!("reading {}: {e}", path.display()))),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(Error::io(format!("reading {}", path.display()), e)),
    }
}

/// Writes `draft` durably into `dir`.
pub fn store(dir: &Path, draft: &Draft) -> Result<()> {
    let bytes = serde_json::to_vec_pretty(draft)
        .map_err(|e| Error::Internal(format!("writing a draft: {e}")))?;
    write_durably(&dir.join(DRAFT_FILE), |f| {
        use std::io::Write;
        f.write_all(&bytes)
            .map_err(|e| Error::io("writing a station draft", e))
    })
}

/// Writes `bytes` durably to `path` (a draft photo or thumbnail).
pub fn store_file(path: &Path, bytes: &[u8]) -> Result<()> {
    write_durably(path, |f| {
        use std::io::Write;
        f.write_all(bytes)
            .map_err(|e| Error::io(format!("writing {}", path.display()), e))
    })
}

/// Removes the draft in `dir` with its photos.
pub fn discard(dir: &Path) -> Result<()> {
    match std::fs::remove_dir_all(dir) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(Error::io(format!("removing {}", dir.display()), e)),
    }
}

/// Removes drafts untouched since `now - DRAFT_TTL_HOURS` (and folders
/// without a readable draft); the number of drafts left.
pub fn remove_expired(data_dir: &Path, now: DateTime<Utc>) -> Result<usize> {
    let root = data_dir.join(DRAFTS_DIR);
    let entries = match std::fs::read_dir(&root) {
        Ok(e) => e,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(0),
        Err(e) => return Err(Error::io(format!("listing {}", root.display()), e)),
    };
    let before = now - chrono::Duration::hours(DRAFT_TTL_HOURS);
    let mut left = 0;
    for entry in entries.flatten() {
        let dir = entry.path();
        match load(&dir) {
            Ok(Some(d)) if d.updated_at >= before => left += 1,
            _ => discard(&dir)?,
        }
    }
    Ok(left)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_draft_survives_a_round_trip_and_expires() {
        let tmp = tempfile::tempdir().unwrap();
        let now = Utc::now();
        let dir = draft_dir(tmp.path(), "ana", "b1");
        assert_ne!(dir, draft_dir(tmp.path(), "ana", "b2"));
        assert_ne!(dir, draft_dir(tmp.path(), "bo", "b1"));
        assert_eq!(load(&dir).unwrap(), None);
        let mut d = Draft::new("b1", "ana", now);
        d.stops.insert(
            "K0001".into(),
            StopEntry {
                outcome: "confirmed".into(),
                ..StopEntry::default()
            },
        );
        store(&dir, &d).unwrap();
        assert_eq!(load(&dir).unwrap(), Some(d.clone()));
        assert_eq!(remove_expired(tmp.path(), now).unwrap(), 1);
        let later = now + chrono::Duration::hours(DRAFT_TTL_HOURS + 1);
        assert_eq!(remove_expired(tmp.path(), later).unwrap(), 0);
        assert_eq!(load(&dir).unwrap(), None);
    }
}
