//! `/station`: upload a return package in the browser (at the field station
//! or from a USB stick). The file field is streamed, bounded, into the same
//! durable incoming file the API uses ([`crate::intake::uploads::IncomingFile`])
//! and taken in by [`crate::intake::uploads::take_in_whole`]; the page then
//! lists each report as accepted, duplicate or rejected (with the reason)
//! and its flags.

use super::common::{Layout, PageError, Viewer, html, respond};
use super::form::{field_name, human_bytes, next_chunk, next_field, read_bounded};
use super::views::word;
use crate::intake::IntakeOptions;
use crate::intake::uploads::{IncomingFile, take_in_whole};
use crate::platform::i18n::Tr;
use crate::web::AppState;
use crate::web::pages::common::MAX_TEXT_FIELD_BYTES;
use actix_multipart::Multipart;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use std::borrow::Borrow;

/// Bytes gathered before each blocking write to the incoming file.
const WRITE_CHUNK: usize = 1 << 20;

/// Largest return package the page accepts (the return format's own limit).
pub fn max_package_bytes() -> u64 {
    IntakeOptions::default().return_limits.max_file_bytes
}

/// One report of a return as the station shows it: what it is about, its
/// outcome and team, not only its id. The stored words (outcome, reason or
/// cause, result, flags) are kept as tokens and put in the page's language
/// by the template (`*_in`), with the catalogue's ids the other pages use.
pub struct ResultRow {
    pub report_id: String,
    /// The event or control point code, or `–` when the report was not
    /// stored (`new_clearing` names a new clearing's event).
    pub target: String,
    /// A new clearing's event id, when the report is one.
    pub new_clearing: Option<i64>,
    /// The link to the event, when there is one.
    pub event_href: Option<String>,
    /// The outcome token (`false_alarm`), empty when not stored.
    pub outcome: String,
    /// (`reason` or `cause`, its token), when the report has one.
    pub detail: Option<(&'static str, String)>,
    pub team: String,
    /// `accepted`, `duplicate` or `rejected`.
    pub status: String,
    pub reason: String,
    /// Each flag's code and the photo it names (by file name), if any.
    pub flags: Vec<(String, Option<String>)>,
}

impl ResultRow {
    /// The outcome in the page's language, with its reason or cause.
    pub fn outcome_in(&self, tr: impl Borrow<Tr>) -> String {
        let tr = *tr.borrow();
        if self.outcome.is_empty() {
            return "–".into();
        }
        let outcome = word(tr, "outcome", &self.outcome);
        match &self.detail {
            Some((kind, token)) => format!("{outcome} ({})", word(tr, kind, token)),
            None => outcome,
        }
    }

    /// The stop: its code, or a new clearing in words.
    pub fn target_in(&self, tr: impl Borrow<Tr>) -> String {
        match self.new_clearing {
            Some(id) => tr.borrow().t1("station-new-clearing", "id", id),
            None => self.target.clone(),
        }
    }

    /// The result (accepted, duplicate, rejected) in the page's language,
    /// the field app's words.
    pub fn status_in(&self, tr: impl Borrow<Tr>) -> String {
        word(*tr.borrow(), "send_state", &self.status)
    }

