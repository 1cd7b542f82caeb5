//! Entry at the station: a team that went out with the printed field sheet
//! and a camera. The operator picks the trip, uploads the camera's photos
//! into a draft ([`draft`]), the server proposes each photo's stop
//! ([`propose`]), the operator copies each stop's outcome, reason or cause,
//! time, position and notes from the sheet and moves photos, and confirms.
//!
//! Confirming builds the same reports a field tool would (each checked with
//! `groundproof_sync::returns::validate_report` against the bundle's
//! checklist), packs them into a return signed with the bundle's upload key
//! (`groundproof_sync::returns::pack_return`), and takes that return in
//! through [`super::pipeline::take_in_entered`]: the same evidence checks,
//! photos content-addressed, one transaction, and a package taken in twice
//! answers its stored results. Each stored report records its provenance
//! (the user, the sheet). Nothing is stored before the operator confirms,
//! and a draft with any stop in error stores nothing.

pub mod draft;
pub mod propose;

use super::evidence::Footprint;
use super::layout::{INCOMING_DIR, incoming_path};
use super::pipeline::{PackageFile, Provenance, ReturnDocument, take_in_entered};
use super::{IntakeError, IntakeOptions};
use crate::domain::TargetKind;
use crate::platform::storage::{BundleRecord, Db};
use chrono::{DateTime, FixedOffset, NaiveDateTime, Utc};
use draft::{Draft, DraftPhoto, StopEntry};
use groundproof_sync::bundle::{Checklist, UploadKey};
use groundproof_sync::photo::{PhotoLimits, TimeBasis, inspect_jpeg};
use groundproof_sync::returns::{
    Position, PositionSource, Report, ReportPhoto, ReturnHeader, Target, pack_return,
    validate_report,
};
use propose::{PhotoFix, Placement, StopPlace};
use std::path::{Path, PathBuf};
use uuid::Uuid;

/// One stop of a trip, in visiting order.
#[derive(Debug, Clone)]
pub struct Stop {
    pub order: u32,
    pub code: String,
    pub kind: TargetKind,
    pub event_id: Option<i64>,
    pub place: Footprint,
}

/// A live trip as the station entry needs it.
#[derive(Debug, Clone)]
pub struct Trip {
    pub bundle: BundleRecord,
    pub stops: Vec<Stop>,
    /// The identifier printed on its field sheet.
    pub sheet: String,
}

/// The trip of bundle `bundle_id`; refused when unknown or cancelled.
pub fn trip(db: &Db, bundle_id: &str) -> Result<Trip, IntakeError> {
    let (bundle, items) = db.read(|r| Ok((r.bundle(bundle_id)?, r.bundle_items(bundle_id)?)))?;
    let bundle =
        bundle.ok_or_else(|| IntakeError::NotFound(format!("there is no trip {bundle_id}")))?;
    if bundle.cancelled_at.is_some() {
        return Err(IntakeError::Refused(format!(
            "trip {bundle_id} was cancelled: nothing can be entered for it"
        )));
    }
    let mut stops = Vec::new();
    for it in items {
        let place = match it.event_id {
            Some(id) => db
                .read(|r| r.event_resolved(id))?
                .and_then(|e| crate::alerts::events::parse_multipolygon(&e.attrs.footprint))
                .map_or(Footprint::Point(it.lon, it.lat), Footprint::Area),
            None => Footprint::Point(it.lon, it.lat),
        };
        stops.push(Stop {
            order: it.visit_order,
            code: it.code,
            kind: it.kind,
            event_id: it.event_id,
            place,
        });
    }
    stops.sort_by_key(|s| s.order);
    let sheet = crate::domain::sheet::sheet_id(&bundle.id);
    Ok(Trip {
        bundle,
        stops,
        sheet,
    })
}

/// The checklist the station offers and checks against: the one
/// `planning::issue` writes into every bundle.
pub fn checklist() -> Checklist {
    Checklist::current()
}

/// The draft's local offset (`+03:00`); UTC when it cannot be read.
pub fn local_offset(d: &Draft) -> FixedOffset {
    groundproof_sync::field::workspace::parse_offset(&d.local_offset)
        .unwrap_or_else(|_| FixedOffset::east_opt(0).expect("zero offset"))
}

