//! Writing a bundle: checks and normalises the inputs, renders every entry
//! (the GeoPackage into a temporary file, the small text entries in
//! memory), hashes them into the manifest, and streams them into a ZIP in
//! name order with fixed timestamps (1980-01-01 00:00), fixed permissions
//! (0644, Unix) and deflate level 6, so that the same inputs give the same
//! bytes.

use std::collections::BTreeSet;
use std::fs::File;
use std::io::{self, BufReader, Seek, Write};

use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, DateTime, System, ZipWriter};

use super::geojson::{events_geojson, points_geojson};
use super::gpkg::write_geopackage;
use super::gpx::route_gpx;
use super::limits::BundleLimits;
use super::manifest::{Manifest, ManifestCounts, ManifestEntry, UploadKey, sha256_hex};
use super::names;
use super::types::{
    BundleEvent, BundleHeader, Checklist, ControlPoint, ExtraEntry, StartPoint, normalise_control,
    normalise_event, normalise_start,
};
use crate::SyncError;
use crate::fileio::hash_read;

/// Where an entry's content comes from before it is zipped.
enum Content {
    Memory(Vec<u8>),
    TempFile(tempfile::NamedTempFile),
}

fn zip_options() -> SimpleFileOptions {
    SimpleFileOptions::default()
        .compression_method(CompressionMethod::Deflated)
        .compression_level(Some(6))
        .last_modified_time(DateTime::DEFAULT)
        .unix_permissions(0o644)
        .system(System::Unix)
        .large_file(false)
}

/// SHA-256 and size of a file, read in a streaming pass.
fn hash_file(file: &mut File) -> io::Result<(String, u64)> {
    file.rewind()?;
    let hashed = hash_read(&mut *file, u64::MAX, |_| Ok(()))?;
    Ok((hashed.sha256, hashed.size))
}

/// Checks that `route` names every event and control point exactly once and
/// that their `visit_order` strictly increases along it.
pub(crate) fn check_route(
    events: &[BundleEvent],
    controls: &[ControlPoint],
    route: &[String],
) -> Result<(), SyncError> {
    let bad = |m: String| SyncError::InvalidInput(format!("route: {m}"));
    let mut codes = BTreeSet::new();
    for code in events
        .iter()
        .map(|e| &e.code)
        .chain(controls.iter().map(|c| &c.code))
    {
        if !codes.insert(code.as_str()) {
            return Err(SyncError::InvalidInput(format!(
                "code {code:?} is used twice"
            )));
        }
    }
    if route.len() != codes.len() {
        return Err(bad(format!(
            "has {} stops, but there are {} events and control points",
            route.len(),
            codes.len()
        )));
    }
    let order_of = |code: &str| {
        events
            .iter()
            .find(|e| e.code == code)
            .map(|e| e.visit_order)
            .or_else(|| {
                controls
                    .iter()
                    .find(|c| c.code == code)
                    .map(|c| c.visit_order)
            })
    };
    let mut seen = BTreeSet::new();
    let mut last: Option<u32> = None;
    for code in route {
        let order = order_of(code)
            .ok_or_else(|| bad(format!("{code:?} is neither an event nor a control point")))?;
        if !seen.insert(code.as_str()) {
            return Err(bad(format!("{code:?} appears twice")));
        }
        if last.is_some_and(|l| order <= l) {
            return Err(bad(format!(
                "visit_order of {code:?} ({order}) does not increase along the route"
            )));
        }
        last = Some(order);
    }
    Ok(())
}

/// The caller's inputs once checked and normalised.
struct Checked {
    events: Vec<BundleEvent>,
    controls: Vec<ControlPoint>,
    start: StartPoint,
    counts: ManifestCounts,
}

