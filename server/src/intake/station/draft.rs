//! The station's draft area: what an operator has uploaded and typed for one
//! trip before confirming. Kept on the server and shared by every server
//! instance of one database: the draft document is a row of the database
//! (`platform::storage::shared`, as JSON), its photos and thumbnails are
//! objects of the evidence store under `drafts/<key>/` (`photos/<sha256>.jpg`,
//! `thumbs/<sha256>.jpg`), keyed to the user and the trip, so that a reload,
//! another tab, another browser of the same user or another server instance
//! behind the same address finds the same entry.
//! Why the server and not the browser's storage: the camera's photos are
//! tens of megabytes each (beyond what a browser's local storage holds),
//! the server must read them anyway to propose their stops, and the page
//! then works without scripts.
//!
//! Nothing here is a fact: no statistic, event or report reads the drafts,
//! and a draft untouched for [`DRAFT_TTL_HOURS`] is removed
//! ([`remove_expired`], run when a draft is opened and at start). Bounds:
//! [`MAX_DRAFT_PHOTOS`] photos and [`MAX_DRAFT_BYTES`] bytes per draft,
//! [`MAX_DRAFTS`] drafts on the server, each photo at most the return
//! format's photo limit. A change is read, applied and written in one
//! transaction ([`change`]), so two instances changing one draft at once
//! take turns; photos are stored before the row that names them.

use crate::error::{Error, Result};
use crate::platform::evidence::Evidence;
use crate::platform::storage::{Db, StoredDraft, Tx};
use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::path::Path;
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

/// Folder of the drafts' photos in the evidence store.
pub const DRAFTS_DIR: &str = "drafts";
/// Where drafts lived before they were shared (`DATA/station/drafts/<key>/`):
/// taken in at start ([`take_in_local`]).
const OLD_DRAFTS_DIR: &str = "station/drafts";
const OLD_DRAFT_FILE: &str = "draft.json";

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

/// The key of `user`'s draft for `bundle_id` (a hash: user names never
/// become paths or object keys).
pub fn draft_key(user: &str, bundle_id: &str) -> String {
    let key = hex::encode(Sha256::digest(format!("{user}\n{bundle_id}").as_bytes()));
    key[..32].to_string()
}

/// The evidence-store folder of draft `key` (ends in `/`).
pub fn draft_prefix(key: &str) -> String {
    format!("{DRAFTS_DIR}/{key}/")
}

/// Where a draft photo is kept in the evidence store.
pub fn photo_key(key: &str, sha256: &str) -> String {
    format!("{DRAFTS_DIR}/{key}/photos/{sha256}.jpg")
}

/// Where a draft photo's thumbnail is kept in the evidence store.
pub fn thumb_key(key: &str, sha256: &str) -> String {
    format!("{DRAFTS_DIR}/{key}/thumbs/{sha256}.jpg")
}

fn parse(row: &StoredDraft) -> Result<Draft> {
    serde_json::from_str(&row.doc)
        .map_err(|e| Error::Internal(format!("reading the station draft {}: {e}", row.key)))
}

/// The draft stored under `key`, if there is one.
pub fn load(db: &Db, key: &str) -> Result<Option<Draft>> {
    db.read(|r| r.station_draft(key))?
        .map(|row| parse(&row))
        .transpose()
}

/// Writes `d` as the draft under `key` in `tx`.
fn put(tx: &Tx<'_>, key: &str, d: &Draft) -> Result<()> {
    let doc =
        serde_json::to_string(d).map_err(|e| Error::Internal(format!("writing a draft: {e}")))?;
    tx.put_station_draft(&StoredDraft {
        key: key.to_string(),
        user: d.user.clone(),
        bundle_id: d.bundle_id.clone(),
        doc,
        updated_at: d.updated_at.timestamp(),
    })
}

/// Reads the draft under `key` (or `fresh()` when there is none, refused
/// past [`MAX_DRAFTS`]), applies `f`, marks it changed at `now` and writes
/// it, all in one transaction: `f`'s error changes nothing.
pub fn change<T>(
    db: &Db,
    key: &str,
    fresh: impl FnOnce() -> Draft,
    now: DateTime<Utc>,
    f: impl FnOnce(&mut Draft) -> Result<T>,
) -> Result<T> {
    db.write_bookkeeping(|tx| {
        let mut d = match tx.reader().station_draft(key)? {
            Some(row) => parse(&row)?,
            None if tx.reader().station_draft_count()? >= MAX_DRAFTS as i64 => {
                return Err(Error::Limit(format!(
                    "the station holds {MAX_DRAFTS} unfinished entries already: save or discard one first"
                )));
            }
            None => fresh(),
        };
        let out = f(&mut d)?;
        d.updated_at = now;
        put(tx, key, &d)?;
        Ok(out)
    })
}

