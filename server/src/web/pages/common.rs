//! What every page shares: who is asking (from the request extensions the
//! auth layer sets), the layout fields of
//! `templates/base.html`, the HTML rendering of the page error type
//! ([`PageError`], made from [`crate::Error`] in `web::error`), and
//! small text formatters.
//!
//! Access is decided before a handler runs, from the permission named where
//! its route is registered (`pages::configure`, checked by `web::access`).
//! [`Viewer::may`] only shows or hides links and forms.

pub use crate::web::error::PageError;

use crate::platform::auth::{Action, Identity, Principal, allowed};
use crate::platform::i18n::Tr;
use crate::platform::settings::Settings;
use actix_web::http::StatusCode;
use actix_web::{HttpMessage, HttpRequest, HttpResponse};
use askama::Template;

/// Largest text field of a form, bytes (our choice: names, dates, numbers
/// and a 2,000-character reason fit).
pub const MAX_TEXT_FIELD_BYTES: usize = 8 * 1024;

/// Who is asking.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Viewer {
    /// The user (or token label, or team) name, when known.
    pub name: Option<String>,
    /// The access-matrix column; `None` when no auth layer ran.
    pub principal: Option<Principal>,
}

impl Viewer {
    /// Read the viewer from the request extensions (an [`Identity`] first,
    /// for its name; else a bare [`Principal`]).
    pub fn of(req: &HttpRequest) -> Viewer {
        let ext = req.extensions();
        if let Some(id) = ext.get::<Identity>() {
            let name = match id {
                Identity::User { name, .. } => Some(name.clone()),
                Identity::ApiToken { label, .. } => Some(label.clone()),
                Identity::Team { team_name, .. } => Some(team_name.clone()),
                Identity::Anonymous => None,
            };
            return Viewer {
                name,
                principal: Some(id.principal()),
            };
        }
        Viewer {
            name: None,
            principal: ext.get::<Principal>().copied(),
        }
    }

    /// May this viewer do `action`? (Open when no auth layer ran.) For
    /// showing links and forms; the route's own check is the gate.
    pub fn may(&self, action: Action) -> bool {
        self.principal.is_none_or(|p| allowed(p, action))
    }
}

/// The pages of the navigation bar: (path, label, action needed).
pub const NAV: [(&str, &str, Action); 7] = [
    ("/events", "Events", Action::ViewEvents),
    ("/import", "Import", Action::ImportAlerts),
    ("/trips", "Trips", Action::ViewEvents),
    ("/station", "Station upload", Action::UploadReturn),
    ("/dashboard", "Dashboard", Action::ViewStatistics),
    ("/disputes", "Disputes", Action::ViewStatistics),
    ("/admin", "Admin", Action::Administer),
];

/// One link of the navigation bar.
pub struct NavItem {
    pub href: &'static str,
    /// In the page's language: the message `menu-<path>` when the
    /// catalogues have it, else the English label of [`NAV`].
    pub label: String,
    pub current: bool,
}

/// The label of a navigation link in `tr`'s language.
fn nav_label(tr: &Tr, href: &str, english: &str) -> String {
    let id = format!("menu-{}", href.trim_start_matches('/').replace('/', "-"));
    tr.get(&id).unwrap_or_else(|| english.to_string())
}

/// The fields `templates/base.html` reads.
pub struct Layout {
    pub title: String,
    pub nav: Vec<NavItem>,
    pub user: Option<String>,
    pub role: Option<String>,
    /// The CSRF hidden field (HTML), empty when there is no session.
    pub csrf: String,
    /// `?csrf_token=…` for the action URL of multipart forms (the access
    /// layer reads the token of a multipart form from the query), or empty.
    pub csrf_query: String,
    /// The translator of this page (`layout.tr.t("id")`: see `platform::i18n`).
    pub tr: Tr,
    /// This page's path and query, where the language switch comes back to.
    pub here: String,
}

impl Layout {
    pub fn new(req: &HttpRequest, viewer: &Viewer, title: &str, current: &str) -> Layout {
        let tr = crate::web::i18n::tr_of(req);
        Layout {
            title: title.to_string(),
            nav: NAV
                .iter()
                .filter(|(_, _, a)| viewer.may(*a))
                .map(|(href, label, _)| NavItem {
                    href,
                    label: nav_label(&tr, href, label),
                    current: *href == current,
                })
                .collect(),
            user: viewer.name.clone(),
            role: viewer.principal.map(|p| p.as_str().to_string()),
            csrf: super::csrf_field(req),
            csrf_query: super::csrf_query(req),
            tr,
            here: match req.query_string() {
                "" => req.path().to_string(),
                q => format!("{}?{q}", req.path()),
            },
        }
    }

