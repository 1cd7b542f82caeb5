//! The field-side outbox: an SQLite file in the workspace holding every
//! report the team recorded, with durable copies of their photos under
//! `photos/<sha256>.jpg`. A report is written once, in one transaction, after
//! its photos are durable on disk (DESIGN.md invariant 3), and never edited:
//! triggers refuse any change to a report's content and any deletion. A
//! correction is a new report that names the one it `supersedes`. Beside
//! each report the outbox keeps its push state (not sent, sent,
//! acknowledged, rejected with the server's reason) and the time of the
//! last push.

mod files;

use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use rusqlite::{Connection, OptionalExtension, params};
use uuid::Uuid;

pub use files::{photo_path, store_photo, sync_dir, write_atomic};

use crate::SyncError;
use crate::returns::Report;

/// File name of the outbox database in the workspace.
pub const OUTBOX_DB: &str = "outbox.sqlite";
/// Folder of photo copies in the workspace.
pub const PHOTOS_DIR: &str = "photos";

const SCHEMA: &str = "
CREATE TABLE IF NOT EXISTS reports (
    seq INTEGER PRIMARY KEY AUTOINCREMENT,
    report_id TEXT NOT NULL UNIQUE,
    target_code TEXT,
    supersedes TEXT,
    json TEXT NOT NULL,
    push_state TEXT NOT NULL DEFAULT 'not_sent'
        CHECK (push_state IN ('not_sent', 'sent', 'acknowledged', 'rejected')),
    push_reason TEXT,
    state_at TEXT
);
CREATE TABLE IF NOT EXISTS report_photos (
    report_id TEXT NOT NULL REFERENCES reports(report_id),
    sha256 TEXT NOT NULL,
    PRIMARY KEY (report_id, sha256)
);
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TRIGGER IF NOT EXISTS reports_immutable
    BEFORE UPDATE OF report_id, target_code, supersedes, json ON reports
    BEGIN SELECT RAISE(ABORT, 'reports are immutable; record an amendment instead'); END;
CREATE TRIGGER IF NOT EXISTS reports_no_delete
    BEFORE DELETE ON reports
    BEGIN SELECT RAISE(ABORT, 'reports are never deleted'); END;
";

/// Where a report stands with the server.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PushState {
    /// Not yet sent.
    NotSent,
    /// Sent in a push whose results have not come back.
    Sent,
    /// Taken in by the server (accepted, or a duplicate of one it had).
    Acknowledged,
    /// Refused by the server, with its reason.
    Rejected(String),
}

impl PushState {
    /// Short label: `not sent`, `sent`, `acknowledged`, `rejected`.
    pub fn label(&self) -> &'static str {
        match self {
            PushState::NotSent => "not sent",
            PushState::Sent => "sent",
            PushState::Acknowledged => "acknowledged",
            PushState::Rejected(_) => "rejected",
        }
    }
}

/// A report as kept in the outbox.
#[derive(Debug, Clone, PartialEq)]
pub struct StoredReport {
    /// The report.
    pub report: Report,
    /// Its push state.
    pub state: PushState,
    /// When the state last changed.
    pub state_at: Option<DateTime<Utc>>,
}

/// The outbox of one workspace.
#[derive(Debug)]
pub struct Outbox {
    conn: Connection,
    photos: PathBuf,
}

fn db(context: &str) -> impl FnOnce(rusqlite::Error) -> SyncError + '_ {
    move |e| SyncError::db(context, e)
}

impl Outbox {
    /// Opens (or creates) the outbox in `workspace`, with `synchronous = FULL`.
    pub fn open(workspace: &Path) -> Result<Self, SyncError> {
        let photos = workspace.join(PHOTOS_DIR);
        std::fs::create_dir_all(&photos)
            .map_err(|e| SyncError::io(format!("create {}", photos.display()), e))?;
        let conn = Connection::open(workspace.join(OUTBOX_DB)).map_err(db("open"))?;
        conn.busy_timeout(std::time::Duration::from_secs(5))
            .map_err(db("busy_timeout"))?;
        conn.execute_batch(
            "PRAGMA journal_mode = WAL; PRAGMA synchronous = FULL; PRAGMA foreign_keys = ON;",
        )
        .map_err(db("pragmas"))?;
        conn.execute_batch(SCHEMA).map_err(db("schema"))?;
        Ok(Outbox { conn, photos })
    }

    /// Folder of the stored photos.
    pub fn photos_dir(&self) -> &Path {
        &self.photos
    }

    /// Path of stored photo `sha256`.
    pub fn photo_path(&self, sha256: &str) -> PathBuf {
        photo_path(&self.photos, sha256)
    }

