//! JSON API under `/api/v1`.

mod alerts;
pub mod bundles;
mod events;
mod sources;
mod stats;
pub mod uploads;
mod zones;

use actix_web::{HttpResponse, web};

pub fn configure(cfg: &mut web::ServiceConfig) {
    cfg.route("/sources", web::get().to(sources::list))
        .route("/sources", web::post().to(sources::add))
        .route("/alerts", web::post().to(alerts::import))
        .route("/zones", web::get().to(zones::list))
        .route("/zones", web::post().to(zones::import))
        .route("/events", web::get().to(events::list))
        .route("/events/{id}", web::get().to(events::one))
        .route("/stats", web::get().to(stats::all))
        .route("/stats/{name}", web::get().to(stats::one))
        .route("/disputes", web::get().to(stats::disputes))
        .route(
            "/events/{id}/adjudications",
            web::post().to(stats::adjudicate),
        )
        .route(
            "/exports/events.geojson",
            web::get().to(stats::export_events),
        )
        .route("/teams", web::get().to(bundles::teams))
        .route("/teams", web::post().to(bundles::add_team))
        .route("/bundles", web::get().to(bundles::list))
        .route("/bundles", web::post().to(bundles::issue))
        .route("/bundles/{id}", web::get().to(bundles::one))
        .route("/bundles/{id}/download", web::get().to(bundles::download))
        .route("/bundles/{id}/cancel", web::post().to(bundles::cancel))
        .configure(uploads::configure);
}

pub async fn health() -> HttpResponse {
    HttpResponse::Ok().json(serde_json::json!({"status": "ok"}))
}
