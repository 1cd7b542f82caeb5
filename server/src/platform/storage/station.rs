//! Provenance of reports entered at the station from a paper sheet: who
//! entered them, from which sheet, when. A row is written in the same
//! transaction as its report (intake's), so a report entered at the station
//! never exists without it. Reports without a row came from a field tool
//! (field app or field kit: both sign the same return).

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::error::Result;
use rusqlite::params;
use std::collections::BTreeMap;

/// Schema for this module; appended to the migration list.
pub const STATION_MIGRATION: &str = r#"
    CREATE TABLE station_entries (
        report_id TEXT PRIMARY KEY REFERENCES reports(report_id),
        bundle_id TEXT NOT NULL,
        entered_by TEXT NOT NULL,
        sheet TEXT NOT NULL,
        entered_at TEXT NOT NULL
    ) WITHOUT ROWID;
    CREATE INDEX station_entries_bundle ON station_entries(bundle_id);
"#;

/// How a report entered at the station came in.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StationEntry {
    pub report_id: String,
    pub bundle_id: String,
    /// The user who entered it.
    pub entered_by: String,
    /// The identifier printed on the paper sheet it was copied from.
    pub sheet: String,
    /// RFC 3339.
    pub entered_at: String,
}

fn entry_row(r: &Row<'_>) -> Result<StationEntry> {
    Ok(StationEntry {
        report_id: r.get(0)?,
        bundle_id: r.get(1)?,
        entered_by: r.get(2)?,
        sheet: r.get(3)?,
        entered_at: r.get(4)?,
    })
}

impl Tx<'_> {
    /// Record that `e.report_id` was entered at the station (once: a second
    /// row for the same report is ignored, as the report itself is).
    pub fn insert_station_entry(&self, e: &StationEntry) -> Result<()> {
        self.tx.execute(
            "INSERT INTO station_entries (report_id, bundle_id, entered_by, sheet, entered_at)
             VALUES (?1, ?2, ?3, ?4, ?5) ON CONFLICT DO NOTHING",
            params![
                e.report_id,
                e.bundle_id,
                e.entered_by,
                e.sheet,
                e.entered_at
            ],
        )?;
        Ok(())
    }
}

impl Reader<'_> {
    /// The station provenance of `report_id`, if it was entered at the station.
    pub fn station_entry(&self, report_id: &str) -> Result<Option<StationEntry>> {
        self.conn
            .query_row(
                "SELECT report_id, bundle_id, entered_by, sheet, entered_at
                 FROM station_entries WHERE report_id = ?1",
                [report_id],
                entry_row,
            )
            .optional()
    }

    /// Reports entered at the station, per team (the team of each report).
    pub fn station_entry_counts_by_team(&self) -> Result<BTreeMap<String, u64>> {
        let mut st = self.conn.prepare(
            "SELECT r.team, COUNT(*) FROM station_entries s
             JOIN reports r ON r.report_id = s.report_id GROUP BY r.team",
        )?;
        let v = st
            .query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, i64>(1)?)))?
            .collect::<Result<Vec<_>>>()?;
        Ok(v.into_iter().map(|(t, n)| (t, n.max(0) as u64)).collect())
    }
}

impl Reader<'_> {
    /// Rows of returns, reports, report photos and station entries (for
    /// checks that an entry stored nothing, or stored once).
    pub fn intake_counts(&self) -> Result<[i64; 4]> {
        let mut out = [0; 4];
        for (i, table) in ["returns", "reports", "report_photos", "station_entries"]
            .iter()
            .enumerate()
        {
            out[i] = self
                .conn
                .query_row(&format!("SELECT COUNT(*) FROM {table}"), [], |r| r.get(0))?;
        }
        Ok(out)
    }
}