    /// The flags in the page's language, each with its photo's file name.
    pub fn flags_in(&self, tr: impl Borrow<Tr>) -> Vec<String> {
        self.flags
            .iter()
            .map(|(code, photo)| {
                let w = word(*tr.borrow(), "flag", code);
                photo
                    .as_ref()
                    .map_or_else(|| w.clone(), |p| format!("{w} ({p})"))
            })
            .collect()
    }
}

/// The station's rows for the results of a return: each stored report
/// looked up for its code, outcome and team; flags name photos by their
/// file names.
pub fn result_rows(
    r: &crate::platform::storage::Reader<'_>,
    doc: &crate::intake::ReturnDocument,
) -> crate::Result<Vec<ResultRow>> {
    let items = r.bundle_items(&doc.bundle_id.to_string())?;
    let mut rows = Vec::new();
    for x in &doc.results {
        let id = x.report_id.to_string();
        let stored = r.report(&id)?;
        let photos = r.report_photos(&id)?;
        let mut row = ResultRow {
            report_id: id,
            target: "–".into(),
            new_clearing: None,
            event_href: None,
            outcome: String::new(),
            detail: None,
            team: String::new(),
            status: x.status.clone(),
            reason: x.reason.clone().unwrap_or_default(),
            flags: x.flags.iter().map(|f| flag_parts(f, &photos)).collect(),
        };
        if let Some(s) = stored {
            match (&s.control_code, s.event_id) {
                (Some(c), _) => row.target = c.clone(),
                (None, Some(eid)) => match items.iter().find(|i| i.event_id == Some(eid)) {
                    Some(i) => row.target = i.code.clone(),
                    None => row.new_clearing = Some(eid),
                },
                (None, None) => {}
            }
            row.event_href = s.event_id.map(|e| format!("/events/{e}"));
            row.outcome = s.outcome.as_str().to_string();
            row.detail = s
                .reason
                .map(|w| ("reason", w.as_str().to_string()))
                .or(s.cause.map(|w| ("cause", w.as_str().to_string())));
            row.team = s.team;
        }
        rows.push(row);
    }
    Ok(rows)
}

/// A flag's code and its photo: `photo_no_gps:<sha>` names the photo's file
/// (or the digest's first 12 characters when the report does not hold it).
fn flag_parts(
    flag: &str,
    photos: &[crate::platform::storage::ReportPhotoRow],
) -> (String, Option<String>) {
    match flag.split_once(':') {
        Some((what, sha)) => {
            let name = photos.iter().find(|p| p.sha256 == sha).map_or_else(
                || sha.chars().take(12).collect(),
                |p| p.original_name.clone(),
            );
            (what.to_string(), Some(name))
        }
        None => (flag.to_string(), None),
    }
}

pub struct Received {
    pub return_id: i64,
    pub bundle_id: String,
    pub sha256: String,
    pub received_at: String,
    pub accepted: usize,
    pub duplicate: usize,
    pub rejected: usize,
    pub results: Vec<ResultRow>,
    pub unreadable: Vec<String>,
}

/// A trip that may be entered from its paper sheet.
struct TripLink {
    id: String,
    team: String,
    issued: String,
    stops: i64,
    /// This user has an unfinished entry for it.
    draft: bool,
}

#[derive(Template)]
#[template(path = "pages/station.html")]
struct StationPage {
    layout: Layout,
    limit: String,
    error: Option<PageError>,
    received: Option<Received>,
    trips: Vec<TripLink>,
}

/// The live trips, for a viewer who may enter from paper.
async fn trip_links(state: &AppState, viewer: &Viewer) -> Vec<TripLink> {
    if !viewer.may(crate::platform::auth::Action::EnterFromPaper) {
        return Vec::new();
    }
    let db = state.db.clone();
    let settings = state.settings.get().clone();
    let user = viewer.name.clone().unwrap_or_default();
    let found = web::block(move || {
        let bundles = db.read(|r| r.bundles())?;
        let drafts: std::collections::HashSet<String> = db
            .read(|r| r.station_draft_bundles(&user))?
            .into_iter()
            .collect();
        Ok::<_, crate::Error>(
            bundles
                .into_iter()
                .filter(|b| b.cancelled_at.is_none())
                .map(|b| TripLink {
                    draft: drafts.contains(&b.id),
                    issued: super::common::local_text(&settings, &b.issued_at),
                    stops: b.events + b.controls,
                    team: b.team,
                    id: b.id,
                })
                .collect::<Vec<_>>(),
        )
    })
    .await;
    match found {
        Ok(Ok(v)) => v,
        _ => Vec::new(),
    }
}

async fn render(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    error: Option<PageError>,
    received: Option<Received>,
) -> HttpResponse {
    let status = error.as_ref().map_or(StatusCode::OK, |e| e.status);
    let t = StationPage {
        layout: {
            let mut l = Layout::new(
                req,
                viewer,
                &crate::web::i18n::tr_of(req).t("station-title"),
                "/station",
            );
            l.title = l.tr.t("station-title");
            l
        },
        limit: human_bytes(max_package_bytes()),
        error,
        received,
        trips: trip_links(state, viewer).await,
    };
    match t.render() {
        Ok(body) => html(status, body),
        Err(e) => respond(req, viewer, Err(e.into())),
    }
}

/// `GET /station`.
pub async fn form(req: HttpRequest, state: web::Data<AppState>) -> HttpResponse {
    let viewer = Viewer::of(&req);
    render(&req, &state, &viewer, None, None).await
}

/// Where a return's results come from; they are then looked up.
pub async fn received(
    state: &AppState,
    doc: crate::intake::ReturnDocument,
) -> Result<Received, PageError> {
    let count = |s: &str| doc.results.iter().filter(|r| r.status == s).count();
    let (accepted, duplicate, rejected) =
        (count("accepted"), count("duplicate"), count("rejected"));
    let db = state.db.clone();
    let (doc, results) = web::block(move || {
        let rows = db.read(|r| result_rows(r, &doc))?;
        Ok::<_, crate::Error>((doc, rows))
    })
    .await??;
    Ok(Received {
        return_id: doc.return_id,
        bundle_id: doc.bundle_id.to_string(),
        sha256: doc.sha256.clone(),
        received_at: super::common::local_text(&state.settings.get(), &doc.received_at),
        accepted,
        duplicate,
        rejected,
        results,
        unreadable: doc.unreadable.iter().map(|u| u.reason.clone()).collect(),
    })
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
    received(state, doc).await
}

/// `POST /station` (multipart: `package`, the return ZIP).
pub async fn upload(req: HttpRequest, state: web::Data<AppState>, mp: Multipart) -> HttpResponse {
    let viewer = Viewer::of(&req);
    match receive(&state, mp).await {
        Ok(r) => render(&req, &state, &viewer, None, Some(r)).await,
        Err(e) => render(&req, &state, &viewer, Some(e), None).await,
    }
}