/// When a draft photo was taken, with the draft's offset applied to a
/// camera's local time (the rule of `read_photo_meta_in`).
pub fn photo_time(p: &DraftPhoto, offset: FixedOffset) -> Option<DateTime<Utc>> {
    let t = p.exif_time?;
    Some(if p.camera_local {
        t - chrono::Duration::seconds(i64::from(offset.local_minus_utc()))
    } else {
        t
    })
}

/// Each draft photo's proposal, and the stop it is at now (the operator's
/// move, else the proposal), as an index into `trip.stops`.
pub fn placements(trip: &Trip, d: &Draft, tolerance_m: f64) -> Vec<(Placement, Option<usize>)> {
    let places: Vec<StopPlace> = trip
        .stops
        .iter()
        .map(|s| StopPlace {
            code: s.code.clone(),
            footprint: s.place.clone(),
        })
        .collect();
    let offset = local_offset(d);
    let fixes: Vec<PhotoFix> = d
        .photos
        .iter()
        .map(|p| PhotoFix {
            taken_at: photo_time(p, offset),
            position: p.lat.zip(p.lon),
        })
        .collect();
    propose::propose(&places, &fixes, tolerance_m)
        .into_iter()
        .zip(&d.photos)
        .map(|(pl, p)| {
            let now = match p.moved_to.as_deref() {
                None => pl.stop,
                Some("") => None,
                Some(code) => trip.stops.iter().position(|s| s.code == code).or(pl.stop),
            };
            (pl, now)
        })
        .collect()
}

/// A checked camera photo and its thumbnail, not yet in a draft.
pub struct CheckedPhoto {
    pub photo: DraftPhoto,
    pub thumbnail: Vec<u8>,
}

/// Reads one uploaded photo: refused unless it is a JPEG within `limits`.
pub fn check_photo(
    name: &str,
    bytes: &[u8],
    limits: &PhotoLimits,
) -> Result<CheckedPhoto, IntakeError> {
    let name: String = name.chars().take(120).collect();
    let check = inspect_jpeg(bytes, limits)
        .map_err(|e| IntakeError::Invalid(format!("photo {name:?} was not taken: {e}")))?;
    let m = &check.meta;
    Ok(CheckedPhoto {
        photo: DraftPhoto {
            sha256: check.sha256.clone(),
            original_name: name,
            bytes: bytes.len() as u64,
            exif_time: m.taken_at,
            camera_local: m.time_basis == Some(TimeBasis::CameraZone),
            lat: m.lat,
            lon: m.lon,
            direction_deg: m.true_direction_deg(),
            moved_to: None,
        },
        thumbnail: check.thumbnail_jpeg,
    })
}

/// Puts `p` into `d` within the draft's bounds; a photo already in the
/// draft is kept once (`Ok(false)`).
pub fn admit_photo(d: &mut Draft, p: &DraftPhoto) -> Result<bool, IntakeError> {
    let name = &p.original_name;
    if d.photos.iter().any(|q| q.sha256 == p.sha256) {
        return Ok(false);
    }
    if d.photos.len() >= draft::MAX_DRAFT_PHOTOS {
        return Err(IntakeError::Limit(format!(
            "photo {name:?} was not taken: an entry holds at most {} photos",
            draft::MAX_DRAFT_PHOTOS
        )));
    }
    if d.photo_bytes() + p.bytes > draft::MAX_DRAFT_BYTES {
        return Err(IntakeError::Limit(format!(
            "photo {name:?} was not taken: an entry holds at most {} MiB of photos",
            draft::MAX_DRAFT_BYTES >> 20
        )));
    }
    d.photos.push(p.clone());
    Ok(true)
}

