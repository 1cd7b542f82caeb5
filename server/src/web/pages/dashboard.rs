//! `/dashboard`: the manager's figures for a selection (from, to, zone,
//! team, source): coverage, confirmation rates with Wilson intervals and
//! the basis they rest on, the Kaplan–Meier time-to-visit curves, a monthly
//! chart of issued, visited and confirmed events, causes, response times,
//! the team table, the assessment estimates when a sample exists, and
//! export links. Everything is computed from the stored facts on each
//! request ([`crate::statistics::kept`]).

use super::common::{
    Field, Layout, PageError, Viewer, fixed, non_empty, opt_day, page, percent, respond,
};
use super::events::{Choice, urlencode};
use super::figure_words::{cause_name, chart_words, group_name, stratum_label};
use crate::domain::EventStatus;
use crate::error::Error;
use crate::platform::i18n::Tr;
use crate::statistics::estimators::{DurationSummary, Estimate};
use crate::statistics::figures::{
    Assessment, EventFacts, FigureOptions, Figures, GroupKey, TargetFrom, TargetShare, TrendPoint,
    VisitCurve, month_of, monthly_trends, team_trends,
};
use crate::statistics::kept::{CONTROL_PLOT_HA, StatsFilter, TABLES};
use crate::web::AppState;
use crate::web::charts::{
    BarChart, BarSeries, HBar, HBarChart, IntervalChart, IntervalPoint, IntervalSeries, Step,
    StepChart, StepSeries, format_number, render_grouped_bars, render_horizontal_bars,
    render_interval_chart, render_step_curve,
};
use actix_web::{HttpRequest, HttpResponse, web};
use askama::Template;
use serde::Deserialize;
use std::collections::BTreeMap;

#[derive(Debug, Deserialize, Default)]
pub struct DashboardQuery {
    pub from: Option<String>,
    pub to: Option<String>,
    pub zone: Option<String>,
    pub team: Option<String>,
    pub source: Option<String>,
}

/// The period of the dashboard's and the summary's filter forms: the first
/// and last day of detection, each optional, refused in the reader's words.
pub(super) fn period(
    from: &Option<String>,
    to: &Option<String>,
) -> Result<(Option<crate::domain::Day>, Option<crate::domain::Day>), PageError> {
    let day = |id, english, v| opt_day(Field { id, english }, v);
    Ok((day("dash-from", "From", from)?, day("dash-to", "To", to)?))
}

/// Issued, visited and confirmed events per month of first detection.
/// "Visited" is an event a counted report reached (any status but
/// unvisited and not reached). Clearings found on the ground are not
/// alerts and are left out.
pub fn monthly_chart(tr: &Tr, events: &[EventFacts]) -> BarChart {
    let mut counts: BTreeMap<String, [f64; 3]> = BTreeMap::new();
    for e in events.iter().filter(|e| !e.found_on_ground) {
        let c = counts.entry(month_of(e.first_detected)).or_default();
        if e.issued_at.is_some() {
            c[0] += 1.0;
        }
        if e.first_visit.is_some() {
            c[1] += 1.0;
        }
        if e.status == EventStatus::Confirmed {
            c[2] += 1.0;
        }
    }
    let series = [
        ("fig-series-issued", None),
        ("fig-series-visited", None),
        ("fig-series-confirmed", Some(EventStatus::Confirmed)),
    ]
    .iter()
    .enumerate()
    .map(|(i, (id, status))| BarSeries {
        label: tr.t(id),
        values: counts.values().map(|c| c[i]).collect(),
        status: *status,
    })
    .collect();
    BarChart {
        title: tr.t("fig-monthly-title"),
        categories: counts.keys().cloned().collect(),
        x_label: tr.t("fig-month-axis"),
        series,
        y_label: tr.t("fig-events-count-axis"),
        words: chart_words(tr),
    }
}

/// The trends' figures: by month over all events, and by team and month.
pub struct Trends {
    pub monthly: Vec<TrendPoint>,
    pub teams: Vec<TrendPoint>,
}

