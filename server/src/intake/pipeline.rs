//! Taking one return package in, once its bytes are durable on disk.
//!
//! Order: (1) a package whose SHA-256 was already taken in answers its stored
//! results; (2) `open_return` checks the ZIP, the signature under the
//! bundle's key (a cancelled bundle's key is refused) and every checksum;
//! (3) reports are checked against the checklist of the package's version;
//! (4) each report: a stored report id is a duplicate; its target must be in
//! the bundle; each photo goes through `inspect_jpeg` under the limits; the
//! evidence checks add flags; (5) photos and thumbnails of accepted reports
//! are written durably; (6) every row of the package commits in one
//! transaction. Intake runs one package at a time (a process-wide lock), so
//! the duplicate decisions of step 4 still hold at step 6.

use super::evidence::{self, CheckContext, Footprint, PhotoFacts};
use super::layout::{
    incoming_key, incoming_path, intake_lock, move_durably, photo_key, prune_rejected,
    rejected_key, rejected_path, thumb_key,
};
use super::{IntakeError, IntakeOptions};
use crate::domain::{Cause, Confidence, Day, Outcome, Reason, TargetKind};
use crate::platform::evidence::Evidence;
use crate::platform::storage::{
    BundleItem, BundleRecord, Db, EventWrite, PhotoCheckRow, PhotoRow, ReportPhotoRow, ReportRow,
    ResultRow, ReturnRecord, StationEntry, UploadRecord,
};
use chrono::{DateTime, FixedOffset, Utc};
use groundproof_sync::SyncError;
use groundproof_sync::bundle::Checklist;
use groundproof_sync::photo::{PhotoMeta, TimeBasis, inspect_jpeg};
use groundproof_sync::returns::{OpenedReturn, Report, ReportPhoto, Target, open_return};
use serde::Serialize;
use sha2::{Digest, Sha256};
use std::cell::Cell;
use std::collections::{BTreeMap, BTreeSet, HashMap};
use std::path::Path;
use uuid::Uuid;

/// The flag of a report with a photo whose image data does not fill the
/// frame its header declares (the photo's stored size is what the data
/// covered).
pub const PHOTO_HEADER_MISMATCH: &str = "photo_header_mismatch";

/// One report's result (the `results` items of RETURN-SPEC).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportResult {
    pub report_id: Uuid,
    /// `accepted`, `duplicate` or `rejected`.
    pub status: String,
    pub reason: Option<String>,
    pub flags: Vec<String>,
}

/// An item of `reports.json` that could not even be read as a report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UnreadableItem {
    pub reason: String,
}

/// The results document of `complete` and `GET /api/v1/returns/{receipt}`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReturnDocument {
    /// The server's number of the return (kept for older clients; only
    /// coordinators and admins may look a return up by it).
    pub return_id: i64,
    /// The unguessable name of the return: `GET /api/v1/returns/{receipt}`.
    pub receipt: String,
    pub bundle_id: Uuid,
    pub sha256: String,
    pub received_at: String,
    pub results: Vec<ReportResult>,
    /// Items of `reports.json` without a readable `report_id`.
    pub unreadable: Vec<UnreadableItem>,
}

/// The stored results document of return `return_id`.
pub fn return_document(db: &Db, return_id: i64) -> Result<ReturnDocument, IntakeError> {
    let (ret, rows, receipt) = db.read(|r| {
        Ok((
            r.return_by_id(return_id)?,
            r.return_results(return_id)?,
            r.return_receipt(return_id)?,
        ))
    })?;
    let ret = ret.ok_or_else(|| IntakeError::NotFound(format!("no return {return_id}")))?;
    let mut results = Vec::new();
    let mut unreadable = Vec::new();
    for row in rows {
        match row
            .report_id
            .as_deref()
            .and_then(|s| Uuid::parse_str(s).ok())
        {
            Some(report_id) => results.push(ReportResult {
                report_id,
                status: row.status,
                reason: row.reason,
                flags: row.flags,
            }),
            None => unreadable.push(UnreadableItem {
                reason: row.reason.unwrap_or_default(),
            }),
        }
    }
    Ok(ReturnDocument {
        return_id: ret.id,
        receipt: receipt.unwrap_or_default(),
        bundle_id: Uuid::parse_str(&ret.bundle_id).unwrap_or_default(),
        sha256: ret.sha256,
        received_at: ret.received_at,
        results,
        unreadable,
    })
}

/// What intake learned about one photo of the package.
#[derive(Debug, Clone)]
struct PhotoInfo {
    row: PhotoRow,
    /// The thumbnail, when the photo is not stored yet.
    thumb: Option<Vec<u8>>,
}

