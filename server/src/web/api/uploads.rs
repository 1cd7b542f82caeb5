//! Field returns over HTTP (RETURN-SPEC):
//! `POST /api/v1/uploads`, `HEAD`/`PATCH`/`DELETE /api/v1/uploads/{id}`,
//! `POST /api/v1/uploads/{id}/complete`, `GET /api/v1/returns/{receipt}`,
//! `POST /api/v1/returns` (a whole package in one body: the station's
//! browser or USB path), `GET /api/v1/events/{id}/reports`,
//! `GET /api/v1/photos/{sha}/thumbnail` and `/original`.
//!
//! Bounds: a PATCH body is read up to 8 MiB (counted while streaming, not
//! taken from `Content-Length`), a whole package up to 1 GiB; see
//! [`crate::intake::uploads`]. The package's HMAC signature binds it to its
//! bundle; the caller (a team token, or a coordinator or admin) decides
//! which uploads and returns it reaches: a team only its own team's.

use crate::intake::uploads::{self, IncomingFile, MAX_APPEND_BYTES, Sender};
use crate::intake::{IntakeError, layout};
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpRequest, HttpResponse, web};
use futures_util::StreamExt;
use serde::Deserialize;
use serde_json::json;

type Reply = Result<HttpResponse, ApiError>;

/// Who is sending (the route's permission already let only senders in).
fn sender(req: &HttpRequest) -> Result<Sender, IntakeError> {
    use actix_web::HttpMessage;
    req.extensions()
        .get::<crate::platform::auth::Identity>()
        .and_then(Sender::of)
        .ok_or_else(|| IntakeError::Refused("log in first (or send a bearer token)".into()))
}

/// A phone's credential from pairing reaches only the uploads (and their
/// returns) of its one bundle: any other is unknown to it, as another
/// team's is to a team.
async fn in_paired_scope(
    state: &AppState,
    req: &HttpRequest,
    upload_id: &str,
) -> Result<(), IntakeError> {
    let Some(only) = super::bundles::paired_of(req) else {
        return Ok(());
    };
    let (db, id) = (state.db.clone(), upload_id.to_string());
    let u = web::block(move || db.read(|r| r.upload(&id)))
        .await
        .map_err(|e| IntakeError::Internal(e.to_string()))??;
    match u {
        Some(u) if u.bundle_id == only => Ok(()),
        _ => Err(IntakeError::NotFound(format!("no upload {upload_id}"))),
    }
}

/// The body of `POST /api/v1/uploads`.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CreateBody {
    bundle_id: String,
    size: u64,
    sha256: String,
}

fn bundle_id(raw: &str) -> Result<String, IntakeError> {
    uuid::Uuid::parse_str(raw)
        .map(|u| u.to_string())
        .map_err(|_| IntakeError::Invalid(format!("bundle id '{raw}' is not a UUID")))
}

pub async fn create(
    state: web::Data<AppState>,
    req: HttpRequest,
    body: web::Json<CreateBody>,
) -> Reply {
    let who = sender(&req)?;
    let b = body.into_inner();
    let bid = bundle_id(&b.bundle_id)?;
    if super::bundles::paired_of(&req).is_some_and(|p| p != bid) {
        return Err(IntakeError::NotFound(format!("no bundle {bid}")).into());
    }
    let st = state.into_inner();
    let c = web::block(move || {
        uploads::create(
            &st.db,
            &st.data_dir,
            &st.intake_options(),
            &who,
            &bid,
            b.size,
            &b.sha256,
        )
    })
    .await??;
    let u = &c.upload;
    let done = u.state != "open";
    let mut resp = if c.new && !done {
        HttpResponse::Created()
    } else {
        HttpResponse::Ok()
    };
    resp.insert_header(("Location", format!("/api/v1/uploads/{}", u.id)))
        .insert_header(("Upload-Offset", u.offset.to_string()))
        .insert_header(("Upload-Length", u.size.to_string()));
    let body = if done {
        json!({"upload_id": u.id, "offset": u.size, "complete": true})
    } else {
        json!({"upload_id": u.id, "offset": u.offset})
    };
    Ok(resp.json(body))
}

pub async fn head(state: web::Data<AppState>, req: HttpRequest, path: web::Path<String>) -> Reply {
    let who = sender(&req)?;
    let id = path.into_inner();
    in_paired_scope(&state, &req, &id).await?;
    let db = state.db.clone();
    let u = web::block(move || uploads::get(&db, &who, &id)).await??;
    let offset = if u.state == "open" { u.offset } else { u.size };
    Ok(HttpResponse::NoContent()
        .insert_header(("Upload-Offset", offset.to_string()))
        .insert_header(("Upload-Length", u.size.to_string()))
        .insert_header((
            "Upload-Complete",
            if u.state == "open" { "?0" } else { "?1" },
        ))
        .insert_header(("Cache-Control", "no-store"))
        .finish())
}

