//! Clearing events: their derived attributes, merges, and queries.

use super::engine::{Dialect, OptionalExtension, Row};
use super::{Reader, Tx};
use crate::domain::{Confidence, Day};
use crate::error::Result;
use rusqlite::params;
use std::collections::BTreeMap;

/// The attributes written for one event.
#[derive(Debug, Clone, PartialEq)]
pub struct EventWrite {
    /// GeoJSON geometry of the footprint.
    pub footprint: String,
    pub area_ha: f64,
    pub centroid: (f64, f64),
    /// (west, south, east, north)
    pub bbox: (f64, f64, f64, f64),
    pub first: Day,
    pub last: Day,
    pub alert_count: u32,
    pub highest_confidence: Confidence,
    pub corroborated: bool,
    /// Alerts per source name.
    pub per_source: BTreeMap<String, u32>,
}

/// An event as read back.
#[derive(Debug, Clone, PartialEq)]
pub struct EventRecord {
    pub id: i64,
    pub merged_into: Option<i64>,
    pub origin: String,
    pub attrs: EventWrite,
    /// Names of the zones the footprint intersects.
    pub zones: Vec<String>,
    pub in_priority_zone: bool,
}

/// Which events to list. Empty fields do not filter.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct EventFilter {
    pub zone: Option<String>,
    /// Events detected on or after this day (last detection).
    pub from: Option<Day>,
    /// Events detected on or before this day (first detection).
    pub to: Option<Day>,
    pub source: Option<String>,
    pub min_area_ha: Option<f64>,
    pub limit: Option<usize>,
}

fn params_of(e: &EventWrite) -> Result<[rusqlite::types::Value; 15]> {
    use rusqlite::types::Value as V;
    Ok([
        V::Text(e.footprint.clone()),
        V::Real(e.area_ha),
        V::Real(e.centroid.0),
        V::Real(e.centroid.1),
        V::Real(e.bbox.0),
        V::Real(e.bbox.1),
        V::Real(e.bbox.2),
        V::Real(e.bbox.3),
        V::Integer(i64::from(e.first.days())),
        V::Integer(i64::from(e.last.days())),
        V::Integer(i64::from(e.alert_count)),
        V::Integer(e.highest_confidence.as_i64()),
        V::Integer(i64::from(e.corroborated)),
        V::Text(serde_json::to_string(&e.per_source).unwrap_or_else(|_| "{}".into())),
        V::Text(chrono::Utc::now().to_rfc3339()),
    ])
}

impl Tx<'_> {
    pub fn insert_event(&self, e: &EventWrite) -> Result<i64> {
        let p = params_of(e)?;
        self.tx.query_row(
            "INSERT INTO events (footprint, area_ha, centroid_lon, centroid_lat, west, south, east, north,
                first_day, last_day, alert_count, highest_confidence, corroborated, per_source,
                created_at, updated_at)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?15) RETURNING id",
            super::engine::params_from_iter(p.iter()),
            |r| r.get(0),
        )
    }

    pub fn update_event(&self, id: i64, e: &EventWrite) -> Result<()> {
        let p = params_of(e)?;
        let mut st = self.tx.prepare_cached(
            "UPDATE events SET footprint=?1, area_ha=?2, centroid_lon=?3, centroid_lat=?4, west=?5,
                south=?6, east=?7, north=?8, first_day=?9, last_day=?10, alert_count=?11,
                highest_confidence=?12, corroborated=?13, per_source=?14, updated_at=?15
             WHERE id=?16",
        )?;
        let mut all: Vec<rusqlite::types::Value> = p.to_vec();
        all.push(rusqlite::types::Value::Integer(id));
        st.execute(super::engine::params_from_iter(all.iter()))?;
        Ok(())
    }

    /// Record that `absorbed` events were merged into `into`; their zone
    /// links go, since the surviving event carries the footprint now.
    pub fn mark_merged(&self, absorbed: &[i64], into: i64) -> Result<()> {
        let mut st = self
            .tx
            .prepare_cached("UPDATE events SET merged_into = ?1, updated_at = ?2 WHERE id = ?3")?;
        let mut z = self
            .tx
            .prepare_cached("DELETE FROM event_zones WHERE event_id = ?1")?;
        let now = chrono::Utc::now().to_rfc3339();
        for a in absorbed {
            st.execute(params![into, now, a])?;
            z.execute([a])?;
        }
        Ok(())
    }

    /// Replace the zones an event intersects.
    pub fn set_event_zones(&self, event_id: i64, zone_ids: &[i64]) -> Result<()> {
        self.tx
            .prepare_cached("DELETE FROM event_zones WHERE event_id = ?1")?
            .execute([event_id])?;
        let mut ins = self
            .tx
            .prepare_cached("INSERT INTO event_zones (event_id, zone_id) VALUES (?1, ?2)")?;
        for z in zone_ids {
            ins.execute(params![event_id, z])?;
        }
        Ok(())
    }
}

const EVENT_COLS: &str = "e.id, e.merged_into, e.origin, e.footprint, e.area_ha, e.centroid_lon,
    e.centroid_lat, e.west, e.south, e.east, e.north, e.first_day, e.last_day, e.alert_count,
    e.highest_confidence, e.corroborated, e.per_source,
    (SELECT group_concat(z.name, char(31)) FROM event_zones ez JOIN zones z ON z.id = ez.zone_id
        WHERE ez.event_id = e.id),
    EXISTS (SELECT 1 FROM event_zones ez JOIN zones z ON z.id = ez.zone_id
        WHERE ez.event_id = e.id AND z.priority = 1)";

