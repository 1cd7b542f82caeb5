//! View structs shared by several pages: an event's status badge, a stored
//! report with its photos and evidence checks, and the map input built
//! from stored zones and events.

use super::common::{fixed, local_text};
use crate::alerts::events::{RankedEvent, parse_multipolygon};
use crate::platform::i18n::Tr;
use crate::platform::settings::Settings;
use crate::platform::storage::{PhotoCheckRow, Reader, ReportPhotoRow, ReportRow, ZoneRecord};
use crate::reconcile::StatusOutcome;
use crate::web::charts::{EventStatus, MapEvent, MapInput, MapZone};
use std::borrow::Borrow;
use std::collections::BTreeMap;

/// The map's status of an event (unvisited when no report counts).
pub fn map_status(s: Option<&StatusOutcome>) -> EventStatus {
    s.map_or(EventStatus::Unvisited, |s| s.status)
}

/// The catalogue id of a trip state's words (`trip-state-partly-returned`).
pub fn state_id(s: crate::planning::TripState) -> String {
    format!("trip-state-{}", s.as_str().replace('_', "-"))
}

/// The catalogue id of an event status's words, one per status on every
/// page (`status-false-alarm`).
pub fn status_id(s: EventStatus) -> String {
    format!("status-{}", s.as_str().replace('_', "-"))
}

/// A status badge: its CSS class suffix. The words come from the catalogue
/// (`status-<status>`, see [`status_id`]).
pub struct Badge {
    pub class: &'static str,
}

pub fn badge(s: EventStatus) -> Badge {
    Badge { class: s.as_str() }
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
        words: Default::default(),
    }
}

/// One photo of a report with what its checks said.
pub struct PhotoView {
    pub sha: String,
    pub name: String,
    /// The photo passed its checks (or was not checked).
    pub ok: bool,
    /// Its evidence check, read by [`PhotoView::checks_in`].
    pub check: Option<PhotoCheckRow>,
}

impl PhotoView {
    /// What the photo's checks said, in the page's language.
    pub fn checks_in(&self, tr: impl Borrow<Tr>) -> String {
        match &self.check {
            Some(c) => check_text_in(*tr.borrow(), c).0,
            None => tr.borrow().t("photo-check-not-checked"),
        }
    }
}

/// A stored report as shown.
pub struct ReportView {
    pub id: String,
    pub team: String,
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
    pub flags: Vec<FlagView>,
    pub supersedes: String,
    pub counted: bool,
    pub photos: Vec<PhotoView>,
    /// The stored words (outcome, reason, cause, kind), for the page's language.
    pub tokens: ReportTokens,
    /// How the report came in: entered at the station (by, sheet, when in
    /// local time), or `None` for a field tool's signed return.
    pub entered: Option<(String, String, String)>,
}

/// The stored vocabulary words of a report, translated by the page.
#[derive(Debug, Clone, Default)]
pub struct ReportTokens {
    pub outcome: String,
    pub reason: String,
    pub cause: String,
    pub kind: String,
}

/// A stored word in `tr`'s language: the catalogue's `<prefix>-<token>`
/// (the field app's words), else the token with spaces.
pub fn word(tr: Tr, prefix: &str, token: &str) -> String {
    tr.get(&format!("{prefix}-{token}"))
        .unwrap_or_else(|| token.replace('_', " "))
}

impl ReportView {
    /// The outcome in the page's language.
    pub fn outcome_in(&self, tr: impl Borrow<Tr>) -> String {
        word(*tr.borrow(), "outcome", &self.tokens.outcome)
    }
    /// The reason in the page's language.
    pub fn reason_in(&self, tr: impl Borrow<Tr>) -> String {
        word(*tr.borrow(), "reason", &self.tokens.reason)
    }
    /// The cause in the page's language.
    pub fn cause_in(&self, tr: impl Borrow<Tr>) -> String {
        word(*tr.borrow(), "cause", &self.tokens.cause)
    }
    /// The target's kind in the page's language.
    pub fn kind_in(&self, tr: impl Borrow<Tr>) -> String {
        word(*tr.borrow(), "report-kind", &self.tokens.kind)
    }
    /// How the report came in, in the page's language.
    pub fn provenance_in(&self, tr: impl Borrow<Tr>) -> String {
        let tr = *tr.borrow();
        match &self.entered {
            Some((by, sheet, at)) => tr.t3(
                "report-entered-at-station",
                "by",
                by.as_str(),
                "sheet",
                sheet.as_str(),
                "at",
                at.as_str(),
            ),
            None => tr.t("report-field-tool"),
        }
    }
}

/// One evidence flag as shown: its words, and the photo it is about (by
/// name, with a thumbnail), never the photo's digest.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FlagView {
    pub text: String,
    /// The stored flag code (`photo_no_gps`), for [`FlagView::text_in`].
    pub code: String,
    /// (digest for the thumbnail's address, file name) of the photo.
    pub photo: Option<(String, String)>,
}