/// Removes the draft under `key`: its row first, then its photos.
pub fn discard(db: &Db, store: &Evidence, key: &str) -> Result<()> {
    db.write_bookkeeping(|tx| tx.delete_station_draft(key))?;
    store.delete_prefix(&draft_prefix(key))?;
    Ok(())
}

/// Removes drafts untouched since `now - DRAFT_TTL_HOURS` with their
/// photos; the number of drafts left.
pub fn remove_expired(db: &Db, store: &Evidence, now: DateTime<Utc>) -> Result<usize> {
    let before = (now - chrono::Duration::hours(DRAFT_TTL_HOURS)).timestamp();
    for key in db.read(|r| r.station_drafts_before(before))? {
        discard(db, store, &key)?;
    }
    Ok(db.read(|r| r.station_draft_count())? as usize)
}

/// Removes draft photos whose draft is gone (a discard or expiry cut short,
/// or a photo stored by a request whose row then was refused) and that are
/// older than `grace`; how many objects.
pub fn sweep(db: &Db, store: &Evidence, grace: std::time::Duration) -> Result<usize> {
    let keys: std::collections::HashSet<String> =
        db.read(|r| r.station_draft_keys())?.into_iter().collect();
    let cutoff = std::time::SystemTime::now() - grace;
    let gone = store.list_where(&format!("{DRAFTS_DIR}/"), |l| {
        let key = l.key.split('/').nth(1).unwrap_or("");
        l.modified <= cutoff && !keys.contains(key)
    })?;
    for l in &gone {
        store.delete(&l.key)?;
    }
    Ok(gone.len())
}