fn record(r: &Row<'_>) -> Result<EventRecord> {
    let per_source: String = r.get(16)?;
    let zones: Option<String> = r.get(17)?;
    let mut zones: Vec<String> = zones
        .map(|z| z.split('\u{1f}').map(str::to_string).collect())
        .unwrap_or_default();
    zones.sort();
    Ok(EventRecord {
        id: r.get(0)?,
        merged_into: r.get(1)?,
        origin: r.get(2)?,
        attrs: EventWrite {
            footprint: r.get(3)?,
            area_ha: r.get(4)?,
            centroid: (r.get(5)?, r.get(6)?),
            bbox: (r.get(7)?, r.get(8)?, r.get(9)?, r.get(10)?),
            first: Day::from_days(r.get(11)?),
            last: Day::from_days(r.get(12)?),
            alert_count: r.get(13)?,
            highest_confidence: Confidence::from_i64(r.get(14)?).unwrap_or(Confidence::Tentative),
            corroborated: r.get::<_, i64>(15)? != 0,
            per_source: serde_json::from_str(&per_source).unwrap_or_default(),
        },
        zones,
        in_priority_zone: r.get::<_, i64>(18)? != 0,
    })
}

impl Reader<'_> {
    /// Live (not merged) events matching the filter, largest first.
    pub fn events(&self, f: &EventFilter) -> Result<Vec<EventRecord>> {
        let mut sql = format!("SELECT {EVENT_COLS} FROM events e WHERE e.merged_into IS NULL");
        let mut args: Vec<rusqlite::types::Value> = Vec::new();
        use rusqlite::types::Value as V;
        if let Some(z) = &f.zone {
            args.push(V::Text(z.clone()));
            sql += &format!(
                " AND EXISTS (SELECT 1 FROM event_zones ez JOIN zones z ON z.id = ez.zone_id
                   WHERE ez.event_id = e.id AND z.name = ?{})",
                args.len()
            );
        }
        if let Some(d) = f.from {
            args.push(V::Integer(i64::from(d.days())));
            sql += &format!(" AND e.last_day >= ?{}", args.len());
        }
        if let Some(d) = f.to {
            args.push(V::Integer(i64::from(d.days())));
            sql += &format!(" AND e.first_day <= ?{}", args.len());
        }
        if let Some(s) = &f.source {
            args.push(V::Text(s.clone()));
            sql += &match self.conn.dialect() {
                Dialect::Sqlite => format!(
                    " AND EXISTS (SELECT 1 FROM json_each(e.per_source) WHERE key = ?{})",
                    args.len()
                ),
                Dialect::Postgres => {
                    format!(" AND jsonb_exists(e.per_source::jsonb, ?{})", args.len())
                }
            };
        }
        if let Some(a) = f.min_area_ha {
            args.push(V::Real(a));
            sql += &format!(" AND e.area_ha >= ?{}", args.len());
        }
        sql += " ORDER BY e.area_ha DESC, e.id";
        if let Some(l) = f.limit {
            sql += &format!(" LIMIT {l}");
        }
        let mut st = self.conn.prepare(&sql)?;
        let v = st
            .query_map(super::engine::params_from_iter(args.iter()), record)?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// One event by id, following `merged_into` to the event that holds it
    /// now (so an old id in a bundle or report still resolves).
    pub fn event_resolved(&self, id: i64) -> Result<Option<EventRecord>> {
        let mut st = self.conn.prepare_cached(&format!(
            "SELECT {EVENT_COLS} FROM events e WHERE e.id = ?1"
        ))?;
        let mut current = id;
        for _ in 0..64 {
            let Some(rec) = st.query_row([current], record).optional()? else {
                return Ok(None);
            };
            match rec.merged_into {
                Some(next) => current = next,
                None => return Ok(Some(rec)),
            }
        }
        Ok(None)
    }

    /// Ids of all live events (for recomputing zone links).
    pub fn live_event_ids(&self) -> Result<Vec<i64>> {
        let mut st = self
            .conn
            .prepare("SELECT id FROM events WHERE merged_into IS NULL ORDER BY id")?;
        let v = st
            .query_map([], |r| r.get(0))?
            .collect::<Result<Vec<i64>>>()?;
        Ok(v)
    }

    /// Counts of live and merged events.
    pub fn event_counts(&self) -> Result<(i64, i64)> {
        self.conn.query_row(
            "SELECT COUNT(*) FILTER (WHERE merged_into IS NULL), COUNT(*) FILTER (WHERE merged_into IS NOT NULL) FROM events",
            [],
            |r| Ok((r.get(0)?, r.get(1)?)),
        )
    }

    /// The stored footprint (GeoJSON) of each live event of `ids` that
    /// exists, in the order asked (the dashboard's map).
    pub fn event_footprints(&self, ids: &[i64]) -> Result<Vec<(i64, String)>> {
        let mut st = self
            .conn
            .prepare_cached("SELECT footprint FROM events WHERE id = ?1 AND merged_into IS NULL")?;
        let mut out = Vec::with_capacity(ids.len());
        for &id in ids {
            let mut rows = st.query([id])?;
            if let Some(row) = rows.next()? {
                out.push((id, row.get(0)?));
            }
        }
        Ok(out)
    }
}
