//! The administration pages under `/admin` (admins only: every route needs
//! `Action::Administer`): the index, the change log, and what every admin
//! page shares. Users are in `admin_users`, teams and their tokens in
//! `admin_teams`, sources in `admin_sources`, settings in `admin_settings`.
//!
//! Each change goes through the same functions as the command line
//! (`platform::admin`, `alerts::sources`), which write the change and its row
//! of the administration log in one transaction. A refused form re-shows its
//! page with the reason and changes nothing; a saved one redirects (303) to
//! its page with `?done=1`, which shows the newest log row of this admin.

use super::common::{Field, Layout, PageError, Viewer, respond, see_other};
use crate::error::Error;
use crate::platform::admin::Actor;
use crate::platform::auth::{Identity, now_unix};
use crate::platform::i18n::Tr;
use crate::platform::storage::AdminLogEntry;
use crate::web::AppState;
use actix_web::{HttpMessage, HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

/// Log rows shown on one page of the change log.
pub const LOG_PAGE_ROWS: usize = 100;
/// Recent log rows shown under each admin section.
const RECENT_ROWS: usize = 200;

/// The sections of the administration: (path, label).
pub const SECTIONS: [(&str, &str); 6] = [
    ("/admin/users", "Users"),
    ("/admin/teams", "Teams and tokens"),
    ("/admin/api-tokens", "API tokens"),
    ("/admin/sources", "Sources"),
    ("/admin/settings", "Settings"),
    ("/admin/log", "Change log"),
];

/// One log row as shown.
pub struct LogRow {
    pub when: String,
    pub actor: String,
    pub action: String,
    pub subject: String,
    pub detail: String,
}

/// A link of the administration's own navigation.
pub struct SectionLink {
    pub href: &'static str,
    pub label: String,
    pub current: bool,
}

/// The sections, labelled in the user's language (`fig-users`, …).
fn links(tr: &Tr, current: &str) -> Vec<SectionLink> {
    SECTIONS
        .iter()
        .map(|(href, label)| SectionLink {
            href,
            label: super::dashboard::label(tr, label),
            current: *href == current,
        })
        .collect()
}

/// What every admin page shows above its own content.
pub struct Chrome {
    /// The current section's heading.
    pub title: String,
    pub sections: Vec<SectionLink>,
    /// "Saved: …" after a change.
    pub notice: Option<String>,
    /// Why a form was refused (nothing changed).
    pub error: Option<PageError>,
    /// The newest changes of this section (log rows whose action starts
    /// with the section's prefix).
    pub recent: Vec<LogRow>,
}

/// `?done=1` after a saved change.
#[derive(Debug, Deserialize, Default)]
pub struct DoneQuery {
    pub done: Option<u8>,
}

/// The query of an admin page's `GET`, as actix hands it over.
pub type DoneArg = Result<web::Query<DoneQuery>, actix_web::Error>;

/// The one shape of every admin page's `GET`: the page (`page(done)`), told
/// whether a change was just saved (`?done=1`).
pub async fn show<P, F>(req: &HttpRequest, q: DoneArg, page: P) -> HttpResponse
where
    P: FnOnce(bool) -> F,
    F: std::future::Future<Output = Result<HttpResponse, PageError>>,
{
    let done = q.ok().and_then(|q| q.done).is_some();
    respond(req, &Viewer::of(req), page(done).await)
}

/// A change of a form, run on the blocking pool: the actor, the checked
/// form's values and the time.
pub trait Change<T>: FnOnce(&Actor, T, i64) -> Result<(), Error> + Send + 'static {}
impl<T, F: FnOnce(&Actor, T, i64) -> Result<(), Error> + Send + 'static> Change<T> for F {}

/// The one shape of every admin form: when the form checked out, run
/// `change` as this request's actor and redirect to `back?done=1`;
/// otherwise show the page again (`page`) with the refusal, having changed
/// nothing.
pub async fn apply<T, P, F>(
    req: &HttpRequest,
    back: &str,
    checked: Result<T, PageError>,
    change: impl Change<T>,
    page: P,
) -> HttpResponse
where
    T: Send + 'static,
    P: FnOnce(PageError) -> F,
    F: std::future::Future<Output = Result<HttpResponse, PageError>>,
{
    let r = async {
        let values = checked?;
        let actor = actor(req)?;
        web::block(move || change(&actor, values, now_unix())).await??;
        Ok::<_, PageError>(see_other(&format!("{back}?done=1")))
    }
    .await;
    match r {
        Ok(done) => done,
        Err(e) => respond(req, &Viewer::of(req), page(e).await),
    }
}

/// The actor of the request (the access layer put its identity there).
pub fn actor(req: &HttpRequest) -> Result<Actor, PageError> {
    req.extensions()
        .get::<Identity>()
        .and_then(Actor::of)
        .ok_or_else(|| {
            let english = "Only a signed-in admin may change this.";
            PageError::new(actix_web::http::StatusCode::FORBIDDEN, english)
                .worded("why-admin-only", &[])
        })
}

/// A log row for people: the time in the organisation's zone.
pub fn log_row(state: &AppState, e: &AdminLogEntry) -> LogRow {
    LogRow {
        when: super::common::local_unix(&state.settings.get(), e.at),
        actor: e.actor.clone(),
        action: e.action.clone(),
        subject: e.subject.clone(),
        detail: e.detail.clone(),
    }
}

/// Build the shared part of an admin page: the notice from the log (when
/// `done`), the section's recent changes, and the refusal if any.
pub async fn chrome(
    req: &HttpRequest,
    state: &AppState,
    section: &'static str,
    prefixes: &'static [&'static str],
    done: bool,
    error: Option<PageError>,
) -> Result<(Layout, Chrome), PageError> {
    let viewer = Viewer::of(req);
    let tr = crate::web::i18n::tr_of(req);
    let title = SECTIONS
        .iter()
        .find(|(p, _)| *p == section)
        .map_or("Administration", |(_, l)| l);
    let db = state.db.clone();
    let rows = web::block(move || db.read(|r| r.admin_log(None, RECENT_ROWS))).await??;
    let me = actor(req).ok().map(|a| a.text());
    let notice = done
        .then(|| rows.iter().find(|r| Some(&r.actor) == me.as_ref()))
        .flatten()
        .map(|r| tr.t2("adm-saved", "subject", &r.subject, "detail", &r.detail));
    let recent = rows
        .iter()
        .filter(|r| prefixes.iter().any(|p| r.action.starts_with(p)))
        .take(10)
        .map(|r| log_row(state, r))
        .collect();
    let title = super::dashboard::label(&tr, title);
    let mut layout = Layout::new(req, &viewer, &title, "/admin");
    layout.title = tr.t1("adm-title-of", "section", &title);
    Ok((
        layout,
        Chrome {
            title,
            sections: links(&tr, section),
            notice,
            error,
            recent,
        },
    ))
}

