//! Alerts: insertion (batched; secondary indexes rebuilt after a bulk
//! load) and the neighbourhood queries the event update needs.

use super::engine::{Dialect, Row, params_from_iter};
use super::{Reader, Tx};
use crate::domain::{Confidence, Day};
use crate::error::Result;
use rusqlite::params;
use rusqlite::types::Value;

/// Above this many new rows an import drops the alert indexes, loads, and
/// builds them again: building once is far cheaper than keeping a random
/// key index up to date row by row (measured in the benchmark).
const BULK_ROWS: usize = 100_000;

/// Alert rows per multi-row `INSERT` on PostgreSQL: 5,000 parameters, well
/// under its limit of 65,535 bind parameters per statement.
const PG_ROWS_PER_INSERT: usize = 500;

/// Columns [`INSERT`] fills per alert.
const ALERT_COLUMNS: usize = 10;

const INSERT: &str = "INSERT INTO alerts (source_id, import_id, lon, lat, lon_e7, lat_e7, day, confidence, cell, event_id)
     VALUES";

/// The [`ALERT_COLUMNS`] values of one alert, in [`INSERT`]'s order.
fn alert_values(import_id: i64, a: &NewAlert) -> [Value; ALERT_COLUMNS] {
    [
        Value::Integer(a.source_id),
        Value::Integer(import_id),
        Value::Real(a.lon),
        Value::Real(a.lat),
        Value::Integer(e7(a.lon)),
        Value::Integer(e7(a.lat)),
        Value::Integer(i64::from(a.day.days())),
        Value::Integer(a.confidence.as_i64()),
        Value::Integer(cell_of(a.lon, a.lat)),
        Value::Integer(a.event_id),
    ]
}

/// A validated alert ready to store, with the event it joins.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NewAlert {
    pub source_id: i64,
    pub lon: f64,
    pub lat: f64,
    pub day: Day,
    pub confidence: Confidence,
    pub event_id: i64,
}

/// An alert as stored.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StoredAlert {
    pub id: i64,
    pub source_id: i64,
    pub pixel_m: f64,
    pub lon: f64,
    pub lat: f64,
    pub day: Day,
    pub confidence: Confidence,
    pub event_id: i64,
}

/// Integer micro-degrees ×10 (1e-7°, about 1 cm): the pixel identity used
/// for duplicates.
pub fn e7(v: f64) -> i64 {
    (v * 1e7).round() as i64
}

/// Side of the coarse cells used to find stored alerts near new ones.
pub const CELL_DEG: f64 = 0.01;

/// The coarse cell of a position.
pub fn cell_of(lon: f64, lat: f64) -> i64 {
    let cy = ((lat + 90.0) / CELL_DEG).floor() as i64;
    let cx = ((lon + 180.0) / CELL_DEG).floor() as i64;
    cy * 100_000 + cx
}

fn stored(r: &Row<'_>) -> Result<StoredAlert> {
    Ok(StoredAlert {
        id: r.get(0)?,
        source_id: r.get(1)?,
        pixel_m: r.get(2)?,
        lon: r.get(3)?,
        lat: r.get(4)?,
        day: Day::from_days(r.get(5)?),
        confidence: Confidence::from_i64(r.get(6)?).unwrap_or(Confidence::Tentative),
        event_id: r.get(7)?,
    })
}

const SELECT: &str =
    "SELECT a.id, a.source_id, s.pixel_size_m, a.lon, a.lat, a.day, a.confidence, a.event_id
     FROM alerts a JOIN sources s ON s.id = a.source_id";

