//! Issuing a bundle: route, previews, field sheet, ZIP written durably,
//! then the bundle recorded in one transaction.
//!
//! The server keeps the upload key itself (32 random bytes) in the
//! `bundles` row, because checking an HMAC needs the key; cancelling the
//! bundle marks it revoked and returns signed with it are refused.

use super::codes::{control_code, event_code};
use super::select::{Selection, StratumPlan, TripRequest, select};
use crate::domain::{BundleMode, TargetKind};
use crate::error::{Error, Result};
use crate::planning::coords::LatLon;
use crate::planning::plan_route;
use crate::planning::route::Route;
use crate::planning::sheet::{
    PreviewPixel, RouteLeg, SheetEvent, SheetInput, SourcePalette, render_field_sheet,
    render_preview_with_palette,
};
use crate::platform::i18n::Tr;
use crate::platform::settings::Settings;
use crate::platform::storage::{BundleItem, BundleRecord, Db, NewBundle, Team};
use geo::Point;
use groundproof_sync::bundle::{
    BundleEvent, BundleHeader, Checklist, ControlPoint, ExtraEntry, StartPoint, write_bundle,
};
use serde::Serialize;
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::io::{Read, Seek};
use std::path::PathBuf;

/// Side of the preview images, pixels.
const PREVIEW_PX: u32 = 280;

/// What issuing a bundle produced.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct IssuedBundle {
    pub bundle: BundleRecord,
    #[serde(skip)]
    pub path: PathBuf,
    pub route_m: f64,
    pub walking_hours: f64,
    pub route_method: String,
    pub route_note: String,
    pub strata: Vec<StratumPlan>,
}

/// Choose, route, write and record a bundle; its field sheet in the
/// organisation's default language (the command line's).
pub fn issue_bundle(
    db: &Db,
    data_dir: &std::path::Path,
    settings: &Settings,
    req: &TripRequest,
) -> Result<IssuedBundle> {
    let tr = Tr::new(&settings.organisation.default_language);
    issue_bundle_in(db, data_dir, settings, req, tr)
}

/// [`issue_bundle`] with the field sheet in the language of `tr` (the
/// issuing coordinator's).
pub fn issue_bundle_in(
    db: &Db,
    data_dir: &std::path::Path,
    settings: &Settings,
    req: &TripRequest,
    tr: Tr,
) -> Result<IssuedBundle> {
    let team = team_of(db, req)?;
    check_request(req)?;
    let mut planned = plan_trip(db, settings, req)?;
    planned.tr = tr;
    check_expected_order(req, &planned)?;
    let (mut header, key) = new_header(&team.name, req, planned.sel.seed);
    header.camera_zone = Some(camera_zone(settings, header.issued_at));
    let file = write_bundle_file(db, data_dir, req, &team.name, &planned, &header, &key)?;
    // The bundle is in the evidence store before its row commits.
    let store = crate::platform::evidence::of(data_dir)?;
    store.put_file(&bundle_key(&file.file_name), &file.path)?;
    let record = match record_issued(db, req, &team, &planned, &header, &key, &file) {
        Ok(r) => r,
        Err(e) => {
            let _ = store.delete(&bundle_key(&file.file_name));
            return Err(e);
        }
    };
    if !store.is_local() {
        // The store's copy is the one served; this machine's was for writing.
        let _ = std::fs::remove_file(&file.path);
    }
    tracing::info!(bundle = %header.bundle_id, team = %team.name, events = planned.events.len(), controls = planned.controls.len(), bytes = file.size, "bundle issued");
    Ok(IssuedBundle {
        bundle: record,
        path: file.path,
        route_m: planned.route.total_m,
        walking_hours: planned.route.walking_hours,
        route_method: format!("{:?}", planned.route.method),
        route_note: planned.route.note.clone(),
        strata: planned.sel.strata,
    })
}

/// One stop of a planned trip, in visiting order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedStop {
    /// 1-based place in the route.
    pub visit_order: u32,
    pub code: String,
    /// The event, or `None` for a control point.
    pub event_id: Option<i64>,
    pub lon: f64,
    pub lat: f64,
    /// Straight-line length of the leg that reaches this stop, metres.
    pub leg_m: f64,
    pub area_ha: Option<f64>,
    pub priority: Option<f64>,
}

