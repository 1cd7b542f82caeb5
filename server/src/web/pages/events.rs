//! `/events` (filters, the map coloured by status, the table in priority
//! order) and `/events/{id}` (attributes, alerts, reports with photo
//! thumbnails and their evidence checks).

use super::common::{
    Field, Layout, PageError, Viewer, bad_filter, fixed, non_empty, opt_day, opt_number, page,
    respond,
};
use super::figure_words::map_input_in;
use super::live_map::LiveMap;
use super::views::{Badge, ReportView, badge, map_events, map_status, map_zones, report_view};
use crate::alerts::events::{RankedEvent, priority_of, ranked_events};
use crate::domain::Day;
use crate::error::Error;
use crate::planning::codes::event_code;
use crate::platform::storage::{EventFilter, EventRecord, Reader, Source, StoredAlert, ZoneRecord};
use crate::reconcile::StatusOutcome;
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::charts::EventStatus;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::sync::Arc;

/// Most rows in the events table (the map shows every event).
pub const MAX_TABLE_ROWS: usize = 500;

/// The filters of `/events` as typed.
#[derive(Debug, Deserialize, Default)]
pub struct EventsQuery {
    pub zone: Option<String>,
    pub source: Option<String>,
    pub from: Option<String>,
    pub to: Option<String>,
    pub min_area_ha: Option<String>,
    pub status: Option<String>,
}

pub struct Choice {
    pub value: String,
    pub label: String,
    pub selected: bool,
}

fn choices(
    values: impl IntoIterator<Item = (String, String)>,
    current: &Option<String>,
) -> Vec<Choice> {
    values
        .into_iter()
        .map(|(value, label)| Choice {
            selected: current.as_deref() == Some(value.as_str()),
            value,
            label,
        })
        .collect()
}

/// The catalogue id of an alert confidence level: "high" or "low" (alert)
/// confidence, so that "confirmed" is only ever a visit's outcome (issue 14).
fn confidence_id(c: crate::domain::Confidence) -> String {
    format!("confidence-{}", c.level())
}

struct EventRow {
    rank: usize,
    id: i64,
    code: String,
    area: String,
    first: String,
    last: String,
    sources: String,
    confidence: String,
    /// The catalogue id of the status words.
    status_id: String,
    corroborated: bool,
    zones: String,
    priority: String,
    status: Badge,
}

#[derive(Template)]
#[template(path = "pages/events.html")]
struct EventsPage {
    layout: Layout,
    zones: Vec<Choice>,
    sources: Vec<Choice>,
    statuses: Vec<Choice>,
    from: String,
    to: String,
    min_area: String,
    map: LiveMap,
    rows: Vec<EventRow>,
    total: usize,
    shown: usize,
    api_link: String,
}

fn row(rank: usize, e: &RankedEvent, status: EventStatus) -> EventRow {
    let a = &e.record.attrs;
    EventRow {
        rank,
        id: e.record.id,
        code: event_code(e.record.id),
        area: fixed(a.area_ha, 2),
        first: a.first.to_string(),
        last: a.last.to_string(),
        sources: a.per_source.keys().cloned().collect::<Vec<_>>().join(", "),
        confidence: confidence_id(a.highest_confidence),
        status_id: super::views::status_id(status),
        corroborated: a.corroborated,
        zones: e.record.zones.join(", "),
        priority: fixed(e.priority, 3),
        status: badge(status),
    }
}

