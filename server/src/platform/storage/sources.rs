//! Alert sources.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::error::{Error, Result};
use rusqlite::params;
use serde::Serialize;

/// A registered alert source.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Source {
    pub id: i64,
    pub name: String,
    pub pixel_size_m: f64,
    pub revisit_days: i64,
}

fn row(r: &Row<'_>) -> Result<Source> {
    Ok(Source {
        id: r.get(0)?,
        name: r.get(1)?,
        pixel_size_m: r.get(2)?,
        revisit_days: r.get(3)?,
    })
}

impl Tx<'_> {
    /// Register a source; a name already taken is a conflict.
    pub fn add_source(&self, name: &str, pixel_size_m: f64, revisit_days: i64) -> Result<Source> {
        if self.reader().source_by_name(name)?.is_some() {
            return Err(Error::Conflict(format!("source '{name}' already exists")));
        }
        let id: i64 = self.tx.query_row(
            "INSERT INTO sources (name, pixel_size_m, revisit_days, created_at) VALUES (?1, ?2, ?3, ?4) RETURNING id",
            params![name, pixel_size_m, revisit_days, chrono::Utc::now().to_rfc3339()],
            |r| r.get(0),
        )?;
        Ok(Source {
            id,
            name: name.to_string(),
            pixel_size_m,
            revisit_days,
        })
    }

    /// Record one import and return its id.
    pub fn add_import(&self, source_id: i64, file_name: &str, counts: [usize; 4]) -> Result<i64> {
        let [read, imported, duplicates, skipped] = counts.map(|c| c as i64);
        let id: i64 = self.tx.query_row(
            "INSERT INTO imports (source_id, file_name, imported_at, rows_read, imported, duplicates, skipped)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7) RETURNING id",
            params![source_id, file_name, chrono::Utc::now().to_rfc3339(), read, imported, duplicates, skipped],
            |r| r.get(0),
        )?;
        Ok(id)
    }
}

impl Reader<'_> {
    pub fn sources(&self) -> Result<Vec<Source>> {
        let mut st = self
            .conn
            .prepare("SELECT id, name, pixel_size_m, revisit_days FROM sources ORDER BY name")?;
        let v = st.query_map([], row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn source_by_name(&self, name: &str) -> Result<Option<Source>> {
        self.conn
            .query_row(
                "SELECT id, name, pixel_size_m, revisit_days FROM sources WHERE name = ?1",
                [name],
                row,
            )
            .optional()
    }
}