/// A trip as it would be issued, without anything stored: the preview.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TripPlan {
    pub stops: Vec<PlannedStop>,
    pub route_m: f64,
    pub walking_hours: f64,
    pub route_method: String,
    pub route_note: String,
    pub strata: Vec<StratumPlan>,
    /// The seed the plan was drawn with (assessment sample, control points).
    pub seed: Option<u64>,
    /// The chosen events' ids in the order the route was solved over; hand
    /// them back in this order (as [`TripRequest::events`]) to get this route.
    pub selected: Vec<i64>,
}

/// Plans a trip exactly as [`issue_bundle`] would (the same selection,
/// the same route) and stores nothing: the preview a coordinator checks
/// before issuing. Hand the same request, with its seed fixed, to
/// [`issue_bundle`] to issue this plan.
pub fn plan_preview(db: &Db, settings: &Settings, req: &TripRequest) -> Result<TripPlan> {
    check_request(req)?;
    let planned = plan_trip(db, settings, req)?;
    let mut stops: Vec<PlannedStop> = planned
        .events
        .iter()
        .map(|e| PlannedStop {
            visit_order: e.visit_order,
            code: e.code.clone(),
            event_id: Some(e.event_id),
            lon: e.centroid.x(),
            lat: e.centroid.y(),
            leg_m: 0.0,
            area_ha: Some(e.area_ha),
            priority: Some(e.priority),
        })
        .chain(planned.controls.iter().map(|c| PlannedStop {
            visit_order: c.visit_order,
            code: c.code.clone(),
            event_id: None,
            lon: c.point.x(),
            lat: c.point.y(),
            leg_m: 0.0,
            area_ha: None,
            priority: None,
        }))
        .collect();
    stops.sort_by_key(|s| s.visit_order);
    for (s, m) in stops.iter_mut().zip(&planned.route.legs_m) {
        s.leg_m = *m;
    }
    Ok(TripPlan {
        stops,
        route_m: planned.route.total_m,
        walking_hours: planned.route.walking_hours,
        route_method: format!("{:?}", planned.route.method),
        route_note: planned.route.note.clone(),
        strata: planned.sel.strata,
        seed: planned.sel.seed.or(req.seed),
        selected: planned
            .sel
            .events
            .iter()
            .map(|c| c.event.record.id)
            .collect(),
    })
}

/// When the request carries the order the coordinator previewed, the plan
/// made now must visit the same stops in the same order; otherwise the
/// facts changed in between (an event merged, grew or was re-ranked) and
/// nothing is issued.
fn check_expected_order(req: &TripRequest, planned: &Planned) -> Result<()> {
    let Some(expected) = &req.expect_order else {
        return Ok(());
    };
    let now = route_codes(&planned.events, &planned.controls);
    if &now != expected {
        return Err(Error::Conflict(format!(
            "the facts changed since the preview: it showed the stops {} and the plan is now {}; \
             nothing was issued, check the new preview and issue again",
            expected.join(" "),
            now.join(" ")
        )));
    }
    Ok(())
}

/// A trip planned: what was chosen, the route over it, and the stops as the
/// bundle carries them.
struct Planned {
    sel: Selection,
    route: Route,
    events: Vec<BundleEvent>,
    controls: Vec<ControlPoint>,
    /// The organisation's zone, for the times on the field sheet.
    zone: crate::domain::OrgZone,
    /// The field sheet's language.
    tr: Tr,
}

/// Chooses the trip's events and control points and routes them.
fn plan_trip(db: &Db, settings: &Settings, req: &TripRequest) -> Result<Planned> {
    let sel: Selection = select(db, settings, req)?;
    let (route, visit_of) = route_stops(&sel, req)?;
    let events = bundle_events(&sel, &visit_of)?;
    let controls = control_points(&sel, &visit_of);
    Ok(Planned {
        sel,
        route,
        events,
        controls,
        zone: settings.zone(),
        tr: Tr::new(&settings.organisation.default_language),
    })
}

/// The evidence store's key of an issued bundle's ZIP, from the bundle
/// row's file name: `bundles/<sha256>.zip` (content-addressed, written once,
/// never changed; the SHA-256 is also in the row), or `bundles/<bundle
/// id>.zip` for a bundle issued before bundles were content-addressed.
pub fn bundle_key(file_name: &str) -> String {
    format!("bundles/{file_name}")
}

/// The file name of an issued bundle's ZIP whose SHA-256 is `sha256`.
pub fn bundle_file_name(sha256: &str) -> String {
    format!("{sha256}.zip")
}