/// An accepted report, ready to be written.
#[derive(Debug, Clone)]
struct Planned {
    row: ReportRow,
    body_sha256: String,
    new_event: Option<EventWrite>,
    photos: Vec<ReportPhotoRow>,
    checks: Vec<PhotoCheckRow>,
}

#[derive(Debug, Clone)]
enum Verdict {
    Accept(Box<Planned>),
    Duplicate(Vec<String>),
    Reject(String),
}

fn classify(e: SyncError, bundle_cancelled: bool) -> IntakeError {
    match e {
        SyncError::UnknownKey { bundle_id, key_id } if bundle_cancelled => IntakeError::Refused(
            format!("bundle {bundle_id} was cancelled: its upload key {key_id} is revoked"),
        ),
        SyncError::UnknownKey { bundle_id, key_id } => IntakeError::Refused(format!(
            "no upload key {key_id} for bundle {bundle_id} on this server"
        )),
        SyncError::BadSignature { reason } => {
            IntakeError::Refused(format!("the return's signature does not verify: {reason}"))
        }
        SyncError::Io { .. } | SyncError::Database { .. } => IntakeError::Internal(e.to_string()),
        other => IntakeError::Package(format!("the return is refused: {}", in_return_words(other))),
    }
}

/// What is wrong with a return package, in the words of a return: the
/// sync crate's reader errors are shared with bundles and speak of the
/// bundle and its `manifest.json`.
fn in_return_words(e: SyncError) -> String {
    const MANIFEST: &str = groundproof_sync::returns::RETURN_MANIFEST;
    match e {
        SyncError::MissingEntry { name } => format!("entry {name:?} is missing from the return"),
        SyncError::UnlistedEntry { name } => {
            format!("entry {name:?} is in the return but not listed in {MANIFEST}")
        }
        SyncError::SizeMismatch {
            name,
            expected,
            actual,
        } => format!("entry {name:?} has {actual} bytes, {MANIFEST} says {expected}"),
        SyncError::ChecksumMismatch {
            name,
            expected,
            actual,
        } => format!(
            "entry {name:?} is corrupt or altered: SHA-256 is {actual}, {MANIFEST} says {expected}"
        ),
        SyncError::WrongFormat { found, expected } => format!(
            "not a Groundproof return: {MANIFEST} names format {found:?}, expected {expected:?}"
        ),
        SyncError::UnsupportedVersion { found, supported } => format!(
            "unsupported return format version {found}; this server reads version {supported}"
        ),
        SyncError::EntryNotAllowed { name, reason } => {
            format!("entry {name:?} is not allowed in a return: {reason}")
        }
        other => other.to_string(),
    }
}

/// The checklist a return was made with: every version this build knows is
/// still read (a team may come back with a bundle issued before an upgrade).
pub(crate) fn checklist_for(version: u32) -> Result<Checklist, IntakeError> {
    Checklist::for_version(version).ok_or_else(|| {
        IntakeError::Package(format!(
            "checklist version {version} is not known to this server (it knows 1 to {})",
            groundproof_sync::bundle::CHECKLIST_VERSION
        ))
    })
}

fn parse_time(s: &str, what: &str) -> Result<DateTime<Utc>, IntakeError> {
    DateTime::parse_from_rfc3339(s)
        .map(|t| t.with_timezone(&Utc))
        .map_err(|e| IntakeError::Internal(format!("{what} {s:?}: {e}")))
}

/// Fingerprint of a report's content (its JSON as the contract serialises it).
fn body_sha256(r: &Report) -> String {
    hex::encode(Sha256::digest(serde_json::to_vec(r).unwrap_or_default()))
}

fn footprint_json(mp: &geo::MultiPolygon<f64>) -> String {
    geojson::Geometry::new(geojson::GeometryValue::from(mp)).to_string()
}

struct Context<'a> {
    db: &'a Db,
    store: &'a Evidence,
    options: &'a IntakeOptions,
    opened: &'a OpenedReturn,
    bundle: &'a BundleRecord,
    items: &'a [BundleItem],
    window: (DateTime<Utc>, DateTime<Utc>),
    received_at: DateTime<Utc>,
    /// Reports of this package using each photo.
    users: BTreeMap<String, BTreeSet<Uuid>>,
    photos: HashMap<String, Result<PhotoInfo, String>>,
}

/// When a photo was taken. EXIF read without a zone places a camera's local
/// time (no offset, no GPS stamp) as if it were UTC: the return's camera zone
/// moves it to its instant (local − offset); a return without one leaves the
/// time out, and the report's own time stands.
fn photo_instant(meta: &PhotoMeta, camera_zone: Option<FixedOffset>) -> Option<DateTime<Utc>> {
    let t = meta.taken_at?;
    if meta.time_basis != Some(TimeBasis::CameraZone) {
        return Some(t);
    }
    let zone = camera_zone?;
    Some(t - chrono::Duration::seconds(i64::from(zone.local_minus_utc())))
}

