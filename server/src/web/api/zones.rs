//! `GET/POST /api/v1/zones` (POST takes a GeoJSON FeatureCollection).

use crate::alerts::events::import_zones;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde_json::json;

pub async fn list(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let db = state.db.clone();
    let zones = web::block(move || db.read(|r| r.zones())).await??;
    let features: Vec<_> = zones
        .iter()
        .map(|z| {
            json!({
                "type": "Feature",
                "id": z.id,
                "geometry": serde_json::from_str::<serde_json::Value>(&z.geometry).unwrap_or_default(),
                "properties": {"name": z.name, "priority": z.priority},
            })
        })
        .collect();
    Ok(HttpResponse::Ok().json(json!({"type": "FeatureCollection", "features": features})))
}

pub async fn import(
    state: web::Data<AppState>,
    body: web::Bytes,
) -> Result<HttpResponse, ApiError> {
    let db = state.db.clone();
    let out = web::block(move || import_zones(&db, "upload", &body)).await??;
    Ok(HttpResponse::Ok().json(out))
}