    /// Copies `photo_files` durably into the photo folder, then records `report` in one
    /// transaction. Every photo the report names must be among the copied files (by
    /// SHA-256), and the report id must be new. `max_photo_bytes` bounds each file.
    pub fn add_report(
        &mut self,
        report: &Report,
        photo_files: &[PathBuf],
        max_photo_bytes: u64,
    ) -> Result<(), SyncError> {
        let mut stored = Vec::new();
        for f in photo_files {
            stored.push(store_photo(&self.photos, f, max_photo_bytes)?.0);
        }
        if let Some(p) = report.photos.iter().find(|p| !stored.contains(&p.sha256)) {
            return Err(SyncError::Usage(format!(
                "photo {} of the report was not stored",
                p.sha256
            )));
        }
        let json = serde_json::to_string(report)
            .map_err(|e| SyncError::InvalidInput(format!("report: {e}")))?;
        let tx = self.conn.transaction().map_err(db("begin"))?;
        let id = report.report_id.to_string();
        let exists: bool = tx
            .query_row(
                "SELECT EXISTS(SELECT 1 FROM reports WHERE report_id = ?1)",
                [&id],
                |r| r.get(0),
            )
            .map_err(db("look up report"))?;
        if exists {
            return Err(SyncError::Usage(format!("report {id} is already recorded")));
        }
        tx.execute(
            "INSERT INTO reports (report_id, target_code, supersedes, json) VALUES (?1, ?2, ?3, ?4)",
            params![
                id,
                report.target.code(),
                report.supersedes.map(|u| u.to_string()),
                json
            ],
        )
        .map_err(db("insert report"))?;
        for p in &report.photos {
            tx.execute(
                "INSERT OR IGNORE INTO report_photos (report_id, sha256) VALUES (?1, ?2)",
                params![id, p.sha256],
            )
            .map_err(db("insert report photo"))?;
        }
        tx.commit().map_err(db("commit report"))
    }

    /// Every report, in the order they were recorded.
    pub fn reports(&self) -> Result<Vec<StoredReport>, SyncError> {
        let mut stmt = self
            .conn
            .prepare("SELECT json, push_state, push_reason, state_at FROM reports ORDER BY seq")
            .map_err(db("prepare"))?;
        let rows = stmt
            .query_map([], |r| {
                Ok((
                    r.get::<_, String>(0)?,
                    r.get::<_, String>(1)?,
                    r.get::<_, Option<String>>(2)?,
                    r.get::<_, Option<String>>(3)?,
                ))
            })
            .map_err(db("read reports"))?;
        let mut out = Vec::new();
        for row in rows {
            let (json, state, reason, at) = row.map_err(db("read report"))?;
            out.push(to_stored(&json, &state, reason, at)?);
        }
        Ok(out)
    }

    /// The report with this id, if recorded.
    pub fn report(&self, id: Uuid) -> Result<Option<StoredReport>, SyncError> {
        let row = self
            .conn
            .query_row(
                "SELECT json, push_state, push_reason, state_at FROM reports WHERE report_id = ?1",
                [id.to_string()],
                |r| {
                    Ok((
                        r.get::<_, String>(0)?,
                        r.get::<_, String>(1)?,
                        r.get::<_, Option<String>>(2)?,
                        r.get::<_, Option<String>>(3)?,
                    ))
                },
            )
            .optional()
            .map_err(db("read report"))?;
        row.map(|(j, s, r, a)| to_stored(&j, &s, r, a)).transpose()
    }

    /// The id of the report that supersedes `id`, if any.
    pub fn superseded_by(&self, id: Uuid) -> Result<Option<Uuid>, SyncError> {
        let s: Option<String> = self
            .conn
            .query_row(
                "SELECT report_id FROM reports WHERE supersedes = ?1 ORDER BY seq LIMIT 1",
                [id.to_string()],
                |r| r.get(0),
            )
            .optional()
            .map_err(db("look up amendments"))?;
        Ok(s.and_then(|s| Uuid::parse_str(&s).ok()))
    }

    /// Sets the push state of the given reports, in one transaction.
    pub fn set_state(
        &mut self,
        updates: &[(Uuid, PushState)],
        at: DateTime<Utc>,
    ) -> Result<(), SyncError> {
        let tx = self.conn.transaction().map_err(db("begin"))?;
        for (id, state) in updates {
            let (label, reason) = match state {
                PushState::NotSent => ("not_sent", None),
                PushState::Sent => ("sent", None),
                PushState::Acknowledged => ("acknowledged", None),
                PushState::Rejected(r) => ("rejected", Some(r.as_str())),
            };
            tx.execute(
                "UPDATE reports SET push_state = ?2, push_reason = ?3, state_at = ?4 WHERE report_id = ?1",
                params![id.to_string(), label, reason, at.to_rfc3339()],
            )
            .map_err(db("update push state"))?;
        }
        tx.commit().map_err(db("commit push state"))
    }

