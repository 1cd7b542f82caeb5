//! Loading and reconciling the facts behind the statistics.

use crate::domain::{Confidence, Day, EventStatus, TargetKind, Timestamp};
use crate::error::Result;
use crate::platform::storage::{
    BundleRecord, ControlRow, Db, Reader, StatsEventRow, StatsReportRef, ZoneRecord,
};
use crate::reconcile::{
    Adjudication, CountedIndex, Outcome, ReportFact, StatusOutcome, event_statuses_counted,
};
use crate::statistics::figures::{ControlFacts, ControlFinding, EventFacts, SampleInfo};
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
    /// (pass it to [`crate::statistics::figures::all_figures_counted`]).
    pub counted: Arc<CountedIndex>,
}

/// Area a control point stands for: a 1 ha plot (100 m × 100 m) around
/// it (our choice, stated in the README).
pub const CONTROL_PLOT_HA: f64 = 1.0;

/// A control point's report, kept while reading every report.
#[derive(Debug, Clone)]
struct ControlReport {
    report_id: String,
    observed_at: Timestamp,
    outcome: Outcome,
}

/// What the passes over the stored reports keep. Reports are only ever
/// added (invariant 1), so after new returns the next read continues from
/// the last row read ([`read_facts_after`]).
#[derive(Debug, Default)]
struct ReportScan {
    /// Every report, as reconciliation reads them (moved into [`Facts`]
    /// while it is in use).
    facts: Vec<ReportFact>,
    /// Each fact's event id as stored, before following merges.
    stored_event: Vec<i64>,
    /// The merges the facts' event ids follow.
    merges: HashMap<i64, i64>,
    /// Rows read, and the largest row id among them.
    rows: i64,
    max_rowid: i64,
    /// Every report id that another report names as superseded.
    superseded: HashSet<String>,
    /// Reports on control points, by (bundle, control code).
    controls: BTreeMap<(String, String), Vec<ControlReport>>,
}

impl ReportScan {
    fn add(&mut self, r: StatsReportRef<'_>, live: impl Fn(i64) -> i64) {
        self.rows += 1;
        self.max_rowid = self.max_rowid.max(r.rowid);
        if let Some(s) = r.supersedes {
            self.superseded.insert(s.to_string());
        }
        if r.kind == TargetKind::Control
            && let Some(code) = r.control_code
        {
            self.controls
                .entry((r.bundle_id.to_string(), code.to_string()))
                .or_default()
                .push(ControlReport {
                    report_id: r.report_id.to_string(),
                    observed_at: r.observed_at,
                    outcome: r.outcome,
                });
        }
        if let (Some(stored), Some(f)) = (r.event_id, report_fact(&r, live)) {
            self.stored_event.push(stored);
            self.facts.push(f);
        }
    }

    /// Point every fact at its live event under `merges`.
    fn follow(&mut self, merges: HashMap<i64, i64>) {
        if merges != self.merges {
            for (f, &stored) in self.facts.iter_mut().zip(&self.stored_event) {
                f.event_id = merges.get(&stored).copied().unwrap_or(stored);
            }
            self.merges = merges;
        }
    }
}

