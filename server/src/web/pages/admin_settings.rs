//! `/admin/settings`: the priority weights, the evidence tolerance, the
//! organisation's time zone and default language. Saving goes through
//! `platform::admin::change_settings`: the stored settings (the database's,
//! shared by every server instance) are read again, changed, checked as a
//! whole, stored with their log row in one transaction, and then used by
//! this server at once and by the others within seconds; the data
//! directory's `settings.toml` is rewritten as their copy. Bad input
//! changes nothing.

use super::admin::{self, Chrome};
use super::common::PageError;
use crate::error::{Error, Fault};
use crate::platform::admin as ops;
use crate::platform::settings::{
    AREA_REF_MAX_HA, RECENCY_MAX_DAYS, Settings, TOLERANCE_MAX_M, WEIGHT_MAX,
};
use crate::web::AppState;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

/// The settings form, every field as typed.
#[derive(Debug, Deserialize, Default, Clone)]
#[serde(default)]
pub struct SettingsForm {
    pub area: String,
    pub recency: String,
    pub corroboration: String,
    pub confidence: String,
    pub zone: String,
    pub area_ref_ha: String,
    pub recency_days: String,
    pub tolerance_m: String,
    pub time_zone: String,
    pub default_language: String,
}

impl SettingsForm {
    /// The form filled with the values in force.
    fn of(s: &Settings) -> SettingsForm {
        let p = &s.priority;
        let t = |v: f64| v.to_string();
        SettingsForm {
            area: t(p.area),
            recency: t(p.recency),
            corroboration: t(p.corroboration),
            confidence: t(p.confidence),
            zone: t(p.zone),
            area_ref_ha: t(p.area_ref_ha),
            recency_days: t(p.recency_days),
            tolerance_m: t(s.evidence.tolerance_m),
            time_zone: s.organisation.time_zone.clone(),
            default_language: s.organisation.default_language.clone(),
        }
    }

    /// Apply the form to `s`; a message names the field that is not a
    /// number (bounds are checked on the whole by `Settings::check`).
    fn apply(&self, s: &mut Settings) -> Result<(), Error> {
        // (label's message id, English label), value.
        let num = |(id, label): (&str, &str), v: &str| -> Result<f64, Error> {
            let t = v.trim();
            t.parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| {
                    let english = format!("{label}: '{t}' is not a number");
                    let args: [(&str, &dyn std::fmt::Display); 2] = [("field", &id), ("value", &t)];
                    Error::said(Fault::Invalid, "why-not-number", &args, english)
                })
        };
        let p = &mut s.priority;
        p.area = num(("adm-w-area", "Weight of area"), &self.area)?;
        p.recency = num(("adm-w-recency", "Weight of recency"), &self.recency)?;
        let corroboration = ("adm-w-corroboration", "Weight of corroboration");
        p.corroboration = num(corroboration, &self.corroboration)?;
        p.confidence = num(
            ("adm-w-confidence", "Weight of confidence"),
            &self.confidence,
        )?;
        p.zone = num(("adm-w-zone", "Weight of priority zone"), &self.zone)?;
        p.area_ref_ha = num(("adm-area-ref", "Reference area (ha)"), &self.area_ref_ha)?;
        p.recency_days = num(
            ("adm-recency-days", "Recency time (days)"),
            &self.recency_days,
        )?;
        let tolerance = ("adm-tolerance", "Evidence tolerance (m)");
        s.evidence.tolerance_m = num(tolerance, &self.tolerance_m)?;
        s.organisation.time_zone = self.time_zone.trim().to_string();
        s.organisation.default_language = self.default_language.trim().to_string();
        Ok(())
    }
}

#[derive(Template)]
#[template(path = "pages/admin_settings.html")]
struct SettingsPage {
    layout: super::common::Layout,
    chrome: Chrome,
    f: SettingsForm,
    zones: Vec<&'static str>,
    weight_max: f64,
    area_ref_max: f64,
    recency_max: f64,
    tolerance_max: f64,
    file: String,
}

async fn settings_page(
    req: &HttpRequest,
    state: &AppState,
    done: bool,
    error: Option<PageError>,
    typed: Option<SettingsForm>,
) -> Result<HttpResponse, PageError> {
    let (layout, chrome) =
        admin::chrome(req, state, "/admin/settings", &["settings."], done, error).await?;
    let t = SettingsPage {
        layout,
        chrome,
        f: typed.unwrap_or_else(|| SettingsForm::of(&state.settings.get())),
        zones: chrono_tz::TZ_VARIANTS.iter().map(|z| z.name()).collect(),
        weight_max: WEIGHT_MAX,
        area_ref_max: AREA_REF_MAX_HA,
        recency_max: RECENCY_MAX_DAYS,
        tolerance_max: TOLERANCE_MAX_M,
        file: crate::platform::settings::settings_path(&state.data_dir)
            .display()
            .to_string(),
    };
    admin::render(&t, &t.chrome)
}

/// `GET /admin/settings`.
pub async fn show(req: HttpRequest, state: web::Data<AppState>, q: admin::DoneArg) -> HttpResponse {
    let (req, state) = (&req, &state);
    let page = move |done| async move { settings_page(req, state, done, None, None).await };
    admin::show(req, q, page).await
}

/// `POST /admin/settings` (every field of the form).
pub async fn save(
    req: HttpRequest,
    state: web::Data<AppState>,
    form: Result<web::Form<SettingsForm>, actix_web::Error>,
) -> HttpResponse {
    let typed = form.as_ref().ok().map(|f| (**f).clone());
    let checked = form.map(|f| f.into_inner()).map_err(admin::unreadable);
    let st = state.clone();
    let change = move |a: &ops::Actor, f: SettingsForm, now| {
        ops::change_settings(&st.settings, a, |s| f.apply(s), now).map(drop)
    };
    let page = |e| async {
        let (req, state) = (&req, &state);
        settings_page(req, state, false, Some(e), typed).await
    };
    admin::apply(&req, "/admin/settings", checked, change, page).await
}
