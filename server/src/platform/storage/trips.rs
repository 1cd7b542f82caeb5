//! Reads for the trip pages: what came back for one bundle (its returns and
//! reports), and per bundle how many of its stops have a report.

use super::Reader;
use super::returns::{REPORT_COLS, ReportRow, report_row};
use crate::error::Result;
use std::collections::HashMap;

/// One return package received for a bundle.
#[derive(Debug, Clone, PartialEq)]
pub struct ReturnSummary {
    pub id: i64,
    pub team: String,
    pub received_at: String,
    pub size: i64,
    /// Reports stored from it.
    pub reports: i64,
}

impl Reader<'_> {
    /// The reports stored for bundle `id`, oldest observation first.
    pub fn bundle_reports(&self, id: &str) -> Result<Vec<ReportRow>> {
        let mut st = self.conn.prepare(&format!(
            "SELECT {REPORT_COLS} FROM reports WHERE bundle_id = ?1 ORDER BY observed_at, report_id"
        ))?;
        let v = st
            .query_map([id], report_row)?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// The returns received for bundle `id`, in the order they arrived.
    pub fn bundle_returns(&self, id: &str) -> Result<Vec<ReturnSummary>> {
        let mut st = self.conn.prepare(
            "SELECT r.id, r.team, r.received_at, r.size,
                    (SELECT COUNT(*) FROM reports p WHERE p.return_id = r.id)
             FROM returns r WHERE r.bundle_id = ?1 ORDER BY r.received_at, r.id",
        )?;
        let v = st
            .query_map([id], |r| {
                Ok(ReturnSummary {
                    id: r.get(0)?,
                    team: r.get(1)?,
                    received_at: r.get(2)?,
                    size: r.get(3)?,
                    reports: r.get(4)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Per bundle id: how many of its stops (events and control points)
    /// have at least one stored report.
    pub fn bundle_stops_reported(&self) -> Result<HashMap<String, i64>> {
        let mut st = self.conn.prepare(
            "SELECT bi.bundle_id, COUNT(*) FROM bundle_items bi
             WHERE EXISTS (SELECT 1 FROM reports r WHERE r.bundle_id = bi.bundle_id
                 AND ((bi.event_id IS NOT NULL AND r.event_id = bi.event_id)
                   OR (bi.event_id IS NULL AND r.control_code = bi.code)))
             GROUP BY bi.bundle_id",
        )?;
        let mut out = HashMap::new();
        for row in st.query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, i64>(1)?)))? {
            let (id, n) = row?;
            out.insert(id, n);
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {

    #[test]
    fn a_fresh_database_has_nothing_returned() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        assert!(db.read(|r| r.bundle_stops_reported()).unwrap().is_empty());
        assert!(db.read(|r| r.bundle_returns("x")).unwrap().is_empty());
        assert!(db.read(|r| r.bundle_reports("x")).unwrap().is_empty());
    }
}