/// The bundle's ZIP as written: where, and its SHA-256 and size.
struct WrittenFile {
    path: PathBuf,
    file_name: String,
    sha: String,
    size: u64,
}

/// Writes the bundle's ZIP, with the previews and the field sheet, durably
/// into `bundles/` of the data folder, before any row.
fn write_bundle_file(
    db: &Db,
    data_dir: &std::path::Path,
    req: &TripRequest,
    team: &str,
    planned: &Planned,
    header: &BundleHeader,
    key: &[u8; 32],
) -> Result<WrittenFile> {
    let start_point = StartPoint {
        name: req.start_name.clone(),
        point: Point::new(req.start.lon(), req.start.lat()),
    };
    let route_codes = route_codes(&planned.events, &planned.controls);
    let checklist = Checklist::current();
    let contents = ZipContents {
        header,
        events: &planned.events,
        controls: &planned.controls,
        start: &start_point,
        route_codes: &route_codes,
        checklist: &checklist,
        key,
    };

    // Previews and the field sheet.
    let palette = SourcePalette::for_events(&planned.events);
    let (mut extras, sheet_events) = previews(db, &planned.events, &palette)?;
    let legs = route_legs(&planned.route, &planned.events, &planned.controls);
    extras.push(field_sheet(
        &contents,
        req,
        team,
        sheet_events,
        legs,
        palette,
        (planned.zone, planned.tr),
    )?);

    let ((sha, size), path) = write_zip(&data_dir.join("bundles"), &contents, extras)?;
    Ok(WrittenFile {
        path,
        file_name: bundle_file_name(&sha),
        sha,
        size,
    })
}

/// Records the written bundle with its items and selection in one
/// transaction (removing its ZIP again when that fails).
fn record_issued(
    db: &Db,
    req: &TripRequest,
    team: &Team,
    planned: &Planned,
    header: &BundleHeader,
    key: &[u8; 32],
    file: &WrittenFile,
) -> Result<BundleRecord> {
    let items = bundle_items(&planned.events, &planned.sel, &planned.controls);
    let selection = selection_json(req, &planned.sel);
    let id = header.bundle_id.to_string();
    let (issued, due, expires) = (
        header.issued_at.to_rfc3339(),
        header.due_at.to_rfc3339(),
        header.expires_at.to_rfc3339(),
    );
    let new = NewBundle {
        id: &id,
        team_id: team.id,
        mode: req.mode.as_str(),
        issued_at: &issued,
        due_at: &due,
        expires_at: &expires,
        seed: planned.sel.seed.map(|s| s as i64),
        margin: (req.mode == BundleMode::Assessment).then_some(req.margin),
        selection: &selection,
        start: (req.start.lon(), req.start.lat()),
        route_m: planned.route.total_m,
        upload_key_id: &header.upload_key_id,
        upload_key: key,
        file_name: &file.file_name,
        file_sha256: &file.sha,
        file_size: file.size,
        items: &items,
    };
    record_bundle(db, &new, &file.path)
}

/// The request's team, which must have been added and not be disabled.
fn team_of(db: &Db, req: &TripRequest) -> Result<Team> {
    let team = db.read(|r| r.team_by_name(&req.team))?.ok_or_else(|| {
        Error::NotFound(format!(
            "unknown team '{}': add it first (groundproof team add)",
            req.team
        ))
    })?;
    if db
        .read(|r| r.team_state(team.id))?
        .is_some_and(|t| t.disabled_at.is_some())
    {
        return Err(Error::Conflict(format!(
            "team '{}' is disabled: an admin enables it again on the teams page",
            req.team
        )));
    }
    Ok(team)
}

/// The walking speed and the due and expiry days of a request, in range.
fn check_request(req: &TripRequest) -> Result<()> {
    if !(req.walking_kmh.is_finite() && req.walking_kmh > 0.0 && req.walking_kmh <= 20.0) {
        return Err(Error::Invalid(format!(
            "walking speed {} km/h: expected (0, 20]",
            req.walking_kmh
        )));
    }
    if !(1..=365).contains(&req.due_days) || !(req.due_days..=730).contains(&req.expires_days) {
        return Err(Error::Invalid(
            "due must be 1-365 days and expiry between due and 730 days".into(),
        ));
    }
    Ok(())
}

