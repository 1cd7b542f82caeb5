//! Opening a bundle safely. The reader trusts nothing in the file: it checks
//! the file size, the entry count, every entry name against the allow-list
//! (so no path traversal, absolute path or odd name), refuses directories,
//! links, encrypted and overlapping entries, then reads `manifest.json` and
//! checks the format name and version before anything else. It streams every
//! entry through SHA-256 with sizes counted while decompressing, refuses an
//! expired bundle, and finally parses the checklist, the upload key and the
//! events and points back from the GeoJSON entries, cross-checking them with
//! the manifest.

use std::collections::{BTreeMap, BTreeSet};
use std::io::Write;
use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use sha2::{Digest, Sha256};

use super::geojson::{parse_events, parse_points};
use super::limits::BundleLimits;
use super::manifest::{Manifest, UploadKey};
use super::names;
use super::types::{
    BundleEvent, BundleHeader, Checklist, ControlPoint, StartPoint, normalise_control,
    normalise_event, normalise_start,
};
use super::write::check_route;
use crate::Sha256Digest;
use crate::safezip::{EntryLimit, HARD_MAX_RATIO, SafeZip, check_digest};
use crate::{BUNDLE_FORMAT, BUNDLE_FORMAT_VERSION, SyncError};

/// A bundle that passed every check, with its content parsed.
#[derive(Debug, Clone)]
pub struct OpenedBundle {
    /// The manifest.
    pub manifest: Manifest,
    /// The checklist reports must follow.
    pub checklist: Checklist,
    /// The key returns must be signed with.
    pub upload_key: UploadKey,
    /// Events, in the order of `events.geojson`, centroids from `points.geojson`.
    pub events: Vec<BundleEvent>,
    /// Control points.
    pub controls: Vec<ControlPoint>,
    /// Start point.
    pub start: StartPoint,
    /// Codes of events and control points in visit order.
    pub route: Vec<String>,
    path: PathBuf,
    limits: BundleLimits,
}

impl OpenedBundle {
    /// The bundle header, from the manifest.
    pub fn header(&self) -> BundleHeader {
        self.manifest.header()
    }

    /// The bundle file this was opened from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Names of all entries but `manifest.json`, sorted.
    pub fn entry_names(&self) -> impl Iterator<Item = &str> {
        self.manifest.entries.iter().map(|e| e.name.as_str())
    }

    /// The bytes of entry `name` (including `manifest.json`), read again from the file
    /// and checked against the manifest once more.
    pub fn entry_bytes(&self, name: &str) -> Result<Vec<u8>, SyncError> {
        let mut bytes = Vec::new();
        self.copy_entry_to(name, &mut bytes)?;
        Ok(bytes)
    }

    /// Streams entry `name` into `out` and returns its size. The checksum is verified at
    /// the end: on [`SyncError::ChecksumMismatch`] what was written must be discarded.
    pub fn copy_entry_to<W: Write>(&self, name: &str, mut out: W) -> Result<u64, SyncError> {
        let mut archive = open_archive(&self.path, &self.limits)?;
        if name == names::MANIFEST {
            let mut sink = |chunk: &[u8]| out.write_all(chunk);
            return read_entry(
                &mut archive,
                name,
                self.limits.max_manifest_bytes,
                &mut sink,
            );
        }
        let listed = self
            .manifest
            .entry(name)
            .ok_or_else(|| SyncError::MissingEntry {
                name: name.to_owned(),
            })?;
        let mut hasher = Sha256::new();
        let mut sink = |chunk: &[u8]| {
            hasher.update(chunk);
            out.write_all(chunk)
        };
        let size = read_entry(&mut archive, name, listed.size, &mut sink)?;
        check_digest(name, listed.size, &listed.sha256, size, hasher)?;
        Ok(size)
    }
}

/// Opens and fully checks the bundle at `path`; refuses it if it expired at or before `now`.
pub fn open_bundle(path: impl AsRef<Path>, now: DateTime<Utc>) -> Result<OpenedBundle, SyncError> {
    open_bundle_with_limits(path, now, BundleLimits::default())
}