impl Trends {
    /// The trends of `events` at `as_of` (pure; see [`monthly_trends`]).
    pub fn of(events: &[EventFacts], as_of: chrono::DateTime<chrono::Utc>) -> Result<Self, Error> {
        let invalid = |e| Error::Invalid(format!("statistics: {e}"));
        Ok(Trends {
            monthly: monthly_trends(events, as_of).map_err(invalid)?,
            teams: team_trends(events, as_of).map_err(invalid)?,
        })
    }
}

/// Interval series of `points`, one per group, over the sorted months.
fn trend_series(
    tr: &Tr,
    points: &[TrendPoint],
    value: impl Fn(&TrendPoint) -> Option<IntervalPoint>,
) -> (Vec<String>, Vec<IntervalSeries>) {
    let months: Vec<String> = points
        .iter()
        .map(|p| p.month.clone())
        .collect::<std::collections::BTreeSet<_>>()
        .into_iter()
        .collect();
    let mut groups: BTreeMap<&str, Vec<Option<IntervalPoint>>> = BTreeMap::new();
    for p in points {
        let row = groups
            .entry(p.group.as_str())
            .or_insert_with(|| vec![None; months.len()]);
        if let Ok(k) = months.binary_search(&p.month) {
            row[k] = value(p);
        }
    }
    let series = groups
        .into_iter()
        .map(|(label, points)| IntervalSeries {
            label: group_name(tr, GroupKey::Team, label),
            points,
        })
        .collect();
    (months, series)
}

fn rate_point(p: &TrendPoint) -> Option<IntervalPoint> {
    p.confirmation.as_ref().map(|r| IntervalPoint {
        estimate: r.estimate,
        lower: Some(r.ci95.lower),
        upper: Some(r.ci95.upper),
    })
}

fn median_point(p: &TrendPoint) -> Option<IntervalPoint> {
    p.median_days.map(|m| IntervalPoint {
        estimate: m,
        lower: p.median_ci95.lower,
        upper: p.median_ci95.upper,
    })
}

/// The three trend charts: the confirmation rate and the median time to
/// visit by month, and the teams' median time from issue by month.
pub fn trend_charts(tr: &Tr, t: &Trends) -> [String; 3] {
    let chart = |title: &str, y_label: &str, y_max, (categories, series)| {
        render_interval_chart(&IntervalChart {
            title: tr.t(title),
            categories,
            x_label: tr.t("fig-month-axis"),
            y_label: tr.t(y_label),
            y_max,
            series,
            words: chart_words(tr),
        })
    };
    [
        chart(
            "fig-trend-rate-title",
            "fig-trend-rate-axis",
            Some(1.0),
            trend_series(tr, &t.monthly, rate_point),
        ),
        chart(
            "fig-trend-median-title",
            "fig-trend-median-axis",
            None,
            trend_series(tr, &t.monthly, median_point),
        ),
        chart(
            "fig-trend-teams-title",
            "fig-trend-median-axis",
            None,
            trend_series(tr, &t.teams, median_point),
        ),
    ]
}

/// A Kaplan–Meier curve as a labelled step series: it starts at (0, 1),
/// steps at each observed time, and marks censored times.
pub fn km_series(tr: &Tr, c: &VisitCurve) -> StepSeries {
    let mut steps = vec![Step {
        x_days: 0.0,
        y: 1.0,
        band: Some((1.0, 1.0)),
    }];
    let mut censored = Vec::new();
    if let Some(km) = &c.curve {
        for s in &km.steps {
            steps.push(Step {
                x_days: s.time,
                y: s.survival,
                band: Some((s.ci95.lower, s.ci95.upper)),
            });
            if s.censored > 0 {
                censored.push(s.time);
            }
        }
    }
    let n = c.curve.as_ref().map_or(0, |k| k.subjects);
    StepSeries {
        label: tr.t2("fig-curve-n", "label", label(tr, &c.label), "n", n),
        steps,
        censored,
    }
}

/// A fixed English label of the figures in the user's language: its id is
/// `fig-` and the label's words joined by `-` ("by zone" → `fig-by-zone`);
/// a label without a message stays English.
pub(super) fn label(tr: &Tr, english: &str) -> String {
    let mut id = String::from("fig");
    for word in english
        .split(|c: char| !c.is_ascii_alphanumeric())
        .filter(|w| !w.is_empty())
    {
        id.push('-');
        id.push_str(&word.to_ascii_lowercase());
    }
    tr.get(&id).unwrap_or_else(|| english.to_string())
}