impl FlagView {
    /// The flag's words in the page's language (`flag-<code>`), else `text`.
    pub fn text_in(&self, tr: impl Borrow<Tr>) -> String {
        tr.borrow()
            .get(&format!("flag-{}", self.code))
            .unwrap_or_else(|| self.text.clone())
    }
}

/// The words of a stored flag code ("photo_no_gps" and the like).
fn flag_words(code: &str) -> String {
    match code {
        "photo_no_gps" => "photo without a position".into(),
        "photo_far_from_target" => "photo far from the footprint".into(),
        "photo_no_time" => "photo without a time".into(),
        "photo_before_detection" => "photo taken before detection".into(),
        "photo_outside_window" => "photo taken outside the trip window".into(),
        "photo_reused" => "photo also used by another report".into(),
        other => other.replace('_', " "),
    }
}

/// A stored flag ("code" or "code:digest") as shown: the photo named by
/// its file name (of `photos`, the report's), or by the digest's first 12
/// characters when the report does not hold it.
pub fn flag_view(flag: &str, photos: &[PhotoView]) -> FlagView {
    let (code, sha) = match flag.split_once(':') {
        Some((c, s)) => (c, Some(s)),
        None => (flag, None),
    };
    let photo = sha.map(|sha| {
        let name = photos.iter().find(|p| p.sha == sha).map_or_else(
            || format!("photo {}…", sha.chars().take(12).collect::<String>()),
            |p| p.name.clone(),
        );
        (sha.to_string(), name)
    });
    FlagView {
        text: flag_words(code),
        code: code.to_string(),
        photo,
    }
}

/// The words of one photo's evidence check (English).
pub fn check_text(c: &PhotoCheckRow) -> (String, bool) {
    check_text_in(Tr::new("en"), c)
}

/// The words of one photo's evidence check in `tr`'s language
/// (`photo-check-*`), and whether it passed.
pub fn check_text_in(tr: Tr, c: &PhotoCheckRow) -> (String, bool) {
    let mut parts = Vec::new();
    let mut ok = true;
    match c.distance_m {
        Some(d) => parts.push(tr.t1("photo-check-distance", "metres", fixed(d, 0))),
        None => parts.push(tr.t("photo-check-no-position")),
    }
    match c.after_detection {
        Some(true) => parts.push(tr.t("photo-check-after-detection")),
        Some(false) => {
            ok = false;
            parts.push(tr.t("photo-check-before-detection"))
        }
        None => parts.push(tr.t("photo-check-no-time")),
    }
    if c.inside_window == Some(false) {
        ok = false;
        parts.push(tr.t("photo-check-outside-window"));
    }
    if c.reused_elsewhere {
        ok = false;
        parts.push(tr.t("photo-check-reused"));
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
    let photos: Vec<PhotoView> = photos
        .into_iter()
        .map(|p| {
            let check = checks.iter().find(|c| c.sha256 == p.sha256).cloned();
            let ok = check.as_ref().is_none_or(|c| check_text(c).1);
            PhotoView {
                sha: p.sha256,
                name: p.original_name,
                ok,
                check,
            }
        })
        .collect();
    let entered = r.station_entry(&row.report_id)?.map(|e| {
        (
            e.entered_by,
            e.sheet,
            super::common::local_text(settings, &e.entered_at),
        )
    });
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
        flags: row.flags.iter().map(|f| flag_view(f, &photos)).collect(),
        supersedes: row.supersedes.clone().unwrap_or_default(),
        counted,
        photos,
        tokens: ReportTokens {
            outcome: row.outcome.as_str().to_string(),
            reason: row.reason.map_or("", |w| w.as_str()).to_string(),
            cause: row.cause.map_or("", |w| w.as_str()).to_string(),
            kind: row.kind.as_str().to_string(),
        },
        entered,
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
            ..c.clone()
        };
        assert!(check_text(&fine).1);
        let (pt, _) = check_text_in(Tr::new("pt"), &c);
        assert!(pt.contains("42 m") && !pt.contains("footprint"), "{pt}");
    }

    #[test]
    fn a_flag_names_its_photo_never_its_digest() {
        // Issue 14: the flags showed 64-character digests that ran out of
        // their card.
        let sha = "ab".repeat(32);
        let photos = vec![PhotoView {
            sha: sha.clone(),
            name: "IMG_0042.jpg".into(),
            ok: false,
            check: None,
        }];
        let f = flag_view(&format!("photo_no_gps:{sha}"), &photos);
        assert_eq!(f.text, "photo without a position");
        assert_eq!(f.photo, Some((sha.clone(), "IMG_0042.jpg".to_string())));
        let unknown = flag_view(&format!("photo_reused:{}", "cd".repeat(32)), &photos);
        assert_eq!(
            unknown.photo.map(|p| p.1),
            Some("photo cdcdcdcdcdcd…".to_string())
        );
        assert_eq!(
            flag_view("far_from_target", &photos).text,
            "far from target"
        );
    }

    #[test]
    fn no_status_is_unvisited() {
        assert_eq!(map_status(None), EventStatus::Unvisited);
        assert_eq!(badge(EventStatus::FalseAlarm).class, "false_alarm");
    }
}
