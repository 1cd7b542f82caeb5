//! `GET/POST /api/v1/sources`. Registering goes through
//! `alerts::sources::add_source`, as the `/admin/sources` page and the
//! command line do, so the change is in the administration log with the
//! token or user that made it.

use crate::error::Error;
use crate::platform::admin::Actor;
use crate::platform::auth::{Identity, now_unix};
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpMessage, HttpRequest, HttpResponse, web};
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
    req: HttpRequest,
    state: web::Data<AppState>,
    body: web::Json<NewSource>,
) -> Result<HttpResponse, ApiError> {
    let b = body.into_inner();
    let actor = req
        .extensions()
        .get::<Identity>()
        .and_then(Actor::of)
        .ok_or_else(|| {
            Error::Refused("registering a source needs a user or an API token".into())
        })?;
    let db = state.db.clone();
    let s = web::block(move || {
        crate::alerts::sources::add_source(
            &db,
            &actor,
            &b.name,
            b.pixel_size_m,
            b.revisit_days,
            now_unix(),
        )
    })
    .await??;
    Ok(HttpResponse::Created().json(s))
}
