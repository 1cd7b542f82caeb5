//! `/admin/users`: add a user, change a role, reset a password, disable or
//! enable (a disabled user cannot log in and their sessions end), through
//! `platform::admin` with its log row.

use super::admin::{self, Chrome, DoneQuery};
use super::common::{PageError, Viewer, local_unix, respond, see_other};
use crate::domain::Role;
use crate::error::Error;
use crate::platform::admin as ops;
use crate::platform::auth::{MAX_PASSWORD_CHARS, MIN_PASSWORD_CHARS, now_unix};
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

struct UserRow {
    id: i64,
    name: String,
    role: &'static str,
    disabled: bool,
    created: String,
}

#[derive(Template)]
#[template(path = "pages/admin_users.html")]
struct UsersPage {
    layout: super::common::Layout,
    chrome: Chrome,
    users: Vec<UserRow>,
    roles: Vec<&'static str>,
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
                disabled: u.disabled,
            })
            .collect(),
        roles: Role::ALL.iter().map(|r| r.as_str()).collect(),
        min_chars: MIN_PASSWORD_CHARS,
        max_chars: MAX_PASSWORD_CHARS,
        typed_name: typed.name.clone().unwrap_or_default(),
        typed_role: typed.role.clone().unwrap_or_default(),
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/users`.
pub async fn list(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<DoneQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let done = q.ok().and_then(|q| q.done).is_some();
    let r = users_page(&req, &state, done, None, &UserForm::default()).await;
    respond(&req, &viewer, r)
}

fn role_of(f: &UserForm) -> Result<Role, PageError> {
    Role::parse(f.role.as_deref().unwrap_or_default())
        .map_err(|m| PageError::bad_request(format!("Role: {m}.")))
}

/// The new password, typed twice alike.
fn password_of(f: &UserForm) -> Result<String, PageError> {
    let p = f.password.clone().unwrap_or_default();
    if f.password_again.as_deref() != Some(p.as_str()) {
        return Err(PageError::bad_request(
            "Password: the two passwords differ; type the same password twice.",
        ));
    }
    Ok(p)
}

/// Run `change` (a blocking call to `platform::admin`) and redirect to the
/// users page, or show the page again with the refusal.
async fn apply(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: &UserForm,
    change: impl FnOnce(ops::Actor, i64) -> Result<(), Error> + Send + 'static,
    checked: Result<(), PageError>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        checked?;
        let actor = admin::actor(&req)?;
        web::block(move || change(actor, now_unix())).await??;
        Ok::<_, PageError>(see_other("/admin/users?done=1"))
    }
    .await;
    match r {
        Ok(resp) => resp,
        Err(e) => {
            let r = users_page(&req, &state, false, Some(e), form).await;
            respond(&req, &viewer, r)
        }
    }
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
    let (ok, args) = split(checked);
    let change = move |actor: ops::Actor, now| match args {
        Some((name, role, pw)) => ops::add_user(&db, &actor, &name, role, &pw, now).map(|_| ()),
        None => Ok(()),
    };
    apply(req, state, &typed, change, ok).await
}

/// `POST /admin/users/{id}/role` (role).
pub async fn set_role(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<UserForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = admin::path_id(&path, "user").and_then(|id| {
        let f = form.map_err(admin::unreadable)?;
        Ok((id, role_of(&f)?))
    });
    let db = state.db.clone();
    let (ok, args) = split(checked);
    let change = move |actor: ops::Actor, now| match args {
        Some((id, role)) => ops::set_role(&db, &actor, id, role, now).map(|_| ()),
        None => Ok(()),
    };
    apply(req, state, &UserForm::default(), change, ok).await
}

/// `POST /admin/users/{id}/password` (password twice).
pub async fn reset_password(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<UserForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = admin::path_id(&path, "user").and_then(|id| {
        let f = form.map_err(admin::unreadable)?;
        Ok((id, password_of(&f)?))
    });
    let db = state.db.clone();
    let (ok, args) = split(checked);
    let change = move |actor: ops::Actor, now| match args {
        Some((id, pw)) => ops::reset_password(&db, &actor, id, &pw, now).map(|_| ()),
        None => Ok(()),
    };
    apply(req, state, &UserForm::default(), change, ok).await
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
    let checked = admin::path_id(raw, "user");
    let db = state.db.clone();
    let (ok, id) = split(checked);
    let change = move |actor: ops::Actor, now| match id {
        Some(id) => ops::set_user_disabled(&db, &actor, id, off, now).map(|_| ()),
        None => Ok(()),
    };
    apply(req, state, &UserForm::default(), change, ok).await
}

/// A checked form as (outcome for [`apply`], values for the change).
pub fn split<T>(checked: Result<T, PageError>) -> (Result<(), PageError>, Option<T>) {
    match checked {
        Ok(v) => (Ok(()), Some(v)),
        Err(e) => (Err(e), None),
    }
}