fn report_fact(r: &StatsReportRef<'_>, live: impl Fn(i64) -> i64) -> Option<ReportFact> {
    Some(ReportFact {
        report_id: Uuid::parse_str(r.report_id).ok()?,
        event_id: live(r.event_id?),
        supersedes: r.supersedes.and_then(|s| Uuid::parse_str(s).ok()),
        outcome: r.outcome,
        reason: r.reason.map(|w| w.as_str().to_owned()),
        cause: r.cause.map(|w| w.as_str().to_owned()),
        observed_at: r.observed_at.utc(),
        received_at: r.received_at.utc(),
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
    events: Vec<StatsEventRow>,
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
    /// The report pass, without its facts (they are in `reports`).
    scan: ReportScan,
}

/// Load everything, reconcile, and apply the filter.
pub fn load(db: &Db, filter: &StatsFilter, window_days: u32) -> Result<Loaded> {
    Ok(prepare(&read_facts(db, window_days)?, filter))
}

/// Read every fact the statistics rest on and reconcile every event.
pub fn read_facts(db: &Db, window_days: u32) -> Result<Facts> {
    read_facts_after(db, window_days, None)
}

/// [`read_facts`], reading only the reports stored since `previous` was
/// read when nothing but new reports came in; everything else is read and
/// every event reconciled again. The result equals a fresh [`read_facts`].
pub fn read_facts_after(db: &Db, window_days: u32, previous: Option<Facts>) -> Result<Facts> {
    let earlier = previous.map(kept_scan);
    let Stored {
        events,
        mut scan,
        adjudications,
        issue_times,
        controls,
        control_areas,
        zones,
        bundles,
    } = db.read(|r| read_stored(r, earlier))?;
    let bundle_issued_at = issued_at_by_bundle(&issue_times);
    let reports = std::mem::take(&mut scan.facts);
    let counted = CountedIndex::of(&reports);
    let statuses = event_statuses_counted(&reports, &counted, &adjudications, window_days);
    let out_controls = control_facts(&controls, &control_areas, &zones, &bundles, &scan);
    Ok(Facts {
        events,
        reports: Arc::new(reports),
        counted: Arc::new(counted),
        statuses: Arc::new(statuses),
        adjudications,
        bundle_issued_at: Arc::new(bundle_issued_at),
        controls: out_controls,
        window_days,
        scan,
    })
}

/// What [`read_facts_after`] reads from storage in one read.
struct Stored {
    events: Vec<StatsEventRow>,
    scan: ReportScan,
    adjudications: Vec<Adjudication>,
    issue_times: Vec<(String, Timestamp)>,
    controls: Vec<ControlRow>,
    /// The area recorded on each control report that has one, by report id.
    control_areas: HashMap<String, f64>,
    zones: Vec<ZoneRecord>,
    bundles: Vec<BundleRecord>,
}

/// The report pass kept in `previous`, with its facts given back.
fn kept_scan(previous: Facts) -> ReportScan {
    let mut scan = previous.scan;
    scan.facts = Arc::try_unwrap(previous.reports).unwrap_or_else(|shared| (*shared).clone());
    scan
}

/// Everything the facts rest on, read in one read of storage.
fn read_stored(r: &Reader<'_>, earlier: Option<ReportScan>) -> Result<Stored> {
    let merges = r.merge_map()?;
    let live = |id: i64| merges.get(&id).copied().unwrap_or(id);
    let scan = scan_reports(r, earlier, &merges, live)?;
    let adjudications = read_adjudications(r, live)?;
    Ok(Stored {
        events: r.stats_events()?,
        scan,
        adjudications,
        issue_times: r.bundle_issue_times()?,
        controls: r.controls()?,
        control_areas: r.control_report_areas()?,
        zones: r.zones()?,
        bundles: r.bundles()?,
    })
}

/// The pass over the stored reports: `earlier` read on from its last row
/// when only reports were added since, otherwise every report read again.
fn scan_reports(
    r: &Reader<'_>,
    earlier: Option<ReportScan>,
    merges: &HashMap<i64, i64>,
    live: impl Fn(i64) -> i64 + Copy,
) -> Result<ReportScan> {
    let (count, max_rowid) = r.report_extent()?;
    let read_on = match earlier {
        Some(mut s) if s.rows > 0 && s.rows <= count && s.max_rowid <= max_rowid => {
            r.each_stats_report_after(Some(s.max_rowid), |row| s.add(row, live))?;
            Some(s).filter(|s| s.rows == count)
        }
        _ => None,
    };
    Ok(match read_on {
        Some(mut s) => {
            s.follow(merges.clone());
            s
        }
        // Not only additions (or nothing kept): read every report.
        None => {
            let mut s = ReportScan::default();
            r.each_stats_report(|row| s.add(row, live))?;
            s.merges = merges.clone();
            s
        }
    })
}

/// The adjudications, each on its live event.
fn read_adjudications(r: &Reader<'_>, live: impl Fn(i64) -> i64) -> Result<Vec<Adjudication>> {
    Ok(r.adjudications()?
        .iter()
        .map(|a| Adjudication {
            event_id: live(a.event_id),
            outcome: a.outcome,
            reason: a.reason.clone(),
            by: a.decided_by.clone(),
            at: a.decided_at.utc(),
        })
        .collect())
}

fn issued_at_by_bundle(issue_times: &[(String, Timestamp)]) -> BTreeMap<Uuid, DateTime<Utc>> {
    issue_times
        .iter()
        .filter_map(|(id, t)| Some((Uuid::parse_str(id).ok()?, t.utc())))
        .collect()
}

/// Control points: reached or not, clearing found or not, with their zone.
fn control_facts(
    controls: &[ControlRow],
    areas: &HashMap<String, f64>,
    zones: &[ZoneRecord],
    bundles: &[BundleRecord],
    scan: &ReportScan,
) -> Vec<(Option<String>, ControlFacts)> {
    let zone_area = zone_areas_ha(zones);
    let bundle_zone = bundle_zones(bundles);
    let mut out_controls = Vec::new();
    for c in controls {
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
        // Checklist 2's control outcomes and checklist 1's event words, read
        // in one place, with the area the team estimated for a clearing.
        let found = ControlFinding::of_report(
            latest_control_report(scan, c).map(|r| (r.outcome, areas.get(&r.report_id).copied())),
        );
        out_controls.push((
            zone.clone(),
            ControlFacts {
                stratum: "control".into(),
                finding: found,
                area_ha: CONTROL_PLOT_HA,
                inclusion_probability: (*k as f64 * CONTROL_PLOT_HA / area).min(1.0),
            },
        ));
    }
    out_controls
}

/// Each zone's area in hectares, by name.
fn zone_areas_ha(zones: &[ZoneRecord]) -> HashMap<String, f64> {
    zones
        .iter()
        .filter_map(|z| {
            Some((
                z.name.clone(),
                crate::alerts::events::parse_multipolygon(&z.geometry)?.geodesic_area_unsigned()
                    / 1e4,
            ))
        })
        .collect()
}

/// Each bundle's selected zone and number of control points, by bundle id.
fn bundle_zones(bundles: &[BundleRecord]) -> HashMap<String, (Option<String>, i64)> {
    bundles
        .iter()
        .map(|b| {
            let zone = serde_json::from_str::<serde_json::Value>(&b.selection)
                .ok()
                .and_then(|v| v["zone"].as_str().map(str::to_string));
            (b.id.clone(), (zone, b.controls))
        })
        .collect()
}

/// The latest report on control point `c` that no other report supersedes.
fn latest_control_report<'s>(scan: &'s ReportScan, c: &ControlRow) -> Option<&'s ControlReport> {
    scan.controls
        .get(&(c.bundle_id.clone(), c.code.clone()))
        .and_then(|v| {
            v.iter()
                .filter(|r| !scan.superseded.contains(&r.report_id))
                // The latest; equal times are decided by report id, so
                // the order the reports were read in does not matter.
                .max_by(|a, b| (a.observed_at, &a.report_id).cmp(&(b.observed_at, &b.report_id)))
        })
}

