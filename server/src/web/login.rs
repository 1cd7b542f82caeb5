//! `GET/POST /login` and `POST /logout`.

use crate::platform::auth::Principal;
use crate::platform::auth::{self, LoginOutcome, LoginRequest};
use crate::web::AppState;
use crate::web::pages::{Layout, Viewer};
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

#[derive(Template)]
#[template(path = "auth/login.html")]
struct LoginPage<'a> {
    layout: Layout,
    error: Option<String>,
    next: &'a str,
}

#[derive(Deserialize)]
pub struct NextQuery {
    next: Option<String>,
    /// Set when a request came with a session that has ended.
    ended: Option<String>,
}

/// The message id of what the login page says after a session ended under
/// the user (`login-session-ended` in `templates/i18n/`).
pub const SESSION_ENDED: &str = "login-session-ended";

/// The login page in the layout of every page (no navigation: nobody is
/// signed in), `error` being a message id.
fn page(
    req: &HttpRequest,
    status: actix_web::http::StatusCode,
    error: Option<&str>,
    next: &str,
) -> HttpResponse {
    let viewer = Viewer {
        name: None,
        principal: Some(Principal::Anonymous),
    };
    let layout = Layout::new(req, &viewer, "", "");
    let title = layout.tr.t("login-title");
    let error = error.map(|id| layout.tr.t(id));
    let body = LoginPage {
        layout: Layout { title, ..layout },
        error,
        next,
    }
    .render()
    .unwrap_or_else(|e| format!("template error: {e}"));
    HttpResponse::build(status)
        .content_type("text/html; charset=utf-8")
        .insert_header(("Cache-Control", "no-store"))
        .body(body)
}

pub async fn form(req: HttpRequest, q: web::Query<NextQuery>) -> HttpResponse {
    page(
        &req,
        actix_web::http::StatusCode::OK,
        q.ended.as_ref().map(|_| SESSION_ENDED),
        &super::safe_next(q.next.as_deref()),
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
    let next = super::safe_next(f.next.as_deref());
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
            &req,
            actix_web::http::StatusCode::UNAUTHORIZED,
            Some("login-bad-credentials"),
            &next,
        ),
        Ok(Ok(LoginOutcome::Locked { retry_after_secs })) => {
            let mut r = page(
                &req,
                actix_web::http::StatusCode::TOO_MANY_REQUESTS,
                Some("login-locked"),
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
            &req,
            actix_web::http::StatusCode::INTERNAL_SERVER_ERROR,
            Some("login-failed"),
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
