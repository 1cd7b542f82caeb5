//! Turning command-line report fields into a [`Report`]: reading each photo
//! (size bound, JPEG magic, EXIF via [`crate::photo::read_photo_meta_in`] in the trip's camera zone), taking the
//! position from `--at` or else from the photos' GPS, the time from `--time`
//! or else the earliest photo time, and checking the result against the
//! bundle's checklist before anything is stored.

use std::io::Read;
use std::path::{Path, PathBuf};

use chrono::{DateTime, FixedOffset, Utc};
use sha2::{Digest, Sha256};
use uuid::Uuid;

use super::cli::ReportArgs;
use super::geo_calc::parse_lat_lon;
use crate::SyncError;
use crate::photo::read_photo_meta_in;
use crate::returns::{
    Position, PositionSource, Report, ReportPhoto, ReturnLimits, Target, validate_report,
};

/// A photo read from disk for a report.
#[derive(Debug, Clone)]
pub struct ReadPhoto {
    /// Where it was read from.
    pub path: PathBuf,
    /// What goes into the report.
    pub photo: ReportPhoto,
}

/// Reads and checks one photo file.
/// A time without offset or GPS stamp is placed in `camera_zone`; a magnetic image
/// direction is left out (the report's `direction_deg` is from true north).
pub fn read_photo(path: &Path, camera_zone: FixedOffset) -> Result<ReadPhoto, SyncError> {
    let max = ReturnLimits::default().max_photo_bytes;
    let file = std::fs::File::open(path)
        .map_err(|e| SyncError::Usage(format!("cannot open photo {}: {e}", path.display())))?;
    let mut bytes = Vec::new();
    file.take(max + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| SyncError::io(format!("read photo {}", path.display()), e))?;
    if bytes.len() as u64 > max {
        return Err(SyncError::Usage(format!(
            "photo {} is larger than {max} bytes",
            path.display()
        )));
    }
    if !bytes.starts_with(&[0xff, 0xd8, 0xff]) {
        return Err(SyncError::Usage(format!(
            "photo {} is not a JPEG file",
            path.display()
        )));
    }
    let meta = read_photo_meta_in(&bytes, camera_zone).unwrap_or_default();
    let original_name = path
        .file_name()
        .map(|n| n.to_string_lossy().chars().take(255).collect())
        .unwrap_or_default();
    Ok(ReadPhoto {
        path: path.to_owned(),
        photo: ReportPhoto {
            sha256: hex::encode(Sha256::digest(&bytes)),
            original_name,
            taken_at: meta.taken_at,
            lat: meta.lat,
            lon: meta.lon,
            direction_deg: meta.true_direction_deg(),
        },
    })
}

/// Parses an RFC 3339 time given on the command line.
pub fn parse_time(s: &str) -> Result<DateTime<Utc>, SyncError> {
    DateTime::parse_from_rfc3339(s)
        .map(|t| t.with_timezone(&Utc))
        .map_err(|_| {
            SyncError::Usage(format!(
                "time {s:?} must be RFC 3339, e.g. 2026-09-03T10:15:00Z"
            ))
        })
}

/// The first photo position, as a `photo_gps` position.
fn photo_position(photos: &[ReadPhoto]) -> Option<Position> {
    photos
        .iter()
        .find_map(|p| match (p.photo.lat, p.photo.lon) {
            (Some(lat), Some(lon)) => Some(Position {
                lat,
                lon,
                accuracy_m: None,
                source: PositionSource::PhotoGps,
            }),
            _ => None,
        })
}

/// What a report takes from its trip: the bundle, its checklist, and the cameras' zone.
#[derive(Debug, Clone, Copy)]
pub struct Trip<'a> {
    pub bundle_id: Uuid,
    pub checklist: &'a crate::bundle::Checklist,
    pub camera_zone: FixedOffset,
}