/// The route over the chosen events then the control points, from the start,
/// and each stop's place in it (1-based, indexed like the stops).
fn route_stops(sel: &Selection, req: &TripRequest) -> Result<(Route, Vec<u32>)> {
    let mut stops: Vec<LatLon> = sel
        .events
        .iter()
        .map(|c| {
            LatLon::new(
                c.event.record.attrs.centroid.1,
                c.event.record.attrs.centroid.0,
            )
        })
        .collect();
    stops.extend(sel.controls.iter().copied());
    let start = LatLon::new(req.start.lat(), req.start.lon());
    let route = plan_route(start, &stops, req.walking_kmh)
        .map_err(|e| Error::Invalid(format!("route: {e}")))?;
    let mut visit_of = vec![0u32; stops.len()];
    for (k, &i) in route.order.iter().enumerate() {
        visit_of[i] = k as u32 + 1;
    }
    Ok((route, visit_of))
}

/// The chosen events as the bundle carries them; fails when two share a short code.
fn bundle_events(sel: &Selection, visit_of: &[u32]) -> Result<Vec<BundleEvent>> {
    let mut bundle_events = Vec::new();
    for (i, c) in sel.events.iter().enumerate() {
        let a = &c.event.record.attrs;
        let footprint =
            crate::alerts::events::parse_multipolygon(&a.footprint).ok_or_else(|| {
                Error::Internal(format!(
                    "event {} has an unreadable footprint",
                    c.event.record.id
                ))
            })?;
        bundle_events.push(BundleEvent {
            code: event_code(c.event.record.id),
            event_id: c.event.record.id,
            footprint,
            centroid: Point::new(a.centroid.0, a.centroid.1),
            area_ha: a.area_ha,
            first_detected: a.first.to_string(),
            last_detected: a.last.to_string(),
            sources: a.per_source.keys().cloned().collect(),
            confidence: a.highest_confidence.to_string(),
            corroborated: a.corroborated,
            priority: c.event.priority,
            visit_order: visit_of[i],
            inclusion_probability: c.inclusion_probability,
            stratum: c.stratum.clone(),
        });
    }
    let codes: std::collections::HashSet<&str> =
        bundle_events.iter().map(|e| e.code.as_str()).collect();
    if codes.len() != bundle_events.len() {
        return Err(Error::Internal(
            "two events share a short code in this bundle".into(),
        ));
    }
    Ok(bundle_events)
}

/// The chosen control points as the bundle carries them (they follow the events
/// in `visit_of`).
fn control_points(sel: &Selection, visit_of: &[u32]) -> Vec<ControlPoint> {
    sel.controls
        .iter()
        .enumerate()
        .map(|(k, p)| ControlPoint {
            code: control_code(k + 1),
            point: Point::new(p.lon, p.lat),
            visit_order: visit_of[sel.events.len() + k],
            inclusion_probability: None,
        })
        .collect()
}

/// Every stop's code in visiting order.
fn route_codes(events: &[BundleEvent], controls: &[ControlPoint]) -> Vec<String> {
    let mut order: Vec<(u32, String)> = events
        .iter()
        .map(|e| (e.visit_order, e.code.clone()))
        .chain(controls.iter().map(|c| (c.visit_order, c.code.clone())))
        .collect();
    order.sort();
    order.iter().map(|(_, c)| c.clone()).collect()
}

/// A new bundle's header (a fresh id, issue, due and expiry times) and its
/// upload key (32 random bytes).
fn new_header(team: &str, req: &TripRequest, seed: Option<u64>) -> (BundleHeader, [u8; 32]) {
    let issued_at = req.issued_at.unwrap_or_else(chrono::Utc::now);
    let bundle_id = uuid::Uuid::new_v4();
    let mut key = [0u8; 32];
    rand::fill(&mut key);
    let key_id = format!("k-{}", &bundle_id.simple().to_string()[..12]);
    let header = BundleHeader {
        bundle_id,
        team: team.to_owned(),
        mode: req.mode.as_str().to_string(),
        issued_at,
        due_at: issued_at + chrono::Duration::days(req.due_days),
        expires_at: issued_at + chrono::Duration::days(req.expires_days),
        upload_key_id: key_id,
        seed,
        camera_zone: None,
    };
    (header, key)
}

