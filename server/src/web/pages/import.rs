//! `/import`: forms to upload an alert file (source, format, skip invalid
//! rows) and a zone file, and the result of each on the same page. The
//! files go through the same services as the API
//! ([`crate::alerts::events::import_alerts`], [`crate::alerts::events::import_zones`]);
//! a refused file shows every error with its line number and imports
//! nothing.

use super::common::{Layout, PageError, Viewer, error_page, fixed, html};
use super::form::{FileSpec, Parts, human_bytes, read_parts};
use crate::alerts::events::{
    ImportOutcome, ImportRequest, ZoneOutcome, import_alerts, import_zones,
};
use crate::alerts::import::{Format, ReadOptions};
use crate::domain::{ConfidenceMap, SourceName};
use crate::platform::auth::Action;
use crate::web::AppState;
use actix_multipart::Multipart;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;

/// Largest alert file accepted by the form (the API's body limit).
pub const MAX_ALERT_FILE_BYTES: usize = crate::web::MAX_UPLOAD_BYTES;
/// Largest zone file accepted by the form (our choice: a detailed
/// boundary file of a few reserves is well under this).
pub const MAX_ZONE_FILE_BYTES: usize = 16 * 1024 * 1024;

struct SourceOption {
    name: String,
    selected: bool,
}

struct AlertResult {
    file: String,
    source: String,
    rows_read: usize,
    imported: usize,
    duplicates: usize,
    skipped: usize,
    skipped_rows: Vec<String>,
    events_created: usize,
    events_grown: usize,
    events_merged: usize,
    warnings: Vec<String>,
}

struct ZoneResult {
    zones: String,
    events_relinked: usize,
}

#[derive(Template)]
#[template(path = "pages/import.html")]
struct ImportPage {
    layout: Layout,
    sources: Vec<SourceOption>,
    alert_limit: String,
    zone_limit: String,
    may_import_zones: bool,
    error: Option<PageError>,
    alerts: Option<AlertResult>,
    zones: Option<ZoneResult>,
    pixel_sizes: String,
}

/// Which result the page shows.
enum Shown {
    Nothing,
    Alerts(ImportOutcome),
    Zones(ZoneOutcome),
    Error(PageError),
}

async fn render(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    chosen: Option<&str>,
    shown: Shown,
) -> HttpResponse {
    let db = state.db.clone();
    let sources = match web::block(move || db.read(|r| r.sources())).await {
        Ok(Ok(s)) => s,
        Ok(Err(e)) => return error_page(req, viewer, &e.into()),
        Err(e) => return error_page(req, viewer, &e.into()),
    };
    let pixel_sizes = sources
        .iter()
        .map(|s| {
            format!(
                "{} ({} m pixels, revisit {} days)",
                s.name,
                fixed(s.pixel_size_m, 0),
                s.revisit_days
            )
        })
        .collect::<Vec<_>>()
        .join("; ");
    let mut page = ImportPage {
        layout: Layout::new(
            req,
            viewer,
            &crate::web::i18n::tr_of(req).t("import-title"),
            "/import",
        ),
        sources: sources
            .iter()
            .map(|s| SourceOption {
                selected: chosen == Some(s.name.as_str()),
                name: s.name.clone(),
            })
            .collect(),
        alert_limit: human_bytes(MAX_ALERT_FILE_BYTES as u64),
        zone_limit: human_bytes(MAX_ZONE_FILE_BYTES as u64),
        may_import_zones: viewer.may(Action::ImportZones),
        error: None,
        alerts: None,
        zones: None,
        pixel_sizes,
    };
    let mut status = StatusCode::OK;
    match shown {
        Shown::Nothing => {}
        Shown::Alerts(o) => {
            page.alerts = Some(AlertResult {
                skipped_rows: o.skipped_rows.iter().map(|r| r.to_string()).collect(),
                file: o.file,
                source: o.source,
                rows_read: o.rows_read,
                imported: o.imported,
                duplicates: o.duplicates,
                skipped: o.skipped,
                events_created: o.events_created,
                events_grown: o.events_grown,
                events_merged: o.events_merged,
                warnings: o.warnings,
            })
        }
        Shown::Zones(z) => {
            page.zones = Some(ZoneResult {
                zones: z.zones.join(", "),
                events_relinked: z.events_relinked,
            })
        }
        Shown::Error(e) => {
            status = e.status;
            page.error = Some(e);
        }
    }
    match page.render() {
        Ok(body) => html(status, body),
        Err(e) => error_page(req, viewer, &e.into()),
    }
}