/// Writes a bundle to `out` and returns its manifest.
///
/// `route` lists the codes of every event and control point in visit order (the
/// route starts at `start`); their `visit_order` must strictly increase along it.
/// Coordinates are rounded to 1e-7 degree and footprints wound counter-clockwise
/// in every entry. `upload_key` is the bundle's 256-bit HMAC key, stored with
/// `header.upload_key_id` in `upload-key.json`. Extras must have names passing
/// [`names::is_allowed_extra_name`]. Nothing of the caller's data is trusted: every
/// value is checked, and a bad one gives [`SyncError::InvalidInput`] naming it.
#[allow(
    clippy::too_many_arguments,
    reason = "the signature is the agreed bundle contract"
)]
pub fn write_bundle<W: Write + Seek>(
    out: W,
    header: &BundleHeader,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
    route: &[String],
    checklist: &Checklist,
    upload_key: &[u8; 32],
    extras: Vec<ExtraEntry>,
) -> Result<Manifest, SyncError> {
    let limits = BundleLimits::default();
    let checked = check_inputs(
        header,
        events,
        controls,
        start,
        route,
        checklist,
        extras.len(),
        &limits,
    )?;
    let mut contents = render_core_entries(header, &checked, route, checklist, upload_key)?;
    add_extras(&mut contents, extras)?;
    contents.sort_by(|a, b| a.0.cmp(&b.0));

    let entries = manifest_entries(&mut contents, &limits)?;
    let manifest = Manifest::new(header, checklist.version, checked.counts, entries);
    let manifest_json = serde_json::to_vec_pretty(&manifest)
        .map_err(|e| SyncError::InvalidInput(format!("manifest: {e}")))?;
    contents.push((names::MANIFEST.into(), Content::Memory(manifest_json)));
    contents.sort_by(|a, b| a.0.cmp(&b.0));

    zip_contents(out, &mut contents)?;
    Ok(manifest)
}

/// Validates the header and checklist, normalises the events, control points
/// and start, checks the route and the number of extras, and counts what the
/// manifest reports.
#[allow(
    clippy::too_many_arguments,
    reason = "the pieces of the bundle contract, checked in one pass"
)]
fn check_inputs(
    header: &BundleHeader,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
    route: &[String],
    checklist: &Checklist,
    extra_count: usize,
    limits: &BundleLimits,
) -> Result<Checked, SyncError> {
    header.validate().map_err(SyncError::InvalidInput)?;
    checklist.validate().map_err(SyncError::InvalidInput)?;
    let events = events
        .iter()
        .map(normalise_event)
        .collect::<Result<Vec<_>, _>>()?;
    let controls = controls
        .iter()
        .map(normalise_control)
        .collect::<Result<Vec<_>, _>>()?;
    let start = normalise_start(start)?;
    check_route(&events, &controls, route)?;
    if extra_count + names::CORE_ENTRIES.len() > limits.max_entries {
        return Err(SyncError::InvalidInput(format!(
            "{} extras is more than the reader accepts ({})",
            extra_count,
            limits.max_entries - names::CORE_ENTRIES.len()
        )));
    }
    let count = |n: usize, what: &str| {
        u32::try_from(n).map_err(|_| SyncError::InvalidInput(format!("too many {what}")))
    };
    let counts = ManifestCounts {
        events: count(events.len(), "events")?,
        control_points: count(controls.len(), "control points")?,
        route_stops: count(route.len(), "route stops")?,
    };
    Ok(Checked {
        events,
        controls,
        start,
        counts,
    })
}

/// Renders the core entries: the small text entries in memory, then the
/// GeoPackage into a temporary file.
fn render_core_entries(
    header: &BundleHeader,
    checked: &Checked,
    route: &[String],
    checklist: &Checklist,
    upload_key: &[u8; 32],
) -> Result<Vec<(String, Content)>, SyncError> {
    let Checked {
        events,
        controls,
        start,
        ..
    } = checked;
    let key = UploadKey {
        key_id: header.upload_key_id.clone(),
        key: *upload_key,
    };
    let checklist_json = serde_json::to_vec_pretty(checklist)
        .map_err(|e| SyncError::InvalidInput(format!("checklist: {e}")))?;
    let mut contents: Vec<(String, Content)> = vec![
        (names::UPLOAD_KEY.into(), Content::Memory(key.to_json())),
        (names::CHECKLIST.into(), Content::Memory(checklist_json)),
        (
            names::EVENTS_GEOJSON.into(),
            Content::Memory(events_geojson(events)),
        ),
        (
            names::POINTS_GEOJSON.into(),
            Content::Memory(points_geojson(events, controls, start)),
        ),
        (
            names::ROUTE_GPX.into(),
            Content::Memory(route_gpx(header, events, controls, start, route)),
        ),
    ];
    let gpkg = tempfile::Builder::new()
        .prefix("groundproof-bundle-")
        .suffix(".gpkg")
        .tempfile()
        .map_err(|e| SyncError::io("create temporary GeoPackage", e))?;
    write_geopackage(gpkg.path(), header.issued_at, events, controls, start)?;
    contents.push((names::GEOPACKAGE.into(), Content::TempFile(gpkg)));
    Ok(contents)
}

