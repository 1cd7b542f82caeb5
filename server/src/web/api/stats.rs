//! Statistics: `GET /api/v1/stats` (all figures) and `GET /api/v1/stats/{table}`
//! (`coverage`, `confirmation`, `response-times`, `time-to-visit`,
//! `target`, `found-on-ground`, `causes`, `teams`, `assessment`;
//! `format=csv` for the tables), filtered
//! by `from`, `to` (detection dates), `zone`, `team`, `source`; `as_of`
//! (report date) and `within_days`.

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
        "target" => json!({"as_of": f.as_of, "target": f.target}),
        "found-on-ground" => json!({"as_of": f.as_of, "found_on_ground": f.found_on_ground}),
        "causes" => json!({"as_of": f.as_of, "causes": f.causes}),
        "teams" => json!({"as_of": f.as_of, "teams": f.teams}),
        "assessment" => json!({"as_of": f.as_of, "assessment": f.assessment}),
        other => return Err(Error::NotFound(format!("no statistic '{other}'")).into()),
    };
    Ok(HttpResponse::Ok().json(v))
}