    /// The languages of the switch: (code, name in its own language, chosen).
    pub fn languages(&self) -> Vec<(&'static str, String, bool)> {
        crate::platform::i18n::LANGUAGES
            .iter()
            .map(|l| {
                (
                    *l,
                    self.tr.t(&format!("language-{l}")),
                    *l == self.tr.lang(),
                )
            })
            .collect()
    }
}

#[derive(Template)]
#[template(path = "pages/error.html")]
struct ErrorPage<'a> {
    layout: Layout,
    status: u16,
    reason: &'a str,
    message: &'a str,
    details: &'a [String],
}

/// An HTML response with `status`.
pub fn html(status: StatusCode, body: String) -> HttpResponse {
    HttpResponse::build(status)
        .content_type("text/html; charset=utf-8")
        .insert_header(("Cache-Control", "no-store"))
        .body(body)
}

/// Render a template as a 200 page (or the error page if rendering fails).
pub fn page(t: &impl Template) -> Result<HttpResponse, PageError> {
    Ok(html(StatusCode::OK, t.render()?))
}

/// The error page for `e`.
pub fn error_page(req: &HttpRequest, viewer: &Viewer, e: &PageError) -> HttpResponse {
    let tr = crate::web::i18n::tr_of(req);
    let (reason, message) = (e.reason(&tr), e.text(tr));
    let t = ErrorPage {
        layout: Layout::new(req, viewer, &reason, ""),
        status: e.status.as_u16(),
        reason: &reason,
        message: &message,
        details: &e.details,
    };
    match t.render() {
        Ok(body) => html(e.status, body),
        Err(_) => HttpResponse::build(e.status)
            .content_type("text/plain; charset=utf-8")
            .body(e.message.clone()),
    }
}

/// Turn a handler result into a response (errors become error pages).
pub fn respond(
    req: &HttpRequest,
    viewer: &Viewer,
    r: Result<HttpResponse, PageError>,
) -> HttpResponse {
    r.unwrap_or_else(|e| error_page(req, viewer, &e))
}

/// A 303 redirect (after a POST).
pub fn see_other(location: &str) -> HttpResponse {
    HttpResponse::SeeOther()
        .insert_header(("Location", location))
        .finish()
}

/// A trimmed optional text: `None` for absent or blank.
pub fn non_empty(v: &Option<String>) -> Option<String> {
    v.as_deref()
        .map(str::trim)
        .filter(|s| !s.is_empty())
        .map(str::to_string)
}

/// A form field as a refusal names it: the message id of its label (looked
/// up in the reader's language; an id the catalogues lack shows as it is)
/// and its English label.
#[derive(Debug, Clone, Copy)]
pub struct Field<'a> {
    pub id: &'a str,
    pub english: &'a str,
}

impl<'a> From<&'a str> for Field<'a> {
    /// A field known only by its English label.
    fn from(english: &'a str) -> Field<'a> {
        Field {
            id: english,
            english,
        }
    }
}

/// Parse an optional form number; a clear message names the field.
pub fn opt_number<'a, T: std::str::FromStr>(
    label: impl Into<Field<'a>>,
    v: &Option<String>,
) -> Result<Option<T>, PageError> {
    let f = label.into();
    match non_empty(v) {
        None => Ok(None),
        Some(s) => s.parse::<T>().map(Some).map_err(|_| {
            let english = format!("{}: '{s}' is not a valid number", f.english);
            PageError::said(
                "why-not-number",
                &[("field", &f.id), ("value", &s)],
                english,
            )
        }),
    }
}

/// Parse an optional form date (YYYY-MM-DD).
pub fn opt_day<'a>(
    label: impl Into<Field<'a>>,
    v: &Option<String>,
) -> Result<Option<crate::domain::Day>, PageError> {
    let f = label.into();
    non_empty(v)
        .map(|s| {
            crate::domain::Day::parse(&s).map_err(|m| {
                let english = format!("{}: {m}", f.english);
                PageError::said("why-not-date", &[("field", &f.id), ("value", &s)], english)
            })
        })
        .transpose()
}

