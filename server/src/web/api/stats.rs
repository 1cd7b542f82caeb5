//! Statistics: `GET /api/v1/stats` (all figures) and `GET /api/v1/stats/{table}`
//! (`coverage`, `confirmation`, `response-times`, `time-to-visit`,
//! `target`, `found-on-ground`, `causes`, `teams`, `control-points`, `assessment`;
//! `format=csv` for the tables), filtered
//! by `from`, `to` (detection dates), `zone`, `team`, `source`; `as_of`
//! (report date) and `within_days`.

use crate::domain::Day;
use crate::error::Error;
use crate::statistics::figures::{DEFAULT_WITHIN_DAYS, FigureOptions};
use crate::statistics::kept::{FiguresAsked, Served, StatsFilter, table};
use crate::web::AppState;
use crate::web::error::ApiError;
use actix_web::http::{StatusCode, header};
use actix_web::{HttpRequest, HttpResponse, web};
use serde::Deserialize;
use serde_json::{Value, json};
use std::sync::Arc;

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

fn asked(q: &StatsQuery) -> Result<FiguresAsked, Error> {
    let filter = StatsFilter {
        from: day("from", &q.from)?,
        to: day("to", &q.to)?,
        zone: q.zone.clone(),
        team: q.team.clone(),
        source: q.source.clone(),
    };
    let mut within_days = DEFAULT_WITHIN_DAYS;
    if let Some(w) = q.within_days {
        if !(w.is_finite() && w > 0.0 && w <= 3650.0) {
            return Err(Error::Invalid(format!(
                "parameter 'within_days': {w} is not in (0, 3650]"
            )));
        }
        within_days = w;
    }
    Ok(FiguresAsked {
        filter,
        as_of: day("as_of", &q.as_of)?,
        within_days,
    })
}

fn parse(q: &StatsQuery) -> Result<(StatsFilter, FigureOptions), Error> {
    let asked = asked(q)?;
    let options = asked.options();
    Ok((asked.filter, options))
}

/// A kept answer as the response to `req`: 304 when its `If-None-Match`
/// names it, the gzip form when its `Accept-Encoding` takes gzip, with the
/// entity tag either way (clients must ask again before reusing it).
pub(super) fn kept_response(req: &HttpRequest, s: &Served, content_type: &str) -> HttpResponse {
    let header = |name| req.headers().get(name).and_then(|v| v.to_str().ok());
    let unchanged = header(header::IF_NONE_MATCH).is_some_and(|v| s.matches(v));
    let mut r = HttpResponse::build(if unchanged {
        StatusCode::NOT_MODIFIED
    } else {
        StatusCode::OK
    });
    r.insert_header((header::ETAG, s.etag.as_str()))
        .insert_header((header::VARY, "Accept-Encoding"))
        .insert_header((header::CACHE_CONTROL, "private, no-cache"));
    if unchanged {
        return r.finish();
    }
    r.content_type(content_type);
    match &s.gzip {
        Some(gz) if accepts_gzip(header(header::ACCEPT_ENCODING)) => r
            .insert_header((header::CONTENT_ENCODING, "gzip"))
            .body(web::Bytes::from_owner(Arc::clone(gz))),
        _ => r.body(web::Bytes::from_owner(Arc::clone(&s.json))),
    }
}

/// Whether an `Accept-Encoding` value takes gzip (RFC 9110 §12.5.3): named
/// (or `*`) with a weight other than zero.
fn accepts_gzip(v: Option<&str>) -> bool {
    v.is_some_and(|v| {
        v.split(',').any(|item| {
            let mut parts = item.split(';').map(str::trim);
            let coding = parts.next().unwrap_or("");
            let zero = parts.any(|p| {
                p.strip_prefix("q=")
                    .and_then(|q| q.trim().parse::<f64>().ok())
                    .is_some_and(|q| q <= 0.0)
            });
            (coding.eq_ignore_ascii_case("gzip") || coding == "*") && !zero
        })
    })
}

/// Every figure, as kept bytes: serialised once per fact stamp and
/// question. A kept answer is found without leaving the executor (the
/// stamp is an atomic and a `try_lock` that never waits); otherwise it is
/// made in `web::block`.
pub async fn all(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: web::Query<StatsQuery>,
) -> Result<HttpResponse, ApiError> {
    let asked = asked(&q)?;
    let served = match state.stats.served_kept(&state.db, &asked) {
        Some(s) => s,
        None => {
            let state = state.into_inner();
            web::block(move || state.stats.served(&state.db, &asked)).await??
        }
    };
    Ok(kept_response(&req, &served, "application/json"))
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

#[cfg(test)]
mod tests {
    use super::accepts_gzip;

    #[test]
    fn gzip_is_taken_when_named_with_a_weight_above_zero() {
        // RFC 9110 §12.5.3 and §12.4.2 (weights).
        assert!(accepts_gzip(Some("gzip, deflate, br")));
        assert!(accepts_gzip(Some("br;q=1.0, GZIP;q=0.5")));
        assert!(accepts_gzip(Some("*")));
        assert!(!accepts_gzip(Some("gzip;q=0")));
        assert!(!accepts_gzip(Some("br, identity")));
        assert!(!accepts_gzip(None));
    }
}
