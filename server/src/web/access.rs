//! Who may do what: the permission of each route is named once, where the
//! route is registered (`web::configure`, `api::configure`,
//! `pages::configure`), with [`Access::needs`] or [`Access::public`].
//!
//! Two steps make a decision. [`resolve`] (wrapped around the whole app)
//! finds out who is asking: a bearer API or team token, or the `gp_session`
//! cookie; it puts the [`Identity`], its [`Principal`], the session and the
//! session's [`CsrfToken`] into the request extensions. The route's own
//! check ([`check`], wrapped around the one route) then refuses what the
//! access matrix does not allow: pages redirect to `/login`, the API answers
//! 401/403 in JSON. A state change made with a session cookie must come
//! from our own origin (Origin/Referer/Sec-Fetch-Site) and carry the CSRF
//! token (form field `csrf_token`, header `x-csrf-token`, or for multipart
//! forms the query parameter `csrf_token`); bearer-token requests carry no
//! cookie and need neither. A request that matches no route needs
//! [`Action::ViewEvents`] before it hears 404 (`web::configure`).

use crate::platform::auth::{self, Action, CsrfToken, Identity, Principal};
use crate::web::AppState;
use actix_web::body::{BoxBody, MessageBody};
use actix_web::dev::{Payload, ServiceRequest, ServiceResponse};
use actix_web::http::{Method, StatusCode};
use actix_web::middleware::{Next, from_fn};
use actix_web::{HttpMessage, HttpResponse, Route, web};
use serde_json::json;

/// Largest URL-encoded form body the CSRF check reads.
const MAX_FORM_BYTES: usize = 64 * 1024;

/// What a route needs: nothing (public) or an action of the matrix.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rule {
    /// Anyone, signed in or not (the login page, static files, health).
    Public,
    /// A caller whose principal [`permits`] the action.
    Allow(Action),
}

/// Naming a route's permission where it is registered:
/// `.route("/trips", web::post().to(trips::issue).needs(Action::IssueBundle))`.
pub trait Access {
    /// Only callers allowed `action` reach the handler.
    fn needs(self, action: Action) -> Route;
    /// Anyone reaches the handler (a cookie session still needs our origin
    /// and its CSRF token to change anything).
    fn public(self) -> Route;
}

impl Access for Route {
    fn needs(self, action: Action) -> Route {
        guarded(self, Rule::Allow(action))
    }

    fn public(self) -> Route {
        guarded(self, Rule::Public)
    }
}

fn guarded(route: Route, rule: Rule) -> Route {
    route.wrap(from_fn(move |req, next| check(rule, req, next)))
}

/// Whether `principal` may do `action`; the bundle routes of
/// `FetchOwnBundle` are also open to users who may issue bundles or see
/// events (the list and a bundle's record; the file itself, which holds the
/// upload key, is refused to managers by [`auth::may_fetch_bundle`] in the
/// handler).
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
            crate::web::urls::percent_encode(req.path(), crate::web::urls::PATH)
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

