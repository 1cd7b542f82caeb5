//! Who may do what, enforced on every request in one place.
//!
//! The middleware resolves the caller (a bearer API or team token, or the
//! `gp_session` cookie), puts the [`Identity`], its [`Principal`] and the
//! session's [`CsrfToken`] into the request extensions, maps the route to
//! an [`Action`] of the access matrix, and refuses what the matrix does not
//! allow: pages redirect to `/login`, the API answers 401/403 in JSON. A
//! state change made with a session cookie must come from our own origin
//! (Origin/Referer/Sec-Fetch-Site) and carry the CSRF token (form field
//! `csrf_token`, header `x-csrf-token`, or for multipart forms the query
//! parameter `csrf_token`); bearer-token requests carry no cookie and need
//! neither.

use crate::platform::auth::{self, Action, CsrfToken, Identity, Principal};
use crate::web::AppState;
use actix_web::body::{BoxBody, MessageBody};
use actix_web::dev::{Payload, ServiceRequest, ServiceResponse};
use actix_web::http::{Method, StatusCode};
use actix_web::middleware::Next;
use actix_web::{HttpMessage, HttpResponse, web};
use serde_json::json;

/// Largest URL-encoded form body the CSRF check reads.
const MAX_FORM_BYTES: usize = 64 * 1024;

/// What a route needs; `None` means public.
pub fn action_for(method: &Method, path: &str) -> Option<Action> {
    let write = method != Method::GET && method != Method::HEAD;
    let seg: Vec<&str> = path.trim_matches('/').split('/').collect();
    match seg.as_slice() {
        [""] => Some(Action::ViewEvents),
        ["login"] | ["healthz"] | ["static", ..] | ["field", ..] => None,
        ["logout"] => None,
        ["api", "v1", rest @ ..] => Some(api_action(method, write, rest)),
        ["import", ..] => Some(Action::ImportAlerts),
        ["trips", _, "cancel"] => Some(Action::CancelBundle),
        ["trips", ..] if write => Some(Action::IssueBundle),
        ["station", ..] => Some(Action::UploadReturn),
        ["dashboard", ..] => Some(Action::ViewStatistics),
        ["disputes", ..] if write => Some(Action::Adjudicate),
        ["disputes", ..] => Some(Action::ViewStatistics),
        _ => Some(Action::ViewEvents),
    }
}

fn api_action(method: &Method, write: bool, rest: &[&str]) -> Action {
    match rest {
        ["sources", ..] if write => Action::ManageSources,
        ["alerts", ..] => Action::ImportAlerts,
        ["zones", ..] if write => Action::ImportZones,
        ["teams", ..] if write => Action::ManageTeams,
        ["bundles", _, "cancel"] => Action::CancelBundle,
        ["bundles", _, "download"] | ["bundles"] if !write => Action::FetchOwnBundle,
        ["bundles", ..] if write => Action::IssueBundle,
        ["uploads", ..] => Action::UploadReturn,
        ["returns"] if *method == Method::POST => Action::UploadReturn,
        ["returns", ..] => Action::UploadReturn,
        ["events", _, "adjudications"] => Action::Adjudicate,
        ["stats", ..] | ["disputes", ..] => Action::ViewStatistics,
        ["exports", ..] => Action::Export,
        _ => Action::ViewEvents,
    }
}

/// Whether `principal` may do `action`; bundle fetching is also open to
/// users who may issue bundles (they download what they issued).
pub fn permits(principal: Principal, action: Action) -> bool {
    auth::allowed(principal, action)
        || (action == Action::FetchOwnBundle && auth::allowed(principal, Action::IssueBundle))
        || (action == Action::FetchOwnBundle && auth::allowed(principal, Action::ViewEvents))
}

fn refuse(req: ServiceRequest, status: StatusCode, message: &str) -> ServiceResponse<BoxBody> {
    let is_api = req.path().starts_with("/api/");
    let resp = if is_api {
        HttpResponse::build(status).json(json!({"error": message}))
    } else if status == StatusCode::UNAUTHORIZED {
        // A form sent with a session that has ended goes back to the front
        // page after the login (its own path takes no GET); a page asked for
        // comes back itself. A session cookie we no longer know means the
        // session ended, and the login page says so.
        let next = if req.method() == actix_web::http::Method::GET {
            url_escape(req.path())
        } else {
            "/".to_string()
        };
        let had_session = req
            .headers()
            .get("cookie")
            .and_then(|c| c.to_str().ok())
            .and_then(auth::session_token_from_cookie_header)
            .is_some();
        let ended = if had_session { "&ended=1" } else { "" };
        HttpResponse::SeeOther()
            .insert_header(("Location", format!("/login?next={next}{ended}")))
            .finish()
    } else {
        HttpResponse::build(status)
            .content_type("text/html; charset=utf-8")
            .body(format!(
                "<!doctype html><html lang=en><head><meta charset=utf-8><title>Not allowed</title><link rel=icon href=\"/static/icon.svg\" type=\"image/svg+xml\"></head><body><h1>Not allowed</h1><p>{}</p><p><a href=\"/\">Back</a></p></body></html>",
                crate::web::html_escape(message)
            ))
    };
    req.into_response(resp)
}

fn url_escape(s: &str) -> String {
    s.bytes()
        .map(|b| match b {
            b'a'..=b'z' | b'A'..=b'Z' | b'0'..=b'9' | b'/' | b'-' | b'_' | b'.' => {
                (b as char).to_string()
            }
            _ => format!("%{b:02X}"),
        })
        .collect()
}

fn bytes_to_payload(buf: web::Bytes) -> Payload {
    let (_, mut pl) = actix_http::h1::Payload::create(true);
    pl.unread_data(buf);
    Payload::from(pl)
}

