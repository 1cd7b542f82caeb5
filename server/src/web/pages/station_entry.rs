//! `/station/trips/{id}`: entering a trip from its paper field sheet and the
//! camera's photos (see [`crate::intake::station`] for the rules). The
//! entry is a server-side draft of the user and the trip, so a reload or
//! another browser finds it; nothing is stored as a fact until "Save the
//! reports".
//!
//! | method and path | what it does |
//! |---|---|
//! | `GET /station/trips/{id}` | the entry: stops with their fields and photos, unplaced photos |
//! | `POST /station/trips/{id}/photos` | upload photos (multipart `photos`, many files) into the draft |
//! | `POST /station/trips/{id}` | keep the typed fields and moves (`action=keep`), or save the reports (`action=save`) |
//! | `POST /station/trips/{id}/discard` | throw the draft away |
//! | `GET /station/trips/{id}/thumbs/{sha256}` | a draft photo's thumbnail |

use super::common::{Layout, PageError, Viewer, html, local_time, respond, see_other};
use super::form::{field_name, file_name, human_bytes, next_chunk, next_field, read_bounded};
use super::station::Received;
use crate::intake::IntakeError;
use crate::intake::station::draft::{self, Draft, StopEntry};
use crate::intake::station::propose::Basis;
use crate::intake::station::{self as entry, EntryForm, Trip};
use crate::platform::i18n::Tr;
use crate::platform::settings::Settings;
use crate::web::AppState;
use crate::web::pages::common::MAX_TEXT_FIELD_BYTES;
use actix_multipart::Multipart;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;

/// Largest urlencoded entry form (the access layer's bound for forms).
pub const MAX_ENTRY_FORM_BYTES: usize = 64 * 1024;

struct PhotoView {
    sha: String,
    name: String,
    time: String,
    position: String,
    /// Why it is where it is (the proposal's reason, or the operator's move).
    why: String,
    /// The stop it is at now (code), empty when not placed.
    at: String,
    /// The move chosen: `proposed`, a stop code, or empty (set aside).
    choice: String,
}

struct StopView {
    order: u32,
    code: String,
    kind: String,
    e: StopEntry,
    photos: Vec<PhotoView>,
    /// The outcomes the checklist allows on this stop (a control point has its own).
    outcomes: Vec<Choice>,
}

struct Choice {
    value: String,
    label: String,
}

#[derive(Template)]
#[template(path = "pages/station_entry.html")]
struct EntryPage {
    layout: Layout,
    trip_id: String,
    team: String,
    sheet_expected: String,
    sheet: String,
    local_offset: String,
    saved_return: Option<i64>,
    stops: Vec<StopView>,
    unplaced: Vec<PhotoView>,
    codes: Vec<String>,
    reasons_false: Vec<Choice>,
    reasons_not_reached: Vec<Choice>,
    causes: Vec<Choice>,
    photo_count: usize,
    photo_bytes: String,
    limits: String,
    tolerance: String,
    errors: Vec<String>,
    notices: Vec<String>,
    received: Option<Received>,
}

/// The choices of a select, labelled in `tr`'s language by the field
/// app's words (`<prefix>-<token>`).
fn choices(tr: Tr, prefix: &str, words: &[String]) -> Vec<Choice> {
    words
        .iter()
        .map(|w| Choice {
            value: w.clone(),
            label: super::views::word(tr, prefix, w),
        })
        .collect()
}

fn basis_words(tr: Tr, b: &Basis, d: &Draft, trip: &Trip) -> String {
    let code = |i: usize| trip.stops.get(i).map_or("?", |s| s.code.as_str());
    match b {
        Basis::Position { distance_m } => {
            tr.t1("entry-why-position", "distance", format!("{distance_m:.0}"))
        }
        Basis::Between { before, after } => tr.t2(
            "entry-why-between",
            "before",
            d.photos[*before].original_name.as_str(),
            "after",
            d.photos[*after].original_name.as_str(),
        ),
        Basis::Far {
            nearest,
            distance_m,
        } => tr.t2(
            "entry-why-far",
            "distance",
            format!("{distance_m:.0}"),
            "code",
            code(*nearest),
        ),
        Basis::NoNeighbours => tr.t("entry-why-no-neighbours"),
        Basis::NoPositionNoTime => tr.t("entry-why-no-position-no-time"),
        Basis::NoStops => tr.t("entry-why-no-stops"),
    }
}

