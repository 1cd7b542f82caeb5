//! Team figures from the report facts, after reconciliation has dropped
//! duplicates and superseded reports.

use std::collections::{BTreeMap, HashMap};

use chrono::{DateTime, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::FiguresError;
use super::facts::days_between;
use crate::reconcile::{CountedIndex, ReportFact};
use crate::statistics::estimators::median;

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
/// server-made (team names, bundle ids), and SipHash cost more than the
/// rest of the work per report.
type FxBuild = rustc_hash::FxBuildHasher;

/// One row per team, sorted by team name.
pub fn team_table(
    reports: &[ReportFact],
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
) -> Result<Vec<TeamRow>, FiguresError> {
    team_table_counted(reports, &CountedIndex::of(reports), bundle_issued_at)
}

/// The teams and bundles of the distinct reports as small dense ids, and
/// the trips (distinct (team, bundle)) among them. The work per report is
/// then on integers and plain vectors.
#[derive(Default)]
struct Trips<'a> {
    bundle_ids: HashMap<u128, u32, FxBuild>,
    bundles: Vec<Uuid>,
    /// The teams met on each bundle's reports, usually one: a report's team
    /// is looked for there, by name, before the team index is asked.
    teams_of_bundle: Vec<Vec<u32>>,
    team_ids: HashMap<&'a str, u32, FxBuild>,
    teams: Vec<&'a str>,
    /// Trips of each team.
    trips: Vec<u64>,
}

impl<'a> Trips<'a> {
    /// The (team, bundle) ids of a distinct report; counts its trip.
    fn add(&mut self, r: &'a ReportFact) -> (u32, u32) {
        let b = self.bundle(r.bundle_id);
        let on_bundle = &mut self.teams_of_bundle[b as usize];
        let t = match on_bundle
            .iter()
            .find(|&&t| self.teams[t as usize] == r.team)
        {
            Some(&t) => t,
            None => {
                let t = match self.team_ids.get(r.team.as_str()) {
                    Some(&t) => t,
                    None => {
                        let t = self.teams.len() as u32;
                        self.teams.push(&r.team);
                        self.trips.push(0);
                        self.team_ids.insert(&r.team, t);
                        t
                    }
                };
                on_bundle.push(t);
                self.trips[t as usize] += 1;
                t
            }
        };
        (t, b)
    }

    /// The dense id of a bundle.
    fn bundle(&mut self, id: Uuid) -> u32 {
        let key = id.as_u128();
        if let Some(&b) = self.bundle_ids.get(&key) {
            return b;
        }
        let b = self.bundles.len() as u32;
        self.bundles.push(id);
        self.teams_of_bundle.push(Vec::new());
        self.bundle_ids.insert(key, b);
        b
    }
}

/// A counted report that reached its event.
#[derive(Debug, Clone, Copy)]
struct Visit {
    team: u32,
    bundle: u32,
    observed_at: DateTime<Utc>,
}

/// What one team's counted reports add up to.
#[derive(Debug, Clone, Default)]
struct Tally {
    reports: u64,
    evidence_ok: u64,
    events_visited: u64,
    /// Issue → first reaching visit, days, per event reached.
    waits: Vec<f64>,
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
    let (trips, mut tally, visits) = tally_reports(reports, counted);
    let issued: Vec<Option<DateTime<Utc>>> = trips
        .bundles
        .iter()
        .map(|b| bundle_issued_at.get(b).copied())
        .collect();
    tally_first_visits(counted, &visits, &issued, &mut tally);
    tally.resize_with(trips.teams.len(), Tally::default);
    team_rows(&trips, &tally)
}

/// Reports in slice order (in memory order): trips and tallies; each
/// counted report that reached its event is put at its place in the
/// index's order, which groups them by event.
fn tally_reports<'a>(
    reports: &'a [ReportFact],
    counted: &CountedIndex,
) -> (Trips<'a>, Vec<Tally>, Vec<Option<Visit>>) {
    let mut trips = Trips::default();
    let mut tally: Vec<Tally> = Vec::new();
    let mut visits: Vec<Option<Visit>> = vec![None; counted.events().len()];
    for (r, place) in reports.iter().zip(counted.places()) {
        let &Some(place) = place else {
            continue;
        };
        let (team, bundle) = trips.add(r);
        if !counted.counts_at(place) {
            continue;
        }
        if tally.len() <= team as usize {
            tally.resize_with(team as usize + 1, Tally::default);
        }
        let row = &mut tally[team as usize];
        row.reports += 1;
        row.evidence_ok += u64::from(r.evidence_ok);
        if r.outcome.reached() {
            visits[place as usize] = Some(Visit {
                team,
                bundle,
                observed_at: r.observed_at,
            });
        }
    }
    (trips, tally, visits)
}

/// Events visited and waits per team. Each event's reports are in
/// (observed_at, report_id) order, the order of rule 3: a team's first
/// reaching visit to an event is its first reaching report there.
fn tally_first_visits(
    counted: &CountedIndex,
    visits: &[Option<Visit>],
    issued: &[Option<DateTime<Utc>>],
    tally: &mut [Tally],
) {
    let mut event = None;
    let mut reached_by: Vec<u32> = Vec::new();
    for (&e, visit) in counted.events().iter().zip(visits) {
        let Some(v) = visit else {
            continue;
        };
        if event != Some(e) {
            event = Some(e);
            reached_by.clear();
        }
        if reached_by.contains(&v.team) {
            continue;
        }
        reached_by.push(v.team);
        let row = &mut tally[v.team as usize];
        row.events_visited += 1;
        if let Some(issued) = issued[v.bundle as usize] {
            row.waits.push(days_between(issued, v.observed_at));
        }
    }
}

/// One row per team, sorted by name. A team has a row when it has a
/// distinct report (a team named only on copies that rule 1 dropped has
/// none).
fn team_rows(trips: &Trips<'_>, tally: &[Tally]) -> Result<Vec<TeamRow>, FiguresError> {
    let mut order: Vec<usize> = (0..trips.teams.len()).collect();
    order.sort_unstable_by_key(|&t| trips.teams[t]);
    order
        .into_iter()
        .map(|t| {
            let Tally {
                reports: n,
                evidence_ok: ok,
                events_visited,
                waits,
            } = &tally[t];
            Ok(TeamRow {
                team: trips.teams[t].to_string(),
                trips: trips.trips[t],
                events_visited: *events_visited,
                reports: *n,
                evidence_ok: *ok,
                evidence_ok_share: (*n > 0).then(|| *ok as f64 / *n as f64),
                median_issue_to_visit_days: median(waits)?,
            })
        })
        .collect()
}