/// The selection `filter` of `facts`: a team's selection is reconciled
/// again on that team's reports alone; any other shares the reconciliation
/// of every report.
pub fn prepare(facts: &Facts, filter: &StatsFilter) -> Loaded {
    let (reports, counted, statuses) = reconciled_for(facts, filter);
    let mut out_events = Vec::new();
    for e in &facts.events {
        let first = Day::from_days(e.first_day);
        if !event_in_filter(e, first, filter) {
            continue;
        }
        let status = statuses.get(&e.id);
        if !team_selected(e, status, filter) {
            continue;
        }
        let mut f = event_facts(e, first);
        if let Some(s) = status {
            f.apply_status(s);
        }
        out_events.push(f);
    }
    Loaded {
        events: out_events,
        reports,
        bundle_issued_at: Arc::clone(&facts.bundle_issued_at),
        controls: controls_in_zone(facts, filter),
        statuses,
        counted,
    }
}

/// The reports, counted index and statuses a selection rests on: shared
/// with `facts`, or reconciled again on the selected team's reports.
#[allow(clippy::type_complexity)]
fn reconciled_for(
    facts: &Facts,
    filter: &StatsFilter,
) -> (
    Arc<Vec<ReportFact>>,
    Arc<CountedIndex>,
    Arc<BTreeMap<i64, StatusOutcome>>,
) {
    match &filter.team {
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
    }
}

