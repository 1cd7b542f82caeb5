//! `POST /api/v1/alerts?source=NAME[&format=csv|geojson][&skip_invalid=true]`
//! with the file as the body; optional column names and a confidence
//! threshold as query parameters, as on the command line.

use crate::alerts::events::{ImportRequest, import_alerts};
use crate::alerts::import::{Format, ReadOptions};
use crate::domain::{ConfidenceMap, SourceName};
use crate::error::Error;
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ImportQuery {
    source: String,
    format: Option<String>,
    file_name: Option<String>,
    #[serde(default)]
    skip_invalid: bool,
    lon_column: Option<String>,
    lat_column: Option<String>,
    date_column: Option<String>,
    confidence_column: Option<String>,
    confidence_threshold: Option<f64>,
}

pub async fn import(
    state: web::Data<AppState>,
    q: web::Query<ImportQuery>,
    body: web::Bytes,
) -> Result<HttpResponse, ApiError> {
    let q = q.into_inner();
    let source = SourceName::parse(&q.source).map_err(Error::Invalid)?;
    if body.is_empty() {
        return Err(Error::Invalid(
            "the request body is empty: send the alert file as the body".into(),
        )
        .into());
    }
    let file_name = q.file_name.unwrap_or_else(|| "upload".into());
    let format = match &q.format {
        Some(f) => Format::parse(f).map_err(Error::Invalid)?,
        None => Format::detect(&file_name, &body),
    };
    let read = ReadOptions {
        lon_column: q.lon_column,
        lat_column: q.lat_column,
        date_column: q.date_column,
        confidence_column: q.confidence_column,
        confidence: ConfidenceMap {
            numeric_threshold: q.confidence_threshold,
        },
        not_after: None,
    };
    let skip_invalid = q.skip_invalid;
    let state = state.into_inner();
    let outcome = web::block(move || {
        let req = ImportRequest {
            source: &source,
            file_name: &file_name,
            bytes: &body,
            format,
            read,
            skip_invalid,
        };
        import_alerts(&state.db, &req, &state.settings.get().cluster)
    })
    .await??;
    Ok(HttpResponse::Ok().json(outcome))
}