/// The layout of a figures page, its title in the user's language.
pub(super) fn translated_layout(
    req: &HttpRequest,
    viewer: &Viewer,
    title_id: &str,
    current: &str,
) -> Layout {
    let mut layout = Layout::new(req, viewer, title_id, current);
    layout.title = layout.tr.t(title_id);
    layout
}

impl DashboardPage {
    /// `label` for the template.
    fn l(&self, english: &str) -> String {
        label(&self.layout.tr, english)
    }
}

fn key_label(k: GroupKey) -> &'static str {
    match k {
        GroupKey::All => "all events",
        GroupKey::Zone => "by zone",
        GroupKey::Team => "by team",
        GroupKey::DetectionMonth => "by month of first detection",
        GroupKey::Source => "by source",
        GroupKey::Confidence => "by alert confidence (high or low)",
        GroupKey::Corroborated => "by corroboration",
        GroupKey::Cause => "by cause",
        GroupKey::Stratum => "by stratum",
    }
}

/// "0.812 (SE 0.031; 95% CI 0.751–0.873)".
pub fn estimate_text(tr: &Tr, e: &Estimate, decimals: usize) -> String {
    let (est, n) = (fixed(e.estimate, decimals), |v| fixed(v, decimals));
    match (e.se, e.ci95) {
        (Some(se), Some(ci)) => tr.tn(
            "fig-estimate-se-ci",
            &[
                ("estimate", &est),
                ("se", &n(se)),
                ("lower", &n(ci.lower)),
                ("upper", &n(ci.upper)),
            ],
        ),
        (Some(se), None) => tr.t2("fig-estimate-se", "estimate", est, "se", n(se)),
        _ => tr.t1("fig-estimate-no-se", "estimate", est),
    }
}

fn duration_text(d: &Option<DurationSummary>) -> (String, String, String) {
    match d {
        Some(d) => (d.count.to_string(), fixed(d.median, 1), fixed(d.p90, 1)),
        None => ("0".into(), "–".into(), "–".into()),
    }
}

struct CoverageTable {
    title: &'static str,
    rows: Vec<[String; 6]>,
}

struct RateTable {
    title: &'static str,
    basis: &'static str,
    rows: Vec<[String; 7]>,
}

pub(super) struct Numbers {
    pub events: u64,
    pub issued: u64,
    pub visited: u64,
    pub not_reached: u64,
    pub unvisited: u64,
    /// (figure, what it is) for the target from detection and from issue.
    pub targets: Vec<(String, String)>,
    /// Clearings found on the ground that no alert flagged, and their area.
    pub ground: (u64, String),
    /// Why the curve's n differs from the events counted, if it does.
    pub curve_n_note: Option<String>,
}

#[derive(Template)]
#[template(path = "pages/dashboard.html")]
struct DashboardPage {
    layout: Layout,
    zones: Vec<Choice>,
    teams: Vec<Choice>,
    sources: Vec<Choice>,
    from: String,
    to: String,
    as_of: String,
    numbers: Numbers,
    coverage: Vec<CoverageTable>,
    rates: Vec<RateTable>,
    km_chart: String,
    km_notes: Vec<String>,
    monthly: String,
    trends: [String; 3],
    causes_chart: String,
    causes: Vec<[String; 3]>,
    times: Vec<[String; 4]>,
    team_rows: Vec<[String; 8]>,
    assessment: Option<AssessmentView>,
    exports: Vec<(String, String)>,
    /// The printable summary of the same period and zone.
    summary_link: String,
    /// The events of this selection on a map (`dashboard_map`).
    map: Option<super::live_map::LiveMap>,
}

struct AssessmentView {
    basis: &'static str,
    users_accuracy: String,
    strata: Vec<[String; 7]>,
    area: Vec<(String, String)>,
    /// Control strata: stratum, selected, clearing found, no clearing found,
    /// inconclusive, not reached, not yet visited, clearing area recorded (ha).
    controls: Vec<[String; 8]>,
    /// The plot a control point stands for, in ha.
    plot_ha: String,
}

