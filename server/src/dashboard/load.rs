//! Loading and reconciling the facts behind the statistics.

use crate::domain::{Confidence, Day};
use crate::error::Result;
use crate::figures::{ControlFacts, EventFacts, SampleInfo};
use crate::reconcile::{Adjudication, Outcome, ReportFact, StatusOutcome, event_statuses};
use crate::storage::Db;
use chrono::{DateTime, Utc};
use geo::GeodesicArea;
use std::collections::{BTreeMap, HashMap};
use uuid::Uuid;

/// Which facts the figures rest on. Empty fields select everything.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct StatsFilter {
    /// Events first detected on or after this day.
    pub from: Option<Day>,
    /// Events first detected on or before this day.
    pub to: Option<Day>,
    pub zone: Option<String>,
    /// Events issued to or reported on by this team, and only its reports.
    pub team: Option<String>,
    pub source: Option<String>,
}

/// The reconciled facts.
#[derive(Debug, Clone, Default)]
pub struct Loaded {
    pub events: Vec<EventFacts>,
    pub reports: Vec<ReportFact>,
    pub bundle_issued_at: BTreeMap<Uuid, DateTime<Utc>>,
    pub controls: Vec<ControlFacts>,
    pub statuses: BTreeMap<i64, StatusOutcome>,
}

fn time(s: &str) -> Option<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(s)
        .ok()
        .map(|t| t.with_timezone(&Utc))
}

pub(crate) fn outcome(s: &str) -> Option<Outcome> {
    match s {
        "confirmed" => Some(Outcome::Confirmed),
        "false_alarm" => Some(Outcome::FalseAlarm),
        "inconclusive" => Some(Outcome::Inconclusive),
        "not_reached" => Some(Outcome::NotReached),
        _ => None,
    }
}

/// Area a control point stands for: a 1 ha plot (100 m × 100 m) around
/// it (our choice, stated in the README).
pub const CONTROL_PLOT_HA: f64 = 1.0;