impl Context<'_> {
    fn photo(&mut self, sha: &str) -> Result<PhotoInfo, IntakeError> {
        if let Some(p) = self.photos.get(sha) {
            return p.clone().map_err(IntakeError::Package);
        }
        let stored = self.db.read(|r| r.photo(sha))?;
        let info = match stored {
            Some(row) if self.store.exists(&photo_key(sha))? => Ok(PhotoInfo { row, thumb: None }),
            _ => self.inspect(sha),
        };
        self.photos.insert(sha.to_string(), info.clone());
        info.map_err(IntakeError::Package)
    }

    fn inspect(&self, sha: &str) -> Result<PhotoInfo, String> {
        let bytes = self.opened.photo_bytes(sha).map_err(|e| e.to_string())?;
        let check = inspect_jpeg(&bytes, &self.options.photo_limits).map_err(|e| e.to_string())?;
        if check.sha256 != sha {
            return Err("its bytes do not match its SHA-256".into());
        }
        Ok(PhotoInfo {
            row: PhotoRow {
                sha256: sha.to_string(),
                width: check.width,
                height: check.height,
                taken_at: photo_instant(&check.meta, self.camera_zone()).map(|t| t.to_rfc3339()),
                lat: check.meta.lat,
                lon: check.meta.lon,
                // A magnetic direction is not stored as a bearing from true north.
                direction_deg: check.meta.true_direction_deg(),
                bytes: bytes.len() as u64,
                stored_at: self.received_at.to_rfc3339(),
                data_matches_header: check.data_matches_header,
            },
            thumb: Some(check.thumbnail_jpeg),
        })
    }

    /// The camera zone the return carries, if any (checked when it was opened).
    fn camera_zone(&self) -> Option<FixedOffset> {
        let zone = self.opened.manifest.camera_zone.as_ref()?;
        zone.fixed_offset().ok()
    }

    fn item(&self, code: &str, kind: TargetKind) -> Option<&BundleItem> {
        self.items.iter().find(|i| i.code == code && i.kind == kind)
    }

    /// Decide what to do with one report that passed the format checks:
    /// a duplicate, a rejection with its reason, or the rows to store.
    fn judge(&mut self, r: &Report) -> Result<Verdict, IntakeError> {
        let id = r.report_id.to_string();
        let body = body_sha256(r);
        if let Some((stored, flags)) = self.db.read(|x| x.report_fingerprint(&id))? {
            return Ok(already_stored(&id, &stored, &body, flags));
        }
        let mut target = match self.resolve(r)? {
            Ok(t) => t,
            Err(why) => return Ok(Verdict::Reject(why)),
        };
        let words = match Words::of(r) {
            Ok(w) => w,
            Err(why) => return Ok(Verdict::Reject(why)),
        };
        let ctx = CheckContext {
            footprint: target.footprint.take(),
            first_detection: target.first_detection,
            window: self.window,
            tolerance_m: self.options.tolerance_m,
        };
        let position = r.position.map(|p| (p.lat, p.lon));
        let (distance_m, mut flags) = match target.kind {
            TargetKind::NewClearing => (Some(0.0), Vec::new()),
            // A team that turned back reports where it turned back: the
            // distance is kept, but being far is what not reached means.
            _ if words.outcome == Outcome::NotReached => {
                (evidence::check_position(&ctx, position).0, Vec::new())
            }
            _ => evidence::check_position(&ctx, position),
        };
        flags.extend(evidence::check_report_time(r.observed_at, self.received_at));
        let found = match self.check_photos(r, &id, &ctx)? {
            Ok(f) => f,
            Err(why) => return Ok(Verdict::Reject(why)),
        };
        flags.extend(found.flags);
        let row = self.report_row(r, id, &target, words, distance_m, flags);
        Ok(Verdict::Accept(Box::new(Planned {
            row,
            body_sha256: body,
            new_event: target.new_event,
            photos: found.photos,
            checks: found.checks,
        })))
    }

    /// What the report is about, as the bundle and storage know it; `Err`
    /// holds the reason the report is refused.
    fn resolve(&self, r: &Report) -> Result<Result<Resolved, String>, IntakeError> {
        let bid = &self.bundle.id;
        Ok(Ok(match &r.target {
            Target::Event { code, event_id } => {
                let Some(item) = self.item(code, TargetKind::Event) else {
                    return Ok(Err(format!("event {code} is not in bundle {bid}")));
                };
                if item.event_id != Some(*event_id) {
                    return Ok(Err(format!(
                        "event {code} of bundle {bid} is event id {}, the report names {event_id}",
                        item.event_id
                            .map(|e| e.to_string())
                            .unwrap_or_else(|| "none".into())
                    )));
                }
                let Some(ev) = self.db.read(|x| x.event_resolved(*event_id))? else {
                    return Ok(Err(format!("unknown event id {event_id}")));
                };
                Resolved {
                    kind: TargetKind::Event,
                    event_id: Some(*event_id),
                    control_code: None,
                    footprint: crate::alerts::events::parse_multipolygon(&ev.attrs.footprint)
                        .map(Footprint::Area),
                    first_detection: Some(ev.attrs.first.date()),
                    new_event: None,
                }
            }
            Target::Control { code } => {
                let Some(item) = self.item(code, TargetKind::Control) else {
                    return Ok(Err(format!("control point {code} is not in bundle {bid}")));
                };
                Resolved {
                    kind: TargetKind::Control,
                    event_id: None,
                    control_code: Some(code.clone()),
                    footprint: Some(Footprint::Point(item.lon, item.lat)),
                    first_detection: None,
                    new_event: None,
                }
            }
            Target::NewClearing => match new_clearing(r) {
                Ok(t) => t,
                Err(m) => return Ok(Err(m)),
            },
        }))
    }

    /// Every photo of `r` inspected and checked; `Err` holds the reason a
    /// photo refuses the whole report.
    fn check_photos(
        &mut self,
        r: &Report,
        id: &str,
        ctx: &CheckContext,
    ) -> Result<Result<PhotoFindings, String>, IntakeError> {
        // An amendment keeps the photos of the report it replaces: sharing
        // them within that line of reports is not reuse.
        let lineage: BTreeSet<Uuid> = r
            .supersedes
            .into_iter()
            .chain(
                self.opened
                    .reports
                    .iter()
                    .filter(|o| o.supersedes == Some(r.report_id))
                    .map(|o| o.report_id),
            )
            .collect();
        let supersedes = r.supersedes.map(|u| u.to_string()).unwrap_or_default();
        let mut found = PhotoFindings::default();
        for p in &r.photos {
            let info = match self.photo(&p.sha256) {
                Ok(i) => i,
                Err(IntakeError::Package(why)) => {
                    return Ok(Err(format!(
                        "photo {} ({}) is refused: {why}",
                        p.sha256, p.original_name
                    )));
                }
                Err(e) => return Err(e),
            };
            let in_package = self
                .users
                .get(&p.sha256)
                .is_some_and(|u| u.iter().any(|o| *o != r.report_id && !lineage.contains(o)));
            let reused = in_package
                || self
                    .db
                    .read(|x| x.photo_used_by_other(&p.sha256, id, &supersedes))?;
            let v = evidence::check_photo(ctx, &photo_facts(p, &info, reused));
            found.flags.extend(v.flags.iter().cloned());
            if !info.row.data_matches_header {
                found
                    .flags
                    .push(format!("{PHOTO_HEADER_MISMATCH}:{}", p.sha256));
            }
            found.checks.push(PhotoCheckRow {
                report_id: id.to_string(),
                sha256: p.sha256.clone(),
                distance_m: v.distance_m,
                after_detection: v.after_detection,
                inside_window: v.inside_window,
                reused_elsewhere: v.reused_elsewhere,
            });
            found.photos.push(ReportPhotoRow {
                sha256: p.sha256.clone(),
                original_name: p.original_name.clone(),
            });
        }
        Ok(Ok(found))
    }

    /// The row stored for an accepted report.
    fn report_row(
        &self,
        r: &Report,
        id: String,
        target: &Resolved,
        words: Words,
        distance_m: Option<f64>,
        flags: Vec<String>,
    ) -> ReportRow {
        let position_source = r.position.map(|p| {
            serde_json::to_value(p.source)
                .ok()
                .and_then(|v| v.as_str().map(str::to_owned))
                .unwrap_or_default()
        });
        ReportRow {
            report_id: id,
            bundle_id: self.bundle.id.clone(),
            event_id: target.event_id,
            control_code: target.control_code.clone(),
            kind: target.kind,
            supersedes: r.supersedes.map(|s| s.to_string()),
            outcome: words.outcome,
            reason: words.reason,
            cause: words.cause,
            lat: r.position.map(|p| p.lat),
            lon: r.position.map(|p| p.lon),
            accuracy_m: r.position.and_then(|p| p.accuracy_m),
            position_source,
            distance_m,
            observed_at: r.observed_at.into(),
            recorded_at: r.recorded_at.into(),
            received_at: self.received_at.into(),
            area_ha: r.area_ha,
            notes: r.notes.clone(),
            team: self.bundle.team.clone(),
            evidence_ok: flags.is_empty(),
            flags,
            return_id: 0,
        }
    }
}

