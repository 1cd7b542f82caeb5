//! Server-rendered HTML pages (askama templates under `templates/pages/`,
//! one layout `templates/base.html`, one embedded style sheet). They work
//! without JavaScript and load nothing from outside the server. Each page
//! calls the same services as the JSON API.
//!
//! | method and path | page |
//! |---|---|
//! | `GET /` | redirect: managers to `/dashboard`, everyone else to `/events` |
//! | `GET /events`, `GET /events/{id}` | events: filters, map, table; one event |
//! | `GET /import`, `POST /import/alerts`, `POST /import/zones` | import files |
//! | `GET /trips`, `POST /trips`, `POST /trips/preview`, `GET /trips/{id}`, `POST /trips/{id}/cancel`, `POST /trips/{id}/pair` | trips (bundles): list with states, one trip, pairing a phone |
//! | `GET /station`, `POST /station` | upload a return package |
//! | `/station/trips/{id}` (`GET`, `POST`, `POST …/photos`, `POST …/discard`, `GET …/thumbs/{sha}`) | enter a trip from its paper sheet and camera photos |
//! | `GET /dashboard` | figures for managers |
//! | `GET /summary` | printable summary of the figures for a period and zone |
//! | `GET /disputes`, `POST /disputes/{id}/adjudicate` | disputes |
//! | `GET /admin`, `GET /admin/log` | administration (admins only): index, change log |
//! | `GET/POST /admin/users`, `POST /admin/users/{id}/{role,password,disable,enable}` | users |
//! | `GET/POST /admin/teams`, `POST /admin/teams/{id}/{disable,enable,tokens}`, `POST /admin/tokens/{id}/revoke` | teams and team tokens |
//! | `GET/POST /admin/api-tokens`, `POST /admin/api-tokens/{id}/revoke` | API tokens for scripts |
//! | `GET/POST /admin/sources`, `POST /admin/sources/{id}` | alert sources |
//! | `GET/POST /admin/settings` | settings |
//! | `GET /static/app.css` | the style sheet |
//!
//! Each route's permission is named in [`configure`] and checked before its
//! handler runs (`web::access`); handlers read who is asking from the request
//! extensions ([`crate::platform::auth::Identity`] or
//! [`crate::platform::auth::Principal`]) only to show or hide controls. Every
//! POST form carries [`csrf_field`].

mod admin;
mod admin_settings;
mod admin_sources;
mod admin_teams;
mod admin_tokens;
mod admin_users;
mod assets;
mod common;
mod dashboard;
mod dashboard_map;
mod disputes;
mod events;
mod figure_words;
mod form;
mod import;
mod live_map;
mod preview;
mod station;
mod station_entry;
mod summary;
mod trip_form;
mod trip_page;
mod trips;
mod views;

pub use common::{Layout, PageError, Viewer};

use actix_web::{HttpMessage, HttpRequest, HttpResponse, web};

/// The hidden CSRF input of every POST form: the token from the request
/// extension [`crate::platform::auth::CsrfToken`], escaped, or an empty string when
/// the request has none.
pub fn csrf_field(req: &HttpRequest) -> String {
    match req.extensions().get::<crate::platform::auth::CsrfToken>() {
        Some(t) if !t.0.is_empty() => format!(
            r#"<input type="hidden" name="{}" value="{}">"#,
            crate::platform::auth::CSRF_FIELD,
            crate::web::charts::escape(&t.0)
        ),
        _ => String::new(),
    }
}

/// `?csrf_token=TOKEN` (percent-encoded) for the action URL of a
/// multipart form, or an empty string when the request has no token.
pub fn csrf_query(req: &HttpRequest) -> String {
    match req.extensions().get::<crate::platform::auth::CsrfToken>() {
        Some(t) if !t.0.is_empty() => {
            format!(
                "?{}={}",
                crate::platform::auth::CSRF_FIELD,
                events::urlencode(&t.0)
            )
        }
        _ => String::new(),
    }
}

/// `GET /`: where a user starts.
pub async fn home(req: HttpRequest) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let to = if viewer.principal == Some(crate::platform::auth::Principal::Manager) {
        "/dashboard"
    } else {
        "/events"
    };
    HttpResponse::SeeOther()
        .insert_header(("Location", to))
        .finish()
}