fn header_u64(req: &HttpRequest, name: &str) -> Result<u64, IntakeError> {
    req.headers()
        .get(name)
        .and_then(|v| v.to_str().ok())
        .and_then(|s| s.trim().parse().ok())
        .ok_or_else(|| IntakeError::Invalid(format!("header {name} is missing or not a number")))
}

pub async fn patch(
    state: web::Data<AppState>,
    path: web::Path<String>,
    req: HttpRequest,
    mut payload: web::Payload,
) -> Reply {
    let who = sender(&req)?;
    let id = path.into_inner();
    in_paired_scope(&state, &req, &id).await?;
    let offset = header_u64(&req, "Upload-Offset")?;
    let ct = req
        .headers()
        .get("Content-Type")
        .and_then(|v| v.to_str().ok())
        .unwrap_or("");
    if !ct.starts_with("application/partial-upload")
        && !ct.starts_with("application/offset+octet-stream")
    {
        return Err(
            IntakeError::Invalid("Content-Type must be application/partial-upload".into()).into(),
        );
    }
    // Read the body, bounded; on a cut connection keep what arrived.
    let mut buf: Vec<u8> = Vec::new();
    let mut broken: Option<String> = None;
    while let Some(chunk) = payload.next().await {
        match chunk {
            Ok(c) => {
                if buf.len() + c.len() > MAX_APPEND_BYTES {
                    return Err(IntakeError::TooLarge(format!(
                        "an append is at most {MAX_APPEND_BYTES} bytes"
                    ))
                    .into());
                }
                buf.extend_from_slice(&c);
            }
            Err(e) => {
                broken = Some(e.to_string());
                break;
            }
        }
    }
    let st = state.into_inner();
    let new = web::block(move || uploads::append(&st.db, &st.data_dir, &who, &id, offset, &buf))
        .await??;
    if let Some(e) = broken {
        tracing::info!(offset = new, error = %e, "append interrupted; kept the bytes that arrived");
        return Err(IntakeError::Invalid(format!("the request body was cut: {e}")).into());
    }
    Ok(HttpResponse::NoContent()
        .insert_header(("Upload-Offset", new.to_string()))
        .finish())
}

pub async fn complete(
    state: web::Data<AppState>,
    req: HttpRequest,
    path: web::Path<String>,
) -> Reply {
    let who = sender(&req)?;
    let id = path.into_inner();
    in_paired_scope(&state, &req, &id).await?;
    let st = state.into_inner();
    let doc = web::block(move || {
        uploads::complete(&st.db, &st.data_dir, &st.intake_options(), &who, &id)
    })
    .await??;
    Ok(HttpResponse::Ok().json(doc))
}

/// `DELETE /api/v1/uploads/{id}`: the client ends an upload it gave up on.
pub async fn end(state: web::Data<AppState>, req: HttpRequest, path: web::Path<String>) -> Reply {
    let who = sender(&req)?;
    let id = path.into_inner();
    in_paired_scope(&state, &req, &id).await?;
    let st = state.into_inner();
    web::block(move || uploads::end(&st.db, &st.data_dir, &who, &id)).await??;
    Ok(HttpResponse::NoContent().finish())
}

pub async fn get_return(
    state: web::Data<AppState>,
    req: HttpRequest,
    path: web::Path<String>,
) -> Reply {
    let who = sender(&req)?;
    let key = path.into_inner();
    if super::bundles::paired_of(&req).is_some() {
        in_paired_scope(&state, &req, &key).await?;
    }
    let db = state.db.clone();
    let doc = web::block(move || uploads::return_for(&db, &who, &key)).await??;
    Ok(HttpResponse::Ok().json(doc))
}

/// Bytes gathered before one blocking write of a whole-package body.
const WRITE_BATCH: usize = 4 << 20;

pub async fn post_return(state: web::Data<AppState>, mut payload: web::Payload) -> Reply {
    let options = state.intake_options();
    let max = options.return_limits.max_file_bytes;
    let st = state.into_inner();
    let dir = st.data_dir.clone();
    let mut file = web::block(move || IncomingFile::new(&dir, max)).await??;
    let mut batch: Vec<u8> = Vec::new();
    loop {
        let next = payload.next().await;
        let end = next.is_none();
        if let Some(chunk) = next {
            let c = chunk
                .map_err(|e| IntakeError::Invalid(format!("the request body was cut: {e}")))?;
            batch.extend_from_slice(&c);
        }
        if batch.len() >= WRITE_BATCH || (end && !batch.is_empty()) {
            let bytes = std::mem::take(&mut batch);
            file = web::block(move || file.write(&bytes).map(|()| file)).await??;
        }
        if end {
            break;
        }
    }
    let doc =
        web::block(move || uploads::take_in_whole(&st.db, &st.data_dir, &options, file)).await??;
    Ok(HttpResponse::Ok().json(doc))
}