async fn list_page(
    req: &HttpRequest,
    state: &AppState,
    q: EventsQuery,
) -> Result<HttpResponse, PageError> {
    let (filter, status) = list_filter(&q)?;
    let (events, zones, sources, statuses) = load_list(state, &filter).await?;
    let events: Vec<RankedEvent> = events
        .into_iter()
        .filter(|e| status.is_none_or(|s| map_status(statuses.get(&e.record.id)) == s))
        .collect();
    let tr = crate::web::i18n::tr_of(req);
    let map = LiveMap::new(
        "events-map",
        &map_input_in(
            &tr,
            tr.t("map-title-events"),
            map_zones(&zones),
            map_events(&events, &statuses),
        ),
        false,
    );
    let rows: Vec<EventRow> = events
        .iter()
        .take(MAX_TABLE_ROWS)
        .enumerate()
        .map(|(i, e)| row(i + 1, e, map_status(statuses.get(&e.record.id))))
        .collect();
    let viewer = Viewer::of(req);
    let title = crate::web::i18n::tr_of(req).t("menu-events");
    let layout = Layout::new(req, &viewer, &title, "/events");
    let tr = &layout.tr;
    let t = EventsPage {
        zones: choices(
            zones.iter().map(|z| (z.name.clone(), z.name.clone())),
            &filter.zone,
        ),
        sources: choices(
            sources.iter().map(|s| (s.name.clone(), s.name.clone())),
            &filter.source,
        ),
        statuses: choices(
            EventStatus::ALL
                .iter()
                .map(|s| (s.as_str().to_string(), tr.t(&super::views::status_id(*s)))),
            &status.map(|s| s.as_str().to_string()),
        ),
        from: q.from.clone().unwrap_or_default(),
        to: q.to.clone().unwrap_or_default(),
        min_area: q.min_area_ha.clone().unwrap_or_default(),
        map,
        total: events.len(),
        shown: rows.len(),
        rows,
        api_link: api_link(&filter),
        layout,
    };
    page(&t)
}

/// The minimum area field of the filter.
const MIN_AREA: Field<'static> = Field {
    id: "trips-min-area",
    english: "Minimum area",
};

/// The storage filter and the status asked for, checked as typed.
fn list_filter(q: &EventsQuery) -> Result<(EventFilter, Option<EventStatus>), PageError> {
    let filter = EventFilter {
        zone: non_empty(&q.zone),
        from: opt_day(
            Field {
                id: "trips-from",
                english: "From",
            },
            &q.from,
        )?,
        to: opt_day(
            Field {
                id: "trips-to",
                english: "To",
            },
            &q.to,
        )?,
        source: non_empty(&q.source),
        min_area_ha: opt_number::<f64>(MIN_AREA, &q.min_area_ha)?,
        limit: None,
    };
    if filter
        .min_area_ha
        .is_some_and(|a| !(a.is_finite() && a >= 0.0))
    {
        let english = "Minimum area: expected a number of hectares, 0 or more";
        let e = PageError::bad_request(english);
        return Err(e.worded("why-min-area", &[("field", &MIN_AREA.id)]));
    }
    let status = match non_empty(&q.status) {
        None => None,
        Some(s) => Some(EventStatus::parse(&s).ok_or_else(|| {
            let e = PageError::bad_request(format!("Status: '{s}' is not a status"));
            e.worded("why-status", &[("value", &s)])
        })?),
    };
    Ok((filter, status))
}

/// What the events list reads: the filtered events in priority order, the
/// zones and sources for the filters, and every event's status.
type ListData = (
    Vec<RankedEvent>,
    Vec<ZoneRecord>,
    Vec<Source>,
    Arc<BTreeMap<i64, StatusOutcome>>,
);

/// Reads what the events list shows, on the blocking pool.
async fn load_list(state: &AppState, filter: &EventFilter) -> Result<ListData, PageError> {
    let st = state.clone();
    let f2 = filter.clone();
    let data = web::block(move || {
        let (zones, sources) = st.db.read(|r| Ok((r.zones()?, r.sources()?)))?;
        let events = ranked_events(&st.db, &f2, &st.settings.get().priority, Day::today())?;
        let statuses = std::sync::Arc::clone(
            &st.stats
                .prepared(&st.db, &StatsFilter::default())?
                .loaded
                .statuses,
        );
        Ok::<_, Error>((events, zones, sources, statuses))
    })
    .await??;
    Ok(data)
}