fn photo_views(
    tr: Tr,
    trip: &Trip,
    d: &Draft,
    tolerance_m: f64,
    settings: &Settings,
) -> Vec<PhotoView> {
    let offset = entry::local_offset(d);
    entry::placements(trip, d, tolerance_m)
        .into_iter()
        .zip(&d.photos)
        .map(|((pl, now), p)| PhotoView {
            sha: p.sha256.clone(),
            name: p.original_name.clone(),
            time: entry::photo_time(p, offset)
                .map_or_else(|| tr.t("entry-no-time"), |t| local_time(settings, t)),
            position: match (p.lat, p.lon) {
                (Some(la), Some(lo)) => format!("{la:.6}, {lo:.6}"),
                _ => tr.t("report-no-position"),
            },
            why: match &p.moved_to {
                Some(_) => tr.t1(
                    "entry-why-moved",
                    "why",
                    basis_words(tr, &pl.basis, d, trip),
                ),
                None => basis_words(tr, &pl.basis, d, trip),
            },
            at: now
                .and_then(|i| trip.stops.get(i))
                .map_or_else(String::new, |s| s.code.clone()),
            choice: p.moved_to.clone().unwrap_or_else(|| "proposed".into()),
        })
        .collect()
}

struct Shown {
    errors: Vec<String>,
    notices: Vec<String>,
    received: Option<Received>,
}

fn page(
    req: &HttpRequest,
    viewer: &Viewer,
    trip: &Trip,
    d: &Draft,
    tol: f64,
    settings: &Settings,
    s: Shown,
) -> EntryPage {
    let cl = entry::checklist();
    let tr = crate::web::i18n::tr_of(req);
    let mut photos = photo_views(tr, trip, d, tol, settings);
    photos.sort_by(|a, b| a.time.cmp(&b.time).then(a.name.cmp(&b.name)));
    let stops = trip
        .stops
        .iter()
        .map(|st| StopView {
            order: st.order,
            code: st.code.clone(),
            kind: super::views::word(tr, "report-kind", st.kind.as_str()),
            e: d.stops.get(&st.code).cloned().unwrap_or_default(),
            photos: Vec::new(),
            outcomes: choices(tr, "outcome", cl.outcomes_for(st.kind)),
        })
        .collect::<Vec<_>>();
    let (mut stops, mut unplaced) = (stops, Vec::new());
    for p in photos {
        match stops.iter_mut().find(|s| s.code == p.at) {
            Some(s) => s.photos.push(p),
            None => unplaced.push(p),
        }
    }
    EntryPage {
        layout: {
            let mut l = Layout::new(req, viewer, "Enter a trip from paper", "/station");
            l.title = tr.t1("entry-title", "team", trip.bundle.team.as_str());
            l
        },
        trip_id: trip.bundle.id.clone(),
        team: trip.bundle.team.clone(),
        sheet_expected: trip.sheet.clone(),
        sheet: d.sheet.clone(),
        local_offset: d.local_offset.clone(),
        saved_return: d.saved_return,
        codes: trip.stops.iter().map(|s| s.code.clone()).collect(),
        stops,
        unplaced,
        reasons_false: choices(tr, "reason", &cl.false_alarm_reasons),
        reasons_not_reached: choices(tr, "reason", &cl.not_reached_reasons),
        causes: choices(tr, "cause", &cl.causes),
        photo_count: d.photos.len(),
        photo_bytes: human_bytes(d.photo_bytes()),
        limits: tr.t3(
            "entry-limits",
            "photos",
            draft::MAX_DRAFT_PHOTOS,
            "bytes",
            human_bytes(draft::MAX_DRAFT_BYTES),
            "photo",
            human_bytes(max_photo_bytes() as u64),
        ),
        tolerance: format!("{tol:.0} m"),
        errors: s.errors,
        notices: s.notices,
        received: s.received,
    }
}

fn max_photo_bytes() -> usize {
    usize::try_from(groundproof_sync::returns::ReturnLimits::default().max_photo_bytes)
        .unwrap_or(usize::MAX)
}

fn user_of(viewer: &Viewer) -> Result<String, PageError> {
    viewer
        .name
        .clone()
        .ok_or_else(|| PageError::bad_request("entering from paper needs a signed-in user"))
}

/// The trip and the user's draft (made empty when there is none; not stored).
async fn load(state: &AppState, id: &str, user: &str) -> Result<(Trip, Draft), PageError> {
    let (db, dir, id, user) = (
        state.db.clone(),
        state.data_dir.clone(),
        id.to_string(),
        user.to_string(),
    );
    let r = web::block(move || {
        let trip = entry::trip(&db, &id)?;
        let d = entry::open_draft(&db, &dir, &trip, &user, chrono::Utc::now())?;
        Ok::<_, IntakeError>((trip, d))
    })
    .await??;
    Ok(r)
}