/// Whether event `e`, first detected on `first`, is in the selected days,
/// zone and source.
fn event_in_filter(e: &StatsEventRow, first: Day, filter: &StatsFilter) -> bool {
    if filter.from.is_some_and(|d| first < d) || filter.to.is_some_and(|d| first > d) {
        return false;
    }
    if filter.zone.as_ref().is_some_and(|z| !e.zones.contains(z)) {
        return false;
    }
    filter.source.as_ref().is_none_or(|s| e.sources.contains(s))
}

/// Whether event `e` was issued to or reported on by the selected team (any
/// event is when no team is selected).
fn team_selected(e: &StatsEventRow, status: Option<&StatusOutcome>, filter: &StatsFilter) -> bool {
    match &filter.team {
        Some(t) => {
            let reported = status.is_some_and(|s| s.teams.contains(t));
            e.teams_issued.contains(t) || reported
        }
        None => true,
    }
}

/// Event `e`'s facts before its status is applied.
fn event_facts(e: &StatsEventRow, first: Day) -> EventFacts {
    EventFacts {
        event_id: e.id,
        zone_names: e.zones.clone(),
        sources: e.sources.clone(),
        found_on_ground: e.origin == "field",
        highest_confidence: Confidence::from_i64(e.highest_confidence)
            .unwrap_or(Confidence::Tentative)
            .level()
            .to_string(),
        corroborated: e.corroborated,
        area_ha: e.area_ha,
        first_detected: first.date(),
        issued_at: e.first_issued_at.map(Timestamp::utc),
        status: EventStatus::Unvisited,
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
    }
}