/// Builds a report from `args`. `base` is the report being amended (its values fill
/// what `args` leaves out, and its photos are kept unless new ones are given, with
/// `base_photo_paths` pointing at their stored copies).
pub fn build_report(
    trip: &Trip<'_>,
    target: Target,
    args: &ReportArgs,
    base: Option<&Report>,
    base_photo_paths: Vec<PathBuf>,
    now: DateTime<Utc>,
) -> Result<(Report, Vec<PathBuf>), SyncError> {
    let Trip {
        bundle_id,
        checklist,
        camera_zone,
    } = *trip;
    let read: Vec<ReadPhoto> = args
        .photos
        .iter()
        .map(|p| read_photo(p, camera_zone))
        .collect::<Result<_, _>>()?;
    let (photos, paths) = report_photos(&read, base, base_photo_paths);
    let outcome = report_outcome(args, base, checklist, target.kind())?;
    let position = report_position(args, &read, base)?;
    let observed_at = match &args.time {
        Some(t) => parse_time(t)?,
        None => photos
            .iter()
            .filter_map(|p| p.taken_at)
            .min()
            .or(base.map(|b| b.observed_at))
            .unwrap_or(now),
    };
    // A changed outcome drops the old reason/cause unless given again.
    let same_outcome = base.is_some_and(|b| b.outcome == outcome);
    let inherit = |given: &Option<String>, old: Option<&Option<String>>| {
        given.clone().or_else(|| {
            if same_outcome {
                old.cloned().flatten()
            } else {
                None
            }
        })
    };
    let report = Report {
        report_id: Uuid::new_v4(),
        bundle_id,
        target,
        supersedes: base.map(|b| b.report_id),
        reason: inherit(&args.reason, base.map(|b| &b.reason)),
        cause: inherit(&args.cause, base.map(|b| &b.cause)),
        outcome,
        position,
        observed_at,
        recorded_at: now,
        area_ha: args.area_ha.or(base.and_then(|b| b.area_ha)),
        notes: args
            .notes
            .clone()
            .or_else(|| base.map(|b| b.notes.clone()))
            .unwrap_or_default(),
        photos,
    };
    check_report(&report, checklist)?;
    Ok((report, paths))
}

/// The photos read, or the amended report's photos and stored copies when
/// none are given.
fn report_photos(
    read: &[ReadPhoto],
    base: Option<&Report>,
    base_photo_paths: Vec<PathBuf>,
) -> (Vec<ReportPhoto>, Vec<PathBuf>) {
    if read.is_empty() && base.is_some() {
        (
            base.map(|b| b.photos.clone()).unwrap_or_default(),
            base_photo_paths,
        )
    } else {
        (
            read.iter().map(|p| p.photo.clone()).collect(),
            read.iter().map(|p| p.path.clone()).collect(),
        )
    }
}

/// The outcome given, or the amended report's; required otherwise (the
/// message lists the outcomes of the target's kind: a control point has its
/// own from checklist 2 on).
fn report_outcome(
    args: &ReportArgs,
    base: Option<&Report>,
    checklist: &crate::bundle::Checklist,
    kind: crate::vocab::TargetKind,
) -> Result<String, SyncError> {
    args.outcome
        .clone()
        .or_else(|| base.map(|b| b.outcome.clone()))
        .ok_or_else(|| {
            SyncError::Usage(format!(
                "--outcome is required (one of: {})",
                checklist.outcomes_for(kind).join(", ")
            ))
        })
}

/// The position from `--at`, else from the new photos' GPS, else the amended
/// report's.
fn report_position(
    args: &ReportArgs,
    read: &[ReadPhoto],
    base: Option<&Report>,
) -> Result<Option<Position>, SyncError> {
    Ok(match &args.at {
        Some(at) => {
            let (lat, lon, accuracy_m) = parse_lat_lon(at)?;
            Some(Position {
                lat,
                lon,
                accuracy_m,
                source: PositionSource::Manual,
            })
        }
        None if !read.is_empty() => photo_position(read).or(base.and_then(|b| b.position)),
        None => base.and_then(|b| b.position),
    })
}

/// Checks the report against the checklist, with a hint when the position is
/// what is missing.
fn check_report(report: &Report, checklist: &crate::bundle::Checklist) -> Result<(), SyncError> {
    validate_report(report, checklist).map_err(|reason| {
        let hint = if reason.contains("position") {
            " (give --at LAT,LON or photos with GPS tags)"
        } else if reason.contains("control point") {
            " (give --cause and --area-ha with clearing_found)"
        } else {
            ""
        };
        SyncError::Usage(format!("report refused: {reason}{hint}"))
    })
}