/// The same list from the API: the zone and source filters as a query.
fn api_link(filter: &EventFilter) -> String {
    let mut api = Vec::new();
    for (k, v) in [("zone", &filter.zone), ("source", &filter.source)] {
        if let Some(v) = v {
            api.push(format!("{k}={}", urlencode(v)));
        }
    }
    format!("/api/v1/events?{}", api.join("&"))
}

/// Percent-encode a query value (RFC 3986 unreserved characters kept).
pub fn urlencode(s: &str) -> String {
    crate::web::urls::percent_encode(s, crate::web::urls::QUERY_VALUE)
}

/// `GET /events`.
pub async fn list(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<EventsQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let q = q.map_err(bad_filter)?;
        list_page(&req, &state, q.into_inner()).await
    }
    .await;
    respond(&req, &viewer, r)
}

struct AlertRow {
    day: String,
    source: String,
    confidence: String,
    lon: String,
    lat: String,
}

#[derive(Template)]
#[template(path = "pages/event.html")]
struct EventPage {
    layout: Layout,
    id: i64,
    code: String,
    merged_from: Option<i64>,
    origin: String,
    area: String,
    first: String,
    last: String,
    alert_count: u32,
    sources: String,
    confidence: String,
    corroborated: bool,
    zones: String,
    priority: String,
    centroid: String,
    status: Badge,
    /// The catalogue id of the status words.
    status_id: String,
    status_note: String,
    map: LiveMap,
    alerts: Vec<AlertRow>,
    reports: Vec<ReportView>,
}

/// What the event page reads: the event (resolved through merges), its
/// alerts, the sources and zones, its reports as shown, and its status.
struct EventData {
    rec: EventRecord,
    alerts: Vec<StoredAlert>,
    sources: Vec<Source>,
    zones: Vec<ZoneRecord>,
    reports: Vec<ReportView>,
    status: Option<StatusOutcome>,
}

async fn one_page(
    req: &HttpRequest,
    state: &AppState,
    raw: &str,
) -> Result<HttpResponse, PageError> {
    let id: i64 = raw
        .parse()
        .map_err(|_| PageError::bad_request(format!("event id '{raw}' is not a number")))?;
    let EventData {
        rec,
        alerts,
        sources,
        zones,
        reports,
        status,
    } = load_event(state, id).await?;
    let priority = priority_of(&rec, &state.settings.get().priority, Day::today());
    let ranked = RankedEvent {
        record: rec,
        priority,
    };
    let map = event_map(
        &crate::web::i18n::tr_of(req),
        &ranked,
        status.as_ref(),
        zones,
    );
    let a = &ranked.record.attrs;
    let viewer = Viewer::of(req);
    let t = EventPage {
        layout: Layout::new(
            req,
            &viewer,
            &crate::web::i18n::tr_of(req).t1("disp-event", "code", event_code(ranked.record.id)),
            "/events",
        ),
        id: ranked.record.id,
        code: event_code(ranked.record.id),
        merged_from: (ranked.record.id != id).then_some(id),
        origin: ranked.record.origin.clone(),
        area: fixed(a.area_ha, 3),
        first: a.first.to_string(),
        last: a.last.to_string(),
        alert_count: a.alert_count,
        sources: a
            .per_source
            .iter()
            .map(|(k, v)| format!("{k} ({v})"))
            .collect::<Vec<_>>()
            .join(", "),
        confidence: confidence_id(a.highest_confidence),
        corroborated: a.corroborated,
        zones: ranked.record.zones.join(", "),
        priority: fixed(priority, 3),
        centroid: format!("{}, {}", fixed(a.centroid.1, 6), fixed(a.centroid.0, 6)),
        status_id: super::views::status_id(map_status(status.as_ref())),
        status: badge(map_status(status.as_ref())),
        status_note: status
            .as_ref()
            .map(|s| {
                super::figure_words::status_note(
                    &crate::web::i18n::tr_of(req),
                    &s.note,
                    state.settings.get().zone(),
                )
            })
            .unwrap_or_default(),
        map,
        alerts: alert_rows(&alerts, &sources),
        reports,
    };
    page(&t)
}