/// Load everything, reconcile, and apply the filter.
pub fn load(db: &Db, filter: &StatsFilter, window_days: u32) -> Result<Loaded> {
    let (events, report_rows, merges, adjudications, issue_times, controls, zones, bundles) = db
        .read(|r| {
            Ok((
                r.stats_events()?,
                r.stats_reports()?,
                r.merge_map()?,
                r.adjudications()?,
                r.bundle_issue_times()?,
                r.controls()?,
                r.zones()?,
                r.bundles()?,
            ))
        })?;
    let live = |id: i64| merges.get(&id).copied().unwrap_or(id);
    let bundle_issued_at: BTreeMap<Uuid, DateTime<Utc>> = issue_times
        .iter()
        .filter_map(|(id, t)| Some((Uuid::parse_str(id).ok()?, time(t)?)))
        .collect();
    let team_filter = |team: &str| filter.team.as_deref().is_none_or(|t| t == team);

    let reports: Vec<ReportFact> = report_rows
        .iter()
        .filter(|r| team_filter(&r.team))
        .filter_map(|r| {
            Some(ReportFact {
                report_id: Uuid::parse_str(&r.report_id).ok()?,
                event_id: live(r.event_id?),
                supersedes: r
                    .supersedes
                    .as_deref()
                    .and_then(|s| Uuid::parse_str(s).ok()),
                outcome: outcome(&r.outcome)?,
                reason: r.reason.clone(),
                cause: r.cause.clone(),
                observed_at: time(&r.observed_at)?,
                received_at: time(&r.received_at)?,
                evidence_ok: r.evidence_ok,
                team: r.team.clone(),
                bundle_id: Uuid::parse_str(&r.bundle_id).ok()?,
            })
        })
        .collect();
    let adjudications: Vec<Adjudication> = adjudications
        .iter()
        .filter_map(|a| {
            Some(Adjudication {
                event_id: live(a.event_id),
                outcome: outcome(&a.outcome)?,
                reason: a.reason.clone(),
                by: a.decided_by.clone(),
                at: time(&a.decided_at)?,
            })
        })
        .collect();
    let statuses = event_statuses(&reports, &adjudications, window_days);

    let mut out_events = Vec::new();
    for e in &events {
        let first = Day::from_days(e.first_day);
        if filter.from.is_some_and(|d| first < d) || filter.to.is_some_and(|d| first > d) {
            continue;
        }
        if filter.zone.as_ref().is_some_and(|z| !e.zones.contains(z)) {
            continue;
        }
        if filter
            .source
            .as_ref()
            .is_some_and(|s| !e.sources.contains(s))
        {
            continue;
        }
        let status = statuses.get(&e.id);
        if let Some(t) = &filter.team {
            let reported = status.is_some_and(|s| s.teams.contains(t));
            if !e.teams_issued.contains(t) && !reported {
                continue;
            }
        }
        let mut f = EventFacts {
            event_id: e.id,
            zone_names: e.zones.clone(),
            sources: if e.origin == "field" {
                vec!["field".into()]
            } else {
                e.sources.clone()
            },
            highest_confidence: Confidence::from_i64(e.highest_confidence)
                .unwrap_or(Confidence::Tentative)
                .to_string(),
            corroborated: e.corroborated,
            area_ha: e.area_ha,
            first_detected: first.date(),
            issued_at: e.first_issued_at.as_deref().and_then(time),
            status: crate::reconcile::Status::Unvisited,
            new_clearing: false,
            first_visit: None,
            first_received: None,
            cause: None,
            teams: e.teams_issued.clone(),
            sampled: e.sample.as_ref().map(|(stratum, p, n)| SampleInfo {
                stratum: stratum.clone(),
                inclusion_probability: *p,
                stratum_population: (*n).max(0) as u64,
            }),
        };
        if let Some(s) = status {
            f.apply_status(s);
        }
        out_events.push(f);
    }

    // Control points: reached or not, clearing found or not.
    let zone_area: HashMap<String, f64> = zones
        .iter()
        .filter_map(|z| {
            Some((
                z.name.clone(),
                crate::events::parse_multipolygon(&z.geometry)?.geodesic_area_unsigned() / 1e4,
            ))
        })
        .collect();
    let bundle_zone: HashMap<String, (Option<String>, i64)> = bundles
        .iter()
        .map(|b| {
            let zone = serde_json::from_str::<serde_json::Value>(&b.selection)
                .ok()
                .and_then(|v| v["zone"].as_str().map(str::to_string));
            (b.id.clone(), (zone, b.controls))
        })
        .collect();
    let mut control_reports: BTreeMap<(String, String), Vec<&crate::storage::StatsReportRow>> =
        BTreeMap::new();
    for r in report_rows.iter().filter(|r| r.kind == "control") {
        if let Some(code) = &r.control_code {
            control_reports
                .entry((r.bundle_id.clone(), code.clone()))
                .or_default()
                .push(r);
        }
    }
    let mut out_controls = Vec::new();
    for c in &controls {
        let Some((zone, k)) = bundle_zone.get(&c.bundle_id) else {
            continue;
        };
        if filter
            .zone
            .as_ref()
            .is_some_and(|z| zone.as_ref() != Some(z))
        {
            continue;
        }
        let area = zone
            .as_ref()
            .and_then(|z| zone_area.get(z))
            .copied()
            .unwrap_or(0.0);
        if area <= 0.0 || *k <= 0 {
            continue;
        }
        let superseded: std::collections::HashSet<&str> = report_rows
            .iter()
            .filter_map(|r| r.supersedes.as_deref())
            .collect();
        let latest = control_reports
            .get(&(c.bundle_id.clone(), c.code.clone()))
            .and_then(|v| {
                v.iter()
                    .filter(|r| !superseded.contains(r.report_id.as_str()))
                    .max_by(|a, b| a.observed_at.cmp(&b.observed_at))
            });
        let found = latest.and_then(|r| match r.outcome.as_str() {
            "confirmed" => Some(true),
            "false_alarm" => Some(false),
            _ => None,
        });
        out_controls.push(ControlFacts {
            stratum: "control".into(),
            found_clearing: found,
            area_ha: CONTROL_PLOT_HA,
            inclusion_probability: (*k as f64 * CONTROL_PLOT_HA / area).min(1.0),
        });
    }
    Ok(Loaded {
        events: out_events,
        reports,
        bundle_issued_at,
        controls: out_controls,
        statuses,
    })
}