/// Appends the extras after checking that each name is allowed and given once.
fn add_extras(
    contents: &mut Vec<(String, Content)>,
    extras: Vec<ExtraEntry>,
) -> Result<(), SyncError> {
    let mut seen_extras = BTreeSet::new();
    for extra in extras {
        if !names::is_allowed_extra_name(&extra.name) {
            return Err(SyncError::InvalidInput(format!(
                "extra entry name {:?} must be extras/<stem>.<html|css|png|svg>, stem of [a-z0-9_-]",
                extra.name
            )));
        }
        if !seen_extras.insert(extra.name.clone()) {
            return Err(SyncError::InvalidInput(format!(
                "extra entry {:?} given twice",
                extra.name
            )));
        }
        contents.push((extra.name, Content::Memory(extra.bytes)));
    }
    Ok(())
}

/// Hashes every entry for the manifest, refusing one larger than the reader
/// accepts.
fn manifest_entries(
    contents: &mut [(String, Content)],
    limits: &BundleLimits,
) -> Result<Vec<ManifestEntry>, SyncError> {
    let mut entries = Vec::with_capacity(contents.len());
    for (name, content) in contents {
        let (sha256, size) = match content {
            Content::Memory(bytes) => (sha256_hex(bytes), bytes.len() as u64),
            Content::TempFile(f) => hash_file(f.as_file_mut())
                .map_err(|e| SyncError::io("hash temporary GeoPackage", e))?,
        };
        if size > limits.max_entry_bytes {
            return Err(SyncError::InvalidInput(format!(
                "entry {name:?} has {size} bytes, more than the reader accepts ({})",
                limits.max_entry_bytes
            )));
        }
        entries.push(ManifestEntry {
            name: name.clone(),
            sha256,
            size,
        });
    }
    Ok(entries)
}

/// Streams the entries, in the order given, into a ZIP written to `out`.
fn zip_contents<W: Write + Seek>(
    out: W,
    contents: &mut [(String, Content)],
) -> Result<(), SyncError> {
    let mut zip = ZipWriter::new(out);
    for (name, content) in contents {
        zip.start_file(name.as_str(), zip_options())
            .map_err(|e| SyncError::zip(format!("start entry {name:?}"), e))?;
        match content {
            Content::Memory(bytes) => zip
                .write_all(bytes)
                .map_err(|e| SyncError::io(format!("write entry {name:?}"), e))?,
            Content::TempFile(f) => {
                let file = f.as_file_mut();
                file.rewind()
                    .map_err(|e| SyncError::io("rewind temporary GeoPackage", e))?;
                io::copy(&mut BufReader::new(file), &mut zip)
                    .map_err(|e| SyncError::io(format!("write entry {name:?}"), e))?;
            }
        }
    }
    let mut out = zip
        .finish()
        .map_err(|e| SyncError::zip("finish bundle", e))?;
    out.flush().map_err(|e| SyncError::io("flush bundle", e))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::Point;

    fn control(code: &str, order: u32) -> ControlPoint {
        ControlPoint {
            code: code.into(),
            point: Point::new(1.0, 2.0),
            visit_order: order,
            inclusion_probability: None,
        }
    }

    #[test]
    fn route_checks() {
        let cs = [control("C0001", 1), control("C0002", 5)];
        let r = |codes: &[&str]| codes.iter().map(|c| (*c).to_owned()).collect::<Vec<_>>();
        assert!(check_route(&[], &cs, &r(&["C0001", "C0002"])).is_ok());
        assert!(check_route(&[], &cs, &r(&["C0002", "C0001"])).is_err());
        assert!(check_route(&[], &cs, &r(&["C0001"])).is_err());
        assert!(check_route(&[], &cs, &r(&["C0001", "C0001"])).is_err());
        assert!(check_route(&[], &cs, &r(&["C0001", "X0009"])).is_err());
        let dup = [control("C0001", 1), control("C0001", 2)];
        assert!(check_route(&[], &dup, &r(&["C0001", "C0001"])).is_err());
    }
}
