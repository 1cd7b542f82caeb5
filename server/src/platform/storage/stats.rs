//! The stored facts that statistics are computed from (invariant 2: no
//! stored counter, every figure comes from these rows), and the
//! adjudication log.

use super::engine::Row;
use super::{Reader, Tx};
use crate::domain::{Cause, Outcome, Reason, TargetKind, Timestamp};
use crate::error::Result;
use rusqlite::params;
use rusqlite::types::Type;
use std::collections::HashMap;

/// Adjudications: an append-only audit log of a manager's decisions.
pub const ADJUDICATIONS_MIGRATION: &str = r#"
    CREATE TABLE adjudications (
        id INTEGER PRIMARY KEY,
        event_id INTEGER NOT NULL REFERENCES events(id),
        outcome TEXT NOT NULL CHECK (outcome IN ('confirmed', 'false_alarm', 'inconclusive', 'not_reached')),
        reason TEXT NOT NULL,
        decided_by TEXT NOT NULL,
        decided_at TEXT NOT NULL
    );
    CREATE INDEX adjudications_event ON adjudications(event_id, decided_at);
    CREATE TRIGGER adjudications_append_only_u BEFORE UPDATE ON adjudications
        BEGIN SELECT RAISE(ABORT, 'adjudications are an audit log and cannot change'); END;
    CREATE TRIGGER adjudications_append_only_d BEFORE DELETE ON adjudications
        BEGIN SELECT RAISE(ABORT, 'adjudications are an audit log and cannot be deleted'); END;
"#;

/// Covering indexes for the statistics, which read every live event and
/// every report on each request: each read walks one index in order and
/// never visits the table rows, whose other columns (footprints, notes,
/// positions, flags) the statistics do not need. Without them, reading the
/// reports in id order cost a table lookup per report.
pub const STATS_INDEXES_MIGRATION: &str = r#"
    CREATE INDEX reports_stats ON reports(report_id, event_id, bundle_id, kind, control_code,
        supersedes, outcome, reason, cause, observed_at, received_at, evidence_ok, team);
    CREATE INDEX events_stats ON events(merged_into, id, origin, highest_confidence, corroborated,
        area_ha, first_day, per_source);
"#;

/// One live event with what the statistics need.
#[derive(Debug, Clone, PartialEq)]
pub struct StatsEventRow {
    pub id: i64,
    pub origin: String,
    pub zones: Vec<String>,
    pub sources: Vec<String>,
    pub highest_confidence: i64,
    pub corroborated: bool,
    pub area_ha: f64,
    pub first_day: i32,
    pub first_issued_at: Option<Timestamp>,
    pub teams_issued: Vec<String>,
    /// From the first assessment bundle that sampled the event.
    pub sample: Option<(String, f64, i64)>,
}

/// One report as stored by intake, borrowed from the row being read: the
/// statistics read every report on each request, so nothing is copied that
/// the caller does not keep.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StatsReportRef<'a> {
    /// SQLite's row id: reports are never updated or deleted (invariant 1),
    /// so a later report has a larger one.
    pub rowid: i64,
    pub report_id: &'a str,
    pub bundle_id: &'a str,
    pub event_id: Option<i64>,
    pub control_code: Option<&'a str>,
    pub kind: TargetKind,
    pub supersedes: Option<&'a str>,
    pub outcome: Outcome,
    pub reason: Option<Reason>,
    pub cause: Option<Cause>,
    pub observed_at: Timestamp,
    pub received_at: Timestamp,
    pub evidence_ok: bool,
    pub team: &'a str,
}

/// One adjudication.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AdjudicationRow {
    pub id: i64,
    pub event_id: i64,
    pub outcome: Outcome,
    pub reason: String,
    pub decided_by: String,
    pub decided_at: Timestamp,
}

/// A control point of an assessment bundle.
#[derive(Debug, Clone, PartialEq)]
pub struct ControlRow {
    pub bundle_id: String,
    pub code: String,
    pub lon: f64,
    pub lat: f64,
}