fn form_field(body: &[u8], name: &str) -> Option<String> {
    std::str::from_utf8(body).ok()?.split('&').find_map(|kv| {
        let (k, v) = kv.split_once('=')?;
        (k == name).then(|| v.replace('+', " "))
    })
}

/// The middleware (see the module documentation).
pub async fn enforce(
    mut req: ServiceRequest,
    next: Next<impl MessageBody + 'static>,
) -> Result<ServiceResponse<BoxBody>, actix_web::Error> {
    let Some(state) = req.app_data::<web::Data<AppState>>().cloned() else {
        return Ok(next.call(req).await?.map_into_boxed_body());
    };
    let header = |name: &str| {
        req.headers()
            .get(name)
            .and_then(|v| v.to_str().ok())
            .map(str::to_string)
    };
    let bearer = header("authorization").and_then(|h| auth::bearer_token(&h).map(str::to_string));
    let cookie = header("cookie")
        .and_then(|c| auth::session_token_from_cookie_header(&c).map(str::to_string));
    let db = state.db.clone();
    let resolved = web::block(
        move || -> crate::Result<(Identity, Option<auth::SessionIdentity>)> {
            if let Some(t) = bearer {
                return Ok((auth::authenticate_bearer(&db, &t)?, None));
            }
            let session = match cookie {
                Some(t) => auth::authenticate_session(
                    &db,
                    &t,
                    auth::now_unix(),
                    &auth::AuthConfig::default(),
                )?,
                None => None,
            };
            Ok(match session {
                Some(s) => (s.identity(), Some(s)),
                None => (Identity::Anonymous, None),
            })
        },
    )
    .await;
    let (identity, session) = match resolved {
        Ok(Ok(v)) => v,
        _ => {
            return Ok(refuse(
                req,
                StatusCode::INTERNAL_SERVER_ERROR,
                "could not check who you are",
            ));
        }
    };
    let principal = identity.principal();
    if let Some(t) = session.as_ref().and_then(|s| s.csrf_token().ok()) {
        req.extensions_mut().insert(CsrfToken(t));
    }
    req.extensions_mut().insert(identity.clone());
    req.extensions_mut().insert(principal);

    let method = req.method().clone();
    let write = method != Method::GET && method != Method::HEAD && method != Method::OPTIONS;
    if let Some(action) = action_for(&method, req.path()) {
        if principal == Principal::Anonymous {
            return Ok(refuse(
                req,
                StatusCode::UNAUTHORIZED,
                "log in first (or send a bearer token)",
            ));
        }
        if !permits(principal, action) {
            let msg = format!(
                "your role ({}) may not {}",
                principal.as_str(),
                action.describe()
            );
            return Ok(refuse(req, StatusCode::FORBIDDEN, &msg));
        }
    }
    // Cross-site and CSRF checks for cookie sessions (and the login form).
    let cookie_write = write && session.is_some();
    if cookie_write || (write && req.path() == "/login") {
        let same = auth::is_same_origin(
            header("origin").as_deref(),
            header("referer").as_deref(),
            header("host").as_deref(),
            header("sec-fetch-site").as_deref(),
        );
        if !same {
            return Ok(refuse(
                req,
                StatusCode::FORBIDDEN,
                "this form was sent from another site; reload the page and try again",
            ));
        }
    }
    if let Some(s) = session.filter(|_| cookie_write) {
        let mut presented = header(auth::CSRF_HEADER);
        if presented.is_none() {
            presented = req
                .query_string()
                .split('&')
                .find_map(|kv| kv.strip_prefix("csrf_token=").map(str::to_string));
        }
        let is_form = header("content-type")
            .is_some_and(|c| c.starts_with("application/x-www-form-urlencoded"));
        if presented.is_none() && is_form {
            let body = match req.extract::<web::Bytes>().await {
                Ok(b) if b.len() <= MAX_FORM_BYTES => b,
                _ => {
                    return Ok(refuse(
                        req,
                        StatusCode::PAYLOAD_TOO_LARGE,
                        "the form is too large",
                    ));
                }
            };
            presented = form_field(&body, auth::CSRF_FIELD).map(|v| {
                v.replace("%3D", "=")
                    .replace("%2B", "+")
                    .replace("%2F", "/")
            });
            req.set_payload(bytes_to_payload(body));
        }
        if !presented.is_some_and(|p| s.verify_csrf(&p)) {
            return Ok(refuse(
                req,
                StatusCode::FORBIDDEN,
                "the form's security token is missing or stale; reload the page and try again",
            ));
        }
    }
    Ok(next.call(req).await?.map_into_boxed_body())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn routes_map_to_actions() {
        let g = Method::GET;
        let p = Method::POST;
        assert_eq!(action_for(&g, "/login"), None);
        assert_eq!(action_for(&g, "/static/site.css"), None);
        assert_eq!(action_for(&p, "/api/v1/bundles"), Some(Action::IssueBundle));
        assert_eq!(
            action_for(&g, "/api/v1/bundles/x/download"),
            Some(Action::FetchOwnBundle)
        );
        assert_eq!(
            action_for(&p, "/api/v1/bundles/x/cancel"),
            Some(Action::CancelBundle)
        );
        assert_eq!(
            action_for(&p, "/api/v1/events/3/adjudications"),
            Some(Action::Adjudicate)
        );
        assert_eq!(
            action_for(&g, "/api/v1/stats/coverage"),
            Some(Action::ViewStatistics)
        );
        assert_eq!(
            action_for(&Method::PATCH, "/api/v1/uploads/u1"),
            Some(Action::UploadReturn)
        );
        assert_eq!(
            action_for(&p, "/disputes/4/adjudicate"),
            Some(Action::Adjudicate)
        );
        assert_eq!(action_for(&g, "/events"), Some(Action::ViewEvents));
    }
}
