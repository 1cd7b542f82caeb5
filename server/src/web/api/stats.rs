//! Statistics, exports, disputes and adjudication:
//! `GET /api/v1/stats` (all figures) and `GET /api/v1/stats/{table}`
//! (`coverage`, `confirmation`, `response-times`, `time-to-visit`,
//! `causes`, `teams`, `assessment`; `format=csv` for the tables), filtered
//! by `from`, `to` (detection dates), `zone`, `team`, `source`; `as_of`
//! (report date) and `within_days`. `GET /api/v1/disputes`,
//! `POST /api/v1/events/{id}/adjudications`, `GET /api/v1/exports/events.geojson`.

use crate::domain::Day;
use crate::error::Error;
use crate::statistics::figures::FigureOptions;
use crate::statistics::kept::{StatsFilter, table};
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::{HttpResponse, web};
use serde::Deserialize;
use serde_json::{Value, json};

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
pub struct StatsQuery {
    from: Option<String>,
    to: Option<String>,
    zone: Option<String>,
    team: Option<String>,
    source: Option<String>,
    as_of: Option<String>,
    within_days: Option<f64>,
    format: Option<String>,
}

fn day(name: &str, v: &Option<String>) -> Result<Option<Day>, Error> {
    v.as_deref()
        .map(|s| Day::parse(s).map_err(|m| Error::Invalid(format!("parameter '{name}': {m}"))))
        .transpose()
}

fn parse(q: &StatsQuery) -> Result<(StatsFilter, FigureOptions), Error> {
    let filter = StatsFilter {
        from: day("from", &q.from)?,
        to: day("to", &q.to)?,
        zone: q.zone.clone(),
        team: q.team.clone(),
        source: q.source.clone(),
    };
    let as_of = match day("as_of", &q.as_of)? {
        Some(d) => d
            .date()
            .and_hms_opt(23, 59, 59)
            .map(|t| t.and_utc())
            .unwrap_or_else(chrono::Utc::now),
        None => chrono::Utc::now(),
    };
    let mut opts = FigureOptions::new(as_of);
    if let Some(w) = q.within_days {
        if !(w.is_finite() && w > 0.0 && w <= 3650.0) {
            return Err(Error::Invalid(format!(
                "parameter 'within_days': {w} is not in (0, 3650]"
            )));
        }
        opts.within_days = w;
    }
    Ok((filter, opts))
}

pub async fn all(
    state: web::Data<AppState>,
    q: web::Query<StatsQuery>,
) -> Result<HttpResponse, ApiError> {
    let (filter, opts) = parse(&q)?;
    let state = state.into_inner();
    let f = web::block(move || state.stats.figures(&state.db, &filter, &opts)).await??;
    Ok(HttpResponse::Ok().json(f))
}

pub async fn one(
    state: web::Data<AppState>,
    path: web::Path<String>,
    q: web::Query<StatsQuery>,
) -> Result<HttpResponse, ApiError> {
    let name = path.into_inner();
    let (filter, opts) = parse(&q)?;
    let csv = match q.format.as_deref() {
        None | Some("json") => false,
        Some("csv") => true,
        Some(o) => {
            return Err(
                Error::Invalid(format!("parameter 'format': '{o}' is not json or csv")).into(),
            );
        }
    };
    let state = state.into_inner();
    let f = web::block(move || state.stats.figures(&state.db, &filter, &opts)).await??;
    if csv {
        let body =
            table(&f, &name)?.ok_or_else(|| Error::NotFound(format!("no CSV table '{name}'")))?;
        return Ok(HttpResponse::Ok()
            .content_type("text/csv; charset=utf-8")
            .insert_header((
                "Content-Disposition",
                format!("attachment; filename=\"{name}.csv\""),
            ))
            .body(body));
    }
    let v: Value = match name.as_str() {
        "coverage" => json!({"as_of": f.as_of, "coverage": f.coverage}),
        "confirmation" => json!({"as_of": f.as_of, "confirmation": f.confirmation}),
        "response-times" => json!({"as_of": f.as_of, "response_times": f.response_times}),
        "time-to-visit" => json!({"as_of": f.as_of, "time_to_visit": f.time_to_visit}),
        "causes" => json!({"as_of": f.as_of, "causes": f.causes}),
        "teams" => json!({"as_of": f.as_of, "teams": f.teams}),
        "assessment" => json!({"as_of": f.as_of, "assessment": f.assessment}),
        other => return Err(Error::NotFound(format!("no statistic '{other}'")).into()),
    };
    Ok(HttpResponse::Ok().json(v))
}

/// Events whose reports disagree, with the reports that count.
pub async fn disputes(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let state = state.into_inner();
    let out = web::block(move || {
        let p = state.stats.prepared(&state.db, &StatsFilter::default())?;
        let v: Vec<Value> = p
            .loaded
            .statuses
            .iter()
            .filter(|(_, s)| s.status == crate::domain::EventStatus::Disputed)
            .map(|(id, s)| json!({"event_id": id, "note": s.note, "reports": s.counted_reports, "teams": s.teams}))
            .collect();
        Ok::<_, Error>(v)
    })
    .await??;
    Ok(HttpResponse::Ok().json(out))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AdjudicationBody {
    outcome: String,
    reason: String,
    by: String,
}

pub async fn adjudicate(
    state: web::Data<AppState>,
    path: web::Path<String>,
    body: web::Json<AdjudicationBody>,
) -> Result<HttpResponse, ApiError> {
    let id: i64 = path
        .parse()
        .map_err(|_| Error::Invalid(format!("event id '{path}' is not a number")))?;
    let b = body.into_inner();
    let Some(outcome) = crate::statistics::kept::parse_outcome(&b.outcome) else {
        return Err(Error::Invalid(format!(
            "field 'outcome': '{}' is not confirmed, false_alarm, inconclusive or not_reached",
            b.outcome
        ))
        .into());
    };
    if b.reason.trim().is_empty() || b.reason.chars().count() > 2000 {
        return Err(
            Error::Invalid("field 'reason': say why, in 1 to 2000 characters".into()).into(),
        );
    }
    if b.by.trim().is_empty() || b.by.chars().count() > 100 {
        return Err(Error::Invalid("field 'by': who decided, 1 to 100 characters".into()).into());
    }
    let db = state.db.clone();
    let row = web::block(move || {
        let ev = db
            .read(|r| r.event_resolved(id))?
            .ok_or_else(|| Error::NotFound(format!("no event {id}")))?;
        db.write(|tx| tx.add_adjudication(ev.id, outcome, b.reason.trim(), b.by.trim()))
    })
    .await??;
    Ok(HttpResponse::Created().json(row))
}

/// Events with their status and an evidence summary, as GeoJSON.
pub async fn export_events(state: web::Data<AppState>) -> Result<HttpResponse, ApiError> {
    let state = state.into_inner();
    let body = web::block(move || {
        let p = state.stats.prepared(&state.db, &StatsFilter::default())?;
        crate::statistics::kept::events_with_status(&state.db, &p.loaded, &state.settings.priority)
    })
    .await??;
    Ok(HttpResponse::Ok()
        .content_type("application/geo+json")
        .insert_header((
            "Content-Disposition",
            "attachment; filename=\"events.geojson\"",
        ))
        .json(body))
}
