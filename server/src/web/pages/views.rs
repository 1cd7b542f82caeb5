//! View structs shared by several pages: an event's status badge, a stored
//! report with its photos and evidence checks, and the map input built
//! from stored zones and events.

use super::common::{fixed, local_text};
use crate::alerts::events::{RankedEvent, parse_multipolygon};
use crate::platform::settings::Settings;
use crate::platform::storage::{PhotoCheckRow, Reader, ReportPhotoRow, ReportRow, ZoneRecord};
use crate::reconcile::StatusOutcome;
use crate::web::charts::{EventStatus, MapEvent, MapInput, MapZone};
use std::collections::BTreeMap;

/// The map's status of an event (unvisited when no report counts).
pub fn map_status(s: Option<&StatusOutcome>) -> EventStatus {
    s.map_or(EventStatus::Unvisited, |s| s.status)
}

/// A status badge: CSS class suffix and words.
pub struct Badge {
    pub class: &'static str,
    pub label: &'static str,
}

pub fn badge(s: EventStatus) -> Badge {
    Badge {
        class: s.as_str(),
        label: s.label(),
    }
}

/// The zones as map shapes (unparseable geometries are left out).
pub fn map_zones(zones: &[ZoneRecord]) -> Vec<MapZone> {
    zones
        .iter()
        .filter_map(|z| {
            Some(MapZone {
                name: z.name.clone(),
                shape: parse_multipolygon(&z.geometry)?,
                priority: z.priority,
            })
        })
        .collect()
}

/// Events as map footprints coloured by status.
pub fn map_events(
    events: &[RankedEvent],
    statuses: &BTreeMap<i64, StatusOutcome>,
) -> Vec<MapEvent> {
    events
        .iter()
        .filter_map(|e| {
            Some(MapEvent {
                id: e.record.id,
                code: crate::planning::codes::event_code(e.record.id),
                area_ha: e.record.attrs.area_ha,
                status: map_status(statuses.get(&e.record.id)),
                footprint: parse_multipolygon(&e.record.attrs.footprint)?,
            })
        })
        .collect()
}

/// A map with a title, zones and events.
pub fn map_input(title: &str, zones: Vec<MapZone>, events: Vec<MapEvent>) -> MapInput {
    MapInput {
        title: title.to_string(),
        zones,
        events,
        start: None,
        route: Vec::new(),
    }
}

/// One photo of a report with what its checks said.
pub struct PhotoView {
    pub sha: String,
    pub name: String,
    pub checks: String,
    pub ok: bool,
}

/// A stored report as shown.
pub struct ReportView {
    pub id: String,
    pub team: String,
    pub kind: String,
    pub outcome: String,
    /// The stored outcome word (a CSS class suffix).
    pub outcome_class: String,
    pub reason: String,
    pub cause: String,
    pub observed: String,
    pub received: String,
    pub position: String,
    pub distance: String,
    pub notes: String,
    pub evidence_ok: bool,
    pub flags: Vec<String>,
    pub supersedes: String,
    pub counted: bool,
    pub photos: Vec<PhotoView>,
    /// How the report came in: a field tool's signed return, or entered at
    /// the station (by whom, from which sheet).
    pub provenance: String,
}

/// The words of one photo's evidence check.
pub fn check_text(c: &PhotoCheckRow) -> (String, bool) {
    let mut parts = Vec::new();
    let mut ok = true;
    match c.distance_m {
        Some(d) => parts.push(format!("{} m from the footprint", fixed(d, 0))),
        None => parts.push("no photo position".to_string()),
    }
    match c.after_detection {
        Some(true) => parts.push("taken after detection".to_string()),
        Some(false) => {
            ok = false;
            parts.push("taken before detection".to_string())
        }
        None => parts.push("no photo time".to_string()),
    }
    if c.inside_window == Some(false) {
        ok = false;
        parts.push("outside the trip window".to_string());
    }
    if c.reused_elsewhere {
        ok = false;
        parts.push("also used by another report".to_string());
    }
    (parts.join("; "), ok)
}

/// A report with its photos and checks, read through `r`; its times in the
/// organisation's zone.
pub fn report_view(
    r: &Reader<'_>,
    row: &ReportRow,
    counted: bool,
    settings: &Settings,
) -> crate::Result<ReportView> {
    let photos: Vec<ReportPhotoRow> = r.report_photos(&row.report_id)?;
    let checks = r.photo_checks(&row.report_id)?;
    let photos = photos
        .into_iter()
        .map(|p| {
            let (checks, ok) = checks
                .iter()
                .find(|c| c.sha256 == p.sha256)
                .map_or(("not checked".to_string(), true), check_text);
            PhotoView {
                sha: p.sha256,
                name: p.original_name,
                checks,
                ok,
            }
        })
        .collect();
    let position = match (row.lat, row.lon) {
        (Some(lat), Some(lon)) => {
            let acc = row
                .accuracy_m
                .map(|a| format!(" ±{} m", fixed(a, 0)))
                .unwrap_or_default();
            format!("{}, {}{acc}", fixed(lat, 6), fixed(lon, 6))
        }
        _ => "no position".to_string(),
    };
    Ok(ReportView {
        id: row.report_id.clone(),
        team: row.team.clone(),
        kind: row.kind.as_str().replace('_', " "),
        outcome: row.outcome.as_str().replace('_', " "),
        outcome_class: row.outcome.to_string(),
        reason: row.reason.map_or("", |w| w.as_str()).replace('_', " "),
        cause: row.cause.map_or("", |w| w.as_str()).replace('_', " "),
        observed: local_text(settings, &row.observed_at.to_string()),
        received: local_text(settings, &row.received_at.to_string()),
        position,
        distance: row
            .distance_m
            .map(|d| format!("{} m", fixed(d, 0)))
            .unwrap_or_else(|| "–".into()),
        notes: row.notes.clone(),
        evidence_ok: row.evidence_ok,
        flags: row.flags.iter().map(|f| f.replace('_', " ")).collect(),
        supersedes: row.supersedes.clone().unwrap_or_default(),
        counted,
        photos,
        provenance: match r.station_entry(&row.report_id)? {
            Some(e) => format!(
                "entered at the station by {} from paper sheet {}, {}",
                e.entered_by,
                e.sheet,
                super::common::local_text(settings, &e.entered_at)
            ),
            None => "field tool (signed return)".to_string(),
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn checks_say_what_failed() {
        let c = PhotoCheckRow {
            report_id: "r".into(),
            sha256: "s".into(),
            distance_m: Some(42.4),
            after_detection: Some(false),
            inside_window: Some(true),
            reused_elsewhere: true,
        };
        let (t, ok) = check_text(&c);
        assert!(!ok);
        assert_eq!(
            t,
            "42 m from the footprint; taken before detection; also used by another report"
        );
        let fine = PhotoCheckRow {
            after_detection: Some(true),
            reused_elsewhere: false,
            ..c
        };
        assert!(check_text(&fine).1);
    }

    #[test]
    fn no_status_is_unvisited() {
        assert_eq!(map_status(None), EventStatus::Unvisited);
        assert_eq!(badge(EventStatus::FalseAlarm).class, "false_alarm");
    }
}
