//! `/admin/sources`: register an alert source and edit one's pixel size
//! (while none of its alerts is stored) and revisit interval, through
//! `alerts::sources` with its log row.

use super::admin::{self, Chrome};
use super::common::{Field, PageError};
use crate::alerts::sources as ops;
use crate::error::Error;
use crate::platform::admin::Actor;
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

struct SourceRow {
    id: i64,
    name: String,
    pixel_size_m: f64,
    revisit_days: i64,
    has_alerts: bool,
}

#[derive(Template)]
#[template(path = "pages/admin_sources.html")]
struct SourcesPage {
    layout: super::common::Layout,
    chrome: Chrome,
    sources: Vec<SourceRow>,
    typed: SourceForm,
}

/// The add and edit forms (edit sends no name).
#[derive(Debug, Deserialize, Default, Clone)]
pub struct SourceForm {
    pub name: Option<String>,
    pub pixel_size_m: Option<String>,
    pub revisit_days: Option<String>,
}

impl SourceForm {
    /// The two numbers; a message names the field and the value.
    fn numbers(&self) -> Result<(f64, i64), PageError> {
        let pixel = number::<f64>(
            field("adm-pixel-size", "Pixel size (m)"),
            &self.pixel_size_m,
        )?;
        let revisit = number::<i64>(
            field("adm-revisit", "Revisit interval (days)"),
            &self.revisit_days,
        )?;
        Ok((pixel, revisit))
    }
}

fn field(id: &'static str, english: &'static str) -> Field<'static> {
    Field { id, english }
}

fn number<T: std::str::FromStr>(f: Field<'_>, v: &Option<String>) -> Result<T, PageError> {
    super::common::opt_number::<T>(f, v)?.ok_or_else(|| {
        let english = format!("{}: a number is needed.", f.english);
        PageError::said("why-number-needed", &[("field", &f.id)], english)
    })
}

async fn sources_page(
    req: &HttpRequest,
    state: &AppState,
    done: bool,
    error: Option<PageError>,
    typed: SourceForm,
) -> Result<HttpResponse, PageError> {
    let db = state.db.clone();
    let sources = web::block(move || {
        db.read(|r| {
            r.sources()?
                .into_iter()
                .map(|s| {
                    Ok(SourceRow {
                        has_alerts: r.source_has_alerts(s.id)?,
                        id: s.id,
                        name: s.name,
                        pixel_size_m: s.pixel_size_m,
                        revisit_days: s.revisit_days,
                    })
                })
                .collect::<Result<Vec<_>, Error>>()
        })
    })
    .await??;
    let (layout, chrome) =
        admin::chrome(req, state, "/admin/sources", &["source."], done, error).await?;
    let t = SourcesPage {
        layout,
        chrome,
        sources,
        typed,
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/sources`.
pub async fn list(req: HttpRequest, state: web::Data<AppState>, q: admin::DoneArg) -> HttpResponse {
    let (req, state) = (&req, &state);
    let page = move |done| async move {
        sources_page(req, state, done, None, SourceForm::default()).await
    };
    admin::show(req, q, page).await
}

/// [`admin::apply`] for this page: back to the sources page, or the page
/// again with the refusal and the add form as typed.
async fn apply<T: Send + 'static>(
    req: HttpRequest,
    state: web::Data<AppState>,
    typed: SourceForm,
    checked: Result<T, PageError>,
    change: impl admin::Change<T>,
) -> HttpResponse {
    let page = |e| async {
        let (req, state) = (&req, &state);
        sources_page(req, state, false, Some(e), typed).await
    };
    admin::apply(&req, "/admin/sources", checked, change, page).await
}

/// `POST /admin/sources` (name, pixel size, revisit interval).
pub async fn add(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<SourceForm>, actix_web::Error>,
) -> HttpResponse {
    let f = form.map(|f| f.into_inner());
    let typed = f.as_ref().cloned().unwrap_or_default();
    let checked = f.map_err(admin::unreadable).and_then(|f| {
        let (p, r) = f.numbers()?;
        Ok((f.name.unwrap_or_default(), p, r))
    });
    let db = state.db.clone();
    let change = move |a: &Actor, (n, p, r): (String, f64, i64), now| {
        ops::add_source(&db, a, &n, p, r, now).map(drop)
    };
    apply(req, state, typed, checked, change).await
}

/// `POST /admin/sources/{id}` (pixel size, revisit interval).
pub async fn edit(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<SourceForm>, actix_web::Error>,
) -> HttpResponse {
    let checked = admin::path_id(&path, admin::SOURCE).and_then(|id| {
        let (p, r) = form.map_err(admin::unreadable)?.numbers()?;
        Ok((id, p, r))
    });
    let db = state.db.clone();
    let change =
        move |a: &Actor, (id, p, r), now| ops::edit_source(&db, a, id, p, r, now).map(drop);
    apply(req, state, SourceForm::default(), checked, change).await
}
