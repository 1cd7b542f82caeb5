//! `GET /trips/{id}`: one trip (bundle) with everything about it: team,
//! mode, dates, its state ([`crate::planning::trip_state`]), the map, the
//! stops with each stop's reports and its event's status, the returns
//! received, and the actions (download, pair a phone, cancel). The page
//! shown right after issuing is this page with the first pairing code.

use super::common::{Layout, PageError, Viewer, fixed, local_text, local_unix, page, respond};
use super::figure_words::map_input_in;
use super::live_map::LiveMap;
use super::views::{Badge, badge, map_events, map_status, map_zones};
use crate::alerts::events::{RankedEvent, priority_of};
use crate::domain::{Day, TargetKind};
use crate::error::Error;
use crate::planning::{TripFacts, TripState, trip_state};
use crate::platform::auth::Action;
use crate::platform::settings::Settings;
use crate::platform::storage::{BundleItem, BundleRecord, ReportRow, ReturnSummary, ZoneRecord};
use crate::reconcile::StatusOutcome;
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::pairing::ShownPairing;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use std::collections::BTreeMap;
use std::sync::Arc;

/// A pairing code as the pages show it (`pages/pairing_box.html`).
pub struct PairingView {
    pub code: String,
    pub link: String,
    pub qr_svg: String,
    pub expires: String,
}

impl PairingView {
    pub fn of(p: ShownPairing, settings: &Settings) -> PairingView {
        let expires = local_unix(settings, p.expires_at);
        PairingView {
            code: p.code,
            link: p.link,
            qr_svg: p.qr_svg,
            expires,
        }
    }
}

/// The bundle id of a `/trips/{id}/…` path, checked to be a UUID.
pub(super) fn bundle_id(path: &str) -> Result<String, PageError> {
    uuid::Uuid::parse_str(path)
        .map(|u| u.to_string())
        .map_err(|_| PageError::bad_request(format!("bundle id '{path}' is not a UUID")))
}

/// The facts a trip's state is computed from (times we wrote ourselves;
/// one that does not parse counts as never reached).
pub(super) fn facts_of(b: &BundleRecord, returns: i64, stops_reported: i64) -> TripFacts {
    let time = |s: &str| {
        chrono::DateTime::parse_from_rfc3339(s)
            .map(|t| t.with_timezone(&chrono::Utc))
            .unwrap_or(chrono::DateTime::<chrono::Utc>::MAX_UTC)
    };
    TripFacts {
        due_at: time(&b.due_at),
        expires_at: time(&b.expires_at),
        cancelled: b.cancelled_at.is_some(),
        returns: returns.max(0) as u64,
        stops: (b.events + b.controls).max(0) as u64,
        stops_reported: stops_reported.max(0) as u64,
    }
}

/// One report as the trip page lists it under its stop.
pub struct StopReport {
    pub id: String,
    /// The catalogue id of the outcome (the field app's words).
    pub outcome: String,
    pub outcome_class: String,
    pub detail: String,
    pub observed: String,
    pub team: String,
}

/// One stop of the trip, in visiting order.
pub struct StopRow {
    pub order: u32,
    pub code: String,
    /// The catalogue id of the stop's kind.
    pub kind: String,
    /// The catalogue id of its event's status.
    pub status_id: String,
    /// The live event (after merges) for an event stop.
    pub event_id: Option<i64>,
    pub status: Option<Badge>,
    pub lat: String,
    pub lon: String,
    pub stratum: String,
    pub reports: Vec<StopReport>,
}

/// One return as listed.
pub struct ReturnRow {
    pub id: i64,
    pub team: String,
    pub received: String,
    pub size: String,
    pub reports: i64,
}

/// One stratum of an assessment sample, from the bundle's recorded selection.
pub struct StratumRow {
    pub stratum: String,
    pub population: u64,
    pub sample: u64,
    pub probability: String,
}

/// Shown only on the page right after issuing.
pub struct JustIssued {
    pub walking_hours: String,
    pub route_method: String,
    pub route_note: String,
    pub pairing: Option<PairingView>,
}

#[derive(Template)]
#[template(path = "pages/trip.html")]
pub struct TripPage {
    layout: Layout,
    id: String,
    team: String,
    state: TripState,
    /// Catalogue ids of the mode and the state.
    mode_id: String,
    state_id: String,
    issued: String,
    due: String,
    expires: String,
    cancelled: String,
    route_km: String,
    map: LiveMap,
    stops: Vec<StopRow>,
    reported: usize,
    new_clearings: Vec<StopReport>,
    returns: Vec<ReturnRow>,
    strata: Vec<StratumRow>,
    just: Option<JustIssued>,
    may_download: bool,
    may_pair: bool,
    may_cancel: bool,
}

