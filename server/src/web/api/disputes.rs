//! `GET /api/v1/disputes`: events whose counted reports disagree.

use crate::error::Error;
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde_json::{Value, json};

/// Events whose reports disagree, with the reports that count.
pub async fn list(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let state = state.into_inner();
    let out = web::block(move || {
        let p = state.stats.prepared(&state.db, &StatsFilter::default())?;
        let v: Vec<Value> = p
            .loaded
            .statuses
            .iter()
            .filter(|(_, s)| s.status == crate::domain::EventStatus::Disputed)
            .map(|(id, s)| json!({"event_id": id, "note": s.note, "reports": s.counted_reports, "teams": s.teams}))
            .collect();
        Ok::<_, Error>(v)
    })
    .await??;
    Ok(HttpResponse::Ok().json(out))
}
