//! `/station`: upload a return package in the browser (at the field station
//! or from a USB stick). The file field is streamed, bounded, into the same
//! durable incoming file the API uses ([`crate::intake::uploads::IncomingFile`])
//! and taken in by [`crate::intake::uploads::take_in_whole`]; the page then
//! lists each report as accepted, duplicate or rejected (with the reason)
//! and its flags.

use super::common::{Layout, PageError, Viewer, html, respond};
use super::form::{field_name, human_bytes, next_chunk, next_field, read_bounded};
use crate::intake::IntakeOptions;
use crate::intake::uploads::{IncomingFile, take_in_whole};
use crate::web::AppState;
use crate::web::pages::common::MAX_TEXT_FIELD_BYTES;
use actix_multipart::Multipart;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;

/// Bytes gathered before each blocking write to the incoming file.
const WRITE_CHUNK: usize = 1 << 20;

/// Largest return package the page accepts (the return format's own limit).
pub fn max_package_bytes() -> u64 {
    IntakeOptions::default().return_limits.max_file_bytes
}

struct ResultRow {
    report_id: String,
    status: String,
    reason: String,
    flags: Vec<String>,
}

struct Received {
    return_id: i64,
    bundle_id: String,
    sha256: String,
    received_at: String,
    accepted: usize,
    duplicate: usize,
    rejected: usize,
    results: Vec<ResultRow>,
    unreadable: Vec<String>,
}

#[derive(Template)]
#[template(path = "pages/station.html")]
struct StationPage {
    layout: Layout,
    limit: String,
    error: Option<PageError>,
    received: Option<Received>,
}

fn render(
    req: &HttpRequest,
    viewer: &Viewer,
    error: Option<PageError>,
    received: Option<Received>,
) -> HttpResponse {
    let status = error.as_ref().map_or(StatusCode::OK, |e| e.status);
    let t = StationPage {
        layout: Layout::new(req, viewer, "Station upload", "/station"),
        limit: human_bytes(max_package_bytes()),
        error,
        received,
    };
    match t.render() {
        Ok(body) => html(status, body),
        Err(e) => respond(req, viewer, Err(e.into())),
    }
}

/// `GET /station`.
pub async fn form(req: HttpRequest) -> HttpResponse {
    let viewer = Viewer::of(&req);
    render(&req, &viewer, None, None)
}

async fn receive(state: &AppState, mut mp: Multipart) -> Result<Received, PageError> {
    let max = max_package_bytes();
    let mut doc = None;
    while let Some(mut field) = next_field(&mut mp).await? {
        if field_name(&field) != "package" {
            // The CSRF token and anything else: read and bounded, not used here.
            read_bounded(&mut field, MAX_TEXT_FIELD_BYTES, "a form field is too long").await?;
            continue;
        }
        if doc.is_some() {
            return Err(PageError::bad_request("send one return package at a time"));
        }
        let data_dir = state.data_dir.clone();
        let mut file = web::block(move || IncomingFile::new(&data_dir, max)).await??;
        let mut buf: Vec<u8> = Vec::with_capacity(WRITE_CHUNK);
        let mut total: u64 = 0;
        loop {
            let chunk = next_chunk(&mut field).await?;
            if let Some(c) = &chunk {
                total = total.saturating_add(c.len() as u64);
                if total > max {
                    return Err(PageError::too_large(format!(
                        "The return package is larger than the limit of {}; nothing was stored.",
                        human_bytes(max)
                    )));
                }
                buf.extend_from_slice(c);
            }
            if buf.len() >= WRITE_CHUNK || (chunk.is_none() && !buf.is_empty()) {
                let bytes = std::mem::take(&mut buf);
                file = web::block(move || {
                    let mut f = file;
                    f.write(&bytes)?;
                    Ok::<_, crate::intake::IntakeError>(f)
                })
                .await??;
            }
            if chunk.is_none() {
                break;
            }
        }
        if total == 0 {
            return Err(PageError::bad_request(
                "No return package was sent, or it is empty: choose the return file (return-….zip) and try again.",
            ));
        }
        let st = state.clone();
        let d = web::block(move || take_in_whole(&st.db, &st.data_dir, &st.intake_options(), file))
            .await??;
        doc = Some(d);
    }
    let doc = doc.ok_or_else(|| {
        PageError::bad_request("No return package was sent: choose a file and try again.")
    })?;
    let count = |s: &str| doc.results.iter().filter(|r| r.status == s).count();
    Ok(Received {
        return_id: doc.return_id,
        bundle_id: doc.bundle_id.to_string(),
        sha256: doc.sha256.clone(),
        received_at: super::common::local_text(&state.settings, &doc.received_at),
        accepted: count("accepted"),
        duplicate: count("duplicate"),
        rejected: count("rejected"),
        results: doc
            .results
            .iter()
            .map(|r| ResultRow {
                report_id: r.report_id.to_string(),
                status: r.status.clone(),
                reason: r.reason.clone().unwrap_or_default(),
                flags: r.flags.iter().map(|f| f.replace('_', " ")).collect(),
            })
            .collect(),
        unreadable: doc.unreadable.iter().map(|u| u.reason.clone()).collect(),
    })
}

/// `POST /station` (multipart: `package`, the return ZIP).
pub async fn upload(req: HttpRequest, state: web::Data<AppState>, mp: Multipart) -> HttpResponse {
    let viewer = Viewer::of(&req);
    match receive(&state, mp).await {
        Ok(r) => render(&req, &viewer, None, Some(r)),
        Err(e) => render(&req, &viewer, Some(e), None),
    }
}
