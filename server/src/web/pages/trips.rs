//! `/trips`: the bundles issued, returned and cancelled (download links, a
//! cancel button each) and the form to issue one; `POST /trips` issues a
//! bundle through [`crate::planning::issue_bundle`] and shows the route
//! preview map and the download link; `POST /trips/{id}/cancel` cancels.

use super::common::{
    Layout, PageError, Viewer, fixed, html, local_text, non_empty, page, respond, see_other,
};
use super::events::Choice;
use super::trip_form::{FormView, IssueForm};
use super::trip_page::{
    JustIssued, PairingView, bundle_id, facts_of, issued_response, load_trip, trip_page,
};
use crate::error::Error;
use crate::planning::{
    IssuedBundle, TripRequest, TripState, cancel_bundle, issue_bundle_in, trip_state,
};
use crate::platform::auth::Action;
use crate::platform::storage::{BundleRecord, Team, ZoneRecord};
use crate::web::AppState;
use crate::web::pairing;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;
use std::collections::HashMap;

struct BundleRow {
    id: String,
    team: String,
    issued: String,
    /// RFC 3339, for sorting (latest first).
    issued_at: String,
    due: String,
    events: i64,
    controls: i64,
    route_km: String,
    state: TripState,
    /// The catalogue ids of the state and the mode.
    state_id: String,
    mode_id: String,
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
    /// Bundles before the list filters.
    all: usize,
    states: Vec<Choice>,
    filter_teams: Vec<Choice>,
    teams: Vec<Choice>,
    zones: Vec<Choice>,
    sources: Vec<Choice>,
    status_choices: Vec<Choice>,
    assessment: bool,
    f: FormView,
    may_issue: bool,
    error: Option<PageError>,
    cancelled: Option<String>,
}

#[derive(Debug, Deserialize, Default, Clone)]
pub struct TripsQuery {
    pub cancelled: Option<String>,
    /// Only trips in this state ([`TripState::as_str`]).
    pub state: Option<String>,
    /// Only this team's trips.
    pub team: Option<String>,
}

/// The list filters as typed, checked: (state, team).
fn list_filters(q: &TripsQuery) -> Result<(Option<TripState>, Option<String>), PageError> {
    let state = match non_empty(&q.state) {
        None => None,
        Some(s) => Some(TripState::parse(&s).ok_or_else(|| {
            let one_of = TripState::ALL.map(TripState::as_str).join(", ");
            let e = PageError::bad_request(format!(
                "State: '{s}' is not a trip state (one of {one_of})"
            ));
            e.worded("why-trip-state", &[("value", &s), ("states", &one_of)])
        })?),
    };
    Ok((state, non_empty(&q.team)))
}

async fn trips_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    form: IssueForm,
    error: Option<PageError>,
    q: TripsQuery,
) -> Result<HttpResponse, PageError> {
    let (want_state, want_team) = list_filters(&q)?;
    let db = state.db.clone();
    let (bundles, counts, reported, teams, (zones, sources)) = web::block(move || {
        db.read(|r| {
            Ok((
                r.bundles()?,
                r.bundle_return_counts()?,
                r.bundle_stops_reported()?,
                r.teams()?,
                (r.zones()?, r.sources()?),
            ))
        })
    })
    .await??;
    let may_cancel = viewer.may(Action::CancelBundle);
    let mut form = form;
    start_at_last_trip(&mut form, &bundles);
    let may = (may_cancel, viewer.may(Action::IssueBundle));
    let mut rows = bundle_rows(
        &bundles,
        (&counts, &reported),
        may,
        chrono::Utc::now(),
        &state.settings.get(),
    );
    let all = rows.len();
    rows.retain(|r| {
        want_state.is_none_or(|s| r.state == s) && want_team.as_ref().is_none_or(|t| &r.team == t)
    });
    let status = error.as_ref().map_or(StatusCode::OK, |e| e.status);
    let layout = Layout::new(
        req,
        viewer,
        &crate::web::i18n::tr_of(req).t("trips-title"),
        "/trips",
    );
    let tr = &layout.tr;
    let t = TripsPage {
        bundles: rows,
        all,
        states: TripState::ALL
            .iter()
            .map(|s| Choice {
                value: s.as_str().into(),
                label: tr.t(&super::views::state_id(*s)),
                selected: want_state == Some(*s),
            })
            .collect(),
        filter_teams: teams
            .iter()
            .map(|t| Choice {
                value: t.name.clone(),
                label: t.name.clone(),
                selected: want_team.as_deref() == Some(t.name.as_str()),
            })
            .collect(),
        teams: team_choices(&teams, &form),
        zones: zone_choices(&zones, &form),
        sources: sources
            .iter()
            .map(|x| Choice {
                selected: form.text("source").as_deref() == Some(x.name.as_str()),
                value: x.name.clone(),
                label: x.name.clone(),
            })
            .collect(),
        status_choices: crate::domain::EventStatus::ALL
            .iter()
            .map(|x| Choice {
                selected: form.all("status").iter().any(|v| v == x.as_str()),
                value: x.as_str().into(),
                label: tr.t(&super::views::status_id(*x)),
            })
            .collect(),
        assessment: form.text("mode").as_deref() == Some("assessment"),
        f: FormView::of(&form),
        may_issue: viewer.may(Action::IssueBundle),
        error,
        cancelled: q.cancelled,
        layout,
    };
    Ok(html(status, t.render()?))
}