/// Takes drafts of the data directory's old folder (`station/drafts/`,
/// from before drafts were shared) into the database and the evidence
/// store, then removes the folder; how many drafts. A draft already stored
/// under the same key keeps the stored one.
pub fn take_in_local(db: &Db, data_dir: &Path, store: &Evidence) -> Result<usize> {
    let root = data_dir.join(OLD_DRAFTS_DIR);
    let Ok(entries) = std::fs::read_dir(&root) else {
        return Ok(0);
    };
    let mut taken = 0;
    for dir in entries.flatten().map(|e| e.path()) {
        let file = dir.join(OLD_DRAFT_FILE);
        let d: Option<Draft> = std::fs::read(&file)
            .ok()
            .and_then(|b| serde_json::from_slice(&b).ok());
        if let Some(d) = d {
            let key = draft_key(&d.user, &d.bundle_id);
            for p in &d.photos {
                let here = |sub: &str| dir.join(sub).join(format!("{}.jpg", p.sha256));
                store.put_file(&photo_key(&key, &p.sha256), &here("photos"))?;
                store.put_file(&thumb_key(&key, &p.sha256), &here("thumbs"))?;
            }
            db.write_bookkeeping(|tx| match tx.reader().station_draft(&key)? {
                Some(_) => Ok(()),
                None => put(tx, &key, &d),
            })?;
            taken += 1;
        }
        std::fs::remove_dir_all(&dir)
            .map_err(|e| Error::io(format!("removing {}", dir.display()), e))?;
    }
    let _ = std::fs::remove_dir(&root);
    if taken > 0 {
        tracing::info!(
            "{taken} station drafts taken from {} into the database",
            root.display()
        );
    }
    Ok(taken)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn store(dir: &Path) -> Evidence {
        Evidence::local(dir).unwrap()
    }

    #[test]
    fn a_draft_survives_a_round_trip_and_expires_with_its_photos() {
        let tmp = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(tmp.path());
        let ev = store(tmp.path());
        let now = Utc::now();
        let key = draft_key("ana", "b1");
        assert_ne!(key, draft_key("ana", "b2"));
        assert_ne!(key, draft_key("bo", "b1"));
        assert_eq!(load(&db, &key).unwrap(), None);
        let sha = "ab".repeat(32);
        ev.put_bytes(&photo_key(&key, &sha), b"photo".to_vec())
            .unwrap();
        ev.put_bytes(&thumb_key(&key, &sha), b"thumb".to_vec())
            .unwrap();
        let stop = StopEntry {
            outcome: "confirmed".into(),
            ..StopEntry::default()
        };
        let fresh = || Draft::new("b1", "ana", now);
        change(&db, &key, fresh, now, |d| {
            d.stops.insert("K0001".into(), stop.clone());
            Ok(())
        })
        .unwrap();
        let got = load(&db, &key).unwrap().unwrap();
        assert_eq!(got.stops["K0001"], stop);
        // A refused change leaves the stored draft as it was.
        let r = change(&db, &key, fresh, now, |d| {
            d.sheet = "changed".into();
            Err::<(), _>(Error::Invalid("no".into()))
        });
        assert!(r.is_err());
        assert_eq!(load(&db, &key).unwrap(), Some(got));
        assert_eq!(remove_expired(&db, &ev, now).unwrap(), 1);
        let later = now + chrono::Duration::hours(DRAFT_TTL_HOURS + 1);
        assert_eq!(remove_expired(&db, &ev, later).unwrap(), 0);
        assert_eq!(load(&db, &key).unwrap(), None);
        assert!(!ev.exists(&photo_key(&key, &sha)).unwrap());
        assert!(!ev.exists(&thumb_key(&key, &sha)).unwrap());
    }

    #[test]
    fn the_number_of_drafts_is_bounded_and_orphan_photos_are_swept() {
        let tmp = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(tmp.path());
        let ev = store(tmp.path());
        let now = Utc::now();
        for i in 0..MAX_DRAFTS {
            let b = format!("b{i}");
            change(
                &db,
                &draft_key("ana", &b),
                || Draft::new(&b, "ana", now),
                now,
                |_| Ok(()),
            )
            .unwrap();
        }
        let e = change(
            &db,
            &draft_key("ana", "one-more"),
            || Draft::new("x", "ana", now),
            now,
            |_| Ok(()),
        )
        .unwrap_err();
        assert!(e.to_string().contains("unfinished entries"), "{e}");
        // A stored draft still changes.
        change(
            &db,
            &draft_key("ana", "b0"),
            || Draft::new("b0", "ana", now),
            now,
            |_| Ok(()),
        )
        .unwrap();
        // Photos of a draft that is gone are swept; those of a stored one stay.
        let kept = photo_key(&draft_key("ana", "b0"), &"cd".repeat(32));
        let orphan = photo_key(&draft_key("ana", "gone"), &"cd".repeat(32));
        ev.put_bytes(&kept, b"a".to_vec()).unwrap();
        ev.put_bytes(&orphan, b"b".to_vec()).unwrap();
        assert_eq!(
            sweep(&db, &ev, std::time::Duration::from_secs(3600)).unwrap(),
            0,
            "within the grace"
        );
        assert_eq!(sweep(&db, &ev, std::time::Duration::ZERO).unwrap(), 1);
        assert!(ev.exists(&kept).unwrap());
        assert!(!ev.exists(&orphan).unwrap());
    }

    #[test]
    fn a_draft_of_the_old_folder_is_taken_in() {
        let tmp = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(tmp.path());
        let ev = store(tmp.path());
        let now = Utc::now();
        let sha = "ef".repeat(32);
        let mut d = Draft::new("b1", "ana", now);
        d.photos.push(DraftPhoto {
            sha256: sha.clone(),
            original_name: "a.jpg".into(),
            bytes: 5,
            exif_time: None,
            camera_local: false,
            lat: None,
            lon: None,
            direction_deg: None,
            moved_to: None,
        });
        let old = tmp.path().join(OLD_DRAFTS_DIR).join("0123");
        for sub in ["photos", "thumbs"] {
            std::fs::create_dir_all(old.join(sub)).unwrap();
            std::fs::write(old.join(sub).join(format!("{sha}.jpg")), sub).unwrap();
        }
        std::fs::write(old.join(OLD_DRAFT_FILE), serde_json::to_vec(&d).unwrap()).unwrap();
        assert_eq!(take_in_local(&db, tmp.path(), &ev).unwrap(), 1);
        let key = draft_key("ana", "b1");
        assert_eq!(load(&db, &key).unwrap(), Some(d));
        let mut photo = Vec::new();
        ev.copy_to(&photo_key(&key, &sha), None, &mut photo)
            .unwrap();
        assert_eq!(photo, b"photos");
        assert!(!old.exists());
        assert_eq!(take_in_local(&db, tmp.path(), &ev).unwrap(), 0);
    }
}