/// Adds one uploaded photo to `user`'s draft for `trip` (see
/// [`check_photo`], [`admit_photo`]): the photo and its thumbnail are
/// stored in the evidence store first, then the draft row that names them.
/// `Ok(false)` for a photo the draft already holds.
pub fn add_photo(
    db: &Db,
    data_dir: &Path,
    trip: &Trip,
    user: &str,
    upload: (&str, &[u8]),
    limits: &PhotoLimits,
    now: DateTime<Utc>,
) -> Result<bool, IntakeError> {
    let (name, bytes) = upload;
    let c = check_photo(name, bytes, limits)?;
    // Checked once before storing anything (a full draft stores nothing),
    // and again in the transaction that writes the draft.
    let mut before = open_draft(db, data_dir, trip, user, now)?;
    if !admit_photo(&mut before, &c.photo)? {
        return Ok(false);
    }
    let key = draft::draft_key(user, &trip.bundle.id);
    let store = crate::platform::evidence::of(data_dir)?;
    store.put_bytes(&draft::photo_key(&key, &c.photo.sha256), bytes.to_vec())?;
    store.put_bytes(&draft::thumb_key(&key, &c.photo.sha256), c.thumbnail)?;
    let fresh = || new_draft(trip, user, now);
    draft::change(db, &key, fresh, now, |d| admit_photo(d, &c.photo))
}

/// The reports of a draft, with the SHA-256 of each photo they name; `Err`
/// lists every stop in error (nothing is stored then).
pub fn build_reports(
    trip: &Trip,
    d: &Draft,
    tolerance_m: f64,
) -> Result<(Vec<Report>, Vec<String>), Vec<String>> {
    let cl = checklist();
    let at = placements(trip, d, tolerance_m);
    let offset = local_offset(d);
    let mut reports = Vec::new();
    let mut files = Vec::new();
    let mut errors = Vec::new();
    for (i, stop) in trip.stops.iter().enumerate() {
        let photos: Vec<&DraftPhoto> = d
            .photos
            .iter()
            .zip(&at)
            .filter(|(_, (_, now))| *now == Some(i))
            .map(|(p, _)| p)
            .collect();
        let entry = d.stops.get(&stop.code).cloned().unwrap_or_default();
        if entry.outcome.is_empty() {
            if !photos.is_empty() {
                errors.push(format!(
                    "stop {} has {} photos but no outcome: choose the outcome from the sheet, or move its photos",
                    stop.code,
                    photos.len()
                ));
            }
            continue;
        }
        match stop_report(trip, d, stop, &entry, &photos, offset)
            .and_then(|r| validate_report(&r, &cl).map(|()| r))
        {
            Ok(r) => {
                files.extend(photos.iter().map(|p| p.sha256.clone()));
                reports.push(r);
            }
            Err(why) => errors.push(format!("stop {}: {why}", stop.code)),
        }
    }
    if errors.is_empty() {
        Ok((reports, files))
    } else {
        Err(errors)
    }
}

/// One stop's report from what the operator typed and the photos at it.
fn stop_report(
    trip: &Trip,
    d: &Draft,
    stop: &Stop,
    e: &StopEntry,
    photos: &[&DraftPhoto],
    offset: FixedOffset,
) -> Result<Report, String> {
    let report_photos: Vec<ReportPhoto> = photos
        .iter()
        .map(|p| ReportPhoto {
            sha256: p.sha256.clone(),
            original_name: p.original_name.clone(),
            taken_at: photo_time(p, offset),
            lat: p.lat,
            lon: p.lon,
            direction_deg: p.direction_deg,
        })
        .collect();
    let observed_at = match e.time.trim() {
        "" => report_photos
            .iter()
            .filter_map(|p| p.taken_at)
            .min()
            .ok_or("write the time of the visit from the sheet (no photo carries a time)")?,
        t => sheet_time(t, offset)?,
    };
    let (detail, outcome) = (e.detail.trim(), e.outcome.as_str());
    let detail = (!detail.is_empty()).then(|| detail.to_string());
    let (reason, cause) = match outcome {
        "confirmed" => (None, detail),
        "false_alarm" | "not_reached" => (detail, None),
        _ => (None, None),
    };
    let bundle_id = Uuid::parse_str(&trip.bundle.id).map_err(|e| e.to_string())?;
    Ok(Report {
        report_id: e
            .report_id
            .ok_or("the stop has no report id yet: save it once")?,
        bundle_id,
        target: match stop.kind {
            TargetKind::Event => Target::Event {
                code: stop.code.clone(),
                event_id: stop.event_id.ok_or("the stop names no event")?,
            },
            _ => Target::Control {
                code: stop.code.clone(),
            },
        },
        supersedes: None,
        outcome: outcome.to_string(),
        reason,
        cause,
        position: stop_position(e, &report_photos)?,
        observed_at,
        recorded_at: d.created_at,
        area_ha: match e.area_ha.trim() {
            "" => None,
            a => Some(
                a.parse::<f64>()
                    .map_err(|_| format!("area {a:?} must be a number of hectares, e.g. 1.5"))?,
            ),
        },
        notes: match e.observer.trim() {
            "" => e.notes.trim().to_string(),
            who => format!("Observer: {who}. {}", e.notes.trim())
                .trim()
                .to_string(),
        },
        photos: report_photos,
    })
}