/// Without a start typed, starts where the last trip started (usually the
/// field station).
fn start_at_last_trip(form: &mut IssueForm, bundles: &[BundleRecord]) {
    if form.text("start_lat").is_none()
        && form.text("start_lon").is_none()
        && let Some(b) = bundles.iter().max_by(|a, b| a.issued_at.cmp(&b.issued_at))
    {
        form.set("start_lat", &fixed(b.start_lat, 6));
        form.set("start_lon", &fixed(b.start_lon, 6));
    }
}

/// Whether a bundle's RFC 3339 expiry is still ahead of `now`.
fn not_expired(expires_at: &str, now: chrono::DateTime<chrono::Utc>) -> bool {
    chrono::DateTime::parse_from_rfc3339(expires_at).is_ok_and(|t| t > now)
}

/// Per bundle id: (returns received, reports stored).
type ReturnCounts = HashMap<String, (i64, i64)>;

/// One table row per bundle, latest issued first; `may` is (may cancel,
/// may pair a phone).
fn bundle_rows(
    bundles: &[BundleRecord],
    (counts, reported): (&ReturnCounts, &HashMap<String, i64>),
    (may_cancel, may_pair): (bool, bool),
    now: chrono::DateTime<chrono::Utc>,
    settings: &crate::platform::settings::Settings,
) -> Vec<BundleRow> {
    let mut rows: Vec<BundleRow> = bundles
        .iter()
        .map(|b| {
            let (returns, reports) = counts.get(&b.id).copied().unwrap_or((0, 0));
            let stops_reported = reported.get(&b.id).copied().unwrap_or(0);
            let state = trip_state(&facts_of(b, returns, stops_reported), now);
            BundleRow {
                id: b.id.clone(),
                team: b.team.clone(),
                mode_id: format!("mode-{}", b.mode),
                issued: local_text(settings, &b.issued_at),
                issued_at: b.issued_at.clone(),
                due: local_text(settings, &b.due_at),
                events: b.events,
                controls: b.controls,
                route_km: fixed(b.route_m / 1000.0, 1),
                state,
                state_id: super::views::state_id(state),
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
    rows.sort_by(|a, b| b.issued_at.cmp(&a.issued_at));
    rows
}

/// The team choices, the form's team selected.
fn team_choices(teams: &[Team], form: &IssueForm) -> Vec<Choice> {
    teams
        .iter()
        .map(|t| Choice {
            selected: form.text("team").as_deref() == Some(t.name.as_str()),
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
            selected: form.text("zone").as_deref() == Some(z.name.as_str()),
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
        let q = q.map_err(super::common::bad_filter)?.into_inner();
        trips_page(&req, &state, &viewer, IssueForm::default(), None, q).await
    }
    .await;
    respond(&req, &viewer, r)
}

/// Issues the trip and shows its page with the first pairing code (201).
pub(super) async fn issue_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    trip: TripRequest,
) -> Result<HttpResponse, PageError> {
    let st = state.clone();
    let (by, link_of) = pairing::request_parts(req);
    let tr = crate::web::i18n::tr_of(req);
    let (out, data, shown) = web::block(move || {
        let mut trip = trip;
        if !trip.statuses.is_empty() {
            trip.reconciled = Some(crate::statistics::kept::event_statuses(&st.db)?);
        }
        let out: IssuedBundle =
            issue_bundle_in(&st.db, &st.data_dir, &st.settings.get(), &trip, tr)?;
        // The bundle is issued whatever happens to its first code; the
        // trip page makes another.
        let shown = pairing::make(&st.db, &out.bundle.id, &by, link_of)
            .inspect_err(|e| tracing::warn!(error = %e, "no pairing code for the new bundle"))
            .ok();
        let data = load_trip(&st, &out.bundle.id)?;
        Ok::<_, Error>((out, data, shown))
    })
    .await??;
    let just = JustIssued {
        walking_hours: fixed(out.walking_hours, 1),
        route_method: out.route_method.clone(),
        route_note: out.route_note.clone(),
        pairing: shown.map(|p| PairingView::of(p, &state.settings.get())),
    };
    let t = trip_page(
        req,
        viewer,
        data,
        chrono::Utc::now(),
        Some(just),
        &state.settings.get(),
    );
    issued_response(&t)
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
            let r = trips_page(
                &req,
                &state,
                &viewer,
                IssueForm::default(),
                Some(e),
                TripsQuery::default(),
            )
            .await;
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
            layout: Layout::new(
                &req,
                &viewer,
                &crate::web::i18n::tr_of(&req).t("pair-page-title"),
                "/trips",
            ),
            id: b.id,
            team: b.team,
            due: local_text(&state.settings.get(), &b.due_at),
            p: PairingView::of(shown, &state.settings.get()),
        };
        let mut resp = page(&t)?;
        *resp.status_mut() = StatusCode::CREATED;
        Ok(resp)
    }
    .await;
    match r {
        Ok(resp) => resp,
        Err(e) => {
            let r = trips_page(
                &req,
                &state,
                &viewer,
                IssueForm::default(),
                Some(e),
                TripsQuery::default(),
            )
            .await;
            respond(&req, &viewer, r)
        }
    }
}

/// The trips page with the issue form as typed and what was wrong with it.
pub(super) async fn form_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    form: IssueForm,
    e: PageError,
) -> Result<HttpResponse, PageError> {
    trips_page(req, state, viewer, form, Some(e), TripsQuery::default()).await
}
