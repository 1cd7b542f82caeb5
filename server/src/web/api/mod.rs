//! JSON API under `/api/v1`.

mod adjudications;
mod alerts;
pub mod bundles;
mod disputes;
mod events;
mod exports;
mod pairings;
mod sources;
mod stats;
pub mod uploads;
mod zones;

use crate::platform::auth::Action;
use crate::web::access::Access;
use actix_web::{HttpResponse, web};

/// The API routes, each with the permission it needs.
pub fn configure(cfg: &mut web::ServiceConfig) {
    use Action::*;
    cfg.route("/sources", web::get().to(sources::list).needs(ViewEvents))
        .route(
            "/sources",
            web::post().to(sources::add).needs(ManageSources),
        )
        .route(
            "/alerts",
            web::post().to(alerts::import).needs(ImportAlerts),
        )
        .route("/zones", web::get().to(zones::list).needs(ViewEvents))
        .route("/zones", web::post().to(zones::import).needs(ImportZones))
        .route("/events", web::get().to(events::list).needs(ViewEvents))
        .route("/events/{id}", web::get().to(events::one).needs(ViewEvents))
        .route("/stats", web::get().to(stats::all).needs(ViewStatistics))
        .route(
            "/stats/{name}",
            web::get().to(stats::one).needs(ViewStatistics),
        )
        .route(
            "/disputes",
            web::get().to(disputes::list).needs(ViewStatistics),
        )
        .route(
            "/events/{id}/adjudications",
            web::post().to(adjudications::adjudicate).needs(Adjudicate),
        )
        .route(
            "/exports/events.geojson",
            web::get().to(exports::events).needs(Export),
        )
        .route("/teams", web::get().to(bundles::teams).needs(ViewEvents))
        .route(
            "/teams",
            web::post().to(bundles::add_team).needs(ManageTeams),
        )
        .route(
            "/bundles",
            web::get().to(bundles::list).needs(FetchOwnBundle),
        )
        .route(
            "/bundles",
            web::post().to(bundles::issue).needs(IssueBundle),
        )
        .route(
            "/bundles/preview",
            web::post().to(bundles::preview).needs(IssueBundle),
        )
        .route(
            "/bundles/{id}",
            web::get().to(bundles::one).needs(FetchOwnBundle),
        )
        .route(
            "/bundles/{id}/download",
            web::get().to(bundles::download).needs(FetchOwnBundle),
        )
        .route(
            "/bundles/{id}/cancel",
            web::post().to(bundles::cancel).needs(CancelBundle),
        )
        .configure(pairings::configure)
        .configure(uploads::configure);
}

pub async fn health() -> HttpResponse {
    HttpResponse::Ok().json(serde_json::json!({"status": "ok"}))
}
