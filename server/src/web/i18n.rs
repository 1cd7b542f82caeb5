//! The language of a page and `POST /language`, the switch in the header of
//! every page. The language is the user's own choice (stored with the user),
//! else the `gp_lang` cookie the switch sets for someone not signed in (the
//! login page), else the browser's `Accept-Language`, else the organisation's
//! default (`[organisation] default_language`). The catalogues and the
//! translator are `platform::i18n`.

use crate::platform::auth::Identity;
use crate::platform::i18n::{ChosenLanguage, LANGUAGES, Tr, negotiate};
use crate::web::AppState;
use actix_web::{HttpMessage, HttpRequest, HttpResponse, web};
use serde::Deserialize;

/// The cookie the switch sets (also for someone not signed in).
const COOKIE: &str = "gp_lang";

/// The translator for this request.
pub fn tr_of(req: &HttpRequest) -> Tr {
    let chosen = req
        .extensions()
        .get::<ChosenLanguage>()
        .map(|c| c.0.clone());
    let cookie = req
        .headers()
        .get_all(actix_web::http::header::COOKIE)
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .find_map(|kv| {
            kv.trim()
                .strip_prefix(COOKIE)?
                .strip_prefix('=')
                .map(str::to_string)
        });
    let accept = req
        .headers()
        .get(actix_web::http::header::ACCEPT_LANGUAGE)
        .and_then(|v| v.to_str().ok());
    let default = req
        .app_data::<web::Data<AppState>>()
        .map(|s| s.settings.get().organisation.default_language.clone())
        .unwrap_or_else(|| "en".to_string());
    negotiate(chosen.as_deref().or(cookie.as_deref()), accept, &default)
}

#[derive(Deserialize)]
pub struct LanguageForm {
    /// A code of `LANGUAGES`, or "auto" to follow the browser again.
    lang: String,
    next: Option<String>,
}

/// `POST /language`: store the choice with the user (when signed in) and in
/// a cookie, then go back to the page.
pub async fn switch(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: web::Form<LanguageForm>,
) -> HttpResponse {
    let choice = match form.lang.as_str() {
        "auto" => None,
        l if LANGUAGES.contains(&l) => Some(l.to_string()),
        other => {
            return HttpResponse::BadRequest()
                .content_type("text/plain; charset=utf-8")
                .body(format!(
                    "language '{}' is not one of {} (or auto)",
                    other.chars().take(16).collect::<String>(),
                    LANGUAGES.join(", ")
                ));
        }
    };
    let user = match req.extensions().get::<Identity>() {
        Some(Identity::User { user_id, .. }) => Some(*user_id),
        _ => None,
    };
    if let Some(id) = user {
        let (db, c) = (state.db.clone(), choice.clone());
        let stored =
            web::block(move || db.write(|tx| tx.set_user_language(id, c.as_deref()))).await;
        if !matches!(stored, Ok(Ok(()))) {
            return HttpResponse::InternalServerError()
                .content_type("text/plain; charset=utf-8")
                .body("the language could not be stored; see the server log");
        }
    }
    let secure = req.connection_info().scheme() == "https";
    let cookie = match &choice {
        Some(l) => format!("{COOKIE}={l}; Path=/; Max-Age=31536000; SameSite=Lax"),
        None => format!("{COOKIE}=; Path=/; Max-Age=0; SameSite=Lax"),
    } + if secure { "; Secure" } else { "" };
    HttpResponse::SeeOther()
        .insert_header(("Set-Cookie", cookie))
        .insert_header(("Location", super::safe_next(form.next.as_deref())))
        .finish()
}