/// The control strata's counts, each kind of non-response in its own column.
fn control_rows(a: &Assessment) -> Vec<[String; 8]> {
    a.control_strata
        .iter()
        .map(|c| {
            [
                c.stratum.clone(),
                c.selected.to_string(),
                c.clearing.to_string(),
                c.no_clearing.to_string(),
                c.inconclusive.to_string(),
                c.not_reached.to_string(),
                c.unvisited.to_string(),
                fixed(c.clearing_area_recorded_ha, 2),
            ]
        })
        .collect()
}

fn assessment_view(tr: &Tr, f: &Figures) -> Option<AssessmentView> {
    let a = f.assessment.as_ref()?;
    let mut area = Vec::new();
    if let Some(ar) = &a.area {
        let mut row = |id: &str, e: &Estimate, decimals| {
            area.push((tr.t(id), estimate_text(tr, e, decimals)));
        };
        row("fig-overall-accuracy", &ar.overall_accuracy, 3);
        if let Some(e) = &ar.users_accuracy_alert {
            row("fig-users-accuracy-area", e, 3);
        }
        if let Some(e) = &ar.producers_accuracy_clearing {
            row("fig-producers-accuracy-clearing", e, 3);
        }
        row("fig-share-area-cleared", &ar.clearing_proportion, 4);
        row("fig-cleared-area-ha", &ar.clearing_area_ha, 1);
    }
    Some(AssessmentView {
        basis: a.basis.label(),
        users_accuracy: a.users_accuracy_of_alerts.as_ref().map_or_else(
            || tr.t("fig-no-respondents"),
            |p| estimate_text(tr, &p.proportion, 3),
        ),
        strata: a
            .alert_strata
            .iter()
            .map(|s| {
                [
                    stratum_label(tr, &s.stratum),
                    s.population.to_string(),
                    s.selected.to_string(),
                    s.confirmed.to_string(),
                    s.false_alarm.to_string(),
                    s.non_response.total().to_string(),
                    s.users_accuracy
                        .as_ref()
                        .map_or_else(|| "–".into(), |e| estimate_text(tr, e, 3)),
                ]
            })
            .collect(),
        area,
        controls: control_rows(a),
        plot_ha: fixed(CONTROL_PLOT_HA, 0),
    })
}

fn build(
    req: &HttpRequest,
    viewer: &Viewer,
    q: &DashboardQuery,
    filter: &StatsFilter,
    f: &Figures,
    (events, trends): (&[EventFacts], &Trends),
    lists: &Lists,
) -> DashboardPage {
    let layout = translated_layout(req, viewer, "dash-title", "/dashboard");
    let tr = &layout.tr.clone();
    DashboardPage {
        layout,
        zones: lists.choices(&lists.zones, &filter.zone),
        teams: lists.choices(&lists.teams, &filter.team),
        sources: lists.choices(&lists.sources, &filter.source),
        from: q.from.clone().unwrap_or_default(),
        to: q.to.clone().unwrap_or_default(),
        // In the organisation's zone: set by `dashboard_page`, which has the settings.
        as_of: String::new(),
        numbers: numbers(tr, f),
        coverage: coverage_tables(tr, f),
        rates: rate_tables(tr, f),
        km_chart: km_chart(tr, f),
        km_notes: km_notes(tr, f),
        monthly: render_grouped_bars(&monthly_chart(tr, events)),
        trends: trend_charts(tr, trends),
        causes_chart: causes_chart(tr, f),
        causes: f
            .causes
            .by_cause
            .iter()
            .map(|c| {
                [
                    cause_name(tr, &c.cause),
                    c.events.to_string(),
                    fixed(c.area_ha, 2),
                ]
            })
            .collect(),
        times: response_time_rows(f),
        team_rows: with_station_entries(team_rows(f), &lists.station),
        assessment: assessment_view(tr, f),
        exports: export_links(tr, q, filter),
        summary_link: summary_link(q, filter),
        map: None,
    }
}