    /// Records the time of the last push.
    pub fn set_last_push(&mut self, at: DateTime<Utc>) -> Result<(), SyncError> {
        self.conn
            .execute(
                "INSERT INTO meta (key, value) VALUES ('last_push_at', ?1)
                 ON CONFLICT(key) DO UPDATE SET value = excluded.value",
                [at.to_rfc3339()],
            )
            .map(drop)
            .map_err(db("record last push"))
    }

    /// The time of the last push, if any.
    pub fn last_push(&self) -> Result<Option<DateTime<Utc>>, SyncError> {
        let v: Option<String> = self
            .conn
            .query_row(
                "SELECT value FROM meta WHERE key = 'last_push_at'",
                [],
                |r| r.get(0),
            )
            .optional()
            .map_err(db("read last push"))?;
        Ok(v.and_then(|s| DateTime::parse_from_rfc3339(&s).ok())
            .map(|t| t.with_timezone(&Utc)))
    }
}

fn to_stored(
    json: &str,
    state: &str,
    reason: Option<String>,
    at: Option<String>,
) -> Result<StoredReport, SyncError> {
    let report: Report = serde_json::from_str(json)
        .map_err(|e| SyncError::InvalidInput(format!("stored report is unreadable: {e}")))?;
    let state = match state {
        "sent" => PushState::Sent,
        "acknowledged" => PushState::Acknowledged,
        "rejected" => PushState::Rejected(reason.unwrap_or_default()),
        _ => PushState::NotSent,
    };
    let state_at = at
        .and_then(|s| DateTime::parse_from_rfc3339(&s).ok())
        .map(|t| t.with_timezone(&Utc));
    Ok(StoredReport {
        report,
        state,
        state_at,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::returns::{ReportPhoto, Target};
    use chrono::TimeZone;

    fn report(id: u128, photo: Option<&str>, supersedes: Option<Uuid>) -> Report {
        let t = Utc
            .with_ymd_and_hms(2026, 9, 3, 10, 0, 0)
            .single()
            .expect("t");
        Report {
            report_id: Uuid::from_u128(id),
            bundle_id: Uuid::from_u128(99),
            target: Target::Control {
                code: "C0001".into(),
            },
            supersedes,
            outcome: "inconclusive".into(),
            reason: None,
            cause: None,
            position: None,
            observed_at: t,
            recorded_at: t,
            area_ha: None,
            notes: String::new(),
            photos: photo
                .map(|s| ReportPhoto {
                    sha256: s.into(),
                    original_name: "a.jpg".into(),
                    taken_at: None,
                    lat: None,
                    lon: None,
                    direction_deg: None,
                })
                .into_iter()
                .collect(),
        }
    }

    #[test]
    fn reports_are_durable_immutable_and_tracked() {
        let ws = tempfile::tempdir().expect("ws");
        let src = ws.path().join("in.jpg");
        std::fs::write(&src, b"abc").expect("photo");
        // FIPS 180-2 Appendix B.1: SHA-256("abc").
        let sha = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";
        let mut ob = Outbox::open(ws.path()).expect("open");
        let r1 = report(1, Some(sha), None);
        ob.add_report(&r1, std::slice::from_ref(&src), 1 << 20)
            .expect("add");
        assert!(ob.photo_path(sha).exists());
        assert!(
            ob.add_report(&r1, std::slice::from_ref(&src), 1 << 20)
                .is_err(),
            "same id twice"
        );
        // A report naming a photo that was not given is refused and leaves no row.
        let r_missing = report(3, Some(&"0".repeat(64)), None);
        assert!(ob.add_report(&r_missing, &[], 1 << 20).is_err());
        let r2 = report(2, None, Some(r1.report_id));
        ob.add_report(&r2, &[], 1 << 20).expect("amend");
        assert_eq!(
            ob.superseded_by(r1.report_id).expect("q"),
            Some(r2.report_id)
        );

        let err = ob
            .conn
            .execute("UPDATE reports SET json = '{}' WHERE seq = 1", [])
            .expect_err("immutable");
        assert!(err.to_string().contains("immutable"), "{err}");
        assert!(ob.conn.execute("DELETE FROM reports", []).is_err());

        let t = Utc
            .with_ymd_and_hms(2026, 9, 9, 8, 0, 0)
            .single()
            .expect("t");
        ob.set_state(
            &[
                (r1.report_id, PushState::Acknowledged),
                (r2.report_id, PushState::Rejected("photo missing".into())),
            ],
            t,
        )
        .expect("state");
        ob.set_last_push(t).expect("last");
        drop(ob);
        let ob = Outbox::open(ws.path()).expect("reopen");
        let all = ob.reports().expect("all");
        assert_eq!(all.len(), 2);
        assert_eq!(all[0].report, r1);
        assert_eq!(all[0].state, PushState::Acknowledged);
        assert_eq!(all[1].state, PushState::Rejected("photo missing".into()));
        assert_eq!(ob.last_push().expect("last"), Some(t));
        assert!(ob.report(Uuid::from_u128(3)).expect("q").is_none());
    }
}
