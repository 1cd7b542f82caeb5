//! Team figures from the report facts, after reconciliation has dropped
//! duplicates and superseded reports.

use std::collections::{BTreeMap, HashMap, HashSet};

use chrono::{DateTime, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::FiguresError;
use super::facts::days_between;
use crate::reconcile::{CountedIndex, ReportFact};
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

/// The per-report maps below hash with rustc's Fx hash: their keys are
/// server-made (team names, bundle ids, event ids), and SipHash cost more
/// than the rest of the work per report.
type FxBuild = rustc_hash::FxBuildHasher;

/// One row per team, sorted by team name.
pub fn team_table(
    reports: &[ReportFact],
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
) -> Result<Vec<TeamRow>, FiguresError> {
    team_table_counted(reports, &CountedIndex::of(reports), bundle_issued_at)
}

/// [`team_table`] with rules 1–3 of [`crate::reconcile`] already applied to
/// `reports` by [`CountedIndex::of`] (recomputed when `counted` does not fit
/// `reports`).
pub fn team_table_counted(
    reports: &[ReportFact],
    counted: &CountedIndex,
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
) -> Result<Vec<TeamRow>, FiguresError> {
    if !counted.fits(reports) {
        return team_table(reports, bundle_issued_at);
    }
    // Teams by position in a sorted list: the per-report work below is on
    // small integers, and reports are read in slice order (in memory order).
    let mut names: Vec<&str> = Vec::new();
    let mut index: HashMap<&str, u32, FxBuild> = HashMap::default();
    let mut team_of = Vec::with_capacity(reports.len());
    for r in reports {
        let next = index.len() as u32;
        let k = *index.entry(r.team.as_str()).or_insert_with(|| {
            names.push(&r.team);
            next
        });
        team_of.push(k);
    }
    // Trips: distinct (team, bundle) among the distinct reports. Per team:
    // counted reports, with passing evidence, and the first reaching visit
    // per event (smallest (observed_at, report_id), the order of rule 3).
    let mut trips: HashSet<(u32, u128), FxBuild> = HashSet::default();
    let mut tally = vec![(0u64, 0u64); names.len()];
    let mut visits: HashMap<(u32, i64), &ReportFact, FxBuild> = HashMap::default();
    for ((r, state), &t) in reports.iter().zip(counted.by_position()).zip(&team_of) {
        let Some(counts) = state else {
            continue;
        };
        trips.insert((t, r.bundle_id.as_u128()));
        if !counts {
            continue;
        }
        tally[t as usize].0 += 1;
        tally[t as usize].1 += u64::from(r.evidence_ok);
        if r.outcome.reached() {
            visits
                .entry((t, r.event_id))
                .and_modify(|v| {
                    if (r.observed_at, r.report_id) < (v.observed_at, v.report_id) {
                        *v = r;
                    }
                })
                .or_insert(r);
        }
    }
    let mut trip_count = vec![0u64; names.len()];
    for (t, _) in &trips {
        trip_count[*t as usize] += 1;
    }
    // Visits in (team, event) order, as the waits were listed before.
    let mut visits: Vec<((u32, i64), &ReportFact)> = visits.into_iter().collect();
    visits.sort_unstable_by_key(|(k, _)| *k);
    let mut waits: Vec<Vec<f64>> = vec![Vec::new(); names.len()];
    let mut visited = vec![0u64; names.len()];
    for ((t, _), r) in visits {
        visited[t as usize] += 1;
        if let Some(issued) = bundle_issued_at.get(&r.bundle_id) {
            waits[t as usize].push(days_between(*issued, r.observed_at));
        }
    }
    // A team has a row when it has a distinct report (a team named only on
    // copies that rule 1 dropped has none).
    let mut order: Vec<usize> = (0..names.len()).filter(|&t| trip_count[t] > 0).collect();
    order.sort_unstable_by_key(|&t| names[t]);
    order
        .into_iter()
        .map(|t| {
            let (n, ok) = tally[t];
            Ok(TeamRow {
                team: names[t].to_string(),
                trips: trip_count[t],
                events_visited: visited[t],
                reports: n,
                evidence_ok: ok,
                evidence_ok_share: (n > 0).then(|| ok as f64 / n as f64),
                median_issue_to_visit_days: median(&waits[t])?,
            })
        })
        .collect()
}