/// What a report is about, once found in the bundle (or made, for a new
/// clearing).
struct Resolved {
    kind: TargetKind,
    event_id: Option<i64>,
    control_code: Option<String>,
    /// Taken by the evidence checks.
    footprint: Option<Footprint>,
    first_detection: Option<chrono::NaiveDate>,
    /// The field-found event to create, for a new clearing.
    new_event: Option<EventWrite>,
}

/// A report's outcome, reason and cause as words. The report passed the
/// checklist, whose words are these, so a report this fails on names a
/// word this build does not know.
struct Words {
    outcome: Outcome,
    reason: Option<Reason>,
    cause: Option<Cause>,
}

impl Words {
    fn of(r: &Report) -> Result<Words, String> {
        let word_err = |e: groundproof_sync::UnknownWord| e.to_string();
        Ok(Words {
            outcome: r.outcome.parse().map_err(word_err)?,
            reason: r
                .reason
                .as_deref()
                .map(str::parse)
                .transpose()
                .map_err(word_err)?,
            cause: r
                .cause
                .as_deref()
                .map(str::parse)
                .transpose()
                .map_err(word_err)?,
        })
    }
}

/// What the photos of one report gave.
#[derive(Default)]
struct PhotoFindings {
    photos: Vec<ReportPhotoRow>,
    checks: Vec<PhotoCheckRow>,
    flags: Vec<String>,
}

