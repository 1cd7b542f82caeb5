//! Loading and reconciling the facts behind the statistics.

use crate::domain::{Confidence, Day};
use crate::error::Result;
use crate::figures::{ControlFacts, EventFacts, SampleInfo};
use crate::reconcile::{
    Adjudication, CountedIndex, Outcome, ReportFact, StatusOutcome, event_statuses_counted,
};
use crate::storage::{Db, StatsReportRef};
use chrono::{DateTime, Utc};
use geo::GeodesicArea;
use std::collections::{BTreeMap, HashMap, HashSet};
use std::sync::Arc;
use uuid::Uuid;

/// Which facts the figures rest on. Empty fields select everything.
#[derive(Debug, Clone, Default, PartialEq, Eq, Hash)]
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
    /// Shared with the cached [`Facts`] unless a team is selected.
    pub reports: Arc<Vec<ReportFact>>,
    pub bundle_issued_at: Arc<BTreeMap<Uuid, DateTime<Utc>>>,
    pub controls: Vec<ControlFacts>,
    pub statuses: Arc<BTreeMap<i64, StatusOutcome>>,
    /// Which of `reports` count (rules 1–3 of [`crate::reconcile`]), decided
    /// once: the statuses were made from it and the team table reads it
    /// (pass it to [`crate::figures::all_figures_counted`]).
    pub counted: Arc<CountedIndex>,
}

