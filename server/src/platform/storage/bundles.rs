//! Teams, bundles (one per trip) and what each bundle holds.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::domain::TargetKind;
use crate::error::{Error, Result};
use rusqlite::params;
use serde::Serialize;

/// A field team.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Team {
    pub id: i64,
    pub name: String,
}

/// One item of a bundle: an event or a control point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BundleItem {
    pub visit_order: u32,
    pub code: String,
    /// An event or a control point.
    pub kind: TargetKind,
    pub event_id: Option<i64>,
    pub lon: f64,
    pub lat: f64,
    pub stratum: Option<String>,
    pub stratum_population: Option<i64>,
    pub inclusion_probability: Option<f64>,
}

/// A bundle as recorded.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BundleRecord {
    pub id: String,
    pub team: String,
    pub mode: String,
    pub issued_at: String,
    pub due_at: String,
    pub expires_at: String,
    pub seed: Option<i64>,
    pub margin: Option<f64>,
    /// The selection as JSON (filters, strata), for the record.
    pub selection: String,
    pub start_lon: f64,
    pub start_lat: f64,
    pub route_m: f64,
    pub upload_key_id: String,
    pub file_name: String,
    pub file_sha256: String,
    pub file_size: i64,
    pub cancelled_at: Option<String>,
    pub events: i64,
    pub controls: i64,
}

/// What is written for a new bundle.
#[derive(Debug, Clone, PartialEq)]
pub struct NewBundle<'a> {
    pub id: &'a str,
    pub team_id: i64,
    pub mode: &'a str,
    pub issued_at: &'a str,
    pub due_at: &'a str,
    pub expires_at: &'a str,
    pub seed: Option<i64>,
    pub margin: Option<f64>,
    pub selection: &'a str,
    pub start: (f64, f64),
    pub route_m: f64,
    pub upload_key_id: &'a str,
    pub upload_key: &'a [u8; 32],
    pub file_name: &'a str,
    pub file_sha256: &'a str,
    pub file_size: u64,
    pub items: &'a [BundleItem],
}

impl Tx<'_> {
    pub fn add_team(&self, name: &str) -> Result<Team> {
        if self.reader().team_by_name(name)?.is_some() {
            return Err(Error::Conflict(format!("team '{name}' already exists")));
        }
        let id: i64 = self.tx.query_row(
            "INSERT INTO teams (name, created_at) VALUES (?1, ?2) RETURNING id",
            params![name, chrono::Utc::now().to_rfc3339()],
            |r| r.get(0),
        )?;
        Ok(Team {
            id,
            name: name.to_string(),
        })
    }

    pub fn insert_bundle(&self, b: &NewBundle<'_>) -> Result<()> {
        self.tx.execute(
            "INSERT INTO bundles (id, team_id, mode, issued_at, due_at, expires_at, seed, margin, selection,
                start_lon, start_lat, route_m, upload_key_id, upload_key, file_name, file_sha256, file_size)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17)",
            params![
                b.id, b.team_id, b.mode, b.issued_at, b.due_at, b.expires_at, b.seed, b.margin,
                b.selection, b.start.0, b.start.1, b.route_m, b.upload_key_id, &b.upload_key[..],
                b.file_name, b.file_sha256, b.file_size as i64
            ],
        )?;
        let mut st = self.tx.prepare_cached(
            "INSERT INTO bundle_items (bundle_id, visit_order, code, kind, event_id, lon, lat, stratum,
                stratum_population, inclusion_probability)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)",
        )?;
        for i in b.items {
            st.execute(params![
                b.id,
                i.visit_order,
                i.code,
                i.kind,
                i.event_id,
                i.lon,
                i.lat,
                i.stratum,
                i.stratum_population,
                i.inclusion_probability
            ])?;
        }
        Ok(())
    }

    /// Cancel a bundle: its upload key is refused from now on.
    pub fn cancel_bundle(&self, id: &str) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE bundles SET cancelled_at = ?1 WHERE id = ?2 AND cancelled_at IS NULL",
            params![chrono::Utc::now().to_rfc3339(), id],
        )?;
        if n == 0 {
            return match self.reader().bundle(id)? {
                Some(_) => Err(Error::Conflict(format!("bundle {id} is already cancelled"))),
                None => Err(Error::NotFound(format!("no bundle {id}"))),
            };
        }
        Ok(())
    }
}