/// A filter's query string that could not be read at all (the English
/// text keeps the parser's detail; the pages say it plainly).
pub fn bad_filter(e: impl std::fmt::Display) -> PageError {
    PageError::said("why-bad-filter", &[], format!("bad filter: {e}"))
}

/// A number with `decimals` decimals, or "–" when not finite.
pub fn fixed(v: f64, decimals: usize) -> String {
    if v.is_finite() {
        format!("{v:.decimals$}")
    } else {
        "–".to_string()
    }
}

/// A proportion as a percentage with one decimal.
pub fn percent(p: f64) -> String {
    if p.is_finite() {
        format!("{:.1}%", p * 100.0)
    } else {
        "–".to_string()
    }
}

/// An instant as people read it: local time of the organisation's zone to
/// the minute, with the offset (`2026-03-05 14:20 (UTC-04:00)`; the shape
/// is [`crate::domain::OrgZone::show`]). Every page shows instants through
/// this (or [`local_unix`], [`local_text`]).
pub fn local_time(settings: &Settings, t: chrono::DateTime<chrono::Utc>) -> String {
    settings.zone().show(t)
}

/// [`local_time`] of Unix seconds ("–" when out of range).
pub fn local_unix(settings: &Settings, secs: i64) -> String {
    chrono::DateTime::from_timestamp(secs, 0)
        .map_or_else(|| "–".to_string(), |t| local_time(settings, t))
}

/// [`local_time`] of an RFC 3339 text (the text itself when it is not one).
pub fn local_text(settings: &Settings, rfc3339: &str) -> String {
    match chrono::DateTime::parse_from_rfc3339(rfc3339) {
        Ok(t) => local_time(settings, t.with_timezone(&chrono::Utc)),
        Err(_) => rfc3339.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_and_times_are_formatted_for_people() {
        assert_eq!(fixed(1.23456, 2), "1.23");
        assert_eq!(fixed(f64::NAN, 2), "–");
        assert_eq!(percent(0.1234), "12.3%");
        assert_eq!(
            local_text(&Settings::default(), "2026-03-01T10:05:59+02:00"),
            "2026-03-01 08:05 (UTC+00:00)"
        );
    }

    // Check values: IANA tz database (zone EST5EDT, "Rule US 2007 max":
    // daylight time from 2026-03-08 07:00 UTC), as in domain::localtime.
    #[test]
    fn instants_are_shown_in_the_organisations_zone() {
        let mut s = Settings::default();
        assert_eq!(
            local_unix(&s, 1_772_953_200),
            "2026-03-08 07:00 (UTC+00:00)"
        );
        s.organisation.time_zone = "EST5EDT".into();
        assert_eq!(
            local_unix(&s, 1_772_953_140),
            "2026-03-08 01:59 (UTC-05:00)"
        );
        assert_eq!(
            local_unix(&s, 1_772_953_200),
            "2026-03-08 03:00 (UTC-04:00)"
        );
        assert_eq!(
            local_text(&s, "2026-03-08T07:00:00+00:00"),
            "2026-03-08 03:00 (UTC-04:00)"
        );
        assert_eq!(local_text(&s, "yesterday"), "yesterday");
        assert_eq!(local_unix(&s, i64::MAX), "–");
    }

    #[test]
    fn form_values_are_parsed_with_their_label() {
        assert_eq!(opt_number::<f64>("max", &Some(" ".into())).unwrap(), None);
        assert_eq!(
            opt_number::<u32>("max", &Some("12".into())).unwrap(),
            Some(12)
        );
        let e = opt_number::<u32>("Most events", &Some("many".into())).unwrap_err();
        assert_eq!(e.status, StatusCode::BAD_REQUEST);
        assert!(e.message.contains("Most events: 'many'"), "{}", e.message);
        assert!(opt_day("From", &Some("2026-13-01".into())).is_err());
    }

    #[test]
    fn controls_show_by_the_access_matrix() {
        let open = Viewer::default();
        assert!(open.may(Action::IssueBundle));
        let mgr = Viewer {
            name: Some("m".into()),
            principal: Some(Principal::Manager),
        };
        // Access matrix (server/src/platform/auth/access.rs): managers may not issue bundles.
        assert!(!mgr.may(Action::IssueBundle));
        assert!(mgr.may(Action::ViewStatistics));
        let anon = Viewer {
            name: None,
            principal: Some(Principal::Anonymous),
        };
        assert!(!anon.may(Action::ViewEvents));
    }
}
