//! `/trips`: the bundles issued, returned and cancelled (download links, a
//! cancel button each) and the form to issue one; `POST /trips` issues a
//! bundle through [`crate::planning::issue_bundle`] and shows the route
//! preview map and the download link; `POST /trips/{id}/cancel` cancels.

use super::common::{
    Layout, PageError, Viewer, fixed, html, local_text, non_empty, opt_number, page, respond,
    see_other,
};
use super::events::Choice;
use super::views::{map_events, map_input, map_zones};
use crate::alerts::events::{RankedEvent, priority_of};
use crate::domain::{BundleMode, Day, LonLat};
use crate::error::Error;
use crate::planning::{IssuedBundle, TripRequest, cancel_bundle, issue_bundle};
use crate::platform::auth::Action;
use crate::platform::settings::Settings;
use crate::platform::storage::{BundleRecord, Team, ZoneRecord};
use crate::web::AppState;
use crate::web::charts::render_map;
use crate::web::pairing::{self, ShownPairing};
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;
use std::collections::{BTreeMap, HashMap};

/// The issue form as typed (every field text, parsed here with messages).
#[derive(Debug, Deserialize, Default, Clone)]
pub struct IssueForm {
    pub team: Option<String>,
    pub mode: Option<String>,
    pub zone: Option<String>,
    pub max: Option<String>,
    pub margin: Option<String>,
    pub controls: Option<String>,
    pub seed: Option<String>,
    pub start_lat: Option<String>,
    pub start_lon: Option<String>,
    pub start_name: Option<String>,
}

/// Turn the form into a trip request; every message names the field.
pub fn trip_request(f: &IssueForm, today: Day) -> Result<TripRequest, PageError> {
    let team = non_empty(&f.team)
        .ok_or_else(|| PageError::bad_request("Team: choose the team that makes the trip."))?;
    let lat = opt_number::<f64>("Start latitude", &f.start_lat)?
        .ok_or_else(|| PageError::bad_request("Start latitude: required (decimal degrees)."))?;
    let lon = opt_number::<f64>("Start longitude", &f.start_lon)?
        .ok_or_else(|| PageError::bad_request("Start longitude: required (decimal degrees)."))?;
    let start = LonLat::new(lon, lat).map_err(|m| PageError::bad_request(format!("Start: {m}")))?;
    let mut r = TripRequest::response(&team, start);
    r.as_of = today;
    if let Some(n) = non_empty(&f.start_name) {
        r.start_name = n;
    }
    if let Some(m) = non_empty(&f.mode) {
        r.mode = m
            .parse::<BundleMode>()
            .map_err(|e| PageError::bad_request(format!("Mode: {e}")))?;
    }
    r.zone = non_empty(&f.zone);
    r.max = opt_number::<usize>("Most events", &f.max)?;
    if r.max == Some(0) {
        return Err(PageError::bad_request("Most events: at least 1."));
    }
    if let Some(m) = opt_number::<f64>("Margin of error", &f.margin)? {
        if !(m > 0.0 && m < 0.5) {
            return Err(PageError::bad_request(format!(
                "Margin of error: {m} is not between 0 and 0.5 (for example 0.1)."
            )));
        }
        r.margin = m;
    }
    r.controls = opt_number::<usize>("Control points", &f.controls)?.unwrap_or(0);
    r.seed = opt_number::<u64>("Seed", &f.seed)?;
    Ok(r)
}

struct BundleRow {
    id: String,
    team: String,
    mode: String,
    issued: String,
    due: String,
    events: i64,
    controls: i64,
    route_km: String,
    state: &'static str,
    returns: i64,
    reports: i64,
    cancellable: bool,
    downloadable: bool,
    pairable: bool,
}

#[derive(Template)]
#[template(path = "pages/trips.html")]
struct TripsPage {
    layout: Layout,
    bundles: Vec<BundleRow>,
    teams: Vec<Choice>,
    zones: Vec<Choice>,
    assessment: bool,
    f: FormView,
    may_issue: bool,
    error: Option<PageError>,
    cancelled: Option<String>,
}

/// The typed values shown again in the form.
struct FormView {
    max: String,
    margin: String,
    controls: String,
    seed: String,
    start_lat: String,
    start_lon: String,
    start_name: String,
}

impl FormView {
    fn of(f: &IssueForm) -> FormView {
        let v = |o: &Option<String>| o.clone().unwrap_or_default();
        FormView {
            max: v(&f.max),
            margin: f.margin.clone().unwrap_or_else(|| "0.1".into()),
            controls: v(&f.controls),
            seed: v(&f.seed),
            start_lat: v(&f.start_lat),
            start_lon: v(&f.start_lon),
            start_name: v(&f.start_name),
        }
    }
}

#[derive(Debug, Deserialize, Default)]
pub struct TripsQuery {
    pub cancelled: Option<String>,
}