/// Register the page routes (after the `/api/v1` scope), each with the
/// permission it needs.
pub fn configure(cfg: &mut web::ServiceConfig) {
    use crate::platform::auth::Action::*;
    use crate::web::access::Access;
    cfg.route("/", web::get().to(home).needs(ViewEvents))
        .route("/static/{name}", web::get().to(assets::asset).public())
        .route("/events", web::get().to(events::list).needs(ViewEvents))
        .route("/events/{id}", web::get().to(events::one).needs(ViewEvents))
        .route("/import", web::get().to(import::form).needs(ImportAlerts))
        .route(
            "/import/alerts",
            web::post().to(import::alerts).needs(ImportAlerts),
        )
        .route(
            "/import/zones",
            web::post().to(import::zones).needs(ImportZones),
        )
        .route("/trips", web::get().to(trips::list).needs(ViewEvents))
        .route("/trips", web::post().to(preview::issue).needs(IssueBundle))
        .route(
            "/trips/preview",
            web::post().to(preview::preview).needs(IssueBundle),
        )
        .route(
            "/trips/{id}",
            web::get().to(trip_page::show).needs(ViewEvents),
        )
        .route(
            "/trips/{id}/cancel",
            web::post().to(trips::cancel).needs(CancelBundle),
        )
        .route(
            "/trips/{id}/pair",
            web::post().to(trips::pair).needs(IssueBundle),
        )
        .route("/station", web::get().to(station::form).needs(UploadReturn))
        .route(
            "/station",
            web::post().to(station::upload).needs(UploadReturn),
        )
        .service(
            web::resource("/station/trips/{id}")
                .app_data(web::FormConfig::default().limit(station_entry::MAX_ENTRY_FORM_BYTES))
                .route(web::get().to(station_entry::show).needs(EnterFromPaper))
                .route(web::post().to(station_entry::save).needs(EnterFromPaper)),
        )
        .route(
            "/station/trips/{id}/photos",
            web::post().to(station_entry::photos).needs(EnterFromPaper),
        )
        .route(
            "/station/trips/{id}/discard",
            web::post().to(station_entry::discard).needs(EnterFromPaper),
        )
        .route(
            "/station/trips/{id}/thumbs/{sha}",
            web::get().to(station_entry::thumb).needs(EnterFromPaper),
        )
        .route(
            "/dashboard",
            web::get().to(dashboard::show).needs(ViewStatistics),
        )
        .route(
            "/summary",
            web::get().to(summary::show).needs(ViewStatistics),
        )
        .route(
            "/disputes",
            web::get().to(disputes::list).needs(ViewStatistics),
        )
        .route(
            "/disputes/{id}/adjudicate",
            web::post().to(disputes::adjudicate).needs(Adjudicate),
        );
    configure_admin(cfg);
}

/// The administration routes: every one needs `Administer` (admins only).
fn configure_admin(cfg: &mut web::ServiceConfig) {
    use crate::platform::auth::Action::Administer;
    use crate::web::access::Access;
    let add = |cfg: &mut web::ServiceConfig, path: &str, r: actix_web::Route| {
        cfg.route(path, r.needs(Administer));
    };
    add(cfg, "/admin", web::get().to(admin::index));
    add(cfg, "/admin/log", web::get().to(admin::log));
    add(cfg, "/admin/users", web::get().to(admin_users::list));
    add(cfg, "/admin/users", web::post().to(admin_users::add));
    add(
        cfg,
        "/admin/users/{id}/role",
        web::post().to(admin_users::set_role),
    );
    add(
        cfg,
        "/admin/users/{id}/password",
        web::post().to(admin_users::reset_password),
    );
    add(
        cfg,
        "/admin/users/{id}/disable",
        web::post().to(admin_users::disable),
    );
    add(
        cfg,
        "/admin/users/{id}/enable",
        web::post().to(admin_users::enable),
    );
    add(cfg, "/admin/teams", web::get().to(admin_teams::list));
    add(cfg, "/admin/teams", web::post().to(admin_teams::add));
    add(
        cfg,
        "/admin/teams/{id}/disable",
        web::post().to(admin_teams::disable),
    );
    add(
        cfg,
        "/admin/teams/{id}/enable",
        web::post().to(admin_teams::enable),
    );
    add(
        cfg,
        "/admin/teams/{id}/tokens",
        web::post().to(admin_teams::new_token),
    );
    add(
        cfg,
        "/admin/tokens/{id}/revoke",
        web::post().to(admin_teams::revoke_token),
    );
    add(cfg, "/admin/api-tokens", web::get().to(admin_tokens::list));
    add(
        cfg,
        "/admin/api-tokens",
        web::post().to(admin_tokens::create),
    );
    add(
        cfg,
        "/admin/api-tokens/{id}/revoke",
        web::post().to(admin_tokens::revoke),
    );
    add(cfg, "/admin/sources", web::get().to(admin_sources::list));
    add(cfg, "/admin/sources", web::post().to(admin_sources::add));
    add(
        cfg,
        "/admin/sources/{id}",
        web::post().to(admin_sources::edit),
    );
    add(cfg, "/admin/settings", web::get().to(admin_settings::show));
    add(cfg, "/admin/settings", web::post().to(admin_settings::save));
}

#[cfg(test)]
mod tests {
    use super::*;
    use actix_web::test::TestRequest;

    #[test]
    fn the_csrf_field_is_escaped_and_absent_without_a_token() {
        let req = TestRequest::default().to_http_request();
        assert_eq!(csrf_field(&req), "");
        assert_eq!(csrf_query(&req), "");
        req.extensions_mut()
            .insert(crate::platform::auth::CsrfToken("a\"b<c".into()));
        assert_eq!(
            csrf_field(&req),
            r#"<input type="hidden" name="csrf_token" value="a&quot;b&lt;c">"#
        );
        assert_eq!(csrf_query(&req), "?csrf_token=a%22b%3Cc");
    }
}