/// The facts the evidence checks read about one photo: the stored (or just
/// inspected) EXIF first, what the report says second.
fn photo_facts(p: &ReportPhoto, info: &PhotoInfo, reused: bool) -> PhotoFacts {
    let taken_at = info
        .row
        .taken_at
        .as_deref()
        .and_then(|t| DateTime::parse_from_rfc3339(t).ok())
        .map(|t| t.with_timezone(&Utc))
        .or(p.taken_at);
    let position = match (info.row.lat, info.row.lon) {
        (Some(la), Some(lo)) => Some((la, lo)),
        _ => p.lat.zip(p.lon),
    };
    PhotoFacts {
        sha256: p.sha256.clone(),
        taken_at,
        position,
        reused_elsewhere: reused,
    }
}

/// The target of a new clearing: a square of its area around its position
/// (`domain::geodesy::clearing_square`), and the field-found event to make;
/// `Err` without a position and area, or for a square that cannot be stored.
fn new_clearing(r: &Report) -> Result<Resolved, String> {
    let (Some(p), Some(area)) = (r.position, r.area_ha) else {
        return Err("a new clearing needs a position and area_ha".into());
    };
    let mp = crate::domain::geodesy::clearing_square(p.lon, p.lat, area)
        .map_err(|m| format!("new clearing: {m}"))?;
    let rect = geo::BoundingRect::bounding_rect(&mp);
    let day = Day::from_date(r.observed_at.date_naive());
    let write = rect.map(|b| EventWrite {
        footprint: footprint_json(&mp),
        area_ha: area,
        centroid: (p.lon, p.lat),
        bbox: (b.min().x, b.min().y, b.max().x, b.max().y),
        first: day,
        last: day,
        alert_count: 0,
        highest_confidence: Confidence::Tentative,
        corroborated: false,
        per_source: BTreeMap::new(),
    });
    Ok(Resolved {
        kind: TargetKind::NewClearing,
        event_id: None,
        control_code: None,
        footprint: Some(Footprint::Area(mp)),
        first_detection: None,
        new_event: write,
    })
}

/// Takes in the package at `package` (already durable, `size` bytes with
/// SHA-256 `sha256`), arrived through `upload` when given. A package refused
/// as a whole is moved to `returns/rejected/` and, for an upload, the
/// refusal is recorded so that a later `complete` answers the same.
pub fn take_in(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    package: &Path,
    sha256: &str,
    size: u64,
    upload: Option<&UploadRecord>,
) -> Result<ReturnDocument, IntakeError> {
    let package = PackageFile {
        path: package,
        sha256,
        size,
    };
    take_in_with(db, data_dir, options, &package, upload, None)
}

/// Who entered a return at the station from a paper sheet: recorded with
/// each report it stores, in the same transaction.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Provenance {
    /// The user who entered and confirmed it.
    pub entered_by: String,
    /// The identifier of the paper sheet it was copied from.
    pub sheet: String,
}

/// A package durable on disk: where, its SHA-256 and size.
pub struct PackageFile<'a> {
    pub path: &'a Path,
    pub sha256: &'a str,
    pub size: u64,
}

/// [`take_in`] of a package the station entry wrote: the same checks, and
/// each accepted report records `provenance`.
pub fn take_in_entered(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    package: &PackageFile,
    provenance: &Provenance,
) -> Result<ReturnDocument, IntakeError> {
    take_in_with(db, data_dir, options, package, None, Some(provenance))
}