impl Tx<'_> {
    /// Insert alerts of one import.
    pub fn insert_alerts(&self, import_id: i64, alerts: &[NewAlert]) -> Result<()> {
        let bulk = alerts.len() >= BULK_ROWS;
        if bulk {
            self.tx.execute_batch(
                "DROP INDEX alerts_pixel; DROP INDEX alerts_cell; DROP INDEX alerts_event;",
            )?;
        }
        match self.tx.dialect() {
            Dialect::Sqlite => self.insert_alert_rows(import_id, alerts)?,
            Dialect::Postgres => {
                for chunk in alerts.chunks(PG_ROWS_PER_INSERT) {
                    self.insert_alert_chunk(import_id, chunk)?;
                }
            }
        }
        if bulk {
            self.tx.execute_batch(
                "CREATE UNIQUE INDEX alerts_pixel ON alerts(source_id, lon_e7, lat_e7, day);
                 CREATE INDEX alerts_cell ON alerts(cell);
                 CREATE INDEX alerts_event ON alerts(event_id);",
            )?;
        }
        Ok(())
    }

    /// One prepared statement per row: SQLite appends in its own process,
    /// so a row costs no round trip.
    fn insert_alert_rows(&self, import_id: i64, alerts: &[NewAlert]) -> Result<()> {
        let mut st = self.tx.prepare_cached(&format!(
            "{INSERT} (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)"
        ))?;
        for a in alerts {
            st.execute(alert_values(import_id, a))?;
        }
        Ok(())
    }

    /// Up to [`PG_ROWS_PER_INSERT`] rows in one multi-row `INSERT`: one
    /// round trip to PostgreSQL for the lot. The rows of a `VALUES` list are
    /// inserted in list order, so ids still follow the caller's order.
    fn insert_alert_chunk(&self, import_id: i64, chunk: &[NewAlert]) -> Result<()> {
        let rows: Vec<String> = (0..chunk.len())
            .map(|r| {
                let b = r * ALERT_COLUMNS;
                let cols: Vec<String> =
                    (1..=ALERT_COLUMNS).map(|c| format!("?{}", b + c)).collect();
                format!("({})", cols.join(", "))
            })
            .collect();
        let sql = format!("{INSERT} {}", rows.join(", "));
        let values: Vec<Value> = chunk
            .iter()
            .flat_map(|a| alert_values(import_id, a))
            .collect();
        // A full chunk repeats, so its statement is kept; the last, shorter
        // one is prepared once.
        let mut st = if chunk.len() == PG_ROWS_PER_INSERT {
            self.tx.prepare_cached(&sql)?
        } else {
            self.tx.prepare(&sql)?
        };
        st.execute(params_from_iter(values.iter()))?;
        Ok(())
    }

    /// Move all alerts of `from` events to `to`.
    pub fn reassign_alerts(&self, from: &[i64], to: i64) -> Result<()> {
        let mut st = self
            .tx
            .prepare_cached("UPDATE alerts SET event_id = ?1 WHERE event_id = ?2")?;
        for f in from {
            st.execute(params![to, f])?;
        }
        Ok(())
    }
}

impl Reader<'_> {
    /// Alerts whose coarse cell is one of `cells`.
    pub fn alerts_in_cells(&self, cells: &[i64]) -> Result<Vec<StoredAlert>> {
        let mut st = self
            .conn
            .prepare_cached(&format!("{SELECT} WHERE a.cell = ?1"))?;
        let mut out = Vec::new();
        for c in cells {
            for a in st.query_map([c], stored)? {
                out.push(a?);
            }
        }
        Ok(out)
    }

    /// All alerts of the given events.
    pub fn alerts_of_events(&self, events: &[i64]) -> Result<Vec<StoredAlert>> {
        let mut st = self
            .conn
            .prepare_cached(&format!("{SELECT} WHERE a.event_id = ?1 ORDER BY a.id"))?;
        let mut out = Vec::new();
        for e in events {
            for a in st.query_map([e], stored)? {
                out.push(a?);
            }
        }
        Ok(out)
    }

    pub fn alert_count(&self) -> Result<i64> {
        self.conn
            .query_row("SELECT COUNT(*) FROM alerts", [], |r| r.get(0))
    }
}