async fn show_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    id: &str,
    shown: Shown,
    status: StatusCode,
) -> Result<HttpResponse, PageError> {
    let user = user_of(viewer)?;
    let (trip, d) = load(state, id, &user).await?;
    let tol = state.intake_options().tolerance_m;
    let body = page(req, viewer, &trip, &d, tol, &state.settings.get(), shown).render()?;
    Ok(html(status, body))
}

/// `GET /station/trips/{id}`.
pub async fn show(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let shown = Shown {
        errors: Vec::new(),
        notices: Vec::new(),
        received: None,
    };
    let r = show_page(&req, &state, &viewer, &path, shown, StatusCode::OK).await;
    respond(&req, &viewer, r)
}

/// Reads every `photos` file of the form into the draft, one at a time
/// (each bounded by the return format's photo limit); the words for the
/// operator, and whether any photo was refused.
async fn take_photos(
    state: &AppState,
    tr: crate::platform::i18n::Tr,
    id: &str,
    user: &str,
    mut mp: Multipart,
) -> Result<(Vec<String>, Vec<String>), PageError> {
    let (mut notices, mut errors) = (Vec::new(), Vec::new());
    let (mut taken, mut fields) = (0, 0);
    while let Some(mut field) = next_field(&mut mp).await? {
        fields += 1;
        if fields > draft::MAX_DRAFT_PHOTOS + 8 {
            errors.push(format!(
                "the form has more than {} fields: send at most {} photos at once",
                draft::MAX_DRAFT_PHOTOS + 8,
                draft::MAX_DRAFT_PHOTOS
            ));
            break;
        }
        if field_name(&field) != "photos" {
            read_bounded(&mut field, MAX_TEXT_FIELD_BYTES, "a form field is too long").await?;
            continue;
        }
        let name = file_name(&field);
        let max = max_photo_bytes();
        let mut bytes = Vec::new();
        let mut too_big = false;
        while let Some(chunk) = next_chunk(&mut field).await? {
            if bytes.len() + chunk.len() > max {
                too_big = true;
                bytes.clear();
            } else if !too_big {
                bytes.extend_from_slice(&chunk);
            }
        }
        if too_big {
            let limit = human_bytes(max as u64);
            errors.push(tr.t2("entry-photo-too-big", "name", &name, "limit", limit));
            continue;
        }
        if bytes.is_empty() && name.is_empty() {
            continue;
        }
        match add_one(state, id, user, name.clone(), bytes).await {
            Ok(true) => taken += 1,
            Ok(false) => notices.push(tr.t1("entry-photo-already", "name", &name)),
            Err(e) => errors.push(e.message),
        }
    }
    notices.insert(0, tr.t1("entry-photos-added", "n", taken));
    Ok((notices, errors))
}

async fn add_one(
    state: &AppState,
    id: &str,
    user: &str,
    name: String,
    bytes: Vec<u8>,
) -> Result<bool, PageError> {
    let (db, dir, id, user) = (
        state.db.clone(),
        state.data_dir.clone(),
        id.to_string(),
        user.to_string(),
    );
    let limits = state.intake_options().photo_limits;
    let added = web::block(move || {
        let trip = entry::trip(&db, &id)?;
        let upload = (name.as_str(), bytes.as_slice());
        let now = chrono::Utc::now();
        entry::add_photo(&db, &dir, &trip, &user, upload, &limits, now)
    })
    .await??;
    Ok(added)
}

/// `POST /station/trips/{id}/photos` (multipart: `photos`, many JPEGs).
pub async fn photos(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    mp: Multipart,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let user = user_of(&viewer)?;
        let tr = crate::web::i18n::tr_of(&req);
        let (notices, errors) = take_photos(&state, tr, &path, &user, mp).await?;
        let status = if errors.is_empty() {
            StatusCode::OK
        } else {
            StatusCode::BAD_REQUEST
        };
        let shown = Shown {
            errors,
            notices,
            received: None,
        };
        show_page(&req, &state, &viewer, &path, shown, status).await
    }
    .await;
    respond(&req, &viewer, r)
}

/// The entry form's fields: `sheet`, `local_offset`, `outcome.<code>`,
/// `detail.<code>`, `time.<code>`, `position.<code>`, `area.<code>`,
/// `notes.<code>`, `move.<sha256>`, `action`.
fn entry_form(pairs: Vec<(String, String)>) -> (EntryForm, String) {
    let mut f = EntryForm::default();
    let mut action = String::new();
    for (k, v) in pairs {
        match k.split_once('.') {
            Some(("move", sha)) => f.moves.push((sha.to_string(), v)),
            Some((field, code)) => {
                let e = f.stops.entry(code.to_string()).or_default();
                match field {
                    "outcome" => e.outcome = v,
                    "detail" => e.detail = v,
                    "time" => e.time = v,
                    "position" => e.position = v,
                    "area" => e.area_ha = v,
                    "notes" => e.notes = v,
                    "observer" => e.observer = v,
                    _ => {}
                }
            }
            None => match k.as_str() {
                "sheet" => f.sheet = v,
                "local_offset" => f.local_offset = v,
                "action" => action = v,
                _ => {}
            },
        }
    }
    (f, action)
}

