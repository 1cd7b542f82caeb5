//! The change log of administration (who changed what, append-only), and
//! the changes only the administration makes: a team disabled or enabled
//! again, a source's numbers edited.
//!
//! The log has no UPDATE or DELETE path here, and the database refuses both
//! (triggers), so a row once written stays as it was. Times are Unix
//! seconds like the account tables.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Source, Tx};
use crate::error::{Error, Result};
use rusqlite::params;
use serde::Serialize;

/// Schema for this module; appended to the migration list.
pub const ADMIN_MIGRATION: &str = r#"
    CREATE TABLE admin_log (
        id INTEGER PRIMARY KEY,
        at INTEGER NOT NULL,
        actor TEXT NOT NULL,
        action TEXT NOT NULL,
        subject TEXT NOT NULL,
        detail TEXT NOT NULL
    );
    CREATE INDEX admin_log_at ON admin_log(at);
    CREATE TRIGGER admin_log_no_update BEFORE UPDATE ON admin_log
    BEGIN SELECT RAISE(ABORT, 'the administration log is append-only'); END;
    CREATE TRIGGER admin_log_no_delete BEFORE DELETE ON admin_log
    BEGIN SELECT RAISE(ABORT, 'the administration log is append-only'); END;
    ALTER TABLE teams ADD COLUMN disabled_at INTEGER;
"#;

/// Longest text kept in one field of a log row (characters); longer text
/// is cut with an ellipsis (the callers' values are already bounded).
pub const LOG_FIELD_MAX_CHARS: usize = 1000;

/// One row of the administration log.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct AdminLogEntry {
    pub id: i64,
    /// Unix seconds.
    pub at: i64,
    /// Who: `user ana`, `API token 3 (nightly)`, `command line`.
    pub actor: String,
    /// What kind of change: `user.add`, `team.disable`, `settings.change`, …
    pub action: String,
    /// What it was made to: `user ana`, `team North`, `settings`.
    pub subject: String,
    /// The change itself: `role coordinator → manager`.
    pub detail: String,
}

/// A team with its state, for the administration.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct TeamState {
    pub id: i64,
    pub name: String,
    /// Unix seconds when it was disabled, or `None` while it is active.
    pub disabled_at: Option<i64>,
}

fn clip(s: &str) -> String {
    if s.chars().count() <= LOG_FIELD_MAX_CHARS {
        return s.to_string();
    }
    let mut t: String = s.chars().take(LOG_FIELD_MAX_CHARS - 1).collect();
    t.push('…');
    t
}

impl Tx<'_> {
    /// Append one row to the administration log; returns its id.
    pub fn append_admin_log(
        &self,
        at: i64,
        actor: &str,
        action: &str,
        subject: &str,
        detail: &str,
    ) -> Result<i64> {
        let id: i64 = self.tx.query_row(
            "INSERT INTO admin_log (at, actor, action, subject, detail) VALUES (?1, ?2, ?3, ?4, ?5) RETURNING id",
            params![at, clip(actor), clip(action), clip(subject), clip(detail)],
            |r| r.get(0),
        )?;
        Ok(id)
    }

    /// Disable a team (at `now`) or enable it again (`None`); false when it
    /// already was in that state. Unknown ids are [`Error::NotFound`].
    pub fn set_team_disabled(&self, team_id: i64, disabled_at: Option<i64>) -> Result<bool> {
        let n = self.tx.execute(
            "UPDATE teams SET disabled_at = ?1 WHERE id = ?2 AND (disabled_at IS NULL) = (CAST(?1 AS BIGINT) IS NOT NULL)",
            params![disabled_at, team_id],
        )?;
        if n == 0 && self.reader().team_state(team_id)?.is_none() {
            return Err(Error::NotFound(format!("no team with id {team_id}")));
        }
        Ok(n > 0)
    }

    /// Change a source's pixel size and revisit interval (the caller has
    /// checked the bounds and whether the pixel size may still change).
    pub fn update_source(&self, id: i64, pixel_size_m: f64, revisit_days: i64) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE sources SET pixel_size_m = ?1, revisit_days = ?2 WHERE id = ?3",
            params![pixel_size_m, revisit_days, id],
        )?;
        if n == 0 {
            return Err(Error::NotFound(format!("no source with id {id}")));
        }
        Ok(())
    }
}

fn log_row(r: &Row<'_>) -> Result<AdminLogEntry> {
    Ok(AdminLogEntry {
        id: r.get(0)?,
        at: r.get(1)?,
        actor: r.get(2)?,
        action: r.get(3)?,
        subject: r.get(4)?,
        detail: r.get(5)?,
    })
}

fn team_row(r: &Row<'_>) -> Result<TeamState> {
    Ok(TeamState {
        id: r.get(0)?,
        name: r.get(1)?,
        disabled_at: r.get(2)?,
    })
}

