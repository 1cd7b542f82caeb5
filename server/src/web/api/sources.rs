//! `GET/POST /api/v1/sources`.

use crate::domain::SourceName;
use crate::error::Error;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NewSource {
    name: String,
    pixel_size_m: f64,
    revisit_days: i64,
}

pub async fn list(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let db = state.db.clone();
    let v = web::block(move || db.read(|r| r.sources())).await??;
    Ok(HttpResponse::Ok().json(v))
}

pub async fn add(
    state: web::Data<AppState>,
    body: web::Json<NewSource>,
) -> Result<HttpResponse, ApiError> {
    let b = body.into_inner();
    let name = SourceName::parse(&b.name).map_err(Error::Invalid)?;
    crate::alerts::events::validate_source(b.pixel_size_m, b.revisit_days)?;
    let db = state.db.clone();
    let s = web::block(move || {
        db.write(|tx| tx.add_source(name.as_str(), b.pixel_size_m, b.revisit_days))
    })
    .await??;
    Ok(HttpResponse::Created().json(s))
}