/// A time written on the sheet, `YYYY-MM-DDTHH:MM` (or with a space) in the
/// trip's local offset.
pub fn sheet_time(t: &str, offset: FixedOffset) -> Result<DateTime<Utc>, String> {
    let naive = NaiveDateTime::parse_from_str(t, "%Y-%m-%dT%H:%M")
        .or_else(|_| NaiveDateTime::parse_from_str(t, "%Y-%m-%d %H:%M"))
        .map_err(|_| format!("time {t:?} must be a date and time such as 2026-09-03T10:15"))?;
    naive
        .and_local_timezone(offset)
        .single()
        .map(|x| x.with_timezone(&Utc))
        .ok_or_else(|| format!("time {t:?} does not exist in offset {offset}"))
}

/// The position written on the sheet, else the first photo's GPS position.
fn stop_position(e: &StopEntry, photos: &[ReportPhoto]) -> Result<Option<Position>, String> {
    if !e.position.trim().is_empty() {
        let (lat, lon, acc) =
            groundproof_sync::field::parse_lat_lon(e.position.trim()).map_err(|x| x.to_string())?;
        return Ok(Some(Position {
            lat,
            lon,
            accuracy_m: acc,
            source: PositionSource::Manual,
        }));
    }
    Ok(photos.iter().find_map(|p| {
        Some(Position {
            lat: p.lat?,
            lon: p.lon?,
            accuracy_m: None,
            source: PositionSource::PhotoGps,
        })
    }))
}

/// Confirms `user`'s draft for `trip`: checks it, packs the signed return
/// and takes it in (see the module docs). Marks the draft saved.
pub fn save(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    trip: &Trip,
    user: &str,
) -> Result<ReturnDocument, IntakeError> {
    let key = draft::draft_key(user, &trip.bundle.id);
    let d = draft::load(db, &key)?.ok_or_else(|| {
        IntakeError::Invalid(
            "there is no entry for this trip to save: upload photos or fill in a stop first".into(),
        )
    })?;
    if !crate::domain::sheet::is_sheet_of(&d.sheet, &trip.bundle.id) {
        return Err(IntakeError::Invalid(format!(
            "the sheet identifier {:?} is not this trip's: its sheet reads {} at the top; check that the sheet and the trip match",
            d.sheet, trip.sheet
        )));
    }
    let (reports, shas) = build_reports(trip, &d, options.tolerance_m)
        .map_err(|e| IntakeError::Invalid(format!("nothing was stored: {}", e.join("; "))))?;
    if reports.is_empty() {
        return Err(IntakeError::Invalid(
            "no stop has an outcome: nothing to save".into(),
        ));
    }
    let (_copies, files) = photo_files(data_dir, &key, &shas)?;
    let (path, sha256, size) = pack(db, data_dir, trip, &d, &reports, &files)?;
    let provenance = Provenance {
        entered_by: user.to_string(),
        sheet: trip.sheet.clone(),
    };
    let pkg = PackageFile {
        path: &path,
        sha256: &sha256,
        size,
    };
    let doc = take_in_entered(db, data_dir, options, &pkg, &provenance)?;
    let fresh = || d.clone();
    draft::change(db, &key, fresh, Utc::now(), |saved| {
        saved.saved_return = Some(doc.return_id);
        Ok(())
    })?;
    Ok(doc)
}

