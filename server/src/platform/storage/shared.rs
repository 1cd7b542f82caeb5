//! What several server instances on one database share besides the facts:
//! the organisation's settings (one row, with a version that moves on every
//! change, so each instance sees a change by comparing one number) and the
//! station entry's drafts (one row per user and trip, the draft as JSON; its
//! photos are objects of the evidence store under `drafts/`).
//!
//! Both are bookkeeping: no statistic reads them, so they are written through
//! `Db::write_bookkeeping` and never move the fact stamp. Times are Unix
//! seconds.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::error::Result;
use rusqlite::params;

/// Schema for this module (SQLite); appended to the migration list. The
/// PostgreSQL form is in `schema_pg.rs`.
pub const SHARED_MIGRATION: &str = r#"
    CREATE TABLE org_settings (
        id INTEGER PRIMARY KEY CHECK (id = 1),
        version INTEGER NOT NULL CHECK (version > 0),
        settings TEXT NOT NULL,
        changed_at INTEGER NOT NULL
    );
    CREATE TABLE station_drafts (
        draft_key TEXT PRIMARY KEY,
        user_name TEXT NOT NULL,
        bundle_id TEXT NOT NULL,
        doc TEXT NOT NULL,
        updated_at INTEGER NOT NULL
    );
    CREATE INDEX station_drafts_updated ON station_drafts(updated_at);
    CREATE INDEX station_drafts_user ON station_drafts(user_name);
"#;

/// The organisation's settings as stored: the text of `settings.toml`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StoredSettings {
    /// 1 for the first stored settings, one more for each change.
    pub version: i64,
    /// The settings as TOML (what `Settings::to_toml` writes).
    pub text: String,
    /// Unix seconds of the change.
    pub changed_at: i64,
}

/// One stored station draft.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StoredDraft {
    pub key: String,
    pub user: String,
    pub bundle_id: String,
    /// The draft as JSON (`intake::station::draft::Draft`).
    pub doc: String,
    /// Unix seconds of the last change.
    pub updated_at: i64,
}

fn draft_row(r: &Row<'_>) -> Result<StoredDraft> {
    Ok(StoredDraft {
        key: r.get(0)?,
        user: r.get(1)?,
        bundle_id: r.get(2)?,
        doc: r.get(3)?,
        updated_at: r.get(4)?,
    })
}

impl Tx<'_> {
    /// Store `text` as the settings' `version` (the caller read the stored
    /// version in this transaction and passes one more).
    pub fn put_settings(&self, version: i64, text: &str, changed_at: i64) -> Result<()> {
        self.tx.execute(
            "INSERT INTO org_settings (id, version, settings, changed_at) VALUES (1, ?1, ?2, ?3)
             ON CONFLICT (id) DO UPDATE SET version = excluded.version,
                 settings = excluded.settings, changed_at = excluded.changed_at",
            params![version, text, changed_at],
        )?;
        Ok(())
    }

    /// Store (create or replace) a station draft.
    pub fn put_station_draft(&self, d: &StoredDraft) -> Result<()> {
        self.tx.execute(
            "INSERT INTO station_drafts (draft_key, user_name, bundle_id, doc, updated_at)
             VALUES (?1, ?2, ?3, ?4, ?5)
             ON CONFLICT (draft_key) DO UPDATE SET doc = excluded.doc,
                 updated_at = excluded.updated_at",
            params![d.key, d.user, d.bundle_id, d.doc, d.updated_at],
        )?;
        Ok(())
    }

    /// Remove a station draft; false when there was none.
    pub fn delete_station_draft(&self, key: &str) -> Result<bool> {
        let n = self
            .tx
            .execute("DELETE FROM station_drafts WHERE draft_key = ?1", [key])?;
        Ok(n > 0)
    }
}

