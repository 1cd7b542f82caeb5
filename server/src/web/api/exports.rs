//! `GET /api/v1/exports/events.geojson`: every live event with its status.

use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};

/// Events with their status and an evidence summary, as GeoJSON.
pub async fn events(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let state = state.into_inner();
    let body = web::block(move || {
        let p = state.stats.prepared(&state.db, &StatsFilter::default())?;
        crate::statistics::kept::events_with_status(
            &state.db,
            &p.loaded,
            &state.settings.get().priority,
        )
    })
    .await??;
    Ok(HttpResponse::Ok()
        .content_type("application/geo+json")
        .insert_header((
            "Content-Disposition",
            "attachment; filename=\"events.geojson\"",
        ))
        .json(body))
}
