//! `/disputes`: events whose counted reports disagree, with the reports
//! side by side, and an adjudication form per event;
//! `POST /disputes/{id}/adjudicate` records the decision (outcome, reason,
//! by = the logged-in user) and redirects back.

use super::common::{Layout, PageError, Viewer, fixed, html, respond, see_other};
use super::figure_words::status_note;
use super::views::{ReportView, report_view};
use crate::domain::EventStatus;
use crate::error::Error;
use crate::planning::codes::event_code;
use crate::platform::auth::Action;
use crate::platform::i18n::Tr;
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::adjudication::{self, BadField, MAX_BY_CHARS, MAX_REASON_CHARS, Ruling};
use crate::web::i18n::tr_of;
use actix_web::http::StatusCode;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

/// The outcomes an adjudication may settle on: (stored word, label).
pub const OUTCOMES: [(&str, &str); 3] = adjudication::SETTLING_OUTCOMES;

struct Dispute {
    id: i64,
    code: String,
    area: String,
    note: String,
    teams: String,
    reports: Vec<ReportView>,
}

#[derive(Template)]
#[template(path = "pages/disputes.html")]
struct DisputesPage {
    layout: Layout,
    disputes: Vec<Dispute>,
    /// (stored word, the status it settles on in the page's language).
    outcomes: Vec<(&'static str, String)>,
    may_adjudicate: bool,
    /// Ask for the decider's name when no user is logged in.
    ask_name: bool,
    error: Option<PageError>,
    error_event: i64,
    done: Option<i64>,
}

/// A settling outcome as the status word it gives (`status-*`, the word
/// the event pages use), else its English label.
fn outcome_label(tr: &Tr, word: &str, english: &str) -> String {
    word.parse::<EventStatus>().map_or_else(
        |_| english.to_string(),
        |s| tr.t(&super::views::status_id(s)),
    )
}

#[derive(Debug, Deserialize, Default)]
pub struct DisputesQuery {
    pub done: Option<i64>,
}

/// The adjudication form as typed.
#[derive(Debug, Deserialize, Default)]
pub struct AdjudicationForm {
    pub outcome: Option<String>,
    pub reason: Option<String>,
    pub by: Option<String>,
}

/// Check the form ([`Ruling::check`]); `by` comes from the logged-in user
/// when known. A refusal names the form's label.
pub fn validate(tr: &Tr, f: &AdjudicationForm, user: Option<&str>) -> Result<Ruling, PageError> {
    let by = user.or(f.by.as_deref()).unwrap_or_default();
    Ruling::check(
        f.outcome.as_deref().unwrap_or_default(),
        f.reason.as_deref().unwrap_or_default(),
        by,
    )
    .map_err(|field| {
        PageError::bad_request(match field {
            BadField::Outcome => tr.t("disp-bad-outcome"),
            BadField::Reason => tr.t1("disp-bad-reason", "max", MAX_REASON_CHARS),
            BadField::By => tr.t1("disp-bad-by", "max", MAX_BY_CHARS),
        })
    })
}

async fn disputes_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    error: Option<(i64, PageError)>,
    done: Option<i64>,
) -> Result<HttpResponse, PageError> {
    let tr = tr_of(req);
    let db = state.db.clone();
    let stats = state.stats.clone();
    let settings = state.settings.get().clone();
    let disputes = web::block(move || {
        let p = stats.prepared(&db, &StatsFilter::default())?;
        let mut out = Vec::new();
        for (id, s) in p
            .loaded
            .statuses
            .iter()
            .filter(|(_, s)| s.status == EventStatus::Disputed)
        {
            let d = db.read(|r| {
                let area = r
                    .event_resolved(*id)?
                    .map(|e| e.attrs.area_ha)
                    .unwrap_or(f64::NAN);
                let mut reports = Vec::new();
                for row in r.event_reports(*id)? {
                    let counted = uuid::Uuid::parse_str(&row.report_id)
                        .is_ok_and(|u| s.counted_reports.contains(&u));
                    if counted {
                        reports.push(report_view(r, &row, true, &settings)?);
                    }
                }
                Ok(Dispute {
                    id: *id,
                    code: event_code(*id),
                    area: fixed(area, 2),
                    note: status_note(&tr, &s.note, settings.zone()),
                    teams: s.teams.join(", "),
                    reports,
                })
            })?;
            out.push(d);
        }
        Ok::<_, Error>(out)
    })
    .await??;
    let status = error.as_ref().map_or(StatusCode::OK, |(_, e)| e.status);
    let (error_event, error) = match error {
        Some((id, e)) => (id, Some(e)),
        None => (0, None),
    };
    let t = DisputesPage {
        layout: super::dashboard::translated_layout(req, viewer, "disp-title", "/disputes"),
        disputes,
        outcomes: OUTCOMES
            .iter()
            .map(|(word, english)| (*word, outcome_label(&tr, word, english)))
            .collect(),
        may_adjudicate: viewer.may(Action::Adjudicate),
        ask_name: viewer.name.is_none(),
        error,
        error_event,
        done,
    };
    Ok(html(status, t.render()?))
}