impl Reader<'_> {
    /// The stored settings, if any were ever stored.
    pub fn stored_settings(&self) -> Result<Option<StoredSettings>> {
        self.conn
            .query_row(
                "SELECT version, settings, changed_at FROM org_settings WHERE id = 1",
                [],
                |r| {
                    Ok(StoredSettings {
                        version: r.get(0)?,
                        text: r.get(1)?,
                        changed_at: r.get(2)?,
                    })
                },
            )
            .optional()
    }

    /// The stored settings' version; 0 when none were stored.
    pub fn settings_version(&self) -> Result<i64> {
        Ok(self
            .conn
            .query_row("SELECT version FROM org_settings WHERE id = 1", [], |r| {
                r.get(0)
            })
            .optional()?
            .unwrap_or(0))
    }

    /// The station draft stored under `key`.
    pub fn station_draft(&self, key: &str) -> Result<Option<StoredDraft>> {
        self.conn
            .query_row(
                "SELECT draft_key, user_name, bundle_id, doc, updated_at
                 FROM station_drafts WHERE draft_key = ?1",
                [key],
                draft_row,
            )
            .optional()
    }

    /// Keys of the drafts last changed before `before` (Unix seconds).
    pub fn station_drafts_before(&self, before: i64) -> Result<Vec<String>> {
        let mut st = self.conn.prepare(
            "SELECT draft_key FROM station_drafts WHERE updated_at < ?1 ORDER BY draft_key",
        )?;
        let v = st
            .query_map([before], |r| r.get(0))?
            .collect::<Result<Vec<String>>>()?;
        Ok(v)
    }

    /// Every draft key (the clean-up keeps their photos).
    pub fn station_draft_keys(&self) -> Result<Vec<String>> {
        let mut st = self.conn.prepare("SELECT draft_key FROM station_drafts")?;
        let v = st
            .query_map([], |r| r.get(0))?
            .collect::<Result<Vec<String>>>()?;
        Ok(v)
    }

    /// How many drafts are stored.
    pub fn station_draft_count(&self) -> Result<i64> {
        self.conn
            .query_row("SELECT COUNT(*) FROM station_drafts", [], |r| r.get(0))
    }

    /// The trips (bundle ids) `user` has a draft for.
    pub fn station_draft_bundles(&self, user: &str) -> Result<Vec<String>> {
        let mut st = self
            .conn
            .prepare("SELECT bundle_id FROM station_drafts WHERE user_name = ?1")?;
        let v = st
            .query_map([user], |r| r.get(0))?
            .collect::<Result<Vec<String>>>()?;
        Ok(v)
    }
}

#[cfg(test)]
mod tests {
    use super::super::test_db;
    use super::*;

    #[test]
    fn settings_are_one_row_whose_version_moves() {
        let dir = tempfile::tempdir().unwrap();
        let db = test_db(dir.path());
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 0);
        assert_eq!(db.read(|r| r.stored_settings()).unwrap(), None);
        let s0 = db.fact_stamp();
        db.write_bookkeeping(|tx| tx.put_settings(1, "[evidence]\ntolerance_m = 120.0\n", 10))
            .unwrap();
        db.write_bookkeeping(|tx| tx.put_settings(2, "[evidence]\ntolerance_m = 130.0\n", 11))
            .unwrap();
        let s = db.read(|r| r.stored_settings()).unwrap().unwrap();
        assert_eq!(
            (s.version, s.text.as_str(), s.changed_at),
            (2, "[evidence]\ntolerance_m = 130.0\n", 11)
        );
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 2);
        assert_eq!(db.fact_stamp(), s0, "settings are bookkeeping");
        // A version below 1 is refused by the schema.
        assert!(
            db.write_bookkeeping(|tx| tx.put_settings(0, "", 12))
                .is_err()
        );
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 2);
    }

    #[test]
    fn drafts_are_stored_replaced_listed_and_removed() {
        let dir = tempfile::tempdir().unwrap();
        let db = test_db(dir.path());
        let d = |key: &str, user: &str, at: i64| StoredDraft {
            key: key.into(),
            user: user.into(),
            bundle_id: format!("b-{key}"),
            doc: format!("{{\"at\":{at}}}"),
            updated_at: at,
        };
        let s0 = db.fact_stamp();
        db.write_bookkeeping(|tx| {
            tx.put_station_draft(&d("k1", "ana", 100))?;
            tx.put_station_draft(&d("k2", "ana", 200))?;
            tx.put_station_draft(&d("k3", "bo", 300))
        })
        .unwrap();
        db.write_bookkeeping(|tx| tx.put_station_draft(&d("k1", "ana", 400)))
            .unwrap();
        assert_eq!(db.fact_stamp(), s0, "drafts are bookkeeping");
        let k1 = db.read(|r| r.station_draft("k1")).unwrap().unwrap();
        assert_eq!((k1.doc.as_str(), k1.updated_at), ("{\"at\":400}", 400));
        assert_eq!(db.read(|r| r.station_draft_count()).unwrap(), 3);
        assert_eq!(
            db.read(|r| r.station_drafts_before(350)).unwrap(),
            vec!["k2".to_string(), "k3".to_string()]
        );
        let mut mine = db.read(|r| r.station_draft_bundles("ana")).unwrap();
        mine.sort();
        assert_eq!(mine, vec!["b-k1".to_string(), "b-k2".to_string()]);
        assert!(
            db.write_bookkeeping(|tx| tx.delete_station_draft("k2"))
                .unwrap()
        );
        assert!(
            !db.write_bookkeeping(|tx| tx.delete_station_draft("k2"))
                .unwrap()
        );
        assert_eq!(db.read(|r| r.station_draft("k2")).unwrap(), None);
        let mut keys = db.read(|r| r.station_draft_keys()).unwrap();
        keys.sort();
        assert_eq!(keys, vec!["k1".to_string(), "k3".to_string()]);
    }
}