/// The trip's default camera zone: the organisation's zone with the offset in
/// force at the issue instant (cameras are set to local time; issue 12 item 14).
fn camera_zone(
    settings: &Settings,
    issued_at: chrono::DateTime<chrono::Utc>,
) -> groundproof_sync::bundle::CameraZone {
    use chrono::Offset;
    let name = settings.zone().name();
    let offset = name
        .parse::<chrono_tz::Tz>()
        .map(|tz| issued_at.with_timezone(&tz).offset().fix())
        .unwrap_or_else(|_| chrono::Utc.fix());
    groundproof_sync::bundle::CameraZone::new(offset, name)
}

/// Each event's preview image (its alert pixels over its footprint): as a ZIP
/// extra, and with the event for the field sheet.
fn previews(
    db: &Db,
    bundle_events: &[BundleEvent],
    palette: &SourcePalette,
) -> Result<(Vec<ExtraEntry>, Vec<SheetEvent>)> {
    let names: HashMap<i64, (String, f64)> = db
        .read(|r| r.sources())?
        .into_iter()
        .map(|s| (s.id, (s.name, s.pixel_size_m)))
        .collect();
    let mut extras = Vec::new();
    let mut sheet_events = Vec::new();
    for e in bundle_events {
        let pixels: Vec<PreviewPixel> = db
            .read(|r| r.alerts_of_events(&[e.event_id]))?
            .iter()
            .map(|a| {
                let (name, size) = names.get(&a.source_id).cloned().unwrap_or_default();
                PreviewPixel {
                    lon: a.lon,
                    lat: a.lat,
                    size_m: size,
                    source: name,
                }
            })
            .collect();
        let png = render_preview_with_palette(e, &pixels, PREVIEW_PX, palette)
            .map_err(|err| Error::Internal(format!("preview of {}: {err}", e.code)))?;
        extras.push(ExtraEntry {
            name: format!("extras/preview-{}.png", e.code.to_ascii_lowercase()),
            bytes: png.clone(),
        });
        sheet_events.push(SheetEvent {
            event: e.clone(),
            preview_png: png,
        });
    }
    Ok((extras, sheet_events))
}

/// The legs of the route for the field sheet, numbered from 1.
fn route_legs(
    route: &Route,
    bundle_events: &[BundleEvent],
    controls: &[ControlPoint],
) -> Vec<RouteLeg> {
    route
        .order
        .iter()
        .zip(&route.legs_m)
        .enumerate()
        .map(|(k, (&i, &m))| RouteLeg {
            stop: k as u32 + 1,
            code: if i < bundle_events.len() {
                bundle_events[i].code.clone()
            } else {
                controls[i - bundle_events.len()].code.clone()
            },
            leg_km: m / 1000.0,
        })
        .collect()
}

/// What goes into a bundle's ZIP besides its extras.
struct ZipContents<'a> {
    header: &'a BundleHeader,
    events: &'a [BundleEvent],
    controls: &'a [ControlPoint],
    start: &'a StartPoint,
    route_codes: &'a [String],
    checklist: &'a Checklist,
    key: &'a [u8; 32],
}

/// The printable field sheet of the bundle, as a ZIP extra; its times in
/// the organisation's zone and its words in the language of `tr`.
fn field_sheet(
    c: &ZipContents<'_>,
    req: &TripRequest,
    team: &str,
    sheet_events: Vec<SheetEvent>,
    legs: Vec<RouteLeg>,
    palette: SourcePalette,
    (zone, tr): (crate::domain::OrgZone, Tr),
) -> Result<ExtraEntry> {
    let sheet = render_field_sheet(&SheetInput {
        header: c.header.clone(),
        reserve: req.zone.clone().unwrap_or_else(|| "selected area".into()),
        team_label: team.to_owned(),
        start: c.start.clone(),
        events: sheet_events,
        controls: c.controls.to_vec(),
        legs,
        checklist: c.checklist.clone(),
        palette,
        zone,
        tr,
    })
    .map_err(|e| Error::Internal(format!("field sheet: {e}")))?;
    Ok(ExtraEntry {
        name: "extras/field-sheet.html".into(),
        bytes: sheet.into_bytes(),
    })
}

/// Writes the bundle's ZIP durably at `path`; returns its SHA-256 and size.
fn write_zip(
    dir: &std::path::Path,
    c: &ZipContents<'_>,
    extras: Vec<ExtraEntry>,
) -> Result<((String, u64), PathBuf)> {
    crate::platform::durable::write_durably_named(dir, |f| {
        write_bundle(
            &mut *f,
            c.header,
            c.events,
            c.controls,
            c.start,
            c.route_codes,
            c.checklist,
            c.key,
            extras,
        )
        .map_err(|e| Error::Internal(format!("writing the bundle: {e}")))?;
        let (sha, size) = sha256_and_size(f)?;
        let name = bundle_file_name(&sha).into();
        Ok(((sha, size), name))
    })
}