/// Finds out who is asking (see the module documentation); answers 500
/// when the credentials cannot be checked.
pub async fn resolve(
    req: ServiceRequest,
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
    // A bearer token verified since the last commit is known without a
    // database read or a trip to the blocking pool (`auth::VerifiedTokens`;
    // on PostgreSQL its stamp is a round trip, taken in `who`).
    let kept = bearer
        .as_deref()
        .filter(|_| state.tokens.is_instant(&state.db))
        .and_then(|t| state.tokens.get(&state.db, t));
    let resolved = match kept {
        Some(identity) => Ok(Ok((identity, None, None))),
        None => who(&state, bearer, cookie).await,
    };
    let (identity, session, paired) = match resolved {
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
    if let Some(s) = session {
        // The user's own language for the pages (`web::i18n`), when chosen.
        let (db, id) = (state.db.clone(), s.user.id);
        if let Ok(Ok(Some(l))) = web::block(move || db.read(|r| r.user_language(id))).await {
            req.extensions_mut()
                .insert(crate::platform::i18n::ChosenLanguage(l));
        }
        req.extensions_mut().insert(s);
    }
    if let Some(p) = paired {
        req.extensions_mut().insert(p);
    }
    req.extensions_mut().insert(identity);
    req.extensions_mut().insert(principal);
    Ok(next.call(req).await?.map_into_boxed_body())
}

/// Who the caller is, from the database: a bearer token (kept for the next
/// requests when it may be, `auth::VerifiedTokens`) or the session cookie.
async fn who(
    state: &AppState,
    bearer: Option<String>,
    cookie: Option<String>,
) -> Result<crate::Result<Who>, actix_web::error::BlockingError> {
    let (db, tokens) = (state.db.clone(), state.tokens.clone());
    web::block(move || -> crate::Result<Who> {
        if let Some(t) = bearer {
            // Taken before the lookup: a commit during it moves the stamp.
            let stamp = tokens.stamp(&db);
            if let Some(identity) = stamp.and_then(|s| tokens.find(s, &t)) {
                return Ok((identity, None, None));
            }
            let (identity, paired) = scoped(&db, auth::authenticate_bearer(&db, &t)?)?;
            if let (Some(stamp), None) = (stamp, &paired) {
                tokens.keep(stamp, &t, &identity);
            }
            return Ok((identity, None, paired));
        }
        let session = match cookie {
            Some(t) => {
                auth::authenticate_session(&db, &t, auth::now_unix(), &auth::AuthConfig::default())?
            }
            None => None,
        };
        Ok(match session {
            Some(s) => (s.identity(), Some(s), None),
            None => (Identity::Anonymous, None, None),
        })
    })
    .await
}

/// The caller, a session's details and a paired phone's bundle.
type Who = (
    Identity,
    Option<auth::SessionIdentity>,
    Option<auth::PairedBundle>,
);

/// A phone's team token from pairing speaks for its one bundle, and for
/// nobody once that bundle is cancelled or expired (`auth::token_scope`).
fn scoped(
    db: &crate::platform::storage::Db,
    identity: Identity,
) -> crate::Result<(Identity, Option<auth::PairedBundle>)> {
    let Identity::Team { token_id, .. } = &identity else {
        return Ok((identity, None));
    };
    Ok(match auth::token_scope(db, *token_id, auth::now_unix())? {
        auth::TokenScope::Team => (identity, None),
        auth::TokenScope::Bundle(b) => (identity, Some(b)),
        auth::TokenScope::Dead => (Identity::Anonymous, None),
    })
}

/// The check of one route: `rule` for the caller [`resolve`] found (nobody
/// when it did not run), then the same-origin and CSRF checks of a cookie
/// session's state change.
pub async fn check(
    rule: Rule,
    mut req: ServiceRequest,
    next: Next<impl MessageBody + 'static>,
) -> Result<ServiceResponse<BoxBody>, actix_web::Error> {
    let principal = req
        .extensions()
        .get::<Principal>()
        .copied()
        .unwrap_or(Principal::Anonymous);
    let session = req.extensions().get::<auth::SessionIdentity>().cloned();
    let method = req.method().clone();
    let write = method != Method::GET && method != Method::HEAD && method != Method::OPTIONS;
    if let Some((status, msg)) = rule_refusal(rule, principal) {
        return Ok(refuse(req, status, &msg));
    }
    // Cross-site and CSRF checks for cookie sessions (and the login form).
    let cookie_write = write && session.is_some();
    if (cookie_write || (write && req.path() == "/login")) && !same_origin(&req) {
        return Ok(refuse(
            req,
            StatusCode::FORBIDDEN,
            "this form was sent from another site; reload the page and try again",
        ));
    }
    if let Some(s) = session.filter(|_| cookie_write)
        && let Some((status, msg)) = csrf_refusal(&mut req, &s).await
    {
        return Ok(refuse(req, status, msg));
    }
    Ok(next.call(req).await?.map_into_boxed_body())
}

/// A request header as text, when present and readable.
fn header_of(req: &ServiceRequest, name: &str) -> Option<String> {
    req.headers()
        .get(name)
        .and_then(|v| v.to_str().ok())
        .map(str::to_string)
}

/// Why `rule` refuses `principal` (401 for nobody, 403 for a role not
/// allowed), or `None`.
fn rule_refusal(rule: Rule, principal: Principal) -> Option<(StatusCode, String)> {
    let Rule::Allow(action) = rule else {
        return None;
    };
    if principal == Principal::Anonymous {
        return Some((
            StatusCode::UNAUTHORIZED,
            "log in first (or send a bearer token)".to_string(),
        ));
    }
    if !permits(principal, action) {
        let msg = format!(
            "your role ({}) may not {}",
            principal.as_str(),
            action.describe()
        );
        return Some((StatusCode::FORBIDDEN, msg));
    }
    None
}

/// Whether the request comes from our own origin (Origin, Referer, Host,
/// Sec-Fetch-Site).
fn same_origin(req: &ServiceRequest) -> bool {
    auth::is_same_origin(
        header_of(req, "origin").as_deref(),
        header_of(req, "referer").as_deref(),
        header_of(req, "host").as_deref(),
        header_of(req, "sec-fetch-site").as_deref(),
    )
}

/// Why the session's CSRF token is not presented (header, query parameter,
/// or for a URL-encoded form the body field, whose bytes are put back for
/// the handler), or `None` when it is.
async fn csrf_refusal(
    req: &mut ServiceRequest,
    s: &auth::SessionIdentity,
) -> Option<(StatusCode, &'static str)> {
    let mut presented = header_of(req, auth::CSRF_HEADER);
    if presented.is_none() {
        presented = req
            .query_string()
            .split('&')
            .find_map(|kv| kv.strip_prefix("csrf_token=").map(str::to_string));
    }
    let is_form = header_of(req, "content-type")
        .is_some_and(|c| c.starts_with("application/x-www-form-urlencoded"));
    if presented.is_none() && is_form {
        let body = match req.extract::<web::Bytes>().await {
            Ok(b) if b.len() <= MAX_FORM_BYTES => b,
            _ => return Some((StatusCode::PAYLOAD_TOO_LARGE, "the form is too large")),
        };
        presented = form_field(&body, auth::CSRF_FIELD).map(|v| {
            v.replace("%3D", "=")
                .replace("%2B", "+")
                .replace("%2F", "/")
        });
        req.set_payload(bytes_to_payload(body));
    }
    if !presented.is_some_and(|p| s.verify_csrf(&p)) {
        return Some((
            StatusCode::FORBIDDEN,
            "the form's security token is missing or stale; reload the page and try again",
        ));
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::platform::auth::Role;
    use actix_web::test::{TestRequest, call_service, init_service, read_body};
    use actix_web::{App, http::Method};

    /// Stands in for [`resolve`]: the caller named by the `x-test-as`
    /// header (none: anonymous, like a request without credentials).
    async fn as_header(
        req: ServiceRequest,
        next: Next<impl MessageBody + 'static>,
    ) -> Result<ServiceResponse<BoxBody>, actix_web::Error> {
        let who = req
            .headers()
            .get("x-test-as")
            .and_then(|v| v.to_str().ok())
            .unwrap_or("")
            .to_string();
        let user = |role| Identity::User {
            user_id: 1,
            name: "u".into(),
            role,
        };
        let identity = match who.as_str() {
            "admin" => user(Role::Admin),
            "coordinator" => user(Role::Coordinator),
            "manager" => user(Role::Manager),
            "api-manager" => Identity::ApiToken {
                token_id: 2,
                label: "script".into(),
                role: Role::Manager,
            },
            "team" => Identity::Team {
                token_id: 3,
                team_name: "Team Amber".into(),
            },
            _ => Identity::Anonymous,
        };
        req.extensions_mut().insert(identity.principal());
        req.extensions_mut().insert(identity);
        Ok(next.call(req).await?.map_into_boxed_body())
    }

    /// Every registered route with the permission the access matrix of the
    /// README gives it (the routes as `web::configure` registers them).
    const ROUTES: &[(&str, &str, Option<Action>)] = &[
        ("GET", "/", Some(Action::ViewEvents)),
        ("GET", "/healthz", None),
        ("GET", "/login", None),
        ("POST", "/language", None),
        ("GET", "/static/app.css", None),
        ("GET", "/events", Some(Action::ViewEvents)),
        ("GET", "/events/1", Some(Action::ViewEvents)),
        ("GET", "/import", Some(Action::ImportAlerts)),
        ("POST", "/import/alerts", Some(Action::ImportAlerts)),
        ("POST", "/import/zones", Some(Action::ImportZones)),
        ("GET", "/trips", Some(Action::ViewEvents)),
        ("POST", "/trips", Some(Action::IssueBundle)),
        ("POST", "/trips/x/cancel", Some(Action::CancelBundle)),
        ("GET", "/station", Some(Action::UploadReturn)),
        ("POST", "/station", Some(Action::UploadReturn)),
        ("GET", "/station/trips/x", Some(Action::EnterFromPaper)),
        ("POST", "/station/trips/x", Some(Action::EnterFromPaper)),
        (
            "POST",
            "/station/trips/x/photos",
            Some(Action::EnterFromPaper),
        ),
        (
            "POST",
            "/station/trips/x/discard",
            Some(Action::EnterFromPaper),
        ),
        (
            "GET",
            "/station/trips/x/thumbs/ab",
            Some(Action::EnterFromPaper),
        ),
        ("GET", "/dashboard", Some(Action::ViewStatistics)),
        ("GET", "/summary", Some(Action::ViewStatistics)),
        ("GET", "/disputes", Some(Action::ViewStatistics)),
        ("POST", "/disputes/1/adjudicate", Some(Action::Adjudicate)),
        ("GET", "/no/such/page", Some(Action::ViewEvents)),
        ("GET", "/api/v1/sources", Some(Action::ViewEvents)),
        ("POST", "/api/v1/sources", Some(Action::ManageSources)),
        ("POST", "/api/v1/alerts", Some(Action::ImportAlerts)),
        ("GET", "/api/v1/zones", Some(Action::ViewEvents)),
        ("POST", "/api/v1/zones", Some(Action::ImportZones)),
        ("GET", "/api/v1/events", Some(Action::ViewEvents)),
        ("GET", "/api/v1/events/1", Some(Action::ViewEvents)),
        ("GET", "/api/v1/stats", Some(Action::ViewStatistics)),
        (
            "GET",
            "/api/v1/stats/coverage",
            Some(Action::ViewStatistics),
        ),
        ("GET", "/api/v1/disputes", Some(Action::ViewStatistics)),
        (
            "POST",
            "/api/v1/events/1/adjudications",
            Some(Action::Adjudicate),
        ),
        (
            "GET",
            "/api/v1/exports/events.geojson",
            Some(Action::Export),
        ),
        ("GET", "/api/v1/teams", Some(Action::ViewEvents)),
        ("POST", "/api/v1/teams", Some(Action::ManageTeams)),
        ("GET", "/api/v1/bundles", Some(Action::FetchOwnBundle)),
        ("POST", "/api/v1/bundles", Some(Action::IssueBundle)),
        ("GET", "/api/v1/bundles/x", Some(Action::FetchOwnBundle)),
        (
            "GET",
            "/api/v1/bundles/x/download",
            Some(Action::FetchOwnBundle),
        ),
        (
            "POST",
            "/api/v1/bundles/x/cancel",
            Some(Action::CancelBundle),
        ),
        ("POST", "/api/v1/uploads", Some(Action::UploadReturn)),
        ("HEAD", "/api/v1/uploads/u1", Some(Action::UploadReturn)),
        ("PATCH", "/api/v1/uploads/u1", Some(Action::UploadReturn)),
        ("DELETE", "/api/v1/uploads/u1", Some(Action::UploadReturn)),
        (
            "POST",
            "/api/v1/uploads/u1/complete",
            Some(Action::UploadReturn),
        ),
        ("POST", "/api/v1/returns", Some(Action::UploadReturn)),
        ("GET", "/api/v1/returns/1", Some(Action::UploadReturn)),
        ("GET", "/api/v1/events/1/reports", Some(Action::ViewEvents)),
        (
            "GET",
            "/api/v1/photos/ab/thumbnail",
            Some(Action::ViewEvents),
        ),
        (
            "GET",
            "/api/v1/photos/ab/original",
            Some(Action::ViewEvents),
        ),
        ("GET", "/api/v1/no-such-thing", Some(Action::ViewEvents)),
    ];

    const CALLERS: [(&str, Principal); 6] = [
        ("", Principal::Anonymous),
        ("admin", Principal::Admin),
        ("coordinator", Principal::Coordinator),
        ("manager", Principal::Manager),
        ("api-manager", Principal::Manager),
        ("team", Principal::Team),
    ];

    #[actix_web::test]
    async fn each_route_enforces_the_permission_it_was_registered_with() {
        let app = init_service(
            App::new()
                .wrap(from_fn(as_header))
                .configure(crate::web::configure),
        )
        .await;
        for &(method, path, action) in ROUTES {
            for (who, principal) in CALLERS {
                let req = TestRequest::default()
                    .method(Method::from_bytes(method.as_bytes()).unwrap())
                    .uri(path)
                    .insert_header(("x-test-as", who))
                    .to_request();
                let resp = call_service(&app, req).await;
                let status = resp.status().as_u16();
                let location = resp
                    .headers()
                    .get("location")
                    .and_then(|v| v.to_str().ok())
                    .map(str::to_string);
                let body = String::from_utf8_lossy(&read_body(resp).await).to_string();
                let api = path.starts_with("/api/");
                let case = format!("{method} {path} as {principal:?}: {status} {body}");
                match action {
                    Some(_) if principal == Principal::Anonymous => {
                        if api {
                            assert_eq!(status, 401, "{case}");
                            assert!(body.contains("log in first"), "{case}");
                        } else {
                            assert_eq!(status, 303, "{case}");
                            let next = if method == "GET" { path } else { "/" };
                            assert_eq!(location, Some(format!("/login?next={next}")), "{case}");
                        }
                    }
                    Some(a) if !permits(principal, a) => {
                        assert_eq!(status, 403, "{case}");
                        let why = format!("your role ({}) may not", principal.as_str());
                        assert!(body.contains(&why), "{case}");
                    }
                    // Let through: the handler answers (here without the
                    // app state, so not with a refusal of the caller).
                    _ => assert!(status != 401 && status != 403, "{case}"),
                }
            }
        }
    }

    #[test]
    fn bundle_fetching_is_open_to_teams_and_to_users_who_see_bundles() {
        for p in [
            Principal::Admin,
            Principal::Coordinator,
            Principal::Manager,
            Principal::Team,
        ] {
            assert!(permits(p, Action::FetchOwnBundle), "{p:?}");
        }
        assert!(!permits(Principal::Anonymous, Action::FetchOwnBundle));
        assert!(!permits(Principal::Team, Action::ViewEvents));
    }
}
