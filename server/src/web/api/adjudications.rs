//! `POST /api/v1/events/{id}/adjudications`: a manager's ruling on an event
//! (checked and stored by [`crate::web::adjudication`], as the disputes page
//! does).

use crate::error::Error;
use crate::web::AppState;
use crate::web::adjudication::{self, BadField, MAX_BY_CHARS, MAX_REASON_CHARS, Ruling};
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AdjudicationBody {
    outcome: String,
    reason: String,
    by: String,
}

/// The refusal of `field`, naming the JSON field.
fn refused(field: BadField, b: &AdjudicationBody) -> Error {
    Error::Invalid(match field {
        BadField::Outcome => format!(
            "field 'outcome': '{}' is not confirmed, false_alarm or inconclusive (the outcomes that settle a dispute)",
            b.outcome
        ),
        BadField::Reason => {
            format!("field 'reason': say why, in 1 to {MAX_REASON_CHARS} characters")
        }
        BadField::By => format!("field 'by': who decided, 1 to {MAX_BY_CHARS} characters"),
    })
}

pub async fn adjudicate(
    state: web::Data<AppState>,
    path: web::Path<String>,
    body: web::Json<AdjudicationBody>,
) -> Result<HttpResponse, ApiError> {
    let id: i64 = path
        .parse()
        .map_err(|_| Error::Invalid(format!("event id '{path}' is not a number")))?;
    let b = body.into_inner();
    let ruling = Ruling::check(&b.outcome, &b.reason, &b.by).map_err(|f| refused(f, &b))?;
    let db = state.db.clone();
    let row = web::block(move || adjudication::record(&db, id, &ruling)).await??;
    Ok(HttpResponse::Created().json(row))
}