/// The draft photos `shas` of draft `key` as files on this machine, for
/// packing: a local store's own files, else copies read from the store
/// into a temp folder under `returns/incoming/` (removed when the returned
/// guard drops; a crash leaves a dot-folder the clean-up removes).
fn photo_files(
    data_dir: &Path,
    key: &str,
    shas: &[String],
) -> Result<(Option<tempfile::TempDir>, Vec<PathBuf>), IntakeError> {
    let store = crate::platform::evidence::of(data_dir)?;
    let keys: Vec<String> = shas.iter().map(|s| draft::photo_key(key, s)).collect();
    if let Some(files) = keys
        .iter()
        .map(|k| store.local_path(k))
        .collect::<Option<Vec<PathBuf>>>()
    {
        return Ok((None, files));
    }
    let dir = data_dir.join(INCOMING_DIR);
    std::fs::create_dir_all(&dir)
        .map_err(|e| crate::Error::io(format!("creating {}", dir.display()), e))?;
    let tmp = tempfile::Builder::new()
        .prefix(".station-photos-")
        .tempdir_in(&dir)
        .map_err(|e| crate::Error::io("creating a temp folder for station photos", e))?;
    let mut files = Vec::new();
    for (k, sha) in keys.iter().zip(shas) {
        let path = tmp.path().join(format!("{sha}.jpg"));
        let mut f = std::fs::File::create(&path)
            .map_err(|e| crate::Error::io(format!("creating {}", path.display()), e))?;
        store.copy_to(k, None, &mut f)?;
        files.push(path);
    }
    Ok((Some(tmp), files))
}

/// Packs `reports` into a return signed with the trip's upload key, durable
/// under `returns/incoming/`; its path, SHA-256 and size. The same draft
/// packs to the same bytes (the manifest's time is the draft's).
fn pack(
    db: &Db,
    data_dir: &Path,
    trip: &Trip,
    d: &Draft,
    reports: &[Report],
    files: &[PathBuf],
) -> Result<(PathBuf, String, u64), IntakeError> {
    let b = &trip.bundle;
    let key = match db.read(|r| r.upload_key(&b.id, &b.upload_key_id))? {
        Some((key, false)) => UploadKey {
            key_id: b.upload_key_id.clone(),
            key,
        },
        _ => {
            return Err(IntakeError::Refused(format!(
                "trip {} has no live upload key",
                b.id
            )));
        }
    };
    let header = ReturnHeader {
        bundle_id: Uuid::parse_str(&b.id).map_err(|e| IntakeError::Internal(e.to_string()))?,
        team: b.team.clone(),
        checklist_version: checklist().version,
        created_at: d.created_at,
        camera_zone: None,
    };
    let dir = data_dir.join(INCOMING_DIR);
    std::fs::create_dir_all(&dir)
        .map_err(|e| crate::Error::io(format!("creating {}", dir.display()), e))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".station-")
        .tempfile_in(&dir)
        .map_err(|e| crate::Error::io("creating a temp file for a station return", e))?;
    pack_return(tmp.as_file_mut(), &header, &key, reports, files)
        .map_err(|e| IntakeError::Invalid(format!("the entry could not be packed: {e}")))?;
    tmp.as_file()
        .sync_all()
        .map_err(|e| crate::Error::io("syncing a station return", e))?;
    let (sha, size) = groundproof_sync::returns::sha256_file(tmp.path())
        .map_err(|e| IntakeError::Internal(e.to_string()))?;
    let path = incoming_path(data_dir, &sha);
    if !path.exists() {
        tmp.persist(&path)
            .map_err(|e| crate::Error::io(format!("renaming into {}", path.display()), e.error))?;
        crate::platform::durable::sync_dir(&dir)?;
    }
    Ok((path, sha, size))
}

/// What the entry form sends: the sheet, the local offset, each stop's
/// fields (by code) and the photos the operator moved (SHA-256 → stop code,
/// `""` to set aside, `"proposed"` to follow the proposal again).
#[derive(Debug, Clone, Default)]
pub struct EntryForm {
    pub sheet: String,
    pub local_offset: String,
    pub stops: std::collections::BTreeMap<String, StopEntry>,
    pub moves: Vec<(String, String)>,
}