fn time(s: &str) -> Option<DateTime<Utc>> {
    super::rfc3339::parse_utc(s)
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

/// A control point's report, kept while reading every report.
struct ControlReport {
    report_id: String,
    observed_at: String,
    outcome: String,
}

/// What one pass over the stored reports keeps.
#[derive(Default)]
struct ReportScan {
    /// The reports of the selection, as reconciliation reads them.
    facts: Vec<ReportFact>,
    /// Every report id that another report names as superseded.
    superseded: HashSet<String>,
    /// Reports on control points, by (bundle, control code), in id order.
    controls: BTreeMap<(String, String), Vec<ControlReport>>,
}

impl ReportScan {
    fn add(&mut self, r: StatsReportRef<'_>, live: impl Fn(i64) -> i64) {
        if let Some(s) = r.supersedes {
            self.superseded.insert(s.to_string());
        }
        if r.kind == "control"
            && let Some(code) = r.control_code
        {
            self.controls
                .entry((r.bundle_id.to_string(), code.to_string()))
                .or_default()
                .push(ControlReport {
                    report_id: r.report_id.to_string(),
                    observed_at: r.observed_at.to_string(),
                    outcome: r.outcome.to_string(),
                });
        }
        if let Some(f) = report_fact(&r, live) {
            self.facts.push(f);
        }
    }
}

fn report_fact(r: &StatsReportRef<'_>, live: impl Fn(i64) -> i64) -> Option<ReportFact> {
    Some(ReportFact {
        report_id: Uuid::parse_str(r.report_id).ok()?,
        event_id: live(r.event_id?),
        supersedes: r.supersedes.and_then(|s| Uuid::parse_str(s).ok()),
        outcome: outcome(r.outcome)?,
        reason: r.reason.map(str::to_string),
        cause: r.cause.map(str::to_string),
        observed_at: time(r.observed_at)?,
        received_at: time(r.received_at)?,
        evidence_ok: r.evidence_ok,
        team: r.team.to_string(),
        bundle_id: Uuid::parse_str(r.bundle_id).ok()?,
    })
}

/// The facts behind the statistics as read from storage, with every report
/// reconciled once (no filter). [`prepare`] derives any selection from it
/// without reading storage again.
#[derive(Debug, Default)]
pub struct Facts {
    events: Vec<crate::storage::StatsEventRow>,
    /// Every report, as reconciliation reads them.
    reports: Arc<Vec<ReportFact>>,
    /// Which of `reports` count, and the statuses they make.
    counted: Arc<CountedIndex>,
    statuses: Arc<BTreeMap<i64, StatusOutcome>>,
    adjudications: Vec<Adjudication>,
    bundle_issued_at: Arc<BTreeMap<Uuid, DateTime<Utc>>>,
    /// Control points with what was found there, and their zone.
    controls: Vec<(Option<String>, ControlFacts)>,
    window_days: u32,
}

/// Load everything, reconcile, and apply the filter.
pub fn load(db: &Db, filter: &StatsFilter, window_days: u32) -> Result<Loaded> {
    Ok(prepare(&read_facts(db, window_days)?, filter))
}

/// Read every fact the statistics rest on and reconcile every event.
pub fn read_facts(db: &Db, window_days: u32) -> Result<Facts> {
    let (events, scan, adjudications, issue_times, controls, zones, bundles) = db.read(|r| {
        let merges = r.merge_map()?;
        let live = |id: i64| merges.get(&id).copied().unwrap_or(id);
        let mut scan = ReportScan::default();
        r.each_stats_report(|row| scan.add(row, live))?;
        let adjudications: Vec<Adjudication> = r
            .adjudications()?
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
        Ok((
            r.stats_events()?,
            scan,
            adjudications,
            r.bundle_issue_times()?,
            r.controls()?,
            r.zones()?,
            r.bundles()?,
        ))
    })?;
    let bundle_issued_at: BTreeMap<Uuid, DateTime<Utc>> = issue_times
        .iter()
        .filter_map(|(id, t)| Some((Uuid::parse_str(id).ok()?, time(t)?)))
        .collect();
    let reports = scan.facts;
    let counted = CountedIndex::of(&reports);
    let statuses = event_statuses_counted(&reports, &counted, &adjudications, window_days);

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
    let mut out_controls = Vec::new();
    for c in &controls {
        let Some((zone, k)) = bundle_zone.get(&c.bundle_id) else {
            continue;
        };
        let area = zone
            .as_ref()
            .and_then(|z| zone_area.get(z))
            .copied()
            .unwrap_or(0.0);
        if area <= 0.0 || *k <= 0 {
            continue;
        }
        let latest = scan
            .controls
            .get(&(c.bundle_id.clone(), c.code.clone()))
            .and_then(|v| {
                v.iter()
                    .filter(|r| !scan.superseded.contains(&r.report_id))
                    .max_by(|a, b| a.observed_at.cmp(&b.observed_at))
            });
        let found = latest.and_then(|r| match r.outcome.as_str() {
            "confirmed" => Some(true),
            "false_alarm" => Some(false),
            _ => None,
        });
        out_controls.push((
            zone.clone(),
            ControlFacts {
                stratum: "control".into(),
                found_clearing: found,
                area_ha: CONTROL_PLOT_HA,
                inclusion_probability: (*k as f64 * CONTROL_PLOT_HA / area).min(1.0),
            },
        ));
    }
    Ok(Facts {
        events,
        reports: Arc::new(reports),
        counted: Arc::new(counted),
        statuses: Arc::new(statuses),
        adjudications,
        bundle_issued_at: Arc::new(bundle_issued_at),
        controls: out_controls,
        window_days,
    })
}

/// The selection `filter` of `facts`: a team's selection is reconciled
/// again on that team's reports alone; any other shares the reconciliation
/// of every report.
pub fn prepare(facts: &Facts, filter: &StatsFilter) -> Loaded {
    let (reports, counted, statuses) = match &filter.team {
        None => (
            Arc::clone(&facts.reports),
            Arc::clone(&facts.counted),
            Arc::clone(&facts.statuses),
        ),
        Some(team) => {
            let reports: Vec<ReportFact> = facts
                .reports
                .iter()
                .filter(|r| &r.team == team)
                .cloned()
                .collect();
            let counted = CountedIndex::of(&reports);
            let statuses =
                event_statuses_counted(&reports, &counted, &facts.adjudications, facts.window_days);
            (Arc::new(reports), Arc::new(counted), Arc::new(statuses))
        }
    };

    let mut out_events = Vec::new();
    for e in &facts.events {
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
    let controls = facts
        .controls
        .iter()
        .filter(|(zone, _)| {
            filter
                .zone
                .as_ref()
                .is_none_or(|z| zone.as_ref() == Some(z))
        })
        .map(|(_, c)| c.clone())
        .collect();
    Loaded {
        events: out_events,
        reports,
        bundle_issued_at: Arc::clone(&facts.bundle_issued_at),
        controls,
        statuses,
        counted,
    }
}