/// What the trip page reads.
pub struct TripData {
    b: BundleRecord,
    items: Vec<BundleItem>,
    reports: Vec<ReportRow>,
    returns: Vec<ReturnSummary>,
    zones: Vec<ZoneRecord>,
    /// Each event stop's event as it is now (merges followed), by the id the bundle names.
    events: BTreeMap<i64, RankedEvent>,
    statuses: Arc<BTreeMap<i64, StatusOutcome>>,
}

/// Reads a trip (blocking; call inside `web::block`).
pub fn load_trip(st: &AppState, id: &str) -> Result<TripData, Error> {
    let (b, items, reports, returns, zones) = st.db.read(|r| {
        let b = r
            .bundle(id)?
            .ok_or_else(|| Error::NotFound(format!("no trip (bundle) {id}")))?;
        Ok((
            b,
            r.bundle_items(id)?,
            r.bundle_reports(id)?,
            r.bundle_returns(id)?,
            r.zones()?,
        ))
    })?;
    let mut events = BTreeMap::new();
    for eid in items.iter().filter_map(|i| i.event_id) {
        if let Some(rec) = st.db.read(|r| r.event_resolved(eid))? {
            let priority = priority_of(&rec, &st.settings.get().priority, Day::today());
            events.insert(
                eid,
                RankedEvent {
                    record: rec,
                    priority,
                },
            );
        }
    }
    let statuses = Arc::clone(
        &st.stats
            .prepared(&st.db, &StatsFilter::default())?
            .loaded
            .statuses,
    );
    Ok(TripData {
        b,
        items,
        reports,
        returns,
        zones,
        events,
        statuses,
    })
}

/// A report as listed under its stop.
fn stop_report(r: &ReportRow, settings: &Settings) -> StopReport {
    let detail = [r.reason.map(|w| w.as_str()), r.cause.map(|w| w.as_str())]
        .into_iter()
        .flatten()
        .map(|w| w.replace('_', " "))
        .collect::<Vec<_>>()
        .join(", ");
    StopReport {
        id: r.report_id.clone(),
        outcome: format!("outcome-{}", r.outcome.as_str()),
        outcome_class: r.outcome.to_string(),
        detail,
        observed: local_text(settings, &r.observed_at.to_string()),
        team: r.team.clone(),
    }
}

/// The stops in visiting order, each with its reports and its event's status.
fn stop_rows(d: &TripData, settings: &Settings) -> Vec<StopRow> {
    let mut items: Vec<&BundleItem> = d.items.iter().collect();
    items.sort_by_key(|i| i.visit_order);
    items
        .into_iter()
        .map(|i| {
            let live = i.event_id.and_then(|e| d.events.get(&e));
            let reports = d
                .reports
                .iter()
                .filter(|r| match i.kind {
                    TargetKind::Event => r.kind == TargetKind::Event && r.event_id == i.event_id,
                    _ => r.control_code.as_deref() == Some(i.code.as_str()),
                })
                .map(|r| stop_report(r, settings))
                .collect();
            StopRow {
                order: i.visit_order,
                code: i.code.clone(),
                kind: format!("trip-kind-{}", i.kind.to_string().replace('_', "-")),
                status_id: live
                    .map(|e| super::views::status_id(map_status(d.statuses.get(&e.record.id))))
                    .unwrap_or_default(),
                event_id: live.map(|e| e.record.id).or(i.event_id),
                status: live.map(|e| badge(map_status(d.statuses.get(&e.record.id)))),
                lat: fixed(i.lat, 6),
                lon: fixed(i.lon, 6),
                stratum: i.stratum.clone().unwrap_or_default(),
                reports,
            }
        })
        .collect()
}

/// The strata recorded with the bundle's selection (assessment trips).
fn strata(selection: &str) -> Vec<StratumRow> {
    let v: serde_json::Value = serde_json::from_str(selection).unwrap_or_default();
    v["strata"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|s| StratumRow {
                    stratum: s["stratum"].as_str().unwrap_or_default().to_string(),
                    population: s["population"].as_u64().unwrap_or(0),
                    sample: s["sample"].as_u64().unwrap_or(0),
                    probability: fixed(s["inclusion_probability"].as_f64().unwrap_or(0.0), 4),
                })
                .collect()
        })
        .unwrap_or_default()
}

