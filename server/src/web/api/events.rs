//! `GET /api/v1/events` (GeoJSON FeatureCollection, filterable) and
//! `GET /api/v1/events/{id}` (follows merges).

use crate::alerts::events::{RankedEvent, event_feature, priority_of};
use crate::domain::{Day, SourceName, ZoneName};
use crate::error::Error;
use crate::platform::storage::EventFilter;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpRequest, HttpResponse, web};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EventQuery {
    zone: Option<String>,
    from: Option<String>,
    to: Option<String>,
    source: Option<String>,
    min_area_ha: Option<f64>,
    limit: Option<usize>,
    as_of: Option<String>,
}

fn day(name: &str, v: &Option<String>) -> Result<Option<Day>, Error> {
    v.as_deref()
        .map(|s| Day::parse(s).map_err(|m| Error::Invalid(format!("parameter '{name}': {m}"))))
        .transpose()
}

const GEOJSON: &str = "application/geo+json";

pub async fn list(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: web::Query<EventQuery>,
) -> Result<HttpResponse, ApiError> {
    let q = q.into_inner();
    let filter = EventFilter {
        zone: q
            .zone
            .as_deref()
            .map(|z| ZoneName::parse(z).map(|n| n.to_string()))
            .transpose()
            .map_err(Error::Invalid)?,
        from: day("from", &q.from)?,
        to: day("to", &q.to)?,
        source: q
            .source
            .as_deref()
            .map(|s| SourceName::parse(s).map(|n| n.to_string()))
            .transpose()
            .map_err(Error::Invalid)?,
        min_area_ha: q.min_area_ha,
        limit: q.limit,
    };
    let as_of = day("as_of", &q.as_of)?.unwrap_or_else(Day::today);
    // Ranked once per fact change and day; each answer kept as bytes.
    if let Some(s) = state.stats.events.kept(&state.db, &filter, as_of) {
        return Ok(super::stats::kept_response(&req, &s, GEOJSON));
    }
    let state = state.into_inner();
    let served = web::block(move || {
        if let Some(z) = &filter.zone {
            let known = state.db.read(|r| r.zones())?.iter().any(|k| &k.name == z);
            if !known {
                return Err(Error::NotFound(format!("unknown zone '{z}'")));
            }
        }
        let weights = &state.settings.get().priority;
        state
            .stats
            .events
            .served(&state.db, &filter, weights, as_of)
    })
    .await??;
    Ok(super::stats::kept_response(&req, &served, GEOJSON))
}

pub async fn one(
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> Result<HttpResponse, ApiError> {
    let id: i64 = path
        .parse()
        .map_err(|_| Error::Invalid(format!("event id '{path}' is not a number")))?;
    let state = state.into_inner();
    let record = web::block(move || {
        let rec = state
            .db
            .read(|r| r.event_resolved(id))?
            .ok_or_else(|| Error::NotFound(format!("no event {id}")))?;
        let priority = priority_of(&rec, &state.settings.get().priority, Day::today());
        Ok::<_, Error>(RankedEvent {
            record: rec,
            priority,
        })
    })
    .await??;
    let mut f = event_feature(&record);
    f["properties"]["requested_id"] = serde_json::json!(id);
    Ok(HttpResponse::Ok()
        .content_type("application/geo+json")
        .json(f))
}
