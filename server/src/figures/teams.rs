//! Team figures from the report facts, after reconciliation has dropped
//! duplicates and superseded reports.

use std::collections::{BTreeMap, BTreeSet};

use chrono::{DateTime, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::FiguresError;
use super::facts::days_between;
use crate::reconcile::{ReportFact, counts, distinct_refs};
use crate::stats::median;

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TeamRow {
    pub team: String,
    /// Distinct bundles among the team's distinct reports (superseded
    /// included): trips that brought something back.
    pub trips: u64,
    /// Distinct events the team reached (counted reports other than `not_reached`).
    pub events_visited: u64,
    /// The team's counted reports (no duplicates, no superseded).
    pub reports: u64,
    /// Of those, reports whose evidence passes the checks.
    pub evidence_ok: u64,
    /// evidence_ok / reports; `None` with no report.
    pub evidence_ok_share: Option<f64>,
    /// Median over the events the team reached of (the team's first counted
    /// reaching visit − issue time of that report's bundle), in days; events
    /// whose bundle has no known issue time are left out.
    pub median_issue_to_visit_days: Option<f64>,
}

/// One row per team, sorted by team name.
pub fn team_table(
    reports: &[ReportFact],
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
) -> Result<Vec<TeamRow>, FiguresError> {
    let mut trips: BTreeMap<&str, BTreeSet<Uuid>> = BTreeMap::new();
    let distinct = distinct_refs(reports).reports;
    for r in &distinct {
        trips.entry(&r.team).or_default().insert(r.bundle_id);
    }
    let counted = distinct
        .iter()
        .zip(counts(&distinct))
        .filter_map(|(r, c)| c.then_some(*r));
    // Per team: (counted, evidence ok, first reaching visit per event).
    let mut per_team: BTreeMap<&str, (u64, u64, BTreeMap<i64, &ReportFact>)> = BTreeMap::new();
    for r in counted {
        let t = per_team.entry(&r.team).or_default();
        t.0 += 1;
        t.1 += u64::from(r.evidence_ok);
        if r.outcome.reached() {
            // `counted` is sorted by (observed_at, report_id): the first wins.
            t.2.entry(r.event_id).or_insert(r);
        }
    }
    trips
        .into_iter()
        .map(|(team, bundles)| {
            let (n, ok, visits) = per_team.remove(team).unwrap_or_default();
            let waits: Vec<f64> = visits
                .values()
                .filter_map(|r| {
                    bundle_issued_at
                        .get(&r.bundle_id)
                        .map(|issued| days_between(*issued, r.observed_at))
                })
                .collect();
            Ok(TeamRow {
                team: team.to_string(),
                trips: bundles.len() as u64,
                events_visited: visits.len() as u64,
                reports: n,
                evidence_ok: ok,
                evidence_ok_share: (n > 0).then(|| ok as f64 / n as f64),
                median_issue_to_visit_days: median(&waits)?,
            })
        })
        .collect()
}
