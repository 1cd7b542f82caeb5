//! `POST /trips/preview`: the trip a form would issue, planned with
//! [`crate::planning::plan_preview`] (the same selection and route as
//! issuing, read-only: nothing is stored, no file is written). The
//! coordinator sees the chosen events on the map and in a list with the
//! route and its length, unticks events, adds events by code, moves the
//! start (typed, or a click on the map), updates the preview, and issues
//! exactly what was shown: the form carries the kept events in the order
//! the route was solved over, the seed, and the stop order shown; issuing
//! refuses (409, nothing stored, the new preview shown) when the plan made
//! then differs.

use super::common::{Layout, PageError, Viewer, fixed, html, respond};
use super::figure_words::map_input_in;
use super::live_map::{LiveMap, embed, map_geojson, with_candidates};
use super::trip_form::{IssueForm, added_events, trip_request};
use super::views::{map_events, map_zones};
use crate::alerts::events::{RankedEvent, priority_of, ranked_events};
use crate::domain::{BundleMode, Day};
use crate::error::Error;
use crate::planning::select::StratumPlan;
use crate::planning::{TripPlan, TripRequest, plan_preview};
use crate::platform::storage::{EventFilter, ZoneRecord};
use crate::reconcile::StatusOutcome;
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use std::collections::BTreeMap;
use std::sync::Arc;

/// One stop as the preview lists it.
struct PreviewStop {
    order: u32,
    code: String,
    event_id: Option<i64>,
    area: String,
    priority: String,
    leg_km: String,
    lat: String,
    lon: String,
}

#[derive(Template)]
#[template(path = "pages/preview.html")]
struct PreviewPage {
    layout: Layout,
    error: Option<PageError>,
    team: String,
    mode: String,
    /// Response trips can be edited by hand; an assessment sample cannot.
    editable: bool,
    start_lat: String,
    start_lon: String,
    seed: String,
    route_km: String,
    walking_hours: String,
    route_method: String,
    route_note: String,
    stops: Vec<PreviewStop>,
    strata: Vec<StratumPlan>,
    carried: Vec<(String, String)>,
    order: String,
    expect: String,
    map: LiveMap,
}

/// What the preview shows, read on the blocking pool.
struct Planned {
    plan: TripPlan,
    req: TripRequest,
    events: Vec<RankedEvent>,
    /// Other events that pass the storage filters (zone, dates, source,
    /// area), shown on the map to be added with a click.
    others: Vec<RankedEvent>,
    zones: Vec<ZoneRecord>,
    statuses: Arc<BTreeMap<i64, StatusOutcome>>,
}

/// Plans the request (with the events added by hand) and reads what the map
/// needs. Stores nothing.
fn plan(st: &AppState, mut req: TripRequest, added: Vec<i64>) -> Result<Planned, Error> {
    if !req.statuses.is_empty() {
        req.reconciled = Some(crate::statistics::kept::event_statuses(&st.db)?);
    }
    if !added.is_empty() {
        if req.events.is_none() {
            req.events = Some(plan_preview(&st.db, &st.settings.get(), &req)?.selected);
        }
        let kept = req.events.get_or_insert_with(Vec::new);
        for a in added {
            if !kept.contains(&a) {
                kept.push(a);
            }
        }
    }
    let plan = plan_preview(&st.db, &st.settings.get(), &req)?;
    let mut events = Vec::new();
    for id in &plan.selected {
        if let Some(rec) = st.db.read(|r| r.event_resolved(*id))? {
            let priority = priority_of(&rec, &st.settings.get().priority, req.as_of);
            events.push(RankedEvent {
                record: rec,
                priority,
            });
        }
    }
    let filter = EventFilter {
        zone: req.zone.clone(),
        from: req.from,
        to: req.to,
        source: req.source.clone(),
        min_area_ha: req.min_area_ha,
        limit: Some(MAX_CANDIDATES_SHOWN),
    };
    let mut others = ranked_events(&st.db, &filter, &st.settings.get().priority, req.as_of)?;
    others.retain(|o| !events.iter().any(|e| e.record.id == o.record.id));
    let zones = st.db.read(|r| r.zones())?;
    let statuses = Arc::clone(
        &st.stats
            .prepared(&st.db, &StatsFilter::default())?
            .loaded
            .statuses,
    );
    Ok(Planned {
        plan,
        req,
        events,
        others,
        zones,
        statuses,
    })
}

/// Most events not in the plan that the preview map offers (in priority
/// order; our choice: enough to pick from, small enough for the page).
const MAX_CANDIDATES_SHOWN: usize = 300;

/// The preview's map: the chosen events, the zones they lie in, the route.
fn preview_map(tr: &crate::platform::i18n::Tr, p: &Planned) -> LiveMap {
    let names: Vec<&String> = p.events.iter().flat_map(|e| &e.record.zones).collect();
    let zones: Vec<ZoneRecord> = p
        .zones
        .iter()
        .filter(|z| names.contains(&&z.name))
        .cloned()
        .collect();
    let mut m = map_input_in(
        tr,
        tr.t1("map-title-preview", "team", p.req.team.as_str()),
        map_zones(&zones),
        map_events(&p.events, &p.statuses),
    );
    let start = (p.req.start.lon(), p.req.start.lat());
    m.start = Some(start);
    m.route = std::iter::once(start)
        .chain(p.plan.stops.iter().map(|s| (s.lon, s.lat)))
        .collect();
    let mut map = LiveMap::new("preview-map", &m, true);
    let others = map_events(&p.others, &p.statuses);
    map.json = embed(&with_candidates(map_geojson(&m, true), &others));
    map.pick = true;
    map
}

