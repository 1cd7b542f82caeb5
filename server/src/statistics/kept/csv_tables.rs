//! The figures' tables as CSV (RFC 4180, a header row; numbers as plain
//! decimals; an empty cell where a value is undefined).

use crate::error::{Error, Result};
use crate::statistics::figures::Figures;

fn write(header: &[&str], rows: Vec<Vec<String>>) -> Result<String> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(header)
        .map_err(|e| Error::Internal(e.to_string()))?;
    for r in rows {
        w.write_record(&r)
            .map_err(|e| Error::Internal(e.to_string()))?;
    }
    let bytes = w.into_inner().map_err(|e| Error::Internal(e.to_string()))?;
    String::from_utf8(bytes).map_err(|e| Error::Internal(e.to_string()))
}

fn key_name<T: serde::Serialize>(k: &T) -> String {
    serde_json::to_value(k)
        .ok()
        .and_then(|v| v.as_str().map(str::to_string))
        .unwrap_or_default()
}

fn num(v: f64) -> String {
    format!("{v:.6}")
}

fn opt(v: Option<f64>) -> String {
    v.map(num).unwrap_or_default()
}

/// The table named `name`, or `None` when there is no such table.
pub fn table(f: &Figures, name: &str) -> Result<Option<String>> {
    let out = match name {
        "coverage" => coverage(f)?,
        "confirmation" => confirmation(f)?,
        "response-times" => response_times(f)?,
        "time-to-visit" => time_to_visit(f)?,
        "causes" => causes(f)?,
        "teams" => teams(f)?,
        "control-points" => control_points(f)?,
        _ => return Ok(None),
    };
    Ok(Some(out))
}

fn coverage(f: &Figures) -> Result<String> {
    write(
        &[
            "group_by",
            "group",
            "events",
            "issued",
            "visited",
            "not_reached",
            "unvisited",
        ],
        f.coverage
            .iter()
            .flat_map(|g| {
                g.rows.iter().map(move |r| {
                    vec![
                        key_name(&g.key),
                        r.group.clone(),
                        r.events.to_string(),
                        r.issued.to_string(),
                        r.visited.to_string(),
                        r.not_reached.to_string(),
                        r.unvisited.to_string(),
                    ]
                })
            })
            .collect(),
    )
}

fn confirmation(f: &Figures) -> Result<String> {
    write(
        &[
            "group_by",
            "group",
            "confirmed",
            "false_alarm",
            "inconclusive",
            "disputed",
            "new_clearing",
            "rate",
            "ci95_lower",
            "ci95_upper",
            "basis",
        ],
        f.confirmation
            .iter()
            .flat_map(|g| {
                g.rows.iter().map(move |r| {
                    vec![
                        key_name(&g.key),
                        r.group.clone(),
                        r.confirmed.to_string(),
                        r.false_alarm.to_string(),
                        r.inconclusive.to_string(),
                        r.disputed.to_string(),
                        r.new_clearing.to_string(),
                        opt(r.rate.as_ref().map(|p| p.estimate)),
                        opt(r.rate.as_ref().map(|p| p.ci95.lower)),
                        opt(r.rate.as_ref().map(|p| p.ci95.upper)),
                        r.basis.label().to_string(),
                    ]
                })
            })
            .collect(),
    )
}

fn response_times(f: &Figures) -> Result<String> {
    let t = &f.response_times;
    let rows = [
        ("detection_to_issue", &t.detection_to_issue),
        ("issue_to_visit", &t.issue_to_visit),
        ("detection_to_visit", &t.detection_to_visit),
        ("visit_to_received", &t.visit_to_received),
    ]
    .into_iter()
    .map(|(n, s)| {
        let s = s.as_ref();
        vec![
            n.to_string(),
            s.map(|x| x.count.to_string()).unwrap_or_else(|| "0".into()),
            opt(s.map(|x| x.median)),
            opt(s.map(|x| x.p90)),
            opt(s.map(|x| x.min)),
            opt(s.map(|x| x.max)),
        ]
    })
    .collect();
    write(
        &[
            "interval",
            "count",
            "median_days",
            "p90_days",
            "min_days",
            "max_days",
        ],
        rows,
    )
}

fn time_to_visit(f: &Figures) -> Result<String> {
    write(
        &[
            "curve",
            "time_days",
            "at_risk",
            "visited",
            "censored",
            "share_not_visited",
            "greenwood_se",
            "ci95_lower",
            "ci95_upper",
        ],
        f.time_to_visit
            .curves
            .iter()
            .flat_map(|c| {
                c.curve.iter().flat_map(move |k| {
                    k.steps.iter().map(move |s| {
                        vec![
                            c.label.clone(),
                            num(s.time),
                            s.at_risk.to_string(),
                            s.events.to_string(),
                            s.censored.to_string(),
                            num(s.survival),
                            opt(s.se),
                            num(s.ci95.lower),
                            num(s.ci95.upper),
                        ]
                    })
                })
            })
            .collect(),
    )
}

fn causes(f: &Figures) -> Result<String> {
    write(
        &["cause", "month", "events", "area_ha"],
        f.causes
            .by_cause
            .iter()
            .chain(&f.causes.by_cause_and_month)
            .map(|r| {
                vec![
                    r.cause.clone(),
                    r.month.clone().unwrap_or_default(),
                    r.events.to_string(),
                    num(r.area_ha),
                ]
            })
            .collect(),
    )
}

fn teams(f: &Figures) -> Result<String> {
    write(
        &[
            "team",
            "trips",
            "events_visited",
            "reports",
            "evidence_ok",
            "evidence_ok_share",
            "median_issue_to_visit_days",
        ],
        f.teams
            .iter()
            .map(|r| {
                vec![
                    r.team.clone(),
                    r.trips.to_string(),
                    r.events_visited.to_string(),
                    r.reports.to_string(),
                    r.evidence_ok.to_string(),
                    opt(r.evidence_ok_share),
                    opt(r.median_issue_to_visit_days),
                ]
            })
            .collect(),
    )
}

/// The assessment's control strata: each kind of non-response in its own
/// column (none of them an observation of the stratum), the areas the teams
/// recorded and the cleared plots' worth the estimates use.
fn control_points(f: &Figures) -> Result<String> {
    let strata = f.assessment.iter().flat_map(|a| &a.control_strata);
    write(
        &[
            "stratum",
            "selected",
            "clearing_found",
            "no_clearing_found",
            "inconclusive",
            "not_reached",
            "unvisited",
            "clearing_area_recorded_ha",
            "clearing_without_area",
            "cleared_plots",
            "mapped_area_ha",
        ],
        strata
            .map(|c| {
                vec![
                    c.stratum.clone(),
                    c.selected.to_string(),
                    c.clearing.to_string(),
                    c.no_clearing.to_string(),
                    c.inconclusive.to_string(),
                    c.not_reached.to_string(),
                    c.unvisited.to_string(),
                    num(c.clearing_area_recorded_ha),
                    c.clearing_without_area.to_string(),
                    num(c.cleared_plots),
                    num(c.mapped_area_ha),
                ]
            })
            .collect(),
    )
}

/// Names of the CSV tables.
pub const TABLES: &[&str] = &[
    "coverage",
    "confirmation",
    "response-times",
    "time-to-visit",
    "causes",
    "teams",
    "control-points",
];