/// The Kaplan–Meier time-to-visit chart with the target marked.
pub(super) fn km_chart(tr: &Tr, f: &Figures) -> String {
    let within = f.time_to_visit.within_days;
    let mut chart = StepChart::time_to_visit(
        &tr.t("fig-km-title"),
        f.time_to_visit
            .curves
            .iter()
            .map(|c| km_series(tr, c))
            .collect(),
        Some(within),
    );
    chart.x_label = tr.t("fig-km-x-axis");
    chart.y_label = tr.t("fig-km-y-axis");
    chart.target_label = tr.t1("fig-km-target", "days", format_number(within, 1.0));
    chart.words = chart_words(tr);
    render_step_curve(&chart)
}

/// The team table's rows.
pub(super) fn team_rows(f: &Figures) -> Vec<[String; 7]> {
    f.teams
        .iter()
        .map(|t| {
            [
                t.team.clone(),
                t.trips.to_string(),
                t.events_visited.to_string(),
                t.reports.to_string(),
                t.evidence_ok.to_string(),
                t.evidence_ok_share.map_or_else(|| "–".into(), percent),
                t.median_issue_to_visit_days
                    .map_or_else(|| "–".into(), |d| fixed(d, 1)),
            ]
        })
        .collect()
}

/// The team rows with a last column: reports entered at the station from
/// paper (issue 13), counted over all dates, not the selection.
fn with_station_entries(
    rows: Vec<[String; 7]>,
    station: &std::collections::BTreeMap<String, u64>,
) -> Vec<[String; 8]> {
    rows.into_iter()
        .map(|[a, b, c, d, e, f, g]| {
            let n = station.get(&a).copied().unwrap_or(0).to_string();
            [a, b, c, d, e, f, g, n]
        })
        .collect()
}

/// The headline numbers: coverage of all events and the share visited in time.
pub(super) fn numbers(tr: &Tr, f: &Figures) -> Numbers {
    let all_cov = f
        .coverage
        .iter()
        .find(|g| g.key == GroupKey::All)
        .and_then(|g| g.rows.first());
    let events = all_cov.map_or(0, |r| r.events);
    Numbers {
        events,
        issued: all_cov.map_or(0, |r| r.issued),
        visited: all_cov.map_or(0, |r| r.visited),
        not_reached: all_cov.map_or(0, |r| r.not_reached),
        unvisited: all_cov.map_or(0, |r| r.unvisited),
        targets: f.target.iter().map(|t| target_text(tr, t)).collect(),
        ground: (
            f.found_on_ground.clearings,
            fixed(f.found_on_ground.area_ha, 1),
        ),
        curve_n_note: curve_n_note(tr, f, events),
    }
}

/// The headline of one target: "40.0% (Wilson 95% CI 19.8%–64.3%)" and
/// what it counts.
pub fn target_text(tr: &Tr, t: &TargetShare) -> (String, String) {
    let days = fixed(t.within_days, 0);
    let figure = match &t.share {
        Some(s) => tr.t3(
            "fig-wilson-figure",
            "estimate",
            percent(s.estimate),
            "lower",
            percent(s.ci95.lower),
            "upper",
            percent(s.ci95.upper),
        ),
        None => tr.t("chart-no-data"),
    };
    let id = match t.from {
        TargetFrom::Detection => "fig-target-detection",
        TargetFrom::Issue => "fig-target-issue",
    };
    let what = tr.tn(
        id,
        &[
            ("days", &days),
            ("visited", &t.visited_within),
            ("closed", &t.window_closed),
            ("open", &t.window_open),
        ],
    );
    (figure, what)
}

/// Why the time-to-visit curve counts fewer events than the page, if it does.
fn curve_n_note(tr: &Tr, f: &Figures, events: u64) -> Option<String> {
    let c = f.time_to_visit.curves.first()?;
    let n = c.curve.as_ref().map_or(0, |k| k.subjects) as u64;
    let when = f.as_of.format("%Y-%m-%d %H:%M UTC").to_string();
    (n != events).then(|| {
        tr.tn(
            "fig-curve-n-note",
            &[
                ("n", &n),
                ("events", &events),
                ("after", &c.detected_after_as_of),
                ("when", &when),
            ],
        )
    })
}