/// [`open_bundle`] with explicit size limits.
pub fn open_bundle_with_limits(
    path: impl AsRef<Path>,
    now: DateTime<Utc>,
    limits: BundleLimits,
) -> Result<OpenedBundle, SyncError> {
    let path = path.as_ref();
    let mut archive = open_archive(path, &limits)?;
    let in_zip = archive.names().clone();

    // 1. Format name and version, before anything else.
    let manifest = read_manifest(&mut archive, &limits)?;
    check_listing(&manifest, &in_zip, &limits)?;

    // 2. Every checksum; keep the small entries parsed below.
    let kept = read_checked_entries(&mut archive, &manifest)?;

    // 3. Expiry.
    if now >= manifest.expires_at {
        return Err(SyncError::Expired {
            expires_at: manifest.expires_at,
            now,
        });
    }

    // 4. Content, cross-checked with the manifest.
    let get = |name: &str| kept.get(name).map(Vec::as_slice).unwrap_or_default();
    let upload_key = parse_upload_key(get(names::UPLOAD_KEY), &manifest)?;
    let checklist = parse_checklist(get(names::CHECKLIST), &manifest)?;
    let (events, controls, start) =
        parse_places(get(names::EVENTS_GEOJSON), get(names::POINTS_GEOJSON))?;
    check_counts(&manifest, &events, &controls)?;
    let route = route_in_visit_order(&events, &controls)?;

    Ok(OpenedBundle {
        manifest,
        checklist,
        upload_key,
        events,
        controls,
        start,
        route,
        path: path.to_owned(),
        limits,
    })
}

/// Reads `manifest.json` within its size limit and parses it.
fn read_manifest(archive: &mut SafeZip, limits: &BundleLimits) -> Result<Manifest, SyncError> {
    let mut manifest_bytes = Vec::new();
    read_entry(
        archive,
        names::MANIFEST,
        limits.max_manifest_bytes,
        &mut |c: &[u8]| {
            manifest_bytes.extend_from_slice(c);
            Ok(())
        },
    )?;
    parse_manifest(&manifest_bytes)
}

/// Streams every listed entry through SHA-256 against the manifest, and
/// returns the bytes of the small entries parsed afterwards.
fn read_checked_entries(
    archive: &mut SafeZip,
    manifest: &Manifest,
) -> Result<BTreeMap<String, Vec<u8>>, SyncError> {
    let keep = [
        names::CHECKLIST,
        names::UPLOAD_KEY,
        names::EVENTS_GEOJSON,
        names::POINTS_GEOJSON,
    ];
    let mut kept: BTreeMap<String, Vec<u8>> = BTreeMap::new();
    for listed in &manifest.entries {
        let mut hasher = Sha256::new();
        let mut buf = Vec::new();
        let keep_it = keep.contains(&listed.name.as_str());
        let size = read_entry(archive, &listed.name, listed.size, &mut |c: &[u8]| {
            hasher.update(c);
            if keep_it {
                buf.extend_from_slice(c);
            }
            Ok(())
        })?;
        check_digest(&listed.name, listed.size, &listed.sha256, size, hasher)?;
        if keep_it {
            kept.insert(listed.name.clone(), buf);
        }
    }
    Ok(kept)
}

/// Parses `upload-key.json` and checks its key id against the manifest.
fn parse_upload_key(bytes: &[u8], manifest: &Manifest) -> Result<UploadKey, SyncError> {
    let upload_key =
        UploadKey::from_json(bytes).map_err(|r| SyncError::invalid_entry(names::UPLOAD_KEY, r))?;
    if upload_key.key_id != manifest.upload_key_id {
        return Err(SyncError::invalid_entry(
            names::UPLOAD_KEY,
            format!(
                "key_id {:?} differs from the manifest's upload_key_id {:?}",
                upload_key.key_id, manifest.upload_key_id
            ),
        ));
    }
    Ok(upload_key)
}

/// Parses and validates the checklist, and checks its version against the manifest.
fn parse_checklist(bytes: &[u8], manifest: &Manifest) -> Result<Checklist, SyncError> {
    let checklist: Checklist = serde_json::from_slice(bytes)
        .map_err(|e| SyncError::invalid_entry(names::CHECKLIST, e.to_string()))?;
    checklist
        .validate()
        .map_err(|r| SyncError::invalid_entry(names::CHECKLIST, r))?;
    if checklist.version != manifest.checklist_version {
        return Err(SyncError::invalid_entry(
            names::CHECKLIST,
            format!(
                "version {} differs from the manifest's checklist_version {}",
                checklist.version, manifest.checklist_version
            ),
        ));
    }
    Ok(checklist)
}