/// The trip's map: its events in their status colours, the route from the
/// start, the zones they lie in.
fn trip_map(tr: &crate::platform::i18n::Tr, d: &TripData) -> LiveMap {
    let b = &d.b;
    let events: Vec<RankedEvent> = d.events.values().cloned().collect();
    let names: Vec<&String> = events.iter().flat_map(|e| &e.record.zones).collect();
    let zones: Vec<ZoneRecord> = d
        .zones
        .iter()
        .filter(|z| names.contains(&&z.name))
        .cloned()
        .collect();
    let mut map = map_input_in(
        tr,
        tr.t2(
            "map-title-trip",
            "id",
            &b.id[..8.min(b.id.len())],
            "team",
            b.team.as_str(),
        ),
        map_zones(&zones),
        map_events(&events, &d.statuses),
    );
    let mut items: Vec<&BundleItem> = d.items.iter().collect();
    items.sort_by_key(|i| i.visit_order);
    map.start = Some((b.start_lon, b.start_lat));
    map.route = std::iter::once((b.start_lon, b.start_lat))
        .chain(items.iter().map(|i| (i.lon, i.lat)))
        .collect();
    LiveMap::new("trip-map", &map, true)
}

/// The trip page of `d` at `now`, as `viewer` may act on it.
pub fn trip_page(
    req: &HttpRequest,
    viewer: &Viewer,
    d: TripData,
    now: chrono::DateTime<chrono::Utc>,
    just: Option<JustIssued>,
    settings: &Settings,
) -> TripPage {
    let stops = stop_rows(&d, settings);
    let reported = stops.iter().filter(|s| !s.reports.is_empty()).count();
    let state = trip_state(
        &facts_of(&d.b, d.returns.len() as i64, reported as i64),
        now,
    );
    let b = &d.b;
    let tr = crate::web::i18n::tr_of(req);
    let title = if just.is_some() {
        tr.t("trip-issued-title")
    } else {
        tr.t1("trip-page-title", "id", &b.id[..8.min(b.id.len())])
    };
    let open = b.cancelled_at.is_none();
    let not_expired = chrono::DateTime::parse_from_rfc3339(&b.expires_at).is_ok_and(|t| t > now);
    TripPage {
        layout: Layout::new(req, viewer, &title, "/trips"),
        id: b.id.clone(),
        team: b.team.clone(),
        mode_id: format!("mode-{}", b.mode),
        state_id: super::views::state_id(state),
        state,
        issued: local_text(settings, &b.issued_at),
        due: local_text(settings, &b.due_at),
        expires: local_text(settings, &b.expires_at),
        cancelled: b
            .cancelled_at
            .as_deref()
            .map(|t| local_text(settings, t))
            .unwrap_or_default(),
        route_km: fixed(b.route_m / 1000.0, 2),
        map: trip_map(&crate::web::i18n::tr_of(req), &d),
        reported,
        new_clearings: d
            .reports
            .iter()
            .filter(|r| r.kind == TargetKind::NewClearing)
            .map(|r| stop_report(r, settings))
            .collect(),
        returns: d
            .returns
            .iter()
            .map(|r| ReturnRow {
                id: r.id,
                team: r.team.clone(),
                received: local_text(settings, &r.received_at),
                size: super::form::human_bytes(r.size.max(0) as u64),
                reports: r.reports,
            })
            .collect(),
        strata: strata(&b.selection),
        stops,
        just,
        // The file holds the upload key: offered to those who cancel
        // bundles (coordinators, admins), not to managers.
        may_download: open && viewer.may(Action::CancelBundle),
        may_pair: open && not_expired && viewer.may(Action::IssueBundle),
        may_cancel: open && viewer.may(Action::CancelBundle),
    }
}

/// `GET /trips/{id}`.
pub async fn show(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let id = bundle_id(&path)?;
        let st = state.clone();
        let d = web::block(move || load_trip(&st, &id)).await??;
        let t = trip_page(
            &req,
            &viewer,
            d,
            chrono::Utc::now(),
            None,
            &state.settings.get(),
        );
        page(&t)
    }
    .await;
    respond(&req, &viewer, r)
}

/// The page right after issuing: the trip page with its first pairing code, 201.
pub fn issued_response(t: &TripPage) -> Result<HttpResponse, PageError> {
    let mut resp = page(t)?;
    *resp.status_mut() = StatusCode::CREATED;
    Ok(resp)
}