/// Coverage by zone, team, month and the other groupings (all events apart).
fn coverage_tables(tr: &Tr, f: &Figures) -> Vec<CoverageTable> {
    f.coverage
        .iter()
        .filter(|g| g.key != GroupKey::All)
        .map(|g| CoverageTable {
            title: key_label(g.key),
            rows: g
                .rows
                .iter()
                .map(|r| {
                    [
                        group_name(tr, g.key, &r.group),
                        r.events.to_string(),
                        r.issued.to_string(),
                        r.visited.to_string(),
                        r.not_reached.to_string(),
                        r.unvisited.to_string(),
                    ]
                })
                .collect(),
        })
        .collect()
}

/// The confirmation rate tables, one per grouping.
fn rate_tables(tr: &Tr, f: &Figures) -> Vec<RateTable> {
    f.confirmation
        .iter()
        .map(|g| RateTable {
            title: key_label(g.key),
            basis: g
                .rows
                .first()
                .map_or("descriptive (response visits)", |r| r.basis.label()),
            rows: g
                .rows
                .iter()
                .map(|r| {
                    let (rate, ci) = match &r.rate {
                        Some(p) => (
                            percent(p.estimate),
                            format!("{}–{}", percent(p.ci95.lower), percent(p.ci95.upper)),
                        ),
                        None => ("–".into(), "–".into()),
                    };
                    [
                        group_name(tr, g.key, &r.group),
                        r.confirmed.to_string(),
                        r.false_alarm.to_string(),
                        r.inconclusive.to_string(),
                        r.disputed.to_string(),
                        rate,
                        ci,
                    ]
                })
                .collect(),
        })
        .collect()
}

/// One line per time-to-visit curve: its median and the share visited in time.
fn km_notes(tr: &Tr, f: &Figures) -> Vec<String> {
    let within = fixed(f.time_to_visit.within_days, 0);
    f.time_to_visit
        .curves
        .iter()
        .map(|c| {
            let median = c.curve.as_ref().and_then(|k| k.median).map_or_else(
                || tr.t("fig-median-not-reached"),
                |m| tr.t1("fig-median-days", "days", fixed(m, 1)),
            );
            let share = c
                .visited_within
                .as_ref()
                .map_or_else(|| "–".into(), |s| percent(s.share));
            tr.tn(
                "fig-km-note",
                &[
                    ("curve", &label(tr, &c.label)),
                    ("median", &median),
                    ("days", &within),
                    ("share", &share),
                ],
            )
        })
        .collect()
}

/// The bar chart of the causes of confirmed clearing.
fn causes_chart(tr: &Tr, f: &Figures) -> String {
    render_horizontal_bars(&HBarChart {
        title: tr.t("dash-causes"),
        value_label: tr.t("fig-causes-value"),
        unit: tr.t("fig-causes-unit"),
        bars: f
            .causes
            .by_cause
            .iter()
            .map(|c| HBar {
                label: cause_name(tr, &c.cause),
                value: c.events as f64,
            })
            .collect(),
        words: chart_words(tr),
    })
}

/// The response time rows: count, median and 90th percentile of each interval.
fn response_time_rows(f: &Figures) -> Vec<[String; 4]> {
    let rt = &f.response_times;
    [
        ("detection to issue", &rt.detection_to_issue),
        ("issue to visit", &rt.issue_to_visit),
        ("detection to visit", &rt.detection_to_visit),
        ("visit to received", &rt.visit_to_received),
    ]
    .iter()
    .map(|(label, d)| {
        let (n, med, p90) = duration_text(d);
        [label.to_string(), n, med, p90]
    })
    .collect()
}

/// `/summary` with the page's period and zone.
fn summary_link(q: &DashboardQuery, filter: &StatsFilter) -> String {
    let params: Vec<String> = [("from", &q.from), ("to", &q.to), ("zone", &filter.zone)]
        .iter()
        .filter_map(|(k, v)| non_empty(v).map(|v| format!("{k}={}", urlencode(&v))))
        .collect();
    if params.is_empty() {
        "/summary".to_string()
    } else {
        format!("/summary?{}", params.join("&"))
    }
}

