//! `/summary`: a printable summary for a chosen period (first detection
//! from, to) and zone: the headline figures, the charts, the trends and the
//! team table, one A4 page per section when printed from the browser
//! (`templates/pages/summary.html` holds the print CSS). The same figures
//! as the dashboard ([`super::dashboard`]), computed the same way.

use super::common::{Layout, PageError, Viewer, non_empty, page, percent, respond};
use super::dashboard::{
    Numbers, Trends, km_chart, monthly_chart, numbers, team_rows, translated_layout, trend_charts,
};
use super::events::Choice;
use crate::error::Error;
use crate::platform::i18n::Tr;
use crate::statistics::figures::{FigureOptions, Figures, GroupKey};
use crate::statistics::kept::StatsFilter;
use crate::web::AppState;
use crate::web::charts::render_grouped_bars;
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;

#[derive(Debug, Deserialize, Default)]
pub struct SummaryQuery {
    pub from: Option<String>,
    pub to: Option<String>,
    pub zone: Option<String>,
}

#[derive(Template)]
#[template(path = "pages/summary.html")]
struct SummaryPage {
    layout: Layout,
    zones: Vec<Choice>,
    from: String,
    to: String,
    /// "all zones" or the zone's name.
    zone: String,
    /// "first detected 2026-01-01 to 2026-06-30" or "all dates".
    period: String,
    as_of: String,
    numbers: Numbers,
    /// The confirmation rate of all visited events, with its interval.
    rate: String,
    monthly: String,
    km_chart: String,
    trends: [String; 3],
    team_rows: Vec<[String; 7]>,
}

/// "72.0% (Wilson 95% CI 60.1%–81.4%; 36 of 50)" for all events.
fn overall_rate(tr: &Tr, f: &Figures) -> String {
    f.confirmation
        .iter()
        .find(|g| g.key == GroupKey::All)
        .and_then(|g| g.rows.first())
        .and_then(|r| r.rate.as_ref())
        .map_or_else(
            || tr.t("dash-no-finding"),
            |p| {
                let interval = format!("{}–{}", percent(p.ci95.lower), percent(p.ci95.upper));
                let of = tr.t3(
                    "sum-rate-of",
                    "interval",
                    interval,
                    "k",
                    p.successes,
                    "n",
                    p.trials,
                );
                format!("{} ({of})", percent(p.estimate))
            },
        )
}

fn period_text(tr: &Tr, from: &str, to: &str) -> String {
    match (from.is_empty(), to.is_empty()) {
        (true, true) => tr.t("sum-period-all"),
        (false, true) => tr.t1("sum-period-from", "from", from),
        (true, false) => tr.t1("sum-period-to", "to", to),
        (false, false) => tr.t2("sum-period-between", "from", from, "to", to),
    }
}

async fn summary_page(
    req: &HttpRequest,
    state: &AppState,
    q: SummaryQuery,
) -> Result<HttpResponse, PageError> {
    let (from, to) = super::dashboard::period(&q.from, &q.to)?;
    let filter = StatsFilter {
        from,
        to,
        zone: non_empty(&q.zone),
        team: None,
        source: None,
    };
    let opts = FigureOptions::new(chrono::Utc::now());
    let (db, stats, fl) = (state.db.clone(), state.stats.clone(), filter.clone());
    let tr = crate::web::i18n::tr_of(req);
    let (f, monthly, trends, zone_names) = web::block(move || {
        let p = stats.prepared(&db, &fl)?;
        let f = p.figures(&opts)?;
        let trends = Trends::of(&p.loaded.events, opts.as_of)?;
        let monthly = render_grouped_bars(&monthly_chart(&tr, &p.loaded.events));
        let zones: Vec<String> =
            db.read(|r| Ok(r.zones()?.into_iter().map(|z| z.name).collect()))?;
        Ok::<_, Error>((f, monthly, trends, zones))
    })
    .await??;
    let (from, to) = (q.from.unwrap_or_default(), q.to.unwrap_or_default());
    let viewer = Viewer::of(req);
    let layout = translated_layout(req, &viewer, "sum-title", "/dashboard");
    page(&SummaryPage {
        layout,
        zones: zone_names
            .into_iter()
            .map(|z| Choice {
                selected: filter.zone.as_deref() == Some(z.as_str()),
                value: z.clone(),
                label: z,
            })
            .collect(),
        period: period_text(&tr, &from, &to),
        from,
        to,
        zone: filter
            .zone
            .clone()
            .unwrap_or_else(|| tr.t("dash-all-zones")),
        as_of: super::common::local_time(&state.settings.get(), f.as_of),
        numbers: numbers(&tr, &f),
        rate: overall_rate(&tr, &f),
        monthly,
        km_chart: km_chart(&tr, &f),
        trends: trend_charts(&tr, &trends),
        team_rows: team_rows(&f),
    })
}

/// `GET /summary`.
pub async fn show(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<SummaryQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let q = q.map_err(super::common::bad_filter)?;
        summary_page(&req, &state, q.into_inner()).await
    }
    .await;
    respond(&req, &viewer, r)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_period_says_what_was_chosen() {
        let en = Tr::new("en");
        assert_eq!(period_text(&en, "", ""), "all dates");
        assert_eq!(
            period_text(&en, "2026-01-01", "2026-06-30"),
            "first detected 2026-01-01 to 2026-06-30"
        );
        assert_eq!(
            period_text(&en, "2026-01-01", ""),
            "first detected from 2026-01-01"
        );
        assert_eq!(
            period_text(&Tr::new("pt"), "", "2026-06-30"),
            "detectados pela primeira vez até 2026-06-30"
        );
    }
}