/// SHA-256 (lowercase hex) and size of a file just written, read from its start.
fn sha256_and_size(f: &mut std::fs::File) -> Result<(String, u64)> {
    f.rewind()
        .map_err(|e| Error::io("rereading the bundle", e))?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut size = 0u64;
    loop {
        let n = f
            .read(&mut buf)
            .map_err(|e| Error::io("rereading the bundle", e))?;
        if n == 0 {
            break;
        }
        size += n as u64;
        h.update(&buf[..n]);
    }
    Ok((hex::encode(h.finalize()), size))
}

/// The bundle's items as stored: events, then control points.
fn bundle_items(
    bundle_events: &[BundleEvent],
    sel: &Selection,
    controls: &[ControlPoint],
) -> Vec<BundleItem> {
    bundle_events
        .iter()
        .zip(&sel.events)
        .map(|(e, c)| BundleItem {
            visit_order: e.visit_order,
            code: e.code.clone(),
            kind: TargetKind::Event,
            event_id: Some(e.event_id),
            lon: e.centroid.x(),
            lat: e.centroid.y(),
            stratum: c.stratum.clone(),
            stratum_population: c.stratum_population.map(|p| p as i64),
            inclusion_probability: c.inclusion_probability,
        })
        .chain(controls.iter().map(|c| BundleItem {
            visit_order: c.visit_order,
            code: c.code.clone(),
            kind: TargetKind::Control,
            event_id: None,
            lon: c.point.x(),
            lat: c.point.y(),
            stratum: Some("control".into()),
            stratum_population: None,
            inclusion_probability: None,
        }))
        .collect()
}

/// What the request asked for and the strata chosen, as the JSON kept with the bundle.
fn selection_json(req: &TripRequest, sel: &Selection) -> String {
    serde_json::json!({
        "zone": req.zone, "from": req.from.map(|d| d.to_string()), "to": req.to.map(|d| d.to_string()),
        "source": req.source, "confidence": req.confidence, "min_area_ha": req.min_area_ha, "max": req.max,
        "extent": req.extent.is_some(), "controls": req.controls, "control_min_distance_m": req.control_min_distance_m,
        "walking_kmh": req.walking_kmh, "as_of": req.as_of.to_string(), "strata": sel.strata,
        "events_by_hand": req.events,
    })
    .to_string()
}

/// Records the bundle in one transaction; when that fails, its ZIP at `path` is
/// removed again.
fn record_bundle(db: &Db, new: &NewBundle<'_>, path: &std::path::Path) -> Result<BundleRecord> {
    let record = db.write(|tx| {
        tx.insert_bundle(new)?;
        tx.reader()
            .bundle(new.id)?
            .ok_or_else(|| Error::Internal("bundle vanished".into()))
    });
    match record {
        Ok(r) => Ok(r),
        Err(e) => {
            let _ = std::fs::remove_file(path);
            Err(e)
        }
    }
}

/// Cancel a bundle; its upload key is refused from now on.
pub fn cancel_bundle(db: &Db, id: &str) -> Result<()> {
    db.write(|tx| tx.cancel_bundle(id))
}

#[cfg(test)]
mod camera_zone_tests {
    use super::*;
    use chrono::TimeZone;

    /// `Etc/GMT+4` is UTC−04:00 (POSIX sign, IANA tz database); UTC is the default.
    #[test]
    fn the_bundle_camera_zone_is_the_organisation_zone_on_the_issue_date() {
        let at = chrono::Utc
            .with_ymd_and_hms(2026, 12, 4, 12, 0, 0)
            .single()
            .expect("t");
        let mut settings = Settings::default();
        assert_eq!(camera_zone(&settings, at).offset, "+00:00");
        settings.organisation.time_zone = "Etc/GMT+4".into();
        let zone = camera_zone(&settings, at);
        assert_eq!(
            (zone.offset.as_str(), zone.name.as_str()),
            ("-04:00", "Etc/GMT+4")
        );
        settings.organisation.time_zone = "Etc/GMT-5".into();
        assert_eq!(camera_zone(&settings, at).offset, "+05:00");
    }
}