/// The CSV export links, carrying the page's filter, and the GeoJSON export.
fn export_links(tr: &Tr, q: &DashboardQuery, filter: &StatsFilter) -> Vec<(String, String)> {
    let mut params = Vec::new();
    for (k, v) in [
        ("from", &q.from),
        ("to", &q.to),
        ("zone", &filter.zone),
        ("team", &filter.team),
        ("source", &filter.source),
    ] {
        if let Some(v) = non_empty(v) {
            params.push(format!("{k}={}", urlencode(&v)));
        }
    }
    let suffix = params.iter().map(|p| format!("&{p}")).collect::<String>();
    let mut exports: Vec<(String, String)> = TABLES
        .iter()
        .map(|t| {
            (
                format!("/api/v1/stats/{t}?format=csv{suffix}"),
                tr.t1("fig-export-csv", "table", tr.t(&format!("fig-table-{t}"))),
            )
        })
        .collect();
    exports.push((
        "/api/v1/exports/events.geojson".into(),
        tr.t("fig-events-with-status-geojson"),
    ));
    exports
}

struct Lists {
    zones: Vec<String>,
    teams: Vec<String>,
    sources: Vec<String>,
    /// Reports entered at the station from paper, per team (all dates).
    station: std::collections::BTreeMap<String, u64>,
}

impl Lists {
    fn choices(&self, values: &[String], current: &Option<String>) -> Vec<Choice> {
        values
            .iter()
            .map(|v| Choice {
                value: v.clone(),
                label: v.clone(),
                selected: current.as_deref() == Some(v.as_str()),
            })
            .collect()
    }
}

async fn dashboard_page(
    req: &HttpRequest,
    state: &AppState,
    viewer: &Viewer,
    q: DashboardQuery,
) -> Result<HttpResponse, PageError> {
    let (from, to) = super::dashboard::period(&q.from, &q.to)?;
    let filter = StatsFilter {
        from,
        to,
        zone: non_empty(&q.zone),
        team: non_empty(&q.team),
        source: non_empty(&q.source),
    };
    let opts = FigureOptions::new(chrono::Utc::now());
    let db = state.db.clone();
    let stats = state.stats.clone();
    let fl = filter.clone();
    let (figs, prepared, lists, trends) = web::block(move || {
        let p = stats.prepared(&db, &fl)?;
        let f = p.figures(&opts)?;
        let trends = Trends::of(&p.loaded.events, opts.as_of)?;
        let lists = db.read(|r| {
            Ok(Lists {
                zones: r.zones()?.into_iter().map(|z| z.name).collect(),
                teams: r.teams()?.into_iter().map(|t| t.name).collect(),
                sources: r.sources()?.into_iter().map(|s| s.name).collect(),
                station: r.station_entry_counts_by_team()?,
            })
        })?;
        Ok::<_, Error>((f, p, lists, trends))
    })
    .await??;
    let mut t = build(
        req,
        viewer,
        &q,
        &filter,
        &figs,
        (&prepared.loaded.events, &trends),
        &lists,
    );
    t.as_of = super::common::local_time(&state.settings.get(), figs.as_of);
    let selected = &prepared.loaded.events;
    let zone_chosen = filter.zone.is_some();
    t.map = Some(
        super::dashboard_map::dashboard_map(state, selected, zone_chosen, &t.layout.tr).await?,
    );
    page(&t)
}

