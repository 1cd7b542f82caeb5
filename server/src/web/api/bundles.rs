//! Teams and bundles:
//! `GET/POST /api/v1/teams`, `GET/POST /api/v1/bundles`,
//! `POST /api/v1/bundles/preview` (the plan, nothing stored),
//! `GET /api/v1/bundles/{id}`, `GET /api/v1/bundles/{id}/download`,
//! `POST /api/v1/bundles/{id}/cancel`.

use crate::domain::{BundleMode, Confidence, Day, LonLat, TeamName};
use crate::error::Error;
use crate::planning::{TripRequest, cancel_bundle, issue_bundle, plan_preview};
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde::Deserialize;
use serde_json::json;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NewTeam {
    name: String,
}

pub async fn teams(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let db = state.db.clone();
    Ok(HttpResponse::Ok().json(web::block(move || db.read(|r| r.teams())).await??))
}

pub async fn add_team(
    state: web::Data<AppState>,
    body: web::Json<NewTeam>,
) -> Result<HttpResponse, ApiError> {
    let name = TeamName::parse(&body.name).map_err(Error::Invalid)?;
    let db = state.db.clone();
    let t = web::block(move || db.write(|tx| tx.add_team(name.as_str()))).await??;
    Ok(HttpResponse::Created().json(t))
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct Start {
    pub(crate) lat: f64,
    pub(crate) lon: f64,
    pub(crate) name: Option<String>,
}

/// The body of `POST /api/v1/bundles`.
#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct IssueBody {
    pub(crate) team: String,
    pub(crate) start: Start,
    pub(crate) mode: Option<String>,
    pub(crate) zone: Option<String>,
    /// A GeoJSON Polygon or MultiPolygon geometry.
    pub(crate) extent: Option<serde_json::Value>,
    pub(crate) from: Option<String>,
    pub(crate) to: Option<String>,
    pub(crate) source: Option<String>,
    pub(crate) confidence: Option<String>,
    pub(crate) min_area_ha: Option<f64>,
    /// Only events with one of these statuses.
    pub(crate) status: Option<Vec<String>>,
    pub(crate) max: Option<usize>,
    pub(crate) margin: Option<f64>,
    pub(crate) controls: Option<usize>,
    pub(crate) control_min_distance_m: Option<f64>,
    pub(crate) seed: Option<u64>,
    pub(crate) walking_kmh: Option<f64>,
    pub(crate) due_days: Option<i64>,
    pub(crate) expires_days: Option<i64>,
    pub(crate) as_of: Option<String>,
    /// Events chosen by hand, by code (`K0417`) or id, in this order:
    /// instead of the filters' choice (response mode).
    pub(crate) events: Option<Vec<String>>,
    /// The stop codes in visiting order a preview showed: issuing refuses
    /// with 409 Conflict, storing nothing, when the plan made now differs.
    pub(crate) expect_order: Option<Vec<String>>,
}

fn day(name: &str, v: &Option<String>) -> Result<Option<Day>, Error> {
    v.as_deref()
        .map(|s| Day::parse(s).map_err(|m| Error::Invalid(format!("field '{name}': {m}"))))
        .transpose()
}