pub async fn event_reports(state: web::Data<AppState>, path: web::Path<String>) -> Reply {
    let raw = path.into_inner();
    let id: i64 = raw
        .parse()
        .map_err(|_| IntakeError::NotFound(format!("no event {raw}")))?;
    let db = state.db.clone();
    let out = web::block(move || {
        db.read(|r| {
            if r.event_resolved(id)?.is_none() {
                return Ok(None);
            }
            let mut list = Vec::new();
            for rep in r.event_reports(id)? {
                let photos = r.report_photos(&rep.report_id)?;
                let checks = r.photo_checks(&rep.report_id)?;
                let photos: Vec<_> = photos
                    .iter()
                    .map(|p| {
                        let c = checks.iter().find(|c| c.sha256 == p.sha256);
                        json!({
                            "sha256": p.sha256,
                            "original_name": p.original_name,
                            "thumbnail": format!("/api/v1/photos/{}/thumbnail", p.sha256),
                            "original": format!("/api/v1/photos/{}/original", p.sha256),
                            "check": c,
                        })
                    })
                    .collect();
                list.push(json!({"report": rep, "photos": photos}));
            }
            Ok(Some(list))
        })
    })
    .await??;
    match out {
        Some(list) => Ok(HttpResponse::Ok().json(json!({"event_id": id, "reports": list}))),
        None => Err(IntakeError::NotFound(format!("no event {id}")).into()),
    }
}

async fn photo_file(state: web::Data<AppState>, sha: String, thumb: bool) -> Reply {
    if !crate::domain::Sha256Digest::is_valid(&sha) {
        return Err(IntakeError::NotFound(format!("no photo {sha}")).into());
    }
    let st = state.into_inner();
    let shac = sha.clone();
    let db = st.db.clone();
    web::block(move || match db.read(|r| r.photo(&shac))? {
        Some(_) => Ok(()),
        None => Err(IntakeError::NotFound(format!("no photo {shac}"))),
    })
    .await??;
    let key = if thumb {
        layout::thumb_key(&sha)
    } else {
        layout::photo_key(&sha)
    };
    let (size, body) = crate::web::evidence_stream(&st.data_dir, &key).await?;
    let name = if thumb {
        format!("{sha}-thumbnail.jpg")
    } else {
        format!("{sha}.jpg")
    };
    Ok(HttpResponse::Ok()
        .content_type("image/jpeg")
        .insert_header(("X-Content-Type-Options", "nosniff"))
        .insert_header((
            "Content-Disposition",
            format!("inline; filename=\"{name}\""),
        ))
        .insert_header(("Cache-Control", "private, max-age=31536000, immutable"))
        .no_chunking(size)
        .streaming(body))
}

pub async fn thumbnail(state: web::Data<AppState>, path: web::Path<String>) -> Reply {
    photo_file(state, path.into_inner(), true).await
}

pub async fn original(state: web::Data<AppState>, path: web::Path<String>) -> Reply {
    photo_file(state, path.into_inner(), false).await
}

/// Register the routes of this module (inside the `/api/v1` scope).
pub fn configure(cfg: &mut web::ServiceConfig) {
    use crate::platform::auth::Action::{UploadReturn, ViewEvents};
    use crate::web::access::Access;
    cfg.route("/uploads", web::post().to(create).needs(UploadReturn))
        .route("/uploads/{id}", web::head().to(head).needs(UploadReturn))
        .route("/uploads/{id}", web::patch().to(patch).needs(UploadReturn))
        .route("/uploads/{id}", web::delete().to(end).needs(UploadReturn))
        .route(
            "/uploads/{id}/complete",
            web::post().to(complete).needs(UploadReturn),
        )
        .route("/returns", web::post().to(post_return).needs(UploadReturn))
        .route(
            "/returns/{id}",
            web::get().to(get_return).needs(UploadReturn),
        )
        .route(
            "/events/{id}/reports",
            web::get().to(event_reports).needs(ViewEvents),
        )
        .route(
            "/photos/{sha}/thumbnail",
            web::get().to(thumbnail).needs(ViewEvents),
        )
        .route(
            "/photos/{sha}/original",
            web::get().to(original).needs(ViewEvents),
        );
}