impl Reader<'_> {
    /// The newest `limit` rows of the administration log with an id below
    /// `before` (all when `None`), newest first.
    pub fn admin_log(&self, before: Option<i64>, limit: usize) -> Result<Vec<AdminLogEntry>> {
        let mut st = self.conn.prepare(
            "SELECT id, at, actor, action, subject, detail FROM admin_log
             WHERE id < ?1 ORDER BY id DESC LIMIT ?2",
        )?;
        let v = st
            .query_map(params![before.unwrap_or(i64::MAX), limit as i64], log_row)?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Every team with its state, by name.
    pub fn team_states(&self) -> Result<Vec<TeamState>> {
        let mut st = self
            .conn
            .prepare("SELECT id, name, disabled_at FROM teams ORDER BY name")?;
        let v = st.query_map([], team_row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// One team with its state.
    pub fn team_state(&self, id: i64) -> Result<Option<TeamState>> {
        self.conn
            .query_row(
                "SELECT id, name, disabled_at FROM teams WHERE id = ?1",
                [id],
                team_row,
            )
            .optional()
    }

    /// A team with its state, by its exact name.
    pub fn team_state_by_name(&self, name: &str) -> Result<Option<TeamState>> {
        self.conn
            .query_row(
                "SELECT id, name, disabled_at FROM teams WHERE name = ?1",
                [name],
                team_row,
            )
            .optional()
    }

    /// A source by id.
    pub fn source_by_id(&self, id: i64) -> Result<Option<Source>> {
        self.conn
            .query_row(
                "SELECT id, name, pixel_size_m, revisit_days FROM sources WHERE id = ?1",
                [id],
                |r| {
                    Ok(Source {
                        id: r.get(0)?,
                        name: r.get(1)?,
                        pixel_size_m: r.get(2)?,
                        revisit_days: r.get(3)?,
                    })
                },
            )
            .optional()
    }

    /// Whether any alert of the source is stored.
    pub fn source_has_alerts(&self, id: i64) -> Result<bool> {
        self.conn.query_row(
            "SELECT EXISTS (SELECT 1 FROM alerts WHERE source_id = ?1)",
            [id],
            |r| r.get(0),
        )
    }
}

#[cfg(test)]
mod tests {
    use crate::platform::storage::Db;

    fn db() -> (tempfile::TempDir, Db) {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        (dir, db)
    }

    #[test]
    fn the_log_is_append_only_in_the_database_itself() {
        let (_d, db) = db();
        let id = db
            .write_bookkeeping(|tx| {
                tx.append_admin_log(10, "user ana", "user.add", "user bo", "role manager")
            })
            .unwrap();
        db.write_bookkeeping(|tx| {
            tx.append_admin_log(20, "command line", "team.add", "team North", "")
        })
        .unwrap();
        let rows = db.read(|r| r.admin_log(None, 10)).unwrap();
        assert_eq!(rows.len(), 2);
        assert_eq!(rows[0].action, "team.add", "newest first");
        assert_eq!(
            db.read(|r| r.admin_log(Some(rows[0].id), 10)).unwrap()[0].id,
            id
        );
        for sql in [
            "UPDATE admin_log SET actor = 'someone else'",
            "DELETE FROM admin_log",
        ] {
            let e = db
                .write(|tx| tx.tx.execute(sql, []))
                .unwrap_err()
                .to_string();
            assert!(e.contains("append-only"), "{e}");
        }
        assert_eq!(db.read(|r| r.admin_log(None, 10)).unwrap(), rows);
        let long = "x".repeat(5000);
        db.write_bookkeeping(|tx| tx.append_admin_log(30, &long, "a", "b", "c"))
            .unwrap();
        let top = &db.read(|r| r.admin_log(None, 1)).unwrap()[0];
        assert_eq!(top.actor.chars().count(), super::LOG_FIELD_MAX_CHARS);
    }

    #[test]
    fn teams_are_disabled_and_enabled_once() {
        let (_d, db) = db();
        let t = db.write(|tx| tx.add_team("North")).unwrap();
        assert!(db.write(|tx| tx.set_team_disabled(t.id, Some(5))).unwrap());
        assert!(!db.write(|tx| tx.set_team_disabled(t.id, Some(6))).unwrap());
        assert_eq!(
            db.read(|r| r.team_state(t.id))
                .unwrap()
                .unwrap()
                .disabled_at,
            Some(5)
        );
        assert!(db.write(|tx| tx.set_team_disabled(t.id, None)).unwrap());
        assert!(!db.write(|tx| tx.set_team_disabled(t.id, None)).unwrap());
        assert!(db.write(|tx| tx.set_team_disabled(99, None)).is_err());
        assert_eq!(db.read(|r| r.team_states()).unwrap().len(), 1);
    }

    #[test]
    fn sources_change_their_numbers() {
        let (_d, db) = db();
        let s = db
            .write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        db.write(|tx| tx.update_source(s.id, 20.0, 7)).unwrap();
        let got = db.read(|r| r.source_by_id(s.id)).unwrap().unwrap();
        assert_eq!((got.pixel_size_m, got.revisit_days), (20.0, 7));
        assert!(!db.read(|r| r.source_has_alerts(s.id)).unwrap());
        assert!(db.write(|tx| tx.update_source(99, 1.0, 1)).is_err());
    }
}