/// `GET /dashboard`.
pub async fn show(
    req: HttpRequest,
    state: web::Data<AppState>,
    q: Result<web::Query<DashboardQuery>, actix_web::Error>,
) -> HttpResponse {
    let viewer = Viewer::of(&req);
    let r = async {
        let q = q.map_err(super::common::bad_filter)?;
        dashboard_page(&req, &state, &viewer, q.into_inner()).await
    }
    .await;
    respond(&req, &viewer, r)
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::{NaiveDate, TimeZone, Utc};

    fn event(id: i64, month: u32, issued: bool, visited: bool, status: EventStatus) -> EventFacts {
        let t = Utc.with_ymd_and_hms(2026, month, 20, 0, 0, 0).single();
        EventFacts {
            event_id: id,
            zone_names: vec![],
            sources: vec!["optical-10m".into()],
            highest_confidence: "high".into(),
            corroborated: false,
            area_ha: 1.0,
            first_detected: NaiveDate::from_ymd_opt(2026, month, 1).unwrap_or_default(),
            issued_at: if issued { t } else { None },
            status,
            new_clearing: false,
            first_visit: if visited { t } else { None },
            first_received: None,
            cause: None,
            teams: vec![],
            sampled: None,
            found_on_ground: false,
        }
    }

    #[test]
    fn the_monthly_chart_counts_each_event_once_per_series() {
        // Hand-counted from the five events below.
        let events = vec![
            event(1, 1, true, true, EventStatus::Confirmed),
            event(2, 1, true, false, EventStatus::Unvisited),
            event(3, 1, false, false, EventStatus::Unvisited),
            event(4, 2, true, true, EventStatus::FalseAlarm),
            event(5, 2, true, true, EventStatus::Confirmed),
        ];
        let c = monthly_chart(&Tr::new("en"), &events);
        assert_eq!(c.categories, vec!["2026-01", "2026-02"]);
        let v: Vec<Vec<f64>> = c.series.iter().map(|s| s.values.clone()).collect();
        assert_eq!(v, vec![vec![2.0, 2.0], vec![1.0, 2.0], vec![1.0, 1.0]]);
        assert_eq!(c.series[2].label, "confirmed");
    }

    #[test]
    fn a_curve_starts_at_one_and_marks_censoring() {
        // Kaplan–Meier of durations 2 (visited), 5 (censored), 7 (visited):
        // S(2) = 2/3, S(7) = 0 (Kaplan & Meier 1958 product-limit, worked by hand).
        let km =
            crate::statistics::estimators::kaplan_meier(&[(2.0, true), (5.0, false), (7.0, true)])
                .unwrap()
                .unwrap();
        let c = VisitCurve {
            label: "issued events".into(),
            curve: Some(km),
            visited_within: None,
            detected_after_as_of: 0,
            visit_before_detection: 0,
        };
        let s = km_series(&Tr::new("en"), &c);
        assert_eq!(s.label, "issued events (n = 3)");
        assert_eq!((s.steps[0].x_days, s.steps[0].y), (0.0, 1.0));
        assert!((s.steps[1].y - 2.0 / 3.0).abs() < 1e-12);
        assert_eq!(s.censored, vec![5.0]);
        assert_eq!(s.steps.last().map(|x| x.y), Some(0.0));
    }

    #[test]
    fn the_headline_at_zero_is_an_interval_not_a_point() {
        // Issue 14: "0.0% (95% CI 0.0%–0.0%)". 0 of 20: Wilson 0–16.1%
        // (0.161125, statsmodels 0.15.0; Newcombe 1998 Table II, from memory).
        let t = TargetShare {
            from: crate::statistics::figures::TargetFrom::Issue,
            within_days: 14.0,
            window_closed: 20,
            visited_within: 0,
            window_open: 3,
            share: crate::statistics::estimators::wilson(0, 20).unwrap(),
        };
        let (figure, what) = target_text(&Tr::new("en"), &t);
        assert_eq!(figure, "0.0% (Wilson 95% CI 0.0%–16.1%)");
        assert!(
            what.contains("within 14 days from issue: 0 of 20"),
            "{what}"
        );
        assert!(what.contains("3 more still within them"), "{what}");
    }

    #[test]
    fn confidence_is_high_or_low_never_confirmed() {
        // Issue 14: "confirmation rate by confidence: confirmed 65%".
        assert_eq!(
            key_label(GroupKey::Confidence),
            "by alert confidence (high or low)"
        );
        // The stratum's words: `figure_words::tests`.
        assert_eq!(crate::domain::Confidence::Confirmed.level(), "high");
        assert_eq!(crate::domain::Confidence::Tentative.level(), "low");
    }

    #[test]
    fn estimates_read_with_their_uncertainty() {
        let e = Estimate::normal(0.8, Some(0.05), 0.0, 1.0);
        // 0.8 ± 1.96 × 0.05 = 0.702 to 0.898 (normal interval, z = 1.959964).
        assert_eq!(
            estimate_text(&Tr::new("en"), &e, 3),
            "0.800 (SE 0.050; 95% CI 0.702–0.898)"
        );
    }
}
