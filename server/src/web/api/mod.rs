//! JSON API under `/api/v1`.

mod alerts;
mod events;
mod sources;
mod zones;

use actix_web::{HttpResponse, web};

pub fn configure(cfg: &mut web::ServiceConfig) {
    cfg.route("/sources", web::get().to(sources::list))
        .route("/sources", web::post().to(sources::add))
        .route("/alerts", web::post().to(alerts::import))
        .route("/zones", web::get().to(zones::list))
        .route("/zones", web::post().to(zones::import))
        .route("/events", web::get().to(events::list))
        .route("/events/{id}", web::get().to(events::one));
}

pub async fn health() -> HttpResponse {
    HttpResponse::Ok().json(serde_json::json!({"status": "ok"}))
}