async fn trips_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    form: IssueForm,
    error: Option<PageError>,
    cancelled: Option<String>,
) -> Result<HttpResponse, PageError> {
    let db = state.db.clone();
    let (bundles, counts, teams, zones) = web::block(move || {
        db.read(|r| {
            Ok((
                r.bundles()?,
                r.bundle_return_counts()?,
                r.teams()?,
                r.zones()?,
            ))
        })
    })
    .await??;
    let may_cancel = viewer.may(Action::CancelBundle);
    let mut form = form;
    start_at_last_trip(&mut form, &bundles);
    let may = (may_cancel, viewer.may(Action::IssueBundle));
    let rows = bundle_rows(&bundles, &counts, may, chrono::Utc::now(), &state.settings);
    let status = error.as_ref().map_or(StatusCode::OK, |e| e.status);
    let t = TripsPage {
        layout: Layout::new(req, viewer, "Trips", "/trips"),
        bundles: rows,
        teams: team_choices(&teams, &form),
        zones: zone_choices(&zones, &form),
        assessment: form.mode.as_deref() == Some("assessment"),
        f: FormView::of(&form),
        may_issue: viewer.may(Action::IssueBundle),
        error,
        cancelled,
    };
    Ok(html(status, t.render()?))
}

/// Without a start typed, starts where the last trip started (usually the
/// field station).
fn start_at_last_trip(form: &mut IssueForm, bundles: &[BundleRecord]) {
    if form.start_lat.is_none()
        && form.start_lon.is_none()
        && let Some(b) = bundles.iter().max_by(|a, b| a.issued_at.cmp(&b.issued_at))
    {
        form.start_lat = Some(fixed(b.start_lat, 6));
        form.start_lon = Some(fixed(b.start_lon, 6));
    }
}

/// Whether a bundle's RFC 3339 expiry is still ahead of `now`.
fn not_expired(expires_at: &str, now: chrono::DateTime<chrono::Utc>) -> bool {
    chrono::DateTime::parse_from_rfc3339(expires_at).is_ok_and(|t| t > now)
}

/// One table row per bundle, latest issued first; `may` is (may cancel,
/// may pair a phone).
/// When a bundle was issued (its RFC 3339 text read), for ordering.
fn issued_at(b: &BundleRecord) -> Option<chrono::DateTime<chrono::Utc>> {
    chrono::DateTime::parse_from_rfc3339(&b.issued_at)
        .ok()
        .map(|t| t.with_timezone(&chrono::Utc))
}

fn bundle_rows(
    bundles: &[BundleRecord],
    counts: &HashMap<String, (i64, i64)>,
    (may_cancel, may_pair): (bool, bool),
    now: chrono::DateTime<chrono::Utc>,
    settings: &Settings,
) -> Vec<BundleRow> {
    let mut rows: Vec<BundleRow> = bundles
        .iter()
        .map(|b| {
            let (returns, reports) = counts.get(&b.id).copied().unwrap_or((0, 0));
            let state = if b.cancelled_at.is_some() {
                "cancelled"
            } else if returns > 0 {
                "returned"
            } else {
                "issued"
            };
            BundleRow {
                id: b.id.clone(),
                team: b.team.clone(),
                mode: b.mode.clone(),
                issued: local_text(settings, &b.issued_at),
                due: local_text(settings, &b.due_at),
                events: b.events,
                controls: b.controls,
                route_km: fixed(b.route_m / 1000.0, 1),
                state,
                returns,
                reports,
                cancellable: may_cancel && b.cancelled_at.is_none(),
                // The file holds the upload key: offered to those who
                // issue and cancel bundles, not to managers.
                downloadable: may_cancel && b.cancelled_at.is_none(),
                pairable: may_pair && b.cancelled_at.is_none() && not_expired(&b.expires_at, now),
            }
        })
        .collect();
    // Newest first, by the instant (local times do not sort as text across
    // a change of offset).
    let issued: HashMap<&str, _> = bundles
        .iter()
        .map(|b| (b.id.as_str(), issued_at(b)))
        .collect();
    rows.sort_by_key(|r| std::cmp::Reverse(issued.get(r.id.as_str()).copied().flatten()));
    rows
}

/// The team choices, the form's team selected.
fn team_choices(teams: &[Team], form: &IssueForm) -> Vec<Choice> {
    teams
        .iter()
        .map(|t| Choice {
            selected: form.team.as_deref() == Some(t.name.as_str()),
            value: t.name.clone(),
            label: t.name.clone(),
        })
        .collect()
}

/// The zone choices, priority zones marked, the form's zone selected.
fn zone_choices(zones: &[ZoneRecord], form: &IssueForm) -> Vec<Choice> {
    zones
        .iter()
        .map(|z| Choice {
            selected: form.zone.as_deref() == Some(z.name.as_str()),
            value: z.name.clone(),
            label: if z.priority {
                format!("{} (priority)", z.name)
            } else {
                z.name.clone()
            },
        })
        .collect()
}