const BUNDLE_COLS: &str =
    "b.id, t.name, b.mode, b.issued_at, b.due_at, b.expires_at, b.seed, b.margin,
    b.selection, b.start_lon, b.start_lat, b.route_m, b.upload_key_id, b.file_name, b.file_sha256,
    b.file_size, b.cancelled_at,
    (SELECT COUNT(*) FROM bundle_items i WHERE i.bundle_id = b.id AND i.kind = 'event'),
    (SELECT COUNT(*) FROM bundle_items i WHERE i.bundle_id = b.id AND i.kind = 'control')";

fn bundle_row(r: &Row<'_>) -> Result<BundleRecord> {
    Ok(BundleRecord {
        id: r.get(0)?,
        team: r.get(1)?,
        mode: r.get(2)?,
        issued_at: r.get(3)?,
        due_at: r.get(4)?,
        expires_at: r.get(5)?,
        seed: r.get(6)?,
        margin: r.get(7)?,
        selection: r.get(8)?,
        start_lon: r.get(9)?,
        start_lat: r.get(10)?,
        route_m: r.get(11)?,
        upload_key_id: r.get(12)?,
        file_name: r.get(13)?,
        file_sha256: r.get(14)?,
        file_size: r.get(15)?,
        cancelled_at: r.get(16)?,
        events: r.get(17)?,
        controls: r.get(18)?,
    })
}

impl Reader<'_> {
    pub fn teams(&self) -> Result<Vec<Team>> {
        let mut st = self
            .conn
            .prepare("SELECT id, name FROM teams ORDER BY name")?;
        let v = st
            .query_map([], |r| {
                Ok(Team {
                    id: r.get(0)?,
                    name: r.get(1)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn team_by_name(&self, name: &str) -> Result<Option<Team>> {
        self.conn
            .query_row("SELECT id, name FROM teams WHERE name = ?1", [name], |r| {
                Ok(Team {
                    id: r.get(0)?,
                    name: r.get(1)?,
                })
            })
            .optional()
    }

    pub fn bundles(&self) -> Result<Vec<BundleRecord>> {
        let mut st = self.conn.prepare(&format!(
            "SELECT {BUNDLE_COLS} FROM bundles b JOIN teams t ON t.id = b.team_id ORDER BY b.issued_at DESC, b.id"
        ))?;
        let v = st.query_map([], bundle_row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn bundle(&self, id: &str) -> Result<Option<BundleRecord>> {
        self
            .conn
            .query_row(
                &format!("SELECT {BUNDLE_COLS} FROM bundles b JOIN teams t ON t.id = b.team_id WHERE b.id = ?1"),
                [id],
                bundle_row,
            )
            .optional()
    }

    pub fn bundle_items(&self, id: &str) -> Result<Vec<BundleItem>> {
        let mut st = self.conn.prepare_cached(
            "SELECT visit_order, code, kind, event_id, lon, lat, stratum, stratum_population, inclusion_probability
             FROM bundle_items WHERE bundle_id = ?1 ORDER BY visit_order",
        )?;
        let v = st
            .query_map([id], |r| {
                Ok(BundleItem {
                    visit_order: r.get(0)?,
                    code: r.get(1)?,
                    kind: r.get(2)?,
                    event_id: r.get(3)?,
                    lon: r.get(4)?,
                    lat: r.get(5)?,
                    stratum: r.get(6)?,
                    stratum_population: r.get(7)?,
                    inclusion_probability: r.get(8)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// The upload key of a bundle by key id, with whether it was revoked.
    pub fn upload_key(&self, bundle_id: &str, key_id: &str) -> Result<Option<([u8; 32], bool)>> {
        let row: Option<(Vec<u8>, Option<String>)> = self
            .conn
            .query_row(
                "SELECT upload_key, cancelled_at FROM bundles WHERE id = ?1 AND upload_key_id = ?2",
                [bundle_id, key_id],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )
            .optional()?;
        Ok(row.and_then(|(k, c)| {
            <[u8; 32]>::try_from(k.as_slice())
                .ok()
                .map(|k| (k, c.is_some()))
        }))
    }

    /// When each event was first issued (earliest bundle not cancelled).
    pub fn first_issued(&self) -> Result<Vec<(i64, String)>> {
        let mut st = self.conn.prepare(
            "SELECT i.event_id, MIN(b.issued_at) FROM bundle_items i JOIN bundles b ON b.id = i.bundle_id
             WHERE i.event_id IS NOT NULL AND b.cancelled_at IS NULL GROUP BY i.event_id",
        )?;
        let v = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }
}