/// `GET /import`.
pub async fn form(req: HttpRequest, state: web::Data<AppState>) -> HttpResponse {
    let viewer = Viewer::of(&req);
    render(&req, &state, &viewer, None, Shown::Nothing).await
}

/// A quick look at the bytes: a file with NUL bytes near its start is not
/// CSV or GeoJSON text.
pub fn looks_binary(bytes: &[u8]) -> bool {
    bytes.iter().take(8192).any(|b| *b == 0)
}

fn file_of(parts: &mut Parts, field: &str, what: &str) -> Result<(String, Vec<u8>), PageError> {
    let f = parts.files.remove(field).unwrap_or_default();
    if f.bytes.is_empty() {
        return Err(PageError::bad_request(format!(
            "No {what} was sent, or it is empty: choose a file and try again."
        )));
    }
    if looks_binary(&f.bytes) {
        return Err(PageError::new(
            StatusCode::UNSUPPORTED_MEDIA_TYPE,
            format!(
                "'{}' is not a text file: the {what} must be CSV or GeoJSON text.",
                f.file_name
            ),
        ));
    }
    let name = if f.file_name.trim().is_empty() {
        "upload".to_string()
    } else {
        f.file_name
    };
    Ok((name, f.bytes))
}

async fn import_alert_file(state: &AppState, mut parts: Parts) -> Result<ImportOutcome, PageError> {
    let source = parts
        .text("source")
        .ok_or_else(|| PageError::bad_request("Choose the source of the alerts."))?;
    let source = SourceName::parse(&source).map_err(PageError::bad_request)?;
    let (file_name, bytes) = file_of(&mut parts, "file", "alert file")?;
    let format = match parts.text("format").as_deref() {
        None | Some("auto") => Format::detect(&file_name, &bytes),
        Some(f) => Format::parse(f).map_err(PageError::bad_request)?,
    };
    let threshold = super::common::opt_number::<f64>(
        "Confidence threshold",
        &parts.text("confidence_threshold"),
    )?;
    let skip_invalid = parts.checked("skip_invalid");
    let state = state.clone();
    let outcome = web::block(move || {
        let known = state.db.read(|r| r.source_by_name(source.as_str()))?;
        if known.is_none() {
            return Err(crate::Error::NotFound(format!("unknown source '{source}'")));
        }
        let req = ImportRequest {
            source: &source,
            file_name: &file_name,
            bytes: &bytes,
            format,
            read: ReadOptions {
                lon_column: None,
                lat_column: None,
                date_column: None,
                confidence_column: None,
                confidence: ConfidenceMap {
                    numeric_threshold: threshold,
                },
                not_after: None,
            },
            skip_invalid,
        };
        import_alerts(&state.db, &req, &state.settings.get().cluster)
    })
    .await??;
    Ok(outcome)
}

/// `POST /import/alerts` (multipart: `source`, `format`, `skip_invalid`,
/// `confidence_threshold`, `file`).
pub async fn alerts(req: HttpRequest, state: web::Data<AppState>, mp: Multipart) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let spec = [FileSpec {
        field: "file",
        limit: MAX_ALERT_FILE_BYTES,
        label: "alert file",
    }];
    let parts = match read_parts(mp, &spec).await {
        Ok(p) => p,
        Err(e) => return render(&req, &state, &viewer, None, Shown::Error(e)).await,
    };
    let chosen = parts.text("source");
    let shown = match import_alert_file(&state, parts).await {
        Ok(o) => Shown::Alerts(o),
        Err(e) => Shown::Error(e),
    };
    render(&req, &state, &viewer, chosen.as_deref(), shown).await
}

/// `POST /import/zones` (multipart: `file`).
pub async fn zones(req: HttpRequest, state: web::Data<AppState>, mp: Multipart) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let spec = [FileSpec {
        field: "file",
        limit: MAX_ZONE_FILE_BYTES,
        label: "zone file",
    }];
    let result = async {
        let mut parts = read_parts(mp, &spec).await?;
        let (file_name, bytes) = file_of(&mut parts, "file", "zone file")?;
        let db = state.db.clone();
        Ok::<_, PageError>(web::block(move || import_zones(&db, &file_name, &bytes)).await??)
    }
    .await;
    let shown = match result {
        Ok(z) => Shown::Zones(z),
        Err(e) => Shown::Error(e),
    };
    render(&req, &state, &viewer, None, shown).await
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binary_files_are_told_apart_from_text() {
        // PNG signature (PNG specification, 3rd ed., §5.2) holds no NUL, but its IHDR length does.
        let png = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13];
        assert!(looks_binary(&png));
        assert!(!looks_binary(b"lon,lat,date\n1,2,2026-01-01\n"));
    }
}