/// Turn the body into a validated trip request.
pub fn trip_request(b: IssueBody) -> Result<TripRequest, Error> {
    let start = LonLat::new(b.start.lon, b.start.lat)
        .map_err(|m| Error::Invalid(format!("field 'start': {m}")))?;
    let mut r = TripRequest::response(&b.team, start);
    if let Some(n) = b.start.name {
        r.start_name = n;
    }
    if let Some(m) = &b.mode {
        r.mode = m
            .parse::<BundleMode>()
            .map_err(|e| Error::Invalid(e.to_string()))?;
    }
    r.zone = b.zone;
    r.extent = match b.extent {
        None => None,
        Some(v) => Some(
            crate::alerts::events::parse_multipolygon(&v.to_string()).ok_or_else(|| {
                Error::Invalid("field 'extent': expected a GeoJSON Polygon or MultiPolygon".into())
            })?,
        ),
    };
    r.from = day("from", &b.from)?;
    r.to = day("to", &b.to)?;
    r.source = b.source;
    r.confidence = match b.confidence.as_deref() {
        None => None,
        Some("tentative") => Some(Confidence::Tentative),
        Some("confirmed") => Some(Confidence::Confirmed),
        Some(o) => {
            return Err(Error::Invalid(format!(
                "field 'confidence': '{o}' is not tentative or confirmed"
            )));
        }
    };
    r.min_area_ha = b.min_area_ha;
    r.statuses = b.status.unwrap_or_default();
    r.max = b.max;
    if let Some(m) = b.margin {
        r.margin = m;
    }
    r.controls = b.controls.unwrap_or(0);
    if let Some(d) = b.control_min_distance_m {
        r.control_min_distance_m = d;
    }
    r.seed = b.seed;
    if let Some(w) = b.walking_kmh {
        r.walking_kmh = w;
    }
    if let Some(d) = b.due_days {
        r.due_days = d;
    }
    if let Some(d) = b.expires_days {
        r.expires_days = d;
    }
    if let Some(d) = day("as_of", &b.as_of)? {
        r.as_of = d;
    }
    r.events = b
        .events
        .map(|v| {
            v.iter()
                .map(|e| {
                    crate::planning::select::parse_event_ref(e)
                        .map_err(|m| Error::Invalid(format!("field 'events': {m}")))
                })
                .collect::<Result<Vec<i64>, Error>>()
        })
        .transpose()?;
    r.expect_order = b.expect_order;
    Ok(r)
}

pub async fn issue(
    state: web::Data<AppState>,
    body: web::Json<IssueBody>,
) -> Result<HttpResponse, ApiError> {
    let mut req = trip_request(body.into_inner())?;
    let state = state.into_inner();
    let out = web::block(move || {
        if !req.statuses.is_empty() {
            req.reconciled = Some(crate::statistics::kept::event_statuses(&state.db)?);
        }
        issue_bundle(&state.db, &state.data_dir, &state.settings.get(), &req)
    })
    .await??;
    let id = out.bundle.id.clone();
    Ok(HttpResponse::Created()
        .insert_header(("Location", format!("/api/v1/bundles/{id}")))
        .json(json!({"bundle": out, "download": format!("/api/v1/bundles/{id}/download")})))
}

/// `POST /api/v1/bundles/preview`: the trip the body would issue (stops in
/// visiting order, route length, the ids to send back as `events` and the
/// codes as `expect_order`), planned without storing anything. Without a
/// seed one is drawn and returned, so that issuing with it gives the same plan.
pub async fn preview(
    state: web::Data<AppState>,
    body: web::Json<IssueBody>,
) -> Result<HttpResponse, ApiError> {
    let mut req = trip_request(body.into_inner())?;
    req.seed = Some(req.seed.unwrap_or_else(|| rand::random::<u64>() >> 1));
    let state = state.into_inner();
    let plan = web::block(move || {
        if !req.statuses.is_empty() {
            req.reconciled = Some(crate::statistics::kept::event_statuses(&state.db)?);
        }
        plan_preview(&state.db, &state.settings.get(), &req)
    })
    .await??;
    let expect: Vec<&str> = plan.stops.iter().map(|s| s.code.as_str()).collect();
    Ok(HttpResponse::Ok().json(json!({"plan": plan, "expect_order": expect})))
}

/// The one bundle a phone's credential from pairing may see, if it is one.
pub(crate) fn paired_of(req: &actix_web::HttpRequest) -> Option<String> {
    use actix_web::HttpMessage;
    req.extensions()
        .get::<crate::platform::auth::PairedBundle>()
        .map(|p| p.0.clone())
}

/// The team a request speaks for, when it holds a team token.
fn team_of(req: &actix_web::HttpRequest) -> Option<String> {
    use actix_web::HttpMessage;
    match req.extensions().get::<crate::platform::auth::Identity>() {
        Some(crate::platform::auth::Identity::Team { team_name, .. }) => Some(team_name.clone()),
        _ => None,
    }
}

