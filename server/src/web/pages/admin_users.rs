//! `/admin/users`: add a user, change a role, reset a password, disable or
//! enable (a disabled user cannot log in and their sessions end), through
//! `platform::admin` with its log row.

use super::admin::{self, Chrome};
use super::common::{PageError, local_unix};
use crate::domain::Role;
use crate::platform::admin as ops;
use crate::platform::auth::{MAX_PASSWORD_CHARS, MIN_PASSWORD_CHARS};
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

struct UserRow {
    id: i64,
    name: String,
    role: &'static str,
    /// The role in the page's language.
    role_label: String,
    disabled: bool,
    created: String,
}

#[derive(Template)]
#[template(path = "pages/admin_users.html")]
struct UsersPage {
    layout: super::common::Layout,
    chrome: Chrome,
    users: Vec<UserRow>,
    /// (value, label in the page's language).
    roles: Vec<(&'static str, String)>,
    min_chars: usize,
    max_chars: usize,
    /// The add form as typed, after a refusal (never the password).
    typed_name: String,
    typed_role: String,
}

/// The forms of this page (each form sends the fields it has).
#[derive(Debug, Deserialize, Default)]
pub struct UserForm {
    pub name: Option<String>,
    pub role: Option<String>,
    pub password: Option<String>,
    pub password_again: Option<String>,
}

async fn users_page(
    req: &HttpRequest,
    state: &AppState,
    done: bool,
    error: Option<PageError>,
    typed: &UserForm,
) -> Result<HttpResponse, PageError> {
    let db = state.db.clone();
    let users = web::block(move || db.read(|r| r.users())).await??;
    let (layout, chrome) =
        admin::chrome(req, state, "/admin/users", &["user."], done, error).await?;
    let tr = crate::web::i18n::tr_of(req);
    let role_label = |r: Role| tr.t(&format!("adm-role-{}", r.as_str()));
    let t = UsersPage {
        layout,
        chrome,
        users: users
            .into_iter()
            .map(|u| UserRow {
                id: u.id,
                created: local_unix(&state.settings.get(), u.created_at),
                name: u.name,
                role: u.role.as_str(),
                role_label: role_label(u.role),
                disabled: u.disabled,
            })
            .collect(),
        roles: Role::ALL
            .iter()
            .map(|r| (r.as_str(), role_label(*r)))
            .collect(),
        min_chars: MIN_PASSWORD_CHARS,
        max_chars: MAX_PASSWORD_CHARS,
        typed_name: typed.name.clone().unwrap_or_default(),
        typed_role: typed.role.clone().unwrap_or_default(),
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/users`.
pub async fn list(req: HttpRequest, state: web::Data<AppState>, q: admin::DoneArg) -> HttpResponse {
    let (req, state) = (&req, &state);
    let page =
        move |done| async move { users_page(req, state, done, None, &UserForm::default()).await };
    admin::show(req, q, page).await
}

fn role_of(f: &UserForm) -> Result<Role, PageError> {
    admin::role(f.role.as_deref())
}

/// The new password, typed twice alike.
fn password_of(f: &UserForm) -> Result<String, PageError> {
    let p = f.password.clone().unwrap_or_default();
    if f.password_again.as_deref() != Some(p.as_str()) {
        let english = "Password: the two passwords differ; type the same password twice.";
        return Err(PageError::said("why-passwords-differ", &[], english));
    }
    Ok(p)
}

/// [`admin::apply`] for this page: back to the users page, or the page
/// again with the refusal and the add form as typed.
async fn apply<T: Send + 'static>(
    req: HttpRequest,
    state: web::Data<AppState>,
    typed: UserForm,
    checked: Result<T, PageError>,
    change: impl admin::Change<T>,
) -> HttpResponse {
    let page = |e| async {
        let (req, state, typed) = (&req, &state, &typed);
        users_page(req, state, false, Some(e), typed).await
    };
    admin::apply(&req, "/admin/users", checked, change, page).await
}

/// `POST /admin/users` (name, role, password twice).
pub async fn add(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<UserForm>, actix_web::Error>,
) -> HttpResponse {
    let f = form.map(|f| f.into_inner());
    let typed = f.as_ref().map_or_else(
        |_| UserForm::default(),
        |f| UserForm {
            password: None,
            password_again: None,
            name: f.name.clone(),
            role: f.role.clone(),
        },
    );
    let checked = f.map_err(admin::unreadable).and_then(|f| {
        let name = f.name.clone().unwrap_or_default().trim().to_string();
        Ok((name, role_of(&f)?, password_of(&f)?))
    });
    let db = state.db.clone();
    let change = move |a: &ops::Actor, (name, role, pw): (String, Role, String), now| {
        ops::add_user(&db, a, &name, role, &pw, now).map(drop)
    };
    apply(req, state, typed, checked, change).await
}

/// `POST /admin/users/{id}/role` (role).
pub async fn set_role(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<UserForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = admin::path_id(&path, admin::USER)
        .and_then(|id| Ok((id, role_of(&*form.map_err(admin::unreadable)?)?)));
    let db = state.db.clone();
    let change =
        move |a: &ops::Actor, (id, role), now| ops::set_role(&db, a, id, role, now).map(drop);
    apply(req, state, UserForm::default(), checked, change).await
}

/// `POST /admin/users/{id}/password` (password twice).
pub async fn reset_password(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<UserForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = admin::path_id(&path, admin::USER)
        .and_then(|id| Ok((id, password_of(&*form.map_err(admin::unreadable)?)?)));
    let db = state.db.clone();
    let change = move |a: &ops::Actor, (id, pw): (i64, String), now| {
        ops::reset_password(&db, a, id, &pw, now).map(drop)
    };
    apply(req, state, UserForm::default(), checked, change).await
}

/// `POST /admin/users/{id}/disable`.
pub async fn disable(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    set_disabled(req, state, &path, true).await
}

/// `POST /admin/users/{id}/enable`.
pub async fn enable(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
) -> HttpResponse {
    set_disabled(req, state, &path, false).await
}

async fn set_disabled(
    req: HttpRequest,
    state: web::Data<AppState>,
    raw: &str,
    off: bool,
) -> HttpResponse {
    let db = state.db.clone();
    let change =
        move |a: &ops::Actor, id, now| ops::set_user_disabled(&db, a, id, off, now).map(drop);
    let checked = admin::path_id(raw, admin::USER);
    apply(req, state, UserForm::default(), checked, change).await
}
