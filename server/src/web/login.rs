//! `GET/POST /login` and `POST /logout`.

use crate::platform::auth::{self, LoginOutcome, LoginRequest};
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

#[derive(Template)]
#[template(path = "auth/login.html")]
struct LoginPage<'a> {
    error: Option<&'a str>,
    next: &'a str,
}

#[derive(Deserialize)]
pub struct NextQuery {
    next: Option<String>,
    /// Set when a request came with a session that has ended.
    ended: Option<String>,
}

/// What the login page says after a session ended under the user.
pub const SESSION_ENDED: &str = "Your session has ended (it timed out, or you logged out elsewhere). Log in again; what you last sent was not saved.";

/// Only local paths are followed after login (no open redirect).
fn safe_next(n: Option<&str>) -> String {
    match n {
        Some(p)
            if p.starts_with('/') && !p.starts_with("//") && !p.contains('\\') && p.len() < 512 =>
        {
            p.to_string()
        }
        _ => "/".to_string(),
    }
}

fn page(status: actix_web::http::StatusCode, error: Option<&str>, next: &str) -> HttpResponse {
    let body = LoginPage { error, next }
        .render()
        .unwrap_or_else(|e| format!("template error: {e}"));
    HttpResponse::build(status)
        .content_type("text/html; charset=utf-8")
        .insert_header(("Cache-Control", "no-store"))
        .body(body)
}

pub async fn form(q: web::Query<NextQuery>) -> HttpResponse {
    page(
        actix_web::http::StatusCode::OK,
        q.ended.as_ref().map(|_| SESSION_ENDED),
        &safe_next(q.next.as_deref()),
    )
}

#[derive(Deserialize)]
pub struct LoginForm {
    name: String,
    password: String,
    next: Option<String>,
}

pub async fn submit(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: web::Form<LoginForm>,
) -> HttpResponse {
    let f = form.into_inner();
    let next = safe_next(f.next.as_deref());
    let client = req
        .peer_addr()
        .map(|a| a.ip().to_string())
        .unwrap_or_else(|| "unknown".into());
    let previous = req
        .headers()
        .get("cookie")
        .and_then(|c| c.to_str().ok())
        .and_then(auth::session_token_from_cookie_header)
        .map(str::to_string);
    let secure = req.connection_info().scheme() == "https";
    let db = state.db.clone();
    let outcome = web::block(move || {
        auth::login(
            &db,
            &LoginRequest {
                name: &f.name,
                password: &f.password,
                client: &client,
                previous_session: previous.as_deref(),
            },
            auth::now_unix(),
            &auth::AuthConfig::default(),
        )
    })
    .await;
    match outcome {
        Ok(Ok(LoginOutcome::LoggedIn(s))) => HttpResponse::SeeOther()
            .insert_header((
                "Set-Cookie",
                auth::session_cookie(&s.token, secure, &auth::AuthConfig::default().session),
            ))
            .insert_header(("Location", next))
            .finish(),
        Ok(Ok(LoginOutcome::BadCredentials)) => page(
            actix_web::http::StatusCode::UNAUTHORIZED,
            Some("That user name and password do not match."),
            &next,
        ),
        Ok(Ok(LoginOutcome::Locked { retry_after_secs })) => {
            let mut r = page(
                actix_web::http::StatusCode::TOO_MANY_REQUESTS,
                Some("Too many failed attempts: wait 15 minutes and try again."),
                &next,
            );
            if let Ok(v) =
                actix_web::http::header::HeaderValue::from_str(&retry_after_secs.to_string())
            {
                r.headers_mut()
                    .insert(actix_web::http::header::RETRY_AFTER, v);
            }
            r
        }
        _ => page(
            actix_web::http::StatusCode::INTERNAL_SERVER_ERROR,
            Some("Login failed; see the server log."),
            &next,
        ),
    }
}

pub async fn logout(req: HttpRequest, state: web::Data<AppState>) -> HttpResponse {
    let token = req
        .headers()
        .get("cookie")
        .and_then(|c| c.to_str().ok())
        .and_then(auth::session_token_from_cookie_header)
        .map(str::to_string);
    if let Some(t) = token {
        let db = state.db.clone();
        let _ = web::block(move || auth::logout(&db, &t)).await;
    }
    let secure = req.connection_info().scheme() == "https";
    HttpResponse::SeeOther()
        .insert_header(("Set-Cookie", auth::clear_session_cookie(secure)))
        .insert_header(("Location", "/login"))
        .finish()
}