impl Tx<'_> {
    pub fn add_adjudication(
        &self,
        event_id: i64,
        outcome: Outcome,
        reason: &str,
        by: &str,
    ) -> Result<AdjudicationRow> {
        let at = Timestamp::now();
        let id: i64 = self.tx.query_row(
            "INSERT INTO adjudications (event_id, outcome, reason, decided_by, decided_at) VALUES (?1, ?2, ?3, ?4, ?5) RETURNING id",
            params![event_id, outcome, reason, by, at],
            |r| r.get(0),
        )?;
        Ok(AdjudicationRow {
            id,
            event_id,
            outcome,
            reason: reason.into(),
            decided_by: by.into(),
            decided_at: at,
        })
    }
}

/// A TEXT column borrowed from the row.
fn text<'r>(row: &Row<'r>, i: usize) -> Result<&'r str> {
    opt_text(row, i)?.ok_or_else(|| {
        rusqlite::Error::FromSqlConversionFailure(
            i,
            Type::Null,
            "a NULL where a text was expected".into(),
        )
        .into()
    })
}

/// A nullable TEXT column borrowed from the row.
fn opt_text<'r>(row: &Row<'r>, i: usize) -> Result<Option<&'r str>> {
    row.text(i)
}

/// Adds the non-empty parts of `s` (split at the unit separator, which
/// joined the values in the queries this replaced) to `out`.
fn push_split(out: &mut Vec<String>, s: &str) {
    out.extend(
        s.split('\u{1f}')
            .filter(|x| !x.is_empty())
            .map(str::to_string),
    );
}

/// An event's position among events in id order (ids are unique and in
/// order, so a binary search).
fn event_slot(events: &[StatsEventRow], id: i64) -> Option<usize> {
    events.binary_search_by_key(&id, |e| e.id).ok()
}

/// One assessment bundle's sample of an event, as joined text.
struct Sample {
    issued_at: Timestamp,
    bundle_id: String,
    value: Option<String>,
}

/// Keeps the sample of the bundle item in row `r` (bundle id in column 3,
/// joined value in column 5) in `slot` if its bundle was issued before the
/// one kept (by issue time, then bundle id).
fn keep_earlier_sample(slot: &mut Option<Sample>, issued_at: Timestamp, r: &Row<'_>) -> Result<()> {
    let bundle_id = text(r, 3)?;
    let earlier = slot
        .as_ref()
        .is_none_or(|s| (issued_at, bundle_id) < (s.issued_at, s.bundle_id.as_str()));
    if earlier {
        *slot = Some(Sample {
            issued_at,
            bundle_id: bundle_id.to_string(),
            value: opt_text(r, 5)?.map(str::to_string),
        });
    }
    Ok(())
}

/// Sorts and dedups each event's zones and teams and sets its sample.
fn finish_stats_events(events: &mut [StatsEventRow], mut samples: Vec<Option<Sample>>) {
    for (k, e) in events.iter_mut().enumerate() {
        e.zones.sort();
        e.zones.dedup();
        e.teams_issued.sort();
        e.teams_issued.dedup();
        e.sample = samples
            .get_mut(k)
            .and_then(Option::take)
            .and_then(|s| s.value)
            .and_then(|s| parse_sample(&s));
    }
}

/// `stratum ␟ inclusion probability ␟ stratum population`, or `None` when
/// it does not read so.
fn parse_sample(s: &str) -> Option<(String, f64, i64)> {
    let p: Vec<&str> = s.split('\u{1f}').collect();
    match p.as_slice() {
        [name, prob, pop] => Some((name.to_string(), prob.parse().ok()?, pop.parse().ok()?)),
        _ => None,
    }
}