/// Checks the manifest's counts against the events and control points parsed.
fn check_counts(
    manifest: &Manifest,
    events: &[BundleEvent],
    controls: &[ControlPoint],
) -> Result<(), SyncError> {
    let counts_ok = manifest.counts.events as usize == events.len()
        && manifest.counts.control_points as usize == controls.len()
        && manifest.counts.route_stops as usize == events.len() + controls.len();
    if !counts_ok {
        return Err(SyncError::invalid_entry(
            names::MANIFEST,
            format!(
                "counts {:?} do not match the GeoJSON entries ({} events, {} control points)",
                manifest.counts,
                events.len(),
                controls.len()
            ),
        ));
    }
    Ok(())
}

/// The route rebuilt from the stops' visit orders, checked like a written one.
fn route_in_visit_order(
    events: &[BundleEvent],
    controls: &[ControlPoint],
) -> Result<Vec<String>, SyncError> {
    let mut stops: Vec<(u32, String)> = events
        .iter()
        .map(|e| (e.visit_order, e.code.clone()))
        .chain(controls.iter().map(|c| (c.visit_order, c.code.clone())))
        .collect();
    stops.sort();
    let route: Vec<String> = stops.into_iter().map(|(_, code)| code).collect();
    check_route(events, controls, &route)
        .map_err(|e| SyncError::invalid_entry(names::POINTS_GEOJSON, e.to_string()))?;
    Ok(route)
}

/// Opens the bundle through the crate's safe ZIP reader: size, entry count,
/// names against the bundle's allow-list, regular files only, stored or
/// deflated, unique names, local headers that agree with the central
/// directory, and no overlapping entries.
fn open_archive(path: &Path, limits: &BundleLimits) -> Result<SafeZip, SyncError> {
    SafeZip::open(
        path,
        limits.max_bundle_bytes,
        limits.max_entries,
        limits.max_total_bytes,
        &check_bundle_entry_name,
    )
}

fn check_bundle_entry_name(name: &str) -> Result<(), String> {
    if names::is_allowed_entry_name(name) {
        Ok(())
    } else {
        Err("not a bundle entry name (core entries, or extras/<stem>.<html|css|png|svg>)".into())
    }
}

/// Streams entry `name` into `sink`, failing once more than `max` bytes come
/// out. Bundle entries are checked by size and checksum, so the ratio bound
/// is only DEFLATE's own ceiling: a GeoPackage's empty pages compress far
/// better than the 100:1 a return's photos are held to.
fn read_entry(
    archive: &mut SafeZip,
    name: &str,
    max: u64,
    sink: &mut dyn FnMut(&[u8]) -> std::io::Result<()>,
) -> Result<u64, SyncError> {
    archive.read_entry(
        name,
        EntryLimit {
            max_bytes: max,
            max_ratio: HARD_MAX_RATIO,
        },
        sink,
    )
}

/// Parses `manifest.json`, checking `format` and `format_version` before the rest.
pub(crate) fn parse_manifest(bytes: &[u8]) -> Result<Manifest, SyncError> {
    let bad = |r: String| SyncError::invalid_entry(names::MANIFEST, r);
    let value: serde_json::Value = serde_json::from_slice(bytes).map_err(|e| bad(e.to_string()))?;
    let format = value
        .get("format")
        .and_then(serde_json::Value::as_str)
        .unwrap_or_default();
    if format != BUNDLE_FORMAT {
        return Err(SyncError::WrongFormat {
            found: format.to_owned(),
            expected: BUNDLE_FORMAT,
        });
    }
    let version = value
        .get("format_version")
        .and_then(serde_json::Value::as_u64)
        .ok_or_else(|| bad("format_version is missing or not an integer".into()))?;
    if version != u64::from(BUNDLE_FORMAT_VERSION) {
        return Err(SyncError::UnsupportedVersion {
            found: version,
            supported: BUNDLE_FORMAT_VERSION,
        });
    }
    let manifest: Manifest = serde_json::from_value(value).map_err(|e| bad(e.to_string()))?;
    manifest.header().validate().map_err(bad)?;
    Ok(manifest)
}