/// `GET /disputes`.
pub async fn list(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<DisputesQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let done = q.ok().and_then(|q| q.done);
        disputes_page(&req, &state, &viewer, None, done).await
    }
    .await;
    respond(&req, &viewer, r)
}

/// `POST /disputes/{id}/adjudicate` (form: outcome, reason, [by], CSRF).
pub async fn adjudicate(
    req: HttpRequest,
    state: web::Data<AppState>,
    path: web::Path<String>,
    form: Result<web::Form<AdjudicationForm>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let id: i64 = match path.parse() {
        Ok(id) => id,
        Err(_) => {
            let e = PageError::bad_request(format!("event id '{path}' is not a number"));
            return respond(&req, &viewer, Err(e));
        }
    };
    let r = async {
        let f =
            form.map_err(|e| PageError::bad_request(format!("The form could not be read: {e}")))?;
        let ruling = validate(&tr_of(&req), &f, viewer.name.as_deref())?;
        let db = state.db.clone();
        let live = web::block(move || adjudication::record(&db, id, &ruling))
            .await??
            .event_id;
        Ok::<_, PageError>(see_other(&format!("/disputes?done={live}")))
    }
    .await;
    match r {
        Ok(resp) => resp,
        Err(e) => {
            let r = disputes_page(&req, &state, &viewer, Some((id, e)), None).await;
            respond(&req, &viewer, r)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn form(outcome: &str, reason: &str, by: &str) -> AdjudicationForm {
        AdjudicationForm {
            outcome: Some(outcome.into()),
            reason: Some(reason.into()),
            by: Some(by.into()),
        }
    }

    #[test]
    fn the_logged_in_user_decides() {
        let r = validate(
            &Tr::new("en"),
            &form("false_alarm", " standing forest ", "typed"),
            Some("mgr one"),
        )
        .unwrap();
        assert_eq!(
            (r.outcome.as_str(), r.reason.as_str(), r.by.as_str()),
            ("false_alarm", "standing forest", "mgr one")
        );
        let r = validate(
            &Tr::new("en"),
            &form("confirmed", "fresh stumps", " Ana "),
            None,
        )
        .unwrap();
        assert_eq!(r.by, "Ana");
    }

    #[test]
    fn missing_fields_are_refused_with_their_name() {
        assert!(
            validate(&Tr::new("en"), &form("maybe", "x", "m"), None)
                .unwrap_err()
                .message
                .starts_with("Outcome")
        );
        assert!(
            validate(&Tr::new("en"), &form("confirmed", "  ", "m"), None)
                .unwrap_err()
                .message
                .starts_with("Reason")
        );
        assert!(
            validate(&Tr::new("en"), &form("confirmed", "ok", ""), None)
                .unwrap_err()
                .message
                .starts_with("Decided by")
        );
        let long = "x".repeat(MAX_REASON_CHARS + 1);
        assert!(validate(&Tr::new("en"), &form("confirmed", &long, "m"), None).is_err());
    }
}