/// The preview page of `form` (with `error` shown above it, and its status).
pub async fn preview_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    form: IssueForm,
    error: Option<PageError>,
) -> Result<HttpResponse, PageError> {
    let mut trip = trip_request(&form, Day::today())?;
    let added = added_events(&form)?;
    // The seed is fixed here so that issuing draws the same sample and
    // control points as the preview shows.
    trip.seed = Some(trip.seed.unwrap_or_else(|| rand::random::<u64>() >> 1));
    trip.expect_order = None;
    let st = state.clone();
    let p = web::block(move || plan(&st, trip, added)).await??;
    let status = error.as_ref().map_or(StatusCode::OK, |e| e.status);
    let t = PreviewPage {
        layout: Layout::new(
            req,
            viewer,
            &crate::web::i18n::tr_of(req).t1("preview-title", "team", p.req.team.as_str()),
            "/trips",
        ),
        error,
        team: p.req.team.clone(),
        mode: p.req.mode.as_str().to_string(),
        editable: p.req.mode == BundleMode::Response,
        start_lat: fixed(p.req.start.lat(), 6),
        start_lon: fixed(p.req.start.lon(), 6),
        seed: p.req.seed.map(|s| s.to_string()).unwrap_or_default(),
        route_km: fixed(p.plan.route_m / 1000.0, 2),
        walking_hours: fixed(p.plan.walking_hours, 1),
        route_method: p.plan.route_method.clone(),
        route_note: p.plan.route_note.clone(),
        stops: p
            .plan
            .stops
            .iter()
            .map(|s| PreviewStop {
                order: s.visit_order,
                code: s.code.clone(),
                event_id: s.event_id,
                area: s.area_ha.map(|a| fixed(a, 2)).unwrap_or_default(),
                priority: s.priority.map(|a| fixed(a, 3)).unwrap_or_default(),
                leg_km: fixed(s.leg_m / 1000.0, 2),
                lat: fixed(s.lat, 6),
                lon: fixed(s.lon, 6),
            })
            .collect(),
        strata: p.plan.strata.clone(),
        carried: form.carried(),
        order: p
            .plan
            .selected
            .iter()
            .map(i64::to_string)
            .collect::<Vec<_>>()
            .join(","),
        expect: p
            .plan
            .stops
            .iter()
            .map(|s| s.code.as_str())
            .collect::<Vec<_>>()
            .join(" "),
        map: preview_map(&crate::web::i18n::tr_of(req), &p),
    };
    Ok(html(status, t.render()?))
}

/// `POST /trips/preview` (the issue form, or the preview's own form).
pub async fn preview(
    req: HttpRequest,
    state: web::Data<AppState>,
    body: web::Bytes,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let form = match IssueForm::from_body(&body) {
        Ok(f) => f,
        Err(e) => return respond(&req, &viewer, Err(e)),
    };
    match preview_page(&req, &state, &viewer, form.clone(), None).await {
        Ok(r) => r,
        // An event typed by hand that cannot be added: the preview without it, and why.
        Err(e) if form.text("add").is_some() => {
            let mut without = form;
            without.remove("add");
            let r = preview_page(&req, &state, &viewer, without, Some(e)).await;
            respond(&req, &viewer, r)
        }
        Err(e) => {
            let r = super::trips::form_page(&req, &state, &viewer, form, e).await;
            respond(&req, &viewer, r)
        }
    }
}

/// `POST /trips` (the fields of [`IssueForm`] and the CSRF token): issues
/// the trip. From the preview it carries the events kept by hand and the
/// order shown; when the plan made now differs (the facts changed, or the
/// form was edited without updating the preview) nothing is issued and the
/// new preview is shown with 409.
pub async fn issue(req: HttpRequest, state: web::Data<AppState>, body: web::Bytes) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let form = match IssueForm::from_body(&body) {
        Ok(f) => f,
        Err(err) => {
            let r = super::trips::form_page(&req, &state, &viewer, IssueForm::default(), err).await;
            return respond(&req, &viewer, r);
        }
    };
    let result = match trip_request(&form, Day::today()) {
        Ok(trip) => super::trips::issue_page(&req, &state, &viewer, trip).await,
        Err(e) => Err(e),
    };
    match result {
        Ok(r) => r,
        Err(e) if e.status == StatusCode::CONFLICT && form.text("expect").is_some() => {
            let mut again = form;
            again.remove("expect");
            let r = preview_page(&req, &state, &viewer, again, Some(e)).await;
            respond(&req, &viewer, r)
        }
        Err(e) => {
            let r = super::trips::form_page(&req, &state, &viewer, form, e).await;
            respond(&req, &viewer, r)
        }
    }
}