/// Applies the form to the draft and stores it.
async fn keep(state: &AppState, id: &str, user: &str, form: EntryForm) -> Result<(), PageError> {
    let (db, dir, id, user) = (
        state.db.clone(),
        state.data_dir.clone(),
        id.to_string(),
        user.to_string(),
    );
    web::block(move || {
        let trip = entry::trip(&db, &id)?;
        entry::keep_form(&db, &dir, &trip, &user, form, chrono::Utc::now())
    })
    .await??;
    Ok(())
}

async fn confirm(state: &AppState, id: &str, user: &str) -> Result<Received, PageError> {
    let (st, id, user) = (state.clone(), id.to_string(), user.to_string());
    let doc = web::block(move || {
        let trip = entry::trip(&st.db, &id)?;
        entry::save(&st.db, &st.data_dir, &st.intake_options(), &trip, &user)
    })
    .await??;
    super::station::received(state, doc).await
}

/// `POST /station/trips/{id}` (urlencoded entry form).
pub async fn save(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<Vec<(String, String)>>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let user = user_of(&viewer)?;
        let pairs = form
            .map_err(|e| PageError::bad_request(format!("The form could not be read: {e}")))?
            .into_inner();
        let (f, action) = entry_form(pairs);
        let kept = keep(&state, &path, &user, f).await;
        let shown = |errors, received| Shown {
            errors,
            notices: Vec::new(),
            received,
        };
        if let Err(e) = kept {
            let why = crate::web::i18n::tr_of(&req).t1("entry-nothing-changed", "why", &e.message);
            let s = shown(vec![why], None);
            return show_page(&req, &state, &viewer, &path, s, e.status).await;
        }
        if action != "save" {
            return Ok(see_other(&format!("/station/trips/{}", path.as_str())));
        }
        match confirm(&state, &path, &user).await {
            Ok(r) => {
                show_page(
                    &req,
                    &state,
                    &viewer,
                    &path,
                    shown(Vec::new(), Some(r)),
                    StatusCode::OK,
                )
                .await
            }
            Err(e) => {
                show_page(
                    &req,
                    &state,
                    &viewer,
                    &path,
                    shown(vec![e.message], None),
                    e.status,
                )
                .await
            }
        }
    }
    .await;
    respond(&req, &viewer, r)
}

/// `POST /station/trips/{id}/discard`.
pub async fn discard(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let user = user_of(&viewer)?;
        let (db, dir, id) = (state.db.clone(), state.data_dir.clone(), path.to_string());
        web::block(move || {
            let store = crate::platform::evidence::of(&dir)?;
            draft::discard(&db, &store, &draft::draft_key(&user, &id))
        })
        .await??;
        Ok::<_, PageError>(see_other("/station"))
    }
    .await;
    respond(&req, &viewer, r)
}

/// `GET /station/trips/{id}/thumbs/{sha256}`.
pub async fn thumb(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<(String, String)>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let (id, sha) = path.into_inner();
    let r = async {
        let user = user_of(&viewer)?;
        if sha.len() != 64
            || !sha
                .bytes()
                .all(|b| b.is_ascii_hexdigit() && !b.is_ascii_uppercase())
        {
            return Err(PageError::bad_request(
                "a photo is named by its SHA-256 (64 lowercase hex digits)",
            ));
        }
        let key = draft::thumb_key(&draft::draft_key(&user, &id), &sha);
        let dir = state.data_dir.clone();
        // A thumbnail is small (a 1/8-scale JPEG): read whole.
        let bytes = web::block(move || {
            let mut b = Vec::new();
            crate::platform::evidence::of(&dir)?
                .copy_to(&key, None, &mut b)
                .map(|_| b)
        })
        .await?;
        match bytes {
            Ok(b) => Ok(HttpResponse::Ok().content_type("image/jpeg").body(b)),
            Err(crate::Error::NotFound(_)) => Err(PageError::from(crate::Error::NotFound(
                "no such photo in this entry".into(),
            ))),
            Err(e) => Err(PageError::from(e)),
        }
    }
    .await;
    respond(&req, &viewer, r)
}