/// The coarse cells to search for stored alerts that may link to new
/// alerts at `points` (lon, lat), given the longest link distance.
pub fn alerts_cells(points: &[(f64, f64)], max_link_m: f64) -> Vec<i64> {
    let mut cells = std::collections::BTreeSet::new();
    let dlat = max_link_m / 110_574.0; // metres per degree of latitude at the equator (WGS 84 minimum)
    for &(lon, lat) in points {
        let coslat = lat.to_radians().cos().max(0.01);
        let dlon = dlat / coslat;
        let ky = (dlat / CELL_DEG).ceil() as i64;
        let kx = (dlon / CELL_DEG).ceil() as i64;
        let c = cell_of(lon, lat);
        for dy in -ky..=ky {
            for dx in -kx..=kx {
                cells.insert(c + dy * 100_000 + dx);
            }
        }
    }
    cells.into_iter().collect()
}

impl Reader<'_> {
    /// Positions (lon, lat) of all stored alerts inside a bounding box.
    pub fn alert_positions_in(&self, bbox: (f64, f64, f64, f64)) -> Result<Vec<(f64, f64)>> {
        let mut st = self.conn.prepare(
            "SELECT lon, lat FROM alerts WHERE lon BETWEEN ?1 AND ?3 AND lat BETWEEN ?2 AND ?4",
        )?;
        let v = st
            .query_map(params![bbox.0, bbox.1, bbox.2, bbox.3], |r| {
                Ok((r.get(0)?, r.get(1)?))
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }
}

#[cfg(test)]
mod tests {
    use super::super::events::EventWrite;
    use super::*;

    fn event() -> EventWrite {
        EventWrite {
            footprint: r#"{"type":"Point","coordinates":[0,0]}"#.into(),
            area_ha: 0.0,
            centroid: (0.0, 0.0),
            bbox: (0.0, 0.0, 0.0, 0.0),
            first: Day::from_days(20_000),
            last: Day::from_days(20_000),
            alert_count: 0,
            highest_confidence: Confidence::Tentative,
            corroborated: false,
            per_source: Default::default(),
        }
    }

    /// More rows than one PostgreSQL statement takes (two full batches and
    /// a short one) come back whole, each value in place, ids in the
    /// caller's order; on SQLite the same through the per-row statement.
    #[test]
    fn many_alerts_are_stored_whole_and_in_order() {
        let dir = tempfile::tempdir().unwrap();
        let db = super::super::test_db(dir.path());
        let n = 2 * PG_ROWS_PER_INSERT + 201;
        let (event_id, new) = db
            .write(|tx| {
                let source = tx.add_source("optical-10m", 10.0, 5)?.id;
                let import = tx.add_import(source, "a.csv", [n, n, 0, 0])?;
                let event_id = tx.insert_event(&event())?;
                let new: Vec<NewAlert> = (0..n)
                    .map(|i| NewAlert {
                        source_id: source,
                        lon: 10.0 + i as f64 * 1e-4,
                        lat: -3.0 - i as f64 * 1e-5,
                        day: Day::from_days(20_000 + (i % 7) as i32),
                        confidence: if i % 3 == 0 {
                            Confidence::Confirmed
                        } else {
                            Confidence::Tentative
                        },
                        event_id,
                    })
                    .collect();
                tx.insert_alerts(import, &new)?;
                Ok((event_id, new))
            })
            .unwrap();
        let back = db.read(|r| r.alerts_of_events(&[event_id])).unwrap();
        assert_eq!(back.len(), n);
        assert!(back.windows(2).all(|w| w[0].id < w[1].id));
        for (a, b) in new.iter().zip(&back) {
            let got = (b.source_id, b.lon, b.lat, b.day, b.confidence, b.event_id);
            assert_eq!(
                got,
                (a.source_id, a.lon, a.lat, a.day, a.confidence, a.event_id)
            );
            assert_eq!(b.pixel_m, 10.0);
        }
    }
}