fn take_in_with(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    pkg: &PackageFile,
    upload: Option<&UploadRecord>,
    provenance: Option<&Provenance>,
) -> Result<ReturnDocument, IntakeError> {
    let package = pkg.path;
    let store = crate::platform::evidence::of(data_dir)?;
    let _guard = intake_lock();
    let out = take_in_locked(db, &store, options, pkg, upload, provenance);
    if !store.is_local() && out.as_ref().err().is_none_or(|e| e.is_final()) {
        // The store keeps the package (taken in or set aside); this
        // machine's copy was for parsing. After any other failure (the
        // store unreachable) the copy stays: nothing received is lost.
        remove_spool(package)?;
    }
    out
}

fn remove_spool(package: &Path) -> Result<(), IntakeError> {
    match std::fs::remove_file(package) {
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(crate::Error::io(
            format!("removing {}", package.display()),
            e,
        )),
        _ => Ok(()),
    }
}

/// A package refused whole, or of which nothing was kept, goes to
/// `returns/rejected/` (within that folder's budget).
fn set_aside(store: &Evidence, package: &Path, sha256: &str) -> Result<(), IntakeError> {
    match store.local_path(&rejected_key(sha256)) {
        Some(to) if package.exists() => move_durably(package, &to)?,
        Some(_) => {}
        None if store.exists(&incoming_key(sha256))? => {
            store.rename(&incoming_key(sha256), &rejected_key(sha256))?
        }
        None => {}
    }
    prune_rejected(store)?;
    Ok(())
}

fn take_in_locked(
    db: &Db,
    store: &Evidence,
    options: &IntakeOptions,
    pkg: &PackageFile,
    upload: Option<&UploadRecord>,
    provenance: Option<&Provenance>,
) -> Result<ReturnDocument, IntakeError> {
    let (package, sha256) = (pkg.path, pkg.sha256);
    if let Some(r) = db.read(|x| x.return_by_sha(sha256))? {
        if let Some(u) = upload.filter(|u| u.state == "open") {
            db.write(|tx| tx.finish_upload(&u.id, r.id))?;
        }
        return return_document(db, r.id);
    }
    // Kept in the store before anything parses it (a local store already
    // holds it there).
    store.put_file(&incoming_key(sha256), package)?;
    match run(db, store, options, pkg, upload, provenance) {
        Ok(doc) => Ok(doc),
        Err(e) if e.is_final() => {
            tracing::warn!(sha256, error = %e, "return package refused");
            set_aside(store, package, sha256)?;
            if let Some(u) = upload {
                db.write(|tx| {
                    tx.fail_upload(&u.id, super::error::refusal_code(&e), &e.to_string())
                })?;
            }
            Err(e)
        }
        Err(e) => Err(e),
    }
}

fn run(
    db: &Db,
    store: &Evidence,
    options: &IntakeOptions,
    pkg: &PackageFile,
    upload: Option<&UploadRecord>,
    provenance: Option<&Provenance>,
) -> Result<ReturnDocument, IntakeError> {
    let (package, sha256, size) = (pkg.path, pkg.sha256, pkg.size);
    let opened = open_checked(db, options, package, upload)?;
    let (bundle, items) = live_bundle(db, &opened.manifest.bundle_id.to_string())?;
    let received = options.received_at.unwrap_or_else(Utc::now);
    let mut ctx = Context {
        db,
        store,
        options,
        opened: &opened,
        bundle: &bundle,
        items: &items,
        window: (
            parse_time(&bundle.issued_at, "issued_at")?,
            parse_time(&bundle.expires_at, "expires_at")?,
        ),
        received_at: received,
        users: photo_users(&opened.reports),
        photos: HashMap::new(),
    };
    let mut verdicts: Vec<(Uuid, Verdict)> = Vec::new();
    for r in &opened.reports {
        verdicts.push((r.report_id, ctx.judge(r)?));
    }
    let photos = std::mem::take(&mut ctx.photos);
    write_photo_files(store, &opened, &verdicts, &photos)?;
    let stored = Stored {
        sha256,
        size,
        received_at: received.to_rfc3339(),
        bundle: &bundle,
        upload,
        provenance,
    };
    let kept = verdicts
        .iter()
        .any(|(_, v)| !matches!(v, Verdict::Reject(_)));
    let return_id = commit_rows(db, &stored, &opened, &verdicts, &photos, kept)?;
    if !kept {
        // Nothing of it was kept: the results say why; the package itself
        // is kept only as a refused one is, within that budget.
        set_aside(store, package, sha256)?;
    }
    return_document(db, return_id)
}