/// An empty draft of `user` for `trip` (not stored).
fn new_draft(trip: &Trip, user: &str, now: DateTime<Utc>) -> Draft {
    let mut d = Draft::new(&trip.bundle.id, user, now);
    d.sheet = trip.sheet.clone();
    d
}

/// `user`'s draft for `trip`, made empty (not stored) when there is none;
/// expired drafts are removed first, and a new draft is refused past
/// [`draft::MAX_DRAFTS`].
pub fn open_draft(
    db: &Db,
    data_dir: &Path,
    trip: &Trip,
    user: &str,
    now: DateTime<Utc>,
) -> Result<Draft, IntakeError> {
    let key = draft::draft_key(user, &trip.bundle.id);
    if let Some(d) = draft::load(db, &key)? {
        return Ok(d);
    }
    let store = crate::platform::evidence::of(data_dir)?;
    if draft::remove_expired(db, &store, now)? >= draft::MAX_DRAFTS {
        return Err(IntakeError::Limit(format!(
            "the station holds {} unfinished entries already: save or discard one first",
            draft::MAX_DRAFTS
        )));
    }
    Ok(new_draft(trip, user, now))
}

/// Applies the entry form to `user`'s draft for `trip` and stores it (one
/// transaction: a refused field changes nothing).
pub fn keep_form(
    db: &Db,
    data_dir: &Path,
    trip: &Trip,
    user: &str,
    form: EntryForm,
    now: DateTime<Utc>,
) -> Result<(), IntakeError> {
    open_draft(db, data_dir, trip, user, now)?;
    let key = draft::draft_key(user, &trip.bundle.id);
    let fresh = || new_draft(trip, user, now);
    draft::change(db, &key, fresh, now, |d| apply_form(trip, d, form))
}

/// Applies the form to the draft (checked first: nothing changes when a
/// field is refused). A stop gets its report id when it first gets an
/// outcome.
pub fn apply_form(trip: &Trip, d: &mut Draft, form: EntryForm) -> Result<(), IntakeError> {
    let long = |what: &str, s: &str| {
        (s.chars().count() > draft::MAX_FIELD_CHARS).then(|| {
            IntakeError::Invalid(format!(
                "{what} is longer than {} characters",
                draft::MAX_FIELD_CHARS
            ))
        })
    };
    groundproof_sync::field::workspace::parse_offset(form.local_offset.trim())
        .map_err(|e| IntakeError::Invalid(e.to_string()))?;
    if let Some(e) = long("the sheet identifier", &form.sheet) {
        return Err(e);
    }
    for (code, e) in &form.stops {
        if !trip.stops.iter().any(|s| &s.code == code) {
            return Err(IntakeError::Invalid(format!(
                "stop {code:?} is not in this trip"
            )));
        }
        let fields = [
            ("notes", &e.notes),
            ("observer", &e.observer),
            ("time", &e.time),
            ("position", &e.position),
            ("area", &e.area_ha),
            ("outcome", &e.outcome),
            ("reason or cause", &e.detail),
        ];
        for (what, v) in fields {
            if let Some(err) = long(&format!("stop {code}: {what}"), v) {
                return Err(err);
            }
        }
    }
    for (sha, to) in &form.moves {
        if !d.photos.iter().any(|p| &p.sha256 == sha) {
            return Err(IntakeError::Invalid(format!(
                "photo {sha} is not in this entry"
            )));
        }
        if !(to.is_empty() || to == "proposed" || trip.stops.iter().any(|s| &s.code == to)) {
            return Err(IntakeError::Invalid(format!(
                "stop {to:?} is not in this trip"
            )));
        }
    }
    d.sheet = form.sheet.trim().to_string();
    d.local_offset = form.local_offset.trim().to_string();
    for (code, mut e) in form.stops {
        let old = d.stops.get(&code).and_then(|o| o.report_id);
        e.report_id = old.or_else(|| (!e.outcome.is_empty()).then(Uuid::new_v4));
        d.stops.insert(code, e);
    }
    for (sha, to) in form.moves {
        if let Some(p) = d.photos.iter_mut().find(|p| p.sha256 == sha) {
            p.moved_to = (to != "proposed").then_some(to);
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests;