/// `GET /trips`.
pub async fn list(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<TripsQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let cancelled = q.ok().and_then(|q| q.into_inner().cancelled);
        trips_page(&req, &state, &viewer, IssueForm::default(), None, cancelled).await
    }
    .await;
    respond(&req, &viewer, r)
}

struct ItemRow {
    order: u32,
    code: String,
    kind: String,
    event_id: Option<i64>,
    lat: String,
    lon: String,
    stratum: String,
}

struct StratumRow {
    stratum: String,
    population: u64,
    sample: u64,
    probability: String,
}

#[derive(Template)]
#[template(path = "pages/trip.html")]
struct TripPage {
    layout: Layout,
    id: String,
    team: String,
    mode: String,
    due: String,
    route_km: String,
    walking_hours: String,
    route_method: String,
    route_note: String,
    map: String,
    items: Vec<ItemRow>,
    strata: Vec<StratumRow>,
    pairing: Option<PairingView>,
}

/// A pairing code as the pages show it (`pages/pairing_box.html`).
pub struct PairingView {
    code: String,
    link: String,
    qr_svg: String,
    expires: String,
}

impl PairingView {
    fn of(p: ShownPairing, settings: &Settings) -> PairingView {
        let expires = super::common::local_unix(settings, p.expires_at);
        PairingView {
            code: p.code,
            link: p.link,
            qr_svg: p.qr_svg,
            expires,
        }
    }
}

/// The bundle's events as ranked on the day it was planned for.
fn ranked_events(
    st: &AppState,
    items: &[crate::platform::storage::BundleItem],
    as_of: Day,
) -> Result<Vec<RankedEvent>, Error> {
    let mut events = Vec::new();
    for id in items.iter().filter_map(|i| i.event_id) {
        if let Some(rec) = st.db.read(|r| r.event_resolved(id))? {
            let priority = priority_of(&rec, &st.settings.priority, as_of);
            events.push(RankedEvent {
                record: rec,
                priority,
            });
        }
    }
    Ok(events)
}

async fn issue_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    trip: TripRequest,
) -> Result<HttpResponse, PageError> {
    let st = state.clone();
    let (by, link_of) = pairing::request_parts(req);
    let (out, items, events, zones, shown): (IssuedBundle, _, Vec<RankedEvent>, _, _) =
        web::block(move || {
            let out = issue_bundle(&st.db, &st.data_dir, &st.settings, &trip)?;
            // The bundle is issued whatever happens to its first code; the
            // trips page makes another.
            let shown = pairing::make(&st.db, &out.bundle.id, &by, link_of)
                .inspect_err(|e| tracing::warn!(error = %e, "no pairing code for the new bundle"))
                .ok();
            let (items, zones) = st
                .db
                .read(|r| Ok((r.bundle_items(&out.bundle.id)?, r.zones()?)))?;
            let events = ranked_events(&st, &items, trip.as_of)?;
            Ok::<_, Error>((out, items, events, zones, shown))
        })
        .await??;
    let mut items = items;
    items.sort_by_key(|i| i.visit_order);
    let b = &out.bundle;
    let mut map = map_input(
        &format!(
            "Route of bundle {} for {}",
            &b.id[..8.min(b.id.len())],
            b.team
        ),
        map_zones(&zones),
        map_events(&events, &BTreeMap::new()),
    );
    map.start = Some((b.start_lon, b.start_lat));
    map.route = std::iter::once((b.start_lon, b.start_lat))
        .chain(items.iter().map(|i| (i.lon, i.lat)))
        .collect();
    let t = TripPage {
        layout: Layout::new(req, viewer, "Bundle issued", "/trips"),
        id: b.id.clone(),
        team: b.team.clone(),
        mode: b.mode.clone(),
        due: local_text(&state.settings, &b.due_at),
        route_km: fixed(out.route_m / 1000.0, 2),
        walking_hours: fixed(out.walking_hours, 1),
        route_method: out.route_method.clone(),
        route_note: out.route_note.clone(),
        map: render_map(&map),
        items: items
            .iter()
            .map(|i| ItemRow {
                order: i.visit_order,
                code: i.code.clone(),
                kind: i.kind.to_string(),
                event_id: i.event_id,
                lat: fixed(i.lat, 6),
                lon: fixed(i.lon, 6),
                stratum: i.stratum.clone().unwrap_or_default(),
            })
            .collect(),
        strata: out
            .strata
            .iter()
            .map(|s| StratumRow {
                stratum: s.stratum.clone(),
                population: s.population,
                sample: s.sample,
                probability: fixed(s.inclusion_probability, 4),
            })
            .collect(),
        pairing: shown.map(|p| PairingView::of(p, &state.settings)),
    };
    let mut resp = page(&t)?;
    *resp.status_mut() = StatusCode::CREATED;
    Ok(resp)
}

