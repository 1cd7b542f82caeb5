//! Pairing a phone with one bundle (issue 11):
//!
//! - `POST /api/v1/bundles/{id}/pairings` (coordinators: `IssueBundle`)
//!   makes a code: `{"code", "link", "qr_svg", "expires_at"}`.
//! - `POST /api/v1/pairings/redeem` (public: the code is the credential)
//!   takes `{"code": "…"}` and answers the bundle ZIP with the phone's team
//!   token in the `Groundproof-Team-Token` header, or a refusal
//!   `{"error", "refusal"}` whose word the app turns into its own message
//!   (400 malformed, 404 unknown, 410 used, expired, trip cancelled or
//!   expired). A refusal is an answer, not a fault, so it is built here
//!   rather than through `web::error`.

use crate::error::Error;
use crate::platform::auth::{self, PairingRefusal, Redemption, redeem_pairing};
use crate::web::AppState;
use crate::web::error::ApiError;
use crate::web::pairing;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use futures_util::StreamExt;
use serde::Deserialize;
use serde_json::json;

/// Largest redeem body: `{"code": "…"}` is a few dozen bytes.
const MAX_REDEEM_BYTES: usize = 1024;
/// The response header that carries the phone's team token.
pub const TEAM_TOKEN_HEADER: &str = "Groundproof-Team-Token";

/// `POST /api/v1/bundles/{id}/pairings`.
pub async fn create(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> Result<HttpResponse, ApiError> {
    let id = uuid::Uuid::parse_str(&path)
        .map_err(|_| Error::Invalid(format!("bundle id '{path}' is not a UUID")))?
        .to_string();
    let (by, link_of) = pairing::request_parts(&req);
    let db = state.db.clone();
    let shown = web::block(move || pairing::make(&db, &id, &by, link_of)).await??;
    let expires = chrono::DateTime::from_timestamp(shown.expires_at, 0)
        .map(|t| t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true))
        .unwrap_or_default();
    Ok(HttpResponse::Created()
        .insert_header(("Cache-Control", "no-store"))
        .json(json!({
            "code": shown.code,
            "link": shown.link,
            "qr_svg": shown.qr_svg,
            "expires_at": expires,
        })))
}

#[derive(Debug, Deserialize)]
struct RedeemBody {
    code: String,
}

/// Reads at most [`MAX_REDEEM_BYTES`] of the body.
async fn bounded_body(mut payload: web::Payload) -> Result<Vec<u8>, ApiError> {
    let mut body = Vec::new();
    while let Some(chunk) = payload.next().await {
        let chunk = chunk.map_err(|e| Error::Invalid(format!("reading the request body: {e}")))?;
        if body.len() + chunk.len() > MAX_REDEEM_BYTES {
            return Err(Error::TooLarge(format!(
                "a pairing request is at most {MAX_REDEEM_BYTES} bytes"
            ))
            .into());
        }
        body.extend_from_slice(&chunk);
    }
    Ok(body)
}

fn refusal_status(r: PairingRefusal) -> StatusCode {
    match r {
        PairingRefusal::Malformed => StatusCode::BAD_REQUEST,
        PairingRefusal::Unknown => StatusCode::NOT_FOUND,
        _ => StatusCode::GONE,
    }
}

/// `POST /api/v1/pairings/redeem`.
pub async fn redeem(
    state: web::Data<AppState>,
    payload: web::Payload,
) -> Result<HttpResponse, ApiError> {
    let body = bounded_body(payload).await?;
    let RedeemBody { code } = serde_json::from_slice(&body)
        .map_err(|e| Error::Invalid(format!("the body must be {{\"code\": \"…\"}}: {e}")))?;
    let st = state.into_inner();
    let db = st.db.clone();
    let answer = web::block(move || {
        let r = redeem_pairing(&db, &code, auth::now_unix())?;
        Ok::<_, Error>(match r {
            Redemption::Paired { bundle, team_token } => Ok((bundle, team_token)),
            Redemption::Refused(why) => Err(why),
        })
    })
    .await??;
    Ok(match answer {
        Ok((bundle, token)) => {
            let key = crate::planning::issue::bundle_key(&bundle.file_name);
            let (size, body) = crate::web::evidence_stream(&st.data_dir, &key).await?;
            HttpResponse::Ok()
                .content_type("application/zip")
                .insert_header((TEAM_TOKEN_HEADER, token))
                .insert_header(("Groundproof-Bundle-Id", bundle.id))
                .insert_header(("Cache-Control", "no-store"))
                .no_chunking(size)
                .streaming(body)
        }
        Err(why) => HttpResponse::build(refusal_status(why))
            .insert_header(("Cache-Control", "no-store"))
            .json(json!({"error": why.message(), "refusal": why.as_str()})),
    })
}

/// Register the routes with their permissions.
pub fn configure(cfg: &mut web::ServiceConfig) {
    use crate::platform::auth::Action::IssueBundle;
    use crate::web::access::Access;
    cfg.route(
        "/bundles/{id}/pairings",
        web::post().to(create).needs(IssueBundle),
    )
    .route("/pairings/redeem", web::post().to(redeem).public());
}