/// The control points in the selected zone (all of them when none is).
fn controls_in_zone(facts: &Facts, filter: &StatsFilter) -> Vec<ControlFacts> {
    facts
        .controls
        .iter()
        .filter(|(zone, _)| {
            filter
                .zone
                .as_ref()
                .is_none_or(|z| zone.as_ref() == Some(z))
        })
        .map(|(_, c)| c.clone())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::platform::storage::{
        BundleItem, EventWrite, NewBundle, ReportRow, ReturnRecord, Tx,
    };

    fn event(tx: &Tx<'_>, lon: f64) -> i64 {
        tx.insert_event(&EventWrite {
            footprint: format!(
                "{{\"type\":\"Polygon\",\"coordinates\":[[[{lon},0],[{lon}.001,0],[{lon}.001,0.001],[{lon},0]]]}}"
            ),
            area_ha: 2.0,
            centroid: (lon, 0.0),
            bbox: (lon, 0.0, lon + 0.001, 0.001),
            first: Day::from_days(20_300),
            last: Day::from_days(20_300),
            alert_count: 1,
            highest_confidence: Confidence::Confirmed,
            corroborated: false,
            per_source: [("optical-10m".to_string(), 1)].into(),
        })
        .unwrap()
    }

    /// A report on no event yet, observed (and recorded) at `observed`.
    fn visit(
        bundle: &str,
        team: &str,
        return_id: i64,
        outcome: Outcome,
        observed: &str,
    ) -> ReportRow {
        ReportRow {
            report_id: uuid::Uuid::new_v4().to_string(),
            bundle_id: bundle.into(),
            event_id: None,
            control_code: None,
            kind: TargetKind::Event,
            supersedes: None,
            outcome,
            reason: (outcome == Outcome::FalseAlarm).then_some(crate::domain::Reason::NoChange),
            cause: None,
            lat: Some(0.0),
            lon: Some(0.0),
            accuracy_m: Some(5.0),
            position_source: Some("gnss".into()),
            distance_m: Some(3.0),
            observed_at: observed.parse().unwrap(),
            recorded_at: observed.parse().unwrap(),
            received_at: "2025-08-10T12:00:00Z".parse().unwrap(),
            area_ha: None,
            notes: String::new(),
            team: team.into(),
            evidence_ok: true,
            flags: Vec::new(),
            return_id,
        }
    }

    /// One trip to `events`, its return, and one report per (event, outcome).
    fn trip(
        tx: &Tx<'_>,
        id: &str,
        team: &crate::platform::storage::Team,
        visits: &[(i64, Outcome)],
    ) {
        let items: Vec<BundleItem> = visits
            .iter()
            .enumerate()
            .map(|(k, &(e, _))| BundleItem {
                visit_order: k as u32,
                code: format!("E{k:03}"),
                kind: TargetKind::Event,
                event_id: Some(e),
                lon: 0.0,
                lat: 0.0,
                stratum: None,
                stratum_population: None,
                inclusion_probability: None,
            })
            .collect();
        tx.insert_bundle(&NewBundle {
            id,
            team_id: team.id,
            mode: "response",
            issued_at: "2025-08-02T08:00:00Z",
            due_at: "2025-08-16T08:00:00Z",
            expires_at: "2025-10-01T08:00:00Z",
            seed: None,
            margin: None,
            selection: "{}",
            start: (0.0, 0.0),
            route_m: 1000.0,
            upload_key_id: id,
            upload_key: &[7; 32],
            file_name: "b.zip",
            file_sha256: &"0".repeat(64),
            file_size: 1,
            items: &items,
        })
        .unwrap();
        let return_id = tx
            .insert_return(&ReturnRecord {
                id: 0,
                bundle_id: id.into(),
                sha256: format!("{:0>64}", &id[id.len() - 1..]),
                size: 1,
                team: team.name.clone(),
                received_at: "2025-08-10T12:00:00Z".into(),
                path: format!("returns/{id}.zip"),
            })
            .unwrap();
        for (k, &(e, outcome)) in visits.iter().enumerate() {
            let observed = format!("2025-08-0{}T10:00:00Z", 3 + k % 5);
            let row = ReportRow {
                event_id: Some(e),
                ..visit(id, &team.name, return_id, outcome, &observed)
            };
            tx.insert_report(&row, "0").unwrap();
        }
    }

    const CONTROL_BUNDLE: &str = "00000000-0000-4000-8000-0000000000c1";

    /// An assessment trip in zone "North" with one control point, C001.
    fn control_trip(tx: &Tx<'_>, team: &crate::platform::storage::Team) {
        tx.upsert_zone(
            "North",
            false,
            "{\"type\":\"Polygon\",\"coordinates\":[[[0,0],[0.1,0],[0.1,0.1],[0,0.1],[0,0]]]}",
            (0.0, 0.0, 0.1, 0.1),
        )
        .unwrap();
        let items = [BundleItem {
            visit_order: 0,
            code: "C001".into(),
            kind: TargetKind::Control,
            event_id: None,
            lon: 0.05,
            lat: 0.05,
            stratum: Some("control".into()),
            stratum_population: None,
            inclusion_probability: None,
        }];
        tx.insert_bundle(&NewBundle {
            id: CONTROL_BUNDLE,
            team_id: team.id,
            mode: "assessment",
            issued_at: "2025-08-02T08:00:00Z",
            due_at: "2025-08-16T08:00:00Z",
            expires_at: "2025-10-01T08:00:00Z",
            seed: Some(1),
            margin: None,
            selection: "{\"zone\":\"North\"}",
            start: (0.0, 0.0),
            route_m: 1000.0,
            upload_key_id: CONTROL_BUNDLE,
            upload_key: &[7; 32],
            file_name: "c.zip",
            file_sha256: &"0".repeat(64),
            file_size: 1,
            items: &items,
        })
        .unwrap();
    }

    /// One return holding one report on control point C001.
    fn control_report(tx: &Tx<'_>, team: &str, report_id: &str, outcome: Outcome) {
        let return_id = tx
            .insert_return(&ReturnRecord {
                id: 0,
                bundle_id: CONTROL_BUNDLE.into(),
                sha256: format!("{:e>64}", &report_id[..8]),
                size: 1,
                team: team.into(),
                received_at: "2025-08-10T12:00:00Z".into(),
                path: format!("returns/{report_id}.zip"),
            })
            .unwrap();
        // The same time on both reports: the report id decides.
        let row = ReportRow {
            report_id: report_id.into(),
            control_code: Some("C001".into()),
            kind: TargetKind::Control,
            lat: Some(0.05),
            lon: Some(0.05),
            ..visit(
                CONTROL_BUNDLE,
                team,
                return_id,
                outcome,
                "2025-08-04T10:00:00Z",
            )
        };
        tx.insert_report(&row, "0").unwrap();
    }

    /// Every figure of the unfiltered selection, as JSON.
    fn figures_json(facts: &Facts) -> String {
        let l = prepare(facts, &StatsFilter::default());
        let at = Day::from_days(20_500)
            .date()
            .and_hms_opt(0, 0, 0)
            .unwrap()
            .and_utc();
        let f = super::super::figures_of(&l, &crate::statistics::figures::FigureOptions::new(at))
            .unwrap();
        serde_json::to_string(&f).unwrap()
    }

    #[test]
    fn reading_on_from_earlier_facts_equals_reading_afresh() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let (a, b, c) = db
            .write(|tx| {
                tx.add_source("optical-10m", 10.0, 5)?;
                let team = tx.add_team("Team One")?;
                let (a, b, c) = (event(tx, 1.0), event(tx, 2.0), event(tx, 3.0));
                trip(
                    tx,
                    "00000000-0000-4000-8000-000000000001",
                    &team,
                    &[(a, Outcome::Confirmed), (b, Outcome::Confirmed)],
                );
                // A control point: the report with the larger id comes first.
                control_trip(tx, &team);
                control_report(
                    tx,
                    "Team One",
                    "ffffffff-0000-4000-8000-000000000001",
                    Outcome::Confirmed,
                );
                Ok((a, b, c))
            })
            .unwrap();
        let earlier = read_facts(&db, 30).unwrap();
        assert_eq!(earlier.reports.len(), 2);
        // New returns, one disagreeing with an earlier visit; then event c
        // is merged into b, so c's report now counts for b.
        db.write(|tx| {
            let team = tx.add_team("Team Two")?;
            trip(
                tx,
                "00000000-0000-4000-8000-000000000002",
                &team,
                &[(b, Outcome::FalseAlarm), (c, Outcome::Confirmed)],
            );
            // A second report on the control point, at the same time, with
            // a smaller id: read afresh it comes first, read on it comes last.
            control_report(
                tx,
                "Team Two",
                "00000000-ffff-4000-8000-000000000001",
                Outcome::FalseAlarm,
            );
            tx.mark_merged(&[c], b)?;
            tx.add_adjudication(
                a,
                Outcome::FalseAlarm,
                "a later image shows forest",
                "Manager",
            )?;
            Ok(())
        })
        .unwrap();
        let on = read_facts_after(&db, 30, Some(earlier)).unwrap();
        let fresh = read_facts(&db, 30).unwrap();
        assert_eq!(on.reports.len(), 4);
        assert_eq!(
            on.reports.iter().filter(|r| r.event_id == b).count(),
            3,
            "the report on the merged event follows the merge"
        );
        assert_eq!(on.controls.len(), 1);
        assert_eq!(
            on.controls[0].1.finding,
            ControlFinding::Clearing { area_ha: None },
            "equal times: the larger report id is the latest, in either reading"
        );
        assert_eq!(figures_json(&on), figures_json(&fresh));
        assert_eq!(on.statuses, fresh.statuses);
        // Nothing new: reading on changes nothing.
        let again = read_facts_after(&db, 30, Some(on)).unwrap();
        assert_eq!(figures_json(&again), figures_json(&fresh));
    }
}
