//! `/admin/teams`: add a team, disable it (its tokens are revoked) or
//! enable it again, create a team token (shown once, on the answer to the
//! POST itself, never in an address) and revoke one; through
//! `platform::admin` with its log row.

use super::admin::{self, Chrome};
use super::common::{PageError, Viewer, local_unix, respond};
use crate::error::{Error, Fault};
use crate::platform::admin as ops;
use crate::platform::auth::now_unix;
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

struct TokenRow {
    id: i64,
    created: String,
}

struct TeamRow {
    id: i64,
    name: String,
    disabled: Option<String>,
    tokens: Vec<TokenRow>,
    revoked: usize,
}

/// A token just made: shown on this answer only.
struct NewToken {
    team: String,
    id: i64,
    token: String,
}

#[derive(Template)]
#[template(path = "pages/admin_teams.html")]
struct TeamsPage {
    layout: super::common::Layout,
    chrome: Chrome,
    teams: Vec<TeamRow>,
    new_token: Option<NewToken>,
    typed_name: String,
}

/// The add form.
#[derive(Debug, Deserialize, Default)]
pub struct TeamForm {
    pub name: Option<String>,
}

async fn teams_page(
    req: &HttpRequest,
    state: &AppState,
    done: bool,
    error: Option<PageError>,
    new_token: Option<NewToken>,
    typed_name: String,
) -> Result<HttpResponse, PageError> {
    let db = state.db.clone();
    let (teams, tokens) =
        web::block(move || db.read(|r| Ok((r.team_states()?, r.team_tokens()?)))).await??;
    let when = |s| local_unix(&state.settings.get(), s);
    let rows = teams
        .into_iter()
        .map(|t| {
            let mine = tokens.iter().filter(|k| k.team_name == t.name);
            TeamRow {
                id: t.id,
                disabled: t.disabled_at.map(when),
                tokens: mine
                    .clone()
                    .filter(|k| k.revoked_at.is_none())
                    .map(|k| TokenRow {
                        id: k.id,
                        created: when(k.created_at),
                    })
                    .collect(),
                revoked: mine.filter(|k| k.revoked_at.is_some()).count(),
                name: t.name,
            }
        })
        .collect();
    let prefixes: &[&str] = &["team.", "token."];
    let (layout, chrome) = admin::chrome(req, state, "/admin/teams", prefixes, done, error).await?;
    let t = TeamsPage {
        layout,
        chrome,
        teams: rows,
        new_token,
        typed_name,
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/teams`.
pub async fn list(req: HttpRequest, state: web::Data<AppState>, q: admin::DoneArg) -> HttpResponse {
    let (req, state) = (&req, &state);
    let page =
        move |done| async move { teams_page(req, state, done, None, None, String::new()).await };
    admin::show(req, q, page).await
}

/// [`admin::apply`] for this page: back to the teams page, or the page
/// again with the refusal and the team name as typed.
async fn apply<T: Send + 'static>(
    req: HttpRequest,
    state: web::Data<AppState>,
    typed: String,
    checked: Result<T, PageError>,
    change: impl admin::Change<T>,
) -> HttpResponse {
    let page = |e| async {
        let (req, state) = (&req, &state);
        teams_page(req, state, false, Some(e), None, typed).await
    };
    admin::apply(&req, "/admin/teams", checked, change, page).await
}

/// `POST /admin/teams` (name).
pub async fn add(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<TeamForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = form
        .map_err(admin::unreadable)
        .map(|f| f.into_inner().name.unwrap_or_default());
    let typed = checked.as_ref().cloned().unwrap_or_default();
    let db = state.db.clone();
    let change =
        move |a: &ops::Actor, name: String, now| ops::add_team(&db, a, &name, now).map(drop);
    apply(req, state, typed, checked, change).await
}

async fn set_disabled(
    req: HttpRequest,
    state: web::Data<AppState>,
    raw: &str,
    off: bool,
) -> HttpResponse {
    let db = state.db.clone();
    let change =
        move |a: &ops::Actor, id, now| ops::set_team_disabled(&db, a, id, off, now).map(drop);
    let checked = admin::path_id(raw, admin::TEAM);
    apply(req, state, String::new(), checked, change).await
}

/// `POST /admin/teams/{id}/disable`.
pub async fn disable(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    set_disabled(req, state, &path, true).await
}

/// `POST /admin/teams/{id}/enable`.
pub async fn enable(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    set_disabled(req, state, &path, false).await
}

/// `POST /admin/teams/{id}/tokens`: a new token, shown once on this answer.
pub async fn new_token(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let made = async {
        let id = admin::path_id(&path, admin::TEAM)?;
        let actor = admin::actor(&req)?;
        let db = state.db.clone();
        let out = web::block(move || {
            let team = db.read(|r| r.team_state(id))?.ok_or_else(|| {
                let english = format!("no team with id {id}");
                Error::said(Fault::NotFound, "why-no-team", &[("id", &id)], english)
            })?;
            let (rec, token) = ops::create_team_token(&db, &actor, &team.name, now_unix())?;
            Ok::<_, Error>(NewToken {
                team: team.name,
                id: rec.id,
                token,
            })
        })
        .await??;
        Ok::<_, PageError>(out)
    }
    .await;
    let r = match made {
        Ok(t) => teams_page(&req, &state, false, None, Some(t), String::new()).await,
        Err(e) => teams_page(&req, &state, false, Some(e), None, String::new()).await,
    };
    respond(&req, &viewer, r)
}

/// `POST /admin/tokens/{id}/revoke`.
pub async fn revoke_token(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let db = state.db.clone();
    let change = move |a: &ops::Actor, id, now| ops::revoke_team_token(&db, a, id, now);
    let checked = admin::path_id(&path, admin::TEAM_TOKEN);
    apply(req, state, String::new(), checked, change).await
}