/// The status of a page that shows `chrome` (its refusal's, or 200).
pub fn status_of(chrome: &Chrome) -> actix_web::http::StatusCode {
    chrome
        .error
        .as_ref()
        .map_or(actix_web::http::StatusCode::OK, |e| e.status)
}

/// Render an admin page with the status its chrome says.
pub fn render(t: &impl Template, chrome: &Chrome) -> Result<HttpResponse, PageError> {
    Ok(super::common::html(status_of(chrome), t.render()?))
}

#[derive(Template)]
#[template(path = "pages/admin.html")]
struct IndexPage {
    layout: Layout,
    sections: Vec<SectionLink>,
}

/// `GET /admin`: the sections.
pub async fn index(req: HttpRequest) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let t = IndexPage {
        layout: super::dashboard::translated_layout(&req, &viewer, "adm-title", "/admin"),
        sections: links(&crate::web::i18n::tr_of(&req), ""),
    };
    super::common::respond(&req, &viewer, super::common::page(&t))
}

#[derive(Template)]
#[template(path = "pages/admin_log.html")]
struct LogPage {
    layout: Layout,
    chrome: Chrome,
    rows: Vec<LogRow>,
    /// The id to page on from (`?before=`), when there are older rows.
    older: Option<i64>,
}

/// `?before=ID` of the change log.
#[derive(Debug, Deserialize, Default)]
pub struct LogQuery {
    pub before: Option<i64>,
}

/// `GET /admin/log`: every change, newest first, a page at a time.
pub async fn log(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<LogQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let before = q.map_err(super::common::bad_filter)?.before;
        let db = state.db.clone();
        let entries =
            web::block(move || db.read(|r| r.admin_log(before, LOG_PAGE_ROWS + 1))).await??;
        let older = (entries.len() > LOG_PAGE_ROWS).then(|| entries[LOG_PAGE_ROWS - 1].id);
        let rows = entries
            .iter()
            .take(LOG_PAGE_ROWS)
            .map(|e| log_row(&state, e))
            .collect();
        let (layout, chrome) = chrome(&req, &state, "/admin/log", &[], false, None).await?;
        let t = LogPage {
            layout,
            chrome,
            rows,
            older,
        };
        render(&t, &t.chrome)
    }
    .await;
    super::common::respond(&req, &viewer, r)
}

/// What a path id names, for [`path_id`]'s message.
pub const USER: Field<'static> = Field {
    id: "why-what-user",
    english: "user",
};
pub const TEAM: Field<'static> = Field {
    id: "why-what-team",
    english: "team",
};
pub const TEAM_TOKEN: Field<'static> = Field {
    id: "why-what-token",
    english: "token",
};
pub const API_TOKEN: Field<'static> = Field {
    id: "why-what-api-token",
    english: "API token",
};
pub const SOURCE: Field<'static> = Field {
    id: "why-what-source",
    english: "source",
};

/// A path id that must be a number; the message names what it is.
pub fn path_id(raw: &str, what: Field<'_>) -> Result<i64, PageError> {
    raw.parse().map_err(|_| {
        let english = format!("{} id '{raw}' is not a number", what.english);
        PageError::said(
            "why-bad-id",
            &[("field", &what.id), ("value", &raw)],
            english,
        )
    })
}

/// The role a form names.
pub fn role(raw: Option<&str>) -> Result<crate::platform::auth::Role, PageError> {
    let raw = raw.unwrap_or_default();
    crate::platform::auth::Role::parse(raw).map_err(|m| {
        let value: String = raw.trim().chars().take(40).collect();
        PageError::said("why-role", &[("value", &value)], format!("Role: {m}."))
    })
}

/// A form that could not be read at all.
pub fn unreadable(e: actix_web::Error) -> PageError {
    PageError::bad_request(format!("The form could not be read: {e}"))
        .worded("why-form-unreadable", &[])
}