impl Reader<'_> {
    /// Every live event with its zones, sources, first issue and sample.
    ///
    /// Three passes, each one scan (the events, the zone links, the items of
    /// the bundles not cancelled), merged here by event id: a subquery per
    /// event cost three index searches for each of 200,000 events.
    pub fn stats_events(&self) -> Result<Vec<StatsEventRow>> {
        let mut events = self.live_stats_events()?;
        self.add_event_zones(&mut events)?;
        let samples = self.add_event_issues(&mut events)?;
        finish_stats_events(&mut events, samples);
        Ok(events)
    }

    /// The live events in id order, with their sources; zones, issues and
    /// samples still empty.
    fn live_stats_events(&self) -> Result<Vec<StatsEventRow>> {
        let mut st = self.conn.prepare(
            "SELECT id, origin, highest_confidence, corroborated, area_ha, first_day, per_source
             FROM events WHERE merged_into IS NULL ORDER BY id",
        )?;
        let events = st
            .query_map([], |r| {
                let per_source: String = r.get(6)?;
                let sources: Vec<String> =
                    serde_json::from_str::<std::collections::BTreeMap<String, u32>>(&per_source)
                        .map(|m| m.into_keys().collect())
                        .unwrap_or_default();
                Ok(StatsEventRow {
                    id: r.get(0)?,
                    origin: r.get(1)?,
                    highest_confidence: r.get(2)?,
                    corroborated: r.get::<_, i64>(3)? != 0,
                    area_ha: r.get(4)?,
                    first_day: r.get(5)?,
                    sources,
                    zones: Vec::new(),
                    first_issued_at: None,
                    teams_issued: Vec::new(),
                    sample: None,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(events)
    }

    /// Adds each event's zone names (one scan of the zone links).
    fn add_event_zones(&self, events: &mut [StatsEventRow]) -> Result<()> {
        let mut st = self.conn.prepare(
            "SELECT ez.event_id, z.name FROM event_zones ez JOIN zones z ON z.id = ez.zone_id",
        )?;
        let mut rows = st.query([])?;
        while let Some(r) = rows.next()? {
            if let Some(k) = event_slot(events, r.get(0)?) {
                push_split(&mut events[k].zones, text(&r, 1)?);
            }
        }
        Ok(())
    }

    /// Adds each event's first issue time and issuing teams (one scan of the
    /// items of the bundles not cancelled) and returns the sample each event
    /// got from its first assessment bundle, by position (empty when none).
    ///
    /// The sample comes from the first assessment bundle (by issue time,
    /// then id) whose item carries an inclusion probability; the values
    /// are joined as text in SQL, as one subquery per event did before.
    fn add_event_issues(&self, events: &mut [StatsEventRow]) -> Result<Vec<Option<Sample>>> {
        let mut samples: Vec<Option<Sample>> = Vec::new();
        let mut st = self.conn.prepare(
            "SELECT i.event_id, b.issued_at, t.name, i.bundle_id,
                    b.mode = 'assessment' AND i.inclusion_probability IS NOT NULL,
                    i.stratum || char(31) || i.inclusion_probability || char(31) || i.stratum_population
             FROM bundle_items i JOIN bundles b ON b.id = i.bundle_id
             LEFT JOIN teams t ON t.id = b.team_id
             WHERE i.event_id IS NOT NULL AND b.cancelled_at IS NULL",
        )?;
        let mut rows = st.query([])?;
        while let Some(r) = rows.next()? {
            let Some(k) = event_slot(events, r.get(0)?) else {
                continue;
            };
            let issued_at: Timestamp = r.get(1)?;
            let e = &mut events[k];
            if e.first_issued_at.is_none_or(|f| issued_at < f) {
                e.first_issued_at = Some(issued_at);
            }
            if let Some(team) = opt_text(&r, 2)? {
                push_split(&mut e.teams_issued, team);
            }
            if r.get::<_, i64>(4)? != 0 {
                if samples.is_empty() {
                    samples.resize_with(events.len(), || None);
                }
                keep_earlier_sample(&mut samples[k], issued_at, &r)?;
            }
        }
        Ok(samples)
    }

    /// Where merged events went: id → the live event that holds it now.
    pub fn merge_map(&self) -> Result<HashMap<i64, i64>> {
        let mut st = self
            .conn
            .prepare("SELECT id, merged_into FROM events WHERE merged_into IS NOT NULL")?;
        let direct: HashMap<i64, i64> = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<_>>()?;
        let mut out = HashMap::new();
        for (&id, &next) in &direct {
            let mut cur = next;
            for _ in 0..64 {
                match direct.get(&cur) {
                    Some(&n) => cur = n,
                    None => break,
                }
            }
            out.insert(id, cur);
        }
        Ok(out)
    }

    /// Calls `f` with every report intake stored (none before the first
    /// return), in `report_id` order.
    pub fn each_stats_report(&self, f: impl FnMut(StatsReportRef<'_>)) -> Result<()> {
        self.each_stats_report_after(None, f)
    }

    /// [`Reader::each_stats_report`], or with `after = Some(rowid)` only the
    /// reports stored after that row, in row order.
    pub fn each_stats_report_after(
        &self,
        after: Option<i64>,
        mut f: impl FnMut(StatsReportRef<'_>),
    ) -> Result<()> {
        if !self.has_reports_table()? {
            return Ok(());
        }
        const ALL: &str = "SELECT rowid, report_id, bundle_id, event_id, control_code, kind,
                supersedes, outcome, reason, cause, observed_at, received_at, evidence_ok, team
             FROM reports ORDER BY report_id";
        const AFTER: &str = "SELECT rowid, report_id, bundle_id, event_id, control_code, kind,
                supersedes, outcome, reason, cause, observed_at, received_at, evidence_ok, team
             FROM reports WHERE rowid > ?1 ORDER BY rowid";
        let mut st = self
            .conn
            .prepare_cached(if after.is_some() { AFTER } else { ALL })?;
        let mut rows = match after {
            None => st.query([])?,
            Some(a) => st.query([a])?,
        };
        while let Some(r) = rows.next()? {
            f(StatsReportRef {
                rowid: r.get(0)?,
                report_id: text(&r, 1)?,
                bundle_id: text(&r, 2)?,
                event_id: r.get(3)?,
                control_code: opt_text(&r, 4)?,
                kind: r.get(5)?,
                supersedes: opt_text(&r, 6)?,
                outcome: r.get(7)?,
                reason: r.get(8)?,
                cause: r.get(9)?,
                observed_at: r.get(10)?,
                received_at: r.get(11)?,
                evidence_ok: r.get::<_, i64>(12)? != 0,
                team: text(&r, 13)?,
            });
        }
        Ok(())
    }

    /// How many reports are stored and the largest row id among them.
    pub fn report_extent(&self) -> Result<(i64, i64)> {
        if !self.has_reports_table()? {
            return Ok((0, 0));
        }
        self.conn.query_row(
            "SELECT COUNT(*), COALESCE(MAX(rowid), 0) FROM reports",
            [],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )
    }

    fn has_reports_table(&self) -> Result<bool> {
        let sql = match self.conn.dialect() {
            super::engine::Dialect::Sqlite => {
                "SELECT COUNT(*) FROM sqlite_master WHERE type = 'table' AND name = 'reports'"
            }
            super::engine::Dialect::Postgres => {
                "SELECT COUNT(*) FROM pg_tables WHERE schemaname = current_schema() AND tablename = 'reports'"
            }
        };
        let exists: i64 = self.conn.query_row(sql, [], |r| r.get(0))?;
        Ok(exists > 0)
    }

    pub fn adjudications(&self) -> Result<Vec<AdjudicationRow>> {
        let mut st = self.conn.prepare(
            "SELECT id, event_id, outcome, reason, decided_by, decided_at FROM adjudications ORDER BY decided_at, id",
        )?;
        let v = st
            .query_map([], |r| {
                Ok(AdjudicationRow {
                    id: r.get(0)?,
                    event_id: r.get(1)?,
                    outcome: r.get(2)?,
                    reason: r.get(3)?,
                    decided_by: r.get(4)?,
                    decided_at: r.get(5)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Control points of assessment bundles not cancelled.
    pub fn controls(&self) -> Result<Vec<ControlRow>> {
        let mut st = self.conn.prepare(
            "SELECT i.bundle_id, i.code, i.lon, i.lat FROM bundle_items i JOIN bundles b ON b.id = i.bundle_id
             WHERE i.kind = 'control' AND b.cancelled_at IS NULL ORDER BY i.bundle_id, i.code",
        )?;
        let v = st
            .query_map([], |r| {
                Ok(ControlRow {
                    bundle_id: r.get(0)?,
                    code: r.get(1)?,
                    lon: r.get(2)?,
                    lat: r.get(3)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Issue time of every bundle not cancelled.
    pub fn bundle_issue_times(&self) -> Result<Vec<(String, Timestamp)>> {
        let mut st = self
            .conn
            .prepare("SELECT id, issued_at FROM bundles WHERE cancelled_at IS NULL")?;
        let v = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// `area_ha` of every report on a control point that has one, by report
    /// id (the area a team estimated for a clearing found at a control
    /// point, which the assessment's area estimate uses).
    pub fn control_report_areas(&self) -> Result<HashMap<String, f64>> {
        let mut st = self.conn.prepare_cached(
            "SELECT report_id, area_ha FROM reports
             WHERE control_code IS NOT NULL AND area_ha IS NOT NULL",
        )?;
        let v = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<HashMap<String, f64>>>()?;
        Ok(v)
    }
}
