//! Zones: named polygons used to select events and split statistics.

use super::{Reader, Tx};
use crate::error::Result;
use rusqlite::params;
use serde::Serialize;

/// A stored zone.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ZoneRecord {
    pub id: i64,
    pub name: String,
    pub priority: bool,
    /// GeoJSON geometry (Polygon or MultiPolygon).
    pub geometry: String,
}

impl Tx<'_> {
    /// Insert or replace a zone by name; returns its id.
    pub fn upsert_zone(
        &self,
        name: &str,
        priority: bool,
        geometry: &str,
        bbox: (f64, f64, f64, f64),
    ) -> Result<i64> {
        self.tx.execute(
            "INSERT INTO zones (name, priority, geometry, west, south, east, north, imported_at)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)
             ON CONFLICT(name) DO UPDATE SET priority=excluded.priority, geometry=excluded.geometry,
               west=excluded.west, south=excluded.south, east=excluded.east, north=excluded.north,
               imported_at=excluded.imported_at",
            params![
                name,
                priority,
                geometry,
                bbox.0,
                bbox.1,
                bbox.2,
                bbox.3,
                chrono::Utc::now().to_rfc3339()
            ],
        )?;
        self.tx
            .query_row("SELECT id FROM zones WHERE name = ?1", [name], |r| r.get(0))
    }
}

impl Reader<'_> {
    pub fn zones(&self) -> Result<Vec<ZoneRecord>> {
        let mut st = self
            .conn
            .prepare("SELECT id, name, priority, geometry FROM zones ORDER BY name")?;
        let v = st
            .query_map([], |r| {
                Ok(ZoneRecord {
                    id: r.get(0)?,
                    name: r.get(1)?,
                    priority: r.get::<_, i64>(2)? != 0,
                    geometry: r.get(3)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }
}