/// `POST /trips` (form fields of [`IssueForm`] and the CSRF token).
pub async fn issue(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<IssueForm>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let form = match form {
        Ok(f) => f.into_inner(),
        Err(e) => {
            let err = PageError::bad_request(format!("The form could not be read: {e}"));
            let r = trips_page(&req, &state, &viewer, IssueForm::default(), Some(err), None).await;
            return respond(&req, &viewer, r);
        }
    };
    let result = match trip_request(&form, Day::today()) {
        Ok(trip) => issue_page(&req, &state, &viewer, trip).await,
        Err(e) => Err(e),
    };
    match result {
        Ok(r) => r,
        Err(e) => {
            let r = trips_page(&req, &state, &viewer, form, Some(e), None).await;
            respond(&req, &viewer, r)
        }
    }
}

/// The bundle id of a `/trips/{id}/…` path, checked to be a UUID.
fn bundle_id(path: &str) -> Result<String, PageError> {
    uuid::Uuid::parse_str(path)
        .map(|u| u.to_string())
        .map_err(|_| PageError::bad_request(format!("bundle id '{path}' is not a UUID")))
}

/// `POST /trips/{id}/cancel`.
pub async fn cancel(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let id = bundle_id(&path)?;
        let db = state.db.clone();
        let idc = id.clone();
        web::block(move || {
            if db.read(|r| r.bundle(&idc))?.is_none() {
                return Err(Error::NotFound(format!("no bundle {idc}")));
            }
            cancel_bundle(&db, &idc)
        })
        .await??;
        Ok(see_other(&format!("/trips?cancelled={id}")))
    }
    .await;
    match r {
        Ok(resp) => resp,
        Err(e) => {
            let r = trips_page(&req, &state, &viewer, IssueForm::default(), Some(e), None).await;
            respond(&req, &viewer, r)
        }
    }
}

#[derive(Template)]
#[template(path = "pages/pair.html")]
struct PairPage {
    layout: Layout,
    id: String,
    team: String,
    due: String,
    p: PairingView,
}

/// `POST /trips/{id}/pair`: a new pairing code for the bundle, as a QR
/// code and as text.
pub async fn pair(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let id = bundle_id(&path)?;
        let (by, link_of) = pairing::request_parts(&req);
        let db = state.db.clone();
        let (b, shown) = web::block(move || {
            let shown = pairing::make(&db, &id, &by, link_of)?;
            let b = db
                .read(|r| r.bundle(&id))?
                .ok_or_else(|| Error::NotFound(format!("no bundle {id}")))?;
            Ok::<_, Error>((b, shown))
        })
        .await??;
        let t = PairPage {
            layout: Layout::new(&req, &viewer, "Pair a phone", "/trips"),
            id: b.id,
            team: b.team,
            due: local_text(&state.settings, &b.due_at),
            p: PairingView::of(shown, &state.settings),
        };
        let mut resp = page(&t)?;
        *resp.status_mut() = StatusCode::CREATED;
        Ok(resp)
    }
    .await;
    match r {
        Ok(resp) => resp,
        Err(e) => {
            let r = trips_page(&req, &state, &viewer, IssueForm::default(), Some(e), None).await;
            respond(&req, &viewer, r)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn form() -> IssueForm {
        IssueForm {
            team: Some("Team Amber".into()),
            start_lat: Some("-3.5".into()),
            start_lon: Some("-60.25".into()),
            ..IssueForm::default()
        }
    }

    #[test]
    fn a_minimal_form_is_a_response_trip_with_defaults() {
        let day = Day::parse("2026-03-01").unwrap();
        let r = trip_request(&form(), day).unwrap();
        assert_eq!(r.mode, BundleMode::Response);
        assert_eq!((r.start.lon(), r.start.lat()), (-60.25, -3.5));
        assert_eq!(r.as_of, day);
        assert_eq!(r.controls, 0);
        assert_eq!(r.max, None);
    }

    #[test]
    fn bad_fields_are_named() {
        let day = Day::today();
        let mut f = form();
        f.start_lat = Some("95".into());
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .contains("latitude")
        );
        let mut f = form();
        f.margin = Some("0.7".into());
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .starts_with("Margin of error")
        );
        let mut f = form();
        f.team = Some(" ".into());
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .starts_with("Team")
        );
        let mut f = form();
        f.mode = Some("tour".into());
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .starts_with("Mode")
        );
        let mut f = form();
        f.max = Some("ten".into());
        assert_eq!(
            trip_request(&f, day).unwrap_err().status,
            StatusCode::BAD_REQUEST
        );
    }
}