pub async fn list(
    req: actix_web::HttpRequest,
    state: web::Data<AppState>,
) -> Result<HttpResponse, ApiError> {
    let db = state.db.clone();
    let mut v = web::block(move || db.read(|r| r.bundles())).await??;
    // A team token sees only its own team's bundles, and not cancelled ones.
    if let Some(team) = team_of(&req) {
        v.retain(|b| b.team == team && b.cancelled_at.is_none());
    }
    if let Some(only) = paired_of(&req) {
        v.retain(|b| b.id == only);
    }
    Ok(HttpResponse::Ok().json(v))
}

fn bundle_id(raw: &str) -> Result<String, Error> {
    uuid::Uuid::parse_str(raw)
        .map(|u| u.to_string())
        .map_err(|_| Error::Invalid(format!("bundle id '{raw}' is not a UUID")))
}

/// A bundle's record and stops: for the office, and for a team token its
/// own team's bundles (the same facts its bundle file holds; another
/// team's bundle is unknown to it).
pub async fn one(
    req: actix_web::HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> Result<HttpResponse, ApiError> {
    let id = bundle_id(&path)?;
    if paired_of(&req).is_some_and(|p| p != id) {
        return Err(Error::NotFound(format!("no bundle {id}")).into());
    }
    let team = team_of(&req);
    let db = state.db.clone();
    let (b, items) = web::block(move || {
        let b = db
            .read(|r| r.bundle(&id))?
            .filter(|b| team.as_ref().is_none_or(|t| t == &b.team))
            .ok_or_else(|| Error::NotFound(format!("no bundle {id}")))?;
        let items = db.read(|r| r.bundle_items(&id))?;
        Ok::<_, Error>((b, items))
    })
    .await??;
    Ok(HttpResponse::Ok().json(json!({"bundle": b, "items": items})))
}

/// The bundle file. It holds the team's upload key (the return signing
/// key), so only the team it was issued to and those who issue bundles
/// (coordinators, admins) may download it; a manager sees the bundle's
/// record and stops, not the file.
pub async fn download(
    req: actix_web::HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> Result<HttpResponse, ApiError> {
    use actix_web::HttpMessage;
    let id = bundle_id(&path)?;
    if paired_of(&req).is_some_and(|p| p != id) {
        return Err(Error::NotFound(format!("no bundle {id}")).into());
    }
    let team = team_of(&req);
    let identity = req
        .extensions()
        .get::<crate::platform::auth::Identity>()
        .cloned()
        .unwrap_or(crate::platform::auth::Identity::Anonymous);
    let state = state.into_inner();
    let data_dir = state.data_dir.clone();
    let saved_as = format!("{id}.zip");
    let name = web::block(move || {
        let b = state
            .db
            .read(|r| r.bundle(&id))?
            .ok_or_else(|| Error::NotFound(format!("no bundle {id}")))?;
        if team.as_ref().is_some_and(|t| t != &b.team) {
            return Err(Error::NotFound(format!("no bundle {id}")));
        }
        if !crate::platform::auth::may_fetch_bundle(&identity, &b.team) {
            return Err(Error::Refused(
                "a bundle file holds its team's upload key: only that team, coordinators and admins may download it".into(),
            ));
        }
        if b.cancelled_at.is_some() {
            return Err(Error::Conflict(format!("bundle {id} was cancelled")));
        }
        Ok(b.file_name)
    })
    .await??;
    let key = crate::planning::issue::bundle_key(&name);
    let (size, body) = crate::web::evidence_stream(&data_dir, &key).await?;
    // Stored under its SHA-256; saved under the bundle's id.
    Ok(HttpResponse::Ok()
        .content_type("application/zip")
        .insert_header((
            "Content-Disposition",
            format!("attachment; filename=\"{saved_as}\""),
        ))
        .insert_header(("Cache-Control", "no-store"))
        .no_chunking(size)
        .streaming(body))
}

pub async fn cancel(
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> Result<HttpResponse, ApiError> {
    let id = bundle_id(&path)?;
    let db = state.db.clone();
    let idc = id.clone();
    web::block(move || cancel_bundle(&db, &idc)).await??;
    Ok(HttpResponse::Ok().json(json!({"cancelled": id})))
}