/// Step 2: the package opened under its bundle's key, for the upload's
/// bundle, with the checklist of its version applied.
fn open_checked(
    db: &Db,
    options: &IntakeOptions,
    package: &Path,
    upload: Option<&UploadRecord>,
) -> Result<OpenedReturn, IntakeError> {
    let cancelled = Cell::new(false);
    let mut opened = open_return(
        package,
        |bid, kid| match db.read(|r| r.upload_key(&bid.to_string(), kid)) {
            Ok(Some((k, false))) => Some(k),
            Ok(Some((_, true))) => {
                cancelled.set(true);
                None
            }
            _ => None,
        },
        &options.return_limits,
    )
    .map_err(|e| classify(e, cancelled.get()))?;
    let bundle_id = opened.manifest.bundle_id;
    if let Some(u) = upload
        && u.bundle_id != bundle_id.to_string()
    {
        return Err(IntakeError::Package(format!(
            "the package is for bundle {bundle_id}, the upload was made for {}",
            u.bundle_id
        )));
    }
    opened.apply_checklist(&checklist_for(opened.manifest.checklist_version)?);
    Ok(opened)
}

/// The bundle `bid` and its items; refused when unknown or cancelled.
fn live_bundle(db: &Db, bid: &str) -> Result<(BundleRecord, Vec<BundleItem>), IntakeError> {
    let (bundle, items) = db.read(|r| Ok((r.bundle(bid)?, r.bundle_items(bid)?)))?;
    let bundle = bundle.ok_or_else(|| IntakeError::Refused(format!("no bundle {bid}")))?;
    if bundle.cancelled_at.is_some() {
        return Err(IntakeError::Refused(format!(
            "bundle {bid} was cancelled: its upload key is revoked"
        )));
    }
    Ok((bundle, items))
}

/// The reports of the package using each photo.
fn photo_users(reports: &[Report]) -> BTreeMap<String, BTreeSet<Uuid>> {
    let mut users: BTreeMap<String, BTreeSet<Uuid>> = BTreeMap::new();
    for r in reports {
        for p in &r.photos {
            users
                .entry(p.sha256.clone())
                .or_default()
                .insert(r.report_id);
        }
    }
    users
}

/// Step 5, files first: every photo (and thumbnail) of an accepted report.
fn write_photo_files(
    store: &Evidence,
    opened: &OpenedReturn,
    verdicts: &[(Uuid, Verdict)],
    photos: &HashMap<String, Result<PhotoInfo, String>>,
) -> Result<(), IntakeError> {
    let mut to_write: BTreeSet<&str> = BTreeSet::new();
    for (_, v) in verdicts {
        if let Verdict::Accept(p) = v {
            to_write.extend(p.photos.iter().map(|x| x.sha256.as_str()));
        }
    }
    for sha in &to_write {
        let Some(Ok(info)) = photos.get(*sha) else {
            continue;
        };
        let key = photo_key(sha);
        if info.thumb.is_some() || !store.exists(&key)? {
            // One photo in memory at a time, within the photo limits (the
            // inspection read it whole too).
            let bytes = opened
                .photo_bytes(sha)
                .map_err(|e| crate::Error::Internal(format!("copying photo {sha}: {e}")))?;
            store.put_bytes(&key, bytes)?;
        }
        if let Some(t) = &info.thumb {
            store.put_bytes(&thumb_key(sha), t.clone())?;
        }
    }
    Ok(())
}

/// What the return row records about the package itself.
struct Stored<'a> {
    sha256: &'a str,
    size: u64,
    received_at: String,
    bundle: &'a BundleRecord,
    upload: Option<&'a UploadRecord>,
    provenance: Option<&'a Provenance>,
}