/// Checks the manifest's entry list against the ZIP's entries and the limits.
fn check_listing(
    manifest: &Manifest,
    in_zip: &BTreeSet<String>,
    limits: &BundleLimits,
) -> Result<(), SyncError> {
    let mut listed = BTreeSet::new();
    let mut total = 0u64;
    for e in &manifest.entries {
        if e.name == names::MANIFEST || !names::is_allowed_entry_name(&e.name) {
            return Err(SyncError::invalid_entry(
                names::MANIFEST,
                format!(
                    "lists an entry with a name that is not allowed: {:?}",
                    e.name
                ),
            ));
        }
        if !listed.insert(e.name.as_str()) {
            return Err(SyncError::invalid_entry(
                names::MANIFEST,
                format!("lists {:?} twice", e.name),
            ));
        }
        if !Sha256Digest::is_valid(&e.sha256) {
            return Err(SyncError::invalid_entry(
                names::MANIFEST,
                format!("sha256 of {:?} is not 64 lowercase hex digits", e.name),
            ));
        }
        if e.size > limits.max_entry_bytes {
            return Err(SyncError::EntryTooLarge {
                name: e.name.clone(),
                max: limits.max_entry_bytes,
            });
        }
        total = total.saturating_add(e.size);
        if !in_zip.contains(&e.name) {
            return Err(SyncError::MissingEntry {
                name: e.name.clone(),
            });
        }
    }
    if total > limits.max_total_bytes {
        return Err(SyncError::TotalTooLarge {
            max: limits.max_total_bytes,
        });
    }
    for core in names::CORE_ENTRIES {
        if core != names::MANIFEST && !listed.contains(core) {
            return Err(SyncError::MissingEntry {
                name: core.to_owned(),
            });
        }
    }
    if let Some(extra) = in_zip
        .iter()
        .find(|n| n.as_str() != names::MANIFEST && !listed.contains(n.as_str()))
    {
        return Err(SyncError::UnlistedEntry {
            name: extra.clone(),
        });
    }
    Ok(())
}

/// Events, control points and start point from the two GeoJSON entries, each checked
/// as the writer checks its input.
fn parse_places(
    events_json: &[u8],
    points_json: &[u8],
) -> Result<(Vec<BundleEvent>, Vec<ControlPoint>, StartPoint), SyncError> {
    let ev_err = |r: String| SyncError::invalid_entry(names::EVENTS_GEOJSON, r);
    let pt_err = |r: String| SyncError::invalid_entry(names::POINTS_GEOJSON, r);
    let mut events = parse_events(events_json).map_err(ev_err)?;
    let mut points = parse_points(points_json).map_err(pt_err)?;
    for e in &mut events {
        e.centroid = points
            .centroids
            .remove(&e.code)
            .ok_or_else(|| pt_err(format!("no centroid for event {:?}", e.code)))?;
    }
    if let Some(code) = points.centroids.keys().next() {
        return Err(pt_err(format!("centroid for unknown event {code:?}")));
    }
    let events = events
        .iter()
        .map(normalise_event)
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| ev_err(e.to_string()))?;
    let controls = points
        .controls
        .iter()
        .map(normalise_control)
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| pt_err(e.to_string()))?;
    let start = normalise_start(&points.start).map_err(|e| pt_err(e.to_string()))?;
    Ok((events, controls, start))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn manifest_format_and_version_are_checked_first() {
        // Only the two fields present: the format check must fire before the missing rest.
        let err =
            parse_manifest(br#"{"format":"other-format","format_version":1}"#).expect_err("format");
        assert!(matches!(err, SyncError::WrongFormat { .. }), "{err}");
        let err = parse_manifest(br#"{"format":"groundproof-bundle","format_version":2}"#)
            .expect_err("version");
        assert!(
            matches!(err, SyncError::UnsupportedVersion { found: 2, .. }),
            "{err}"
        );
        let err = parse_manifest(br#"{"format":"groundproof-bundle","format_version":1}"#)
            .expect_err("rest");
        assert!(err.to_string().contains("manifest.json"), "{err}");
    }
}
