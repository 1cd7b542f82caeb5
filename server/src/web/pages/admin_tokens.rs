//! `/admin/api-tokens`: the API tokens scripts use (`Authorization: Bearer
//! gp_…`): list them, make one (shown once, on the answer to the POST
//! itself, never in an address) and revoke one; through `platform::admin`
//! with its log row, the same functions as `groundproof token create --role`
//! and `groundproof token revoke`.

use super::admin::{self, Chrome};
use super::common::{PageError, Viewer, local_unix, respond};
use crate::domain::Role;
use crate::error::Error;
use crate::platform::admin as ops;
use crate::platform::auth::now_unix;
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

/// One API token as listed (its hash stays in storage).
struct TokenRow {
    id: i64,
    label: String,
    /// The role in the page's language.
    role_label: String,
    created: String,
    /// When it was revoked; `None` while it is live.
    revoked: Option<String>,
}

/// A token just made: shown on this answer only.
struct NewToken {
    id: i64,
    label: String,
    token: String,
}

#[derive(Template)]
#[template(path = "pages/admin_tokens.html")]
struct TokensPage {
    layout: super::common::Layout,
    chrome: Chrome,
    tokens: Vec<TokenRow>,
    /// (value, label in the page's language).
    roles: Vec<(&'static str, String)>,
    new_token: Option<NewToken>,
    typed: TokenForm,
}

/// The make form.
#[derive(Debug, Deserialize, Default, Clone)]
pub struct TokenForm {
    pub label: Option<String>,
    pub role: Option<String>,
}

impl TokenForm {
    /// The role and the name; a message names the field.
    fn checked(&self) -> Result<(Role, String), PageError> {
        let role = admin::role(self.role.as_deref())?;
        Ok((role, self.label.clone().unwrap_or_default()))
    }
}

async fn tokens_page(
    req: &HttpRequest,
    state: &AppState,
    done: bool,
    error: Option<PageError>,
    new_token: Option<NewToken>,
    typed: TokenForm,
) -> Result<HttpResponse, PageError> {
    let db = state.db.clone();
    let records = web::block(move || db.read(|r| r.api_tokens())).await??;
    let tr = crate::web::i18n::tr_of(req);
    let role_label = |r: Role| tr.t(&format!("adm-role-{}", r.as_str()));
    let when = |s| local_unix(&state.settings.get(), s);
    let mut tokens: Vec<TokenRow> = records
        .into_iter()
        .map(|t| TokenRow {
            id: t.id,
            role_label: role_label(t.role),
            created: when(t.created_at),
            revoked: t.revoked_at.map(when),
            label: t.label,
        })
        .collect();
    // Live tokens first, newest first within each.
    tokens.sort_by_key(|t| (t.revoked.is_some(), -t.id));
    let prefixes: &[&str] = &["apitoken."];
    let (layout, chrome) =
        admin::chrome(req, state, "/admin/api-tokens", prefixes, done, error).await?;
    let t = TokensPage {
        layout,
        chrome,
        tokens,
        roles: Role::ALL
            .iter()
            .map(|r| (r.as_str(), role_label(*r)))
            .collect(),
        new_token,
        typed,
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/api-tokens`.
pub async fn list(req: HttpRequest, state: web::Data<AppState>, q: admin::DoneArg) -> HttpResponse {
    let (req, state) = (&req, &state);
    let page = move |done| async move {
        tokens_page(req, state, done, None, None, TokenForm::default()).await
    };
    admin::show(req, q, page).await
}

/// `POST /admin/api-tokens` (label, role): a new token, shown once on this
/// answer; a refused form shows the page again as typed.
pub async fn create(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<TokenForm>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let typed = form.as_ref().map(|f| (**f).clone()).unwrap_or_default();
    let made = async {
        let (role, label) = form.map_err(admin::unreadable)?.checked()?;
        let actor = admin::actor(&req)?;
        let db = state.db.clone();
        let (rec, token) =
            web::block(move || ops::create_api_token(&db, &actor, role, &label, now_unix()))
                .await??;
        Ok::<_, PageError>(NewToken {
            id: rec.id,
            label: rec.label,
            token,
        })
    }
    .await;
    let r = match made {
        Ok(t) => tokens_page(&req, &state, false, None, Some(t), TokenForm::default()).await,
        Err(e) => tokens_page(&req, &state, false, Some(e), None, typed).await,
    };
    respond(&req, &viewer, r)
}

/// `POST /admin/api-tokens/{id}/revoke`.
pub async fn revoke(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    let db = state.db.clone();
    let change = move |a: &ops::Actor, id, now| -> Result<(), Error> {
        ops::revoke_api_token(&db, a, id, now).map(drop)
    };
    let checked = admin::path_id(&path, admin::API_TOKEN);
    let page = |e| async {
        let (req, state) = (&req, &state);
        tokens_page(req, state, false, Some(e), None, TokenForm::default()).await
    };
    admin::apply(&req, "/admin/api-tokens", checked, change, page).await
}