/// Step 6: every row of the package, in one transaction; the return's id.
/// A package of which no report is `kept` is recorded where it goes next,
/// under `returns/rejected/`.
fn commit_rows(
    db: &Db,
    stored: &Stored,
    opened: &OpenedReturn,
    verdicts: &[(Uuid, Verdict)],
    photos: &HashMap<String, Result<PhotoInfo, String>>,
    kept: bool,
) -> Result<i64, IntakeError> {
    let rel = if kept {
        incoming_path(Path::new(""), stored.sha256)
    } else {
        rejected_path(Path::new(""), stored.sha256)
    };
    let return_id = db.write(|tx| {
        // Another instance on the same database may have committed this
        // package since the check before parsing (the intake lock holds
        // only within this process): its return stands, and names this
        // upload's results too.
        if let Some(r) = tx.reader().return_by_sha(stored.sha256)? {
            if let Some(u) = stored.upload {
                tx.finish_upload(&u.id, r.id)?;
            }
            return Ok(r.id);
        }
        let return_id = tx.insert_return(&ReturnRecord {
            id: 0,
            bundle_id: stored.bundle.id.clone(),
            sha256: stored.sha256.to_string(),
            size: stored.size,
            team: stored.bundle.team.clone(),
            received_at: stored.received_at.clone(),
            path: rel.to_string_lossy().into_owned(),
        })?;
        let mut results: Vec<ResultRow> = Vec::new();
        for (id, v) in verdicts {
            results.push(store_verdict(tx, return_id, id, v, photos)?);
            if let (Verdict::Accept(_), Some(p)) = (v, stored.provenance) {
                tx.insert_station_entry(&StationEntry {
                    report_id: id.to_string(),
                    bundle_id: stored.bundle.id.clone(),
                    entered_by: p.entered_by.clone(),
                    sheet: p.sheet.clone(),
                    entered_at: stored.received_at.clone(),
                })?;
            }
        }
        for r in &opened.rejected {
            results.push(ResultRow {
                report_id: r.report_id.map(|u| u.to_string()),
                status: "rejected".into(),
                reason: Some(format!("reports.json item {}: {}", r.index, r.reason)),
                flags: Vec::new(),
            });
        }
        results.sort_by(|a, b| match (&a.report_id, &b.report_id) {
            (Some(x), Some(y)) => x.cmp(y),
            (Some(_), None) => std::cmp::Ordering::Less,
            (None, Some(_)) => std::cmp::Ordering::Greater,
            (None, None) => std::cmp::Ordering::Equal,
        });
        tx.insert_results(return_id, &results)?;
        if let Some(u) = stored.upload {
            tx.finish_upload(&u.id, return_id)?;
        }
        Ok(return_id)
    })?;
    Ok(return_id)
}

/// The verdict on report `id` arriving with body fingerprint `body` when one
/// with fingerprint `stored` (and `flags`) is already stored: a duplicate,
/// or a refusal of other content under the same id.
fn already_stored(id: &str, stored: &str, body: &str, flags: Vec<String>) -> Verdict {
    if stored == body {
        Verdict::Duplicate(flags)
    } else {
        Verdict::Reject(format!(
            "report {id} was already received with other content; a correction is a new report that supersedes it"
        ))
    }
}

/// One report's verdict written inside the package's transaction; its
/// result row.
fn store_verdict(
    tx: &crate::platform::storage::Tx,
    return_id: i64,
    id: &Uuid,
    v: &Verdict,
    photos: &HashMap<String, Result<PhotoInfo, String>>,
) -> Result<ResultRow, crate::Error> {
    let rid = id.to_string();
    Ok(match v {
        Verdict::Duplicate(flags) => ResultRow {
            report_id: Some(rid),
            status: "duplicate".into(),
            reason: None,
            flags: flags.clone(),
        },
        Verdict::Reject(reason) => ResultRow {
            report_id: Some(rid),
            status: "rejected".into(),
            reason: Some(reason.clone()),
            flags: Vec::new(),
        },
        Verdict::Accept(p) => {
            // Stored meanwhile by another instance (judged before this
            // transaction, and the intake lock holds only within this
            // process): what the judge would say now.
            if let Some((stored, flags)) = tx.reader().report_fingerprint(&rid)? {
                let v = already_stored(&rid, &stored, &p.body_sha256, flags);
                return store_verdict(tx, return_id, id, &v, photos);
            }
            let mut row = p.row.clone();
            row.return_id = return_id;
            if let Some(ev) = &p.new_event {
                let eid = tx.insert_event(ev)?;
                tx.mark_event_field_found(eid)?;
                row.event_id = Some(eid);
            }
            for ph in &p.photos {
                if let Some(Ok(info)) = photos.get(&ph.sha256) {
                    tx.insert_photo(&info.row)?;
                }
            }
            tx.insert_report(&row, &p.body_sha256)?;
            tx.insert_report_photos(&row.report_id, &p.photos)?;
            for c in &p.checks {
                tx.insert_photo_check(c)?;
            }
            ResultRow {
                report_id: Some(rid),
                status: "accepted".into(),
                reason: None,
                flags: row.flags.clone(),
            }
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_new_clearing_square_has_the_reported_area() {
        use geo::GeodesicArea;
        // 2.5 ha is a square of 158.1 m sides; the geodesic area of the
        // square (Karney, through geo 0.33) is 25,000 m^2 to within 0.1%.
        let mp = crate::domain::geodesy::clearing_square(-60.0, -3.0, 2.5).unwrap();
        let a = mp.geodesic_area_unsigned();
        assert!((a - 25_000.0).abs() < 25.0, "{a}");
        let back = crate::alerts::events::parse_multipolygon(&footprint_json(&mp)).unwrap();
        assert_eq!(back, mp);
    }

    #[test]
    fn checklist_versions() {
        assert_eq!(checklist_for(1).unwrap().version, 1);
        assert_eq!(checklist_for(2).unwrap().version, 2);
        assert!(matches!(checklist_for(3), Err(IntakeError::Package(_))));
    }
}