/// Reads what the event page shows, on the blocking pool.
async fn load_event(state: &AppState, id: i64) -> Result<EventData, PageError> {
    let st = state.clone();
    let data = web::block(move || {
        let rec = st
            .db
            .read(|r| r.event_resolved(id))?
            .ok_or_else(|| Error::NotFound(format!("no event {id}")))?;
        let status = st
            .stats
            .prepared(&st.db, &StatsFilter::default())?
            .loaded
            .statuses
            .get(&rec.id)
            .cloned();
        let counted = status
            .as_ref()
            .map(|s| s.counted_reports.clone())
            .unwrap_or_default();
        let (alerts, sources, zones, reports) = st.db.read(|r| {
            let reports = report_views(r, rec.id, &counted, &st.settings.get())?;
            Ok((
                r.alerts_of_events(&[rec.id])?,
                r.sources()?,
                r.zones()?,
                reports,
            ))
        })?;
        Ok::<_, Error>(EventData {
            rec,
            alerts,
            sources,
            zones,
            reports,
            status,
        })
    })
    .await??;
    Ok(data)
}

/// The event's reports as shown, each marked whether its status counts it.
fn report_views(
    r: &Reader<'_>,
    event_id: i64,
    counted: &[uuid::Uuid],
    settings: &crate::platform::settings::Settings,
) -> crate::Result<Vec<ReportView>> {
    let rows = r.event_reports(event_id)?;
    let mut reports = Vec::new();
    for row in &rows {
        let is_counted = uuid::Uuid::parse_str(&row.report_id).is_ok_and(|u| counted.contains(&u));
        reports.push(report_view(r, row, is_counted, settings)?);
    }
    Ok(reports)
}

/// The map of one event, coloured by its status, over the zones it lies in;
/// the pan-and-zoom map opens framed on its footprint.
fn event_map(
    tr: &crate::platform::i18n::Tr,
    ranked: &RankedEvent,
    status: Option<&StatusOutcome>,
    zones: Vec<ZoneRecord>,
) -> LiveMap {
    let mut statuses = BTreeMap::new();
    if let Some(s) = status {
        statuses.insert(ranked.record.id, s.clone());
    }
    let in_zones: Vec<_> = zones
        .into_iter()
        .filter(|z| ranked.record.zones.contains(&z.name))
        .collect();
    LiveMap::new(
        "event-map",
        &map_input_in(
            tr,
            tr.t1("map-title-event", "code", event_code(ranked.record.id)),
            map_zones(&in_zones),
            map_events(std::slice::from_ref(ranked), &statuses),
        ),
        true,
    )
}

/// The event's alerts as table rows, each naming its source.
fn alert_rows(alerts: &[StoredAlert], sources: &[Source]) -> Vec<AlertRow> {
    let source_name = |sid: i64| {
        sources
            .iter()
            .find(|s| s.id == sid)
            .map_or_else(|| format!("source {sid}"), |s| s.name.clone())
    };
    alerts
        .iter()
        .map(|al| AlertRow {
            day: al.day.to_string(),
            source: source_name(al.source_id),
            confidence: confidence_id(al.confidence),
            lon: fixed(al.lon, 6),
            lat: fixed(al.lat, 6),
        })
        .collect()
}

/// `GET /events/{id}`.
pub async fn one(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async { one_page(&req, &state, &path).await }.await;
    respond(&req, &viewer, r)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn query_values_are_percent_encoded() {
        // RFC 3986 §2.3 unreserved characters stay; a space is %20.
        assert_eq!(urlencode("Core Zone-1.a~"), "Core%20Zone-1.a~");
        assert_eq!(urlencode("a&b=c"), "a%26b%3Dc");
    }
}
