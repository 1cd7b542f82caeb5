//! Returns and what they hold: resumable uploads, received return packages,
//! reports, photos (content-addressed by SHA-256), the evidence checks per
//! photo and the per-report results sent back to the team. Reports are
//! immutable: a report id is inserted once and never updated.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::domain::{Cause, Outcome, Reason, TargetKind, Timestamp};
use crate::error::Result;
use rusqlite::params;
use serde::Serialize;

/// Schema migration of the intake tables (appended to the migration list).
pub const RETURNS_MIGRATION: &str = r#"
    CREATE TABLE uploads (
        id TEXT PRIMARY KEY,
        bundle_id TEXT NOT NULL,
        sha256 TEXT NOT NULL,
        size INTEGER NOT NULL CHECK (size > 0),
        offset_bytes INTEGER NOT NULL DEFAULT 0 CHECK (offset_bytes >= 0 AND offset_bytes <= size),
        state TEXT NOT NULL CHECK (state IN ('open', 'done', 'failed')),
        return_id INTEGER REFERENCES returns(id),
        error TEXT,
        error_status INTEGER,
        created_at TEXT NOT NULL,
        updated_at TEXT NOT NULL,
        UNIQUE (bundle_id, sha256)
    );
    CREATE TABLE returns (
        id INTEGER PRIMARY KEY,
        bundle_id TEXT NOT NULL REFERENCES bundles(id),
        sha256 TEXT NOT NULL UNIQUE,
        size INTEGER NOT NULL,
        team TEXT NOT NULL,
        received_at TEXT NOT NULL,
        path TEXT NOT NULL
    );
    CREATE TABLE reports (
        report_id TEXT PRIMARY KEY,
        bundle_id TEXT NOT NULL REFERENCES bundles(id),
        event_id INTEGER REFERENCES events(id),
        control_code TEXT,
        kind TEXT NOT NULL CHECK (kind IN ('event', 'control', 'new_clearing')),
        supersedes TEXT,
        outcome TEXT NOT NULL,
        reason TEXT,
        cause TEXT,
        lat REAL,
        lon REAL,
        accuracy_m REAL,
        position_source TEXT,
        distance_m REAL,
        observed_at TEXT NOT NULL,
        recorded_at TEXT NOT NULL,
        received_at TEXT NOT NULL,
        area_ha REAL,
        notes TEXT NOT NULL,
        team TEXT NOT NULL,
        evidence_ok INTEGER NOT NULL CHECK (evidence_ok IN (0, 1)),
        flags TEXT NOT NULL,
        body_sha256 TEXT NOT NULL,
        return_id INTEGER NOT NULL REFERENCES returns(id)
    );
    CREATE INDEX reports_event ON reports(event_id);
    CREATE INDEX reports_bundle ON reports(bundle_id);
    CREATE TABLE photos (
        sha256 TEXT PRIMARY KEY,
        width INTEGER NOT NULL,
        height INTEGER NOT NULL,
        taken_at TEXT,
        lat REAL,
        lon REAL,
        direction_deg REAL,
        bytes INTEGER NOT NULL,
        stored_at TEXT NOT NULL
    );
    CREATE TABLE report_photos (
        report_id TEXT NOT NULL REFERENCES reports(report_id),
        sha256 TEXT NOT NULL REFERENCES photos(sha256),
        position INTEGER NOT NULL,
        original_name TEXT NOT NULL,
        PRIMARY KEY (report_id, sha256)
    ) WITHOUT ROWID;
    CREATE INDEX report_photos_sha ON report_photos(sha256);
    CREATE TABLE photo_checks (
        report_id TEXT NOT NULL REFERENCES reports(report_id),
        sha256 TEXT NOT NULL REFERENCES photos(sha256),
        distance_m REAL,
        after_detection INTEGER,
        inside_window INTEGER,
        reused_elsewhere INTEGER NOT NULL,
        PRIMARY KEY (report_id, sha256)
    ) WITHOUT ROWID;
    CREATE TABLE report_results (
        return_id INTEGER NOT NULL REFERENCES returns(id),
        item_index INTEGER NOT NULL,
        report_id TEXT,
        status TEXT NOT NULL CHECK (status IN ('accepted', 'duplicate', 'rejected')),
        reason TEXT,
        flags TEXT NOT NULL,
        PRIMARY KEY (return_id, item_index)
    ) WITHOUT ROWID;
"#;

/// Schema migration 7: who made each upload (`team:<name>` for a team
/// token, `user:<id>` or `token:<id>` otherwise), the unguessable receipt
/// of each return (older returns get one here), and whether a photo's data
/// covered the frame its header declares.
pub const HARDENING_MIGRATION: &str = r#"
    ALTER TABLE uploads ADD COLUMN owner TEXT;
    CREATE INDEX uploads_open_owner ON uploads(state, owner);
    ALTER TABLE returns ADD COLUMN receipt TEXT;
    UPDATE returns SET receipt = lower(hex(randomblob(16))) WHERE receipt IS NULL;
    CREATE UNIQUE INDEX returns_receipt ON returns(receipt);
    ALTER TABLE photos ADD COLUMN data_matches_header INTEGER NOT NULL DEFAULT 1
        CHECK (data_matches_header IN (0, 1));
"#;

/// One resumable upload.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UploadRecord {
    pub id: String,
    pub bundle_id: String,
    pub sha256: String,
    pub size: u64,
    pub offset: u64,
    /// `open`, `done` or `failed`.
    pub state: String,
    pub return_id: Option<i64>,
    /// Why the package was refused (state `failed`), replayed on a new `complete`.
    pub error: Option<String>,
    pub error_status: Option<u16>,
    pub created_at: String,
    /// Who made it (see [`HARDENING_MIGRATION`]); `None` for uploads made
    /// before owners were recorded.
    pub owner: Option<String>,
}

/// Counts and declared bytes of the open uploads ([`Reader::open_uploads`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct OpenUploads {
    pub count: u64,
    pub bytes: u64,
    pub for_bundle: u64,
    pub for_owner: u64,
    pub owner_bytes: u64,
}

/// A received return package.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReturnRecord {
    pub id: i64,
    pub bundle_id: String,
    pub sha256: String,
    pub size: u64,
    pub team: String,
    pub received_at: String,
    /// Path of the package relative to the data directory.
    pub path: String,
}

/// One per-report result of a return, in the order it was answered.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResultRow {
    pub report_id: Option<String>,
    /// `accepted`, `duplicate` or `rejected`.
    pub status: String,
    pub reason: Option<String>,
    pub flags: Vec<String>,
}

/// A stored report with the columns statistics need.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReportRow {
    pub report_id: String,
    pub bundle_id: String,
    /// The event as named in the report (or the field-found event made for a
    /// new clearing); follow `merged_into` to reach the live event.
    pub event_id: Option<i64>,
    pub control_code: Option<String>,
    pub kind: TargetKind,
    pub supersedes: Option<String>,
    pub outcome: Outcome,
    pub reason: Option<Reason>,
    pub cause: Option<Cause>,
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub accuracy_m: Option<f64>,
    pub position_source: Option<String>,
    /// Geodesic distance (m) from the reported position to the footprint.
    pub distance_m: Option<f64>,
    pub observed_at: Timestamp,
    pub recorded_at: Timestamp,
    pub received_at: Timestamp,
    pub area_ha: Option<f64>,
    pub notes: String,
    pub team: String,
    /// No evidence check failed.
    pub evidence_ok: bool,
    pub flags: Vec<String>,
    pub return_id: i64,
}

/// A photo's stored facts.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PhotoRow {
    pub sha256: String,
    pub width: u32,
    pub height: u32,
    pub taken_at: Option<String>,
    pub lat: Option<f64>,
    pub lon: Option<f64>,
    pub direction_deg: Option<f64>,
    pub bytes: u64,
    pub stored_at: String,
    /// The entropy-coded data covered the whole frame its header declares;
    /// `false`: `width` x `height` is what the data covered.
    pub data_matches_header: bool,
}

/// One evidence check row (per report and photo).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PhotoCheckRow {
    pub report_id: String,
    pub sha256: String,
    pub distance_m: Option<f64>,
    pub after_detection: Option<bool>,
    pub inside_window: Option<bool>,
    pub reused_elsewhere: bool,
}

/// A photo of a report as written.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportPhotoRow {
    pub sha256: String,
    pub original_name: String,
}

fn flags_json(flags: &[String]) -> String {
    serde_json::to_string(flags).unwrap_or_else(|_| "[]".into())
}

fn flags_of(text: &str) -> Vec<String> {
    serde_json::from_str(text).unwrap_or_default()
}

const UPLOAD_COLS: &str = "id, bundle_id, sha256, size, offset_bytes, state, return_id, error, error_status, created_at, owner";

fn upload_row(r: &Row<'_>) -> Result<UploadRecord> {
    Ok(UploadRecord {
        id: r.get(0)?,
        bundle_id: r.get(1)?,
        sha256: r.get(2)?,
        size: r.get::<_, i64>(3)?.max(0) as u64,
        offset: r.get::<_, i64>(4)?.max(0) as u64,
        state: r.get(5)?,
        return_id: r.get(6)?,
        error: r.get(7)?,
        error_status: r.get(8)?,
        created_at: r.get(9)?,
        owner: r.get(10)?,
    })
}

impl Tx<'_> {
    pub fn insert_upload(&self, u: &UploadRecord) -> Result<()> {
        self.tx.execute(
            "INSERT INTO uploads (id, bundle_id, sha256, size, offset_bytes, state, created_at, updated_at, owner)
             VALUES (?1, ?2, ?3, ?4, ?5, 'open', ?6, ?6, ?7)",
            params![u.id, u.bundle_id, u.sha256, u.size as i64, u.offset as i64, u.created_at, u.owner],
        )?;
        Ok(())
    }

    /// Record the durable offset of an open upload (never lower than before).
    pub fn set_upload_offset(&self, id: &str, offset: u64) -> Result<()> {
        self.tx.execute(
            "UPDATE uploads SET offset_bytes = CASE WHEN offset_bytes > ?2 THEN offset_bytes ELSE ?2 END, updated_at = ?3
             WHERE id = ?1 AND state = 'open'",
            params![id, offset as i64, chrono::Utc::now().to_rfc3339()],
        )?;
        Ok(())
    }

    pub fn finish_upload(&self, id: &str, return_id: i64) -> Result<()> {
        self.tx.execute(
            "UPDATE uploads SET state = 'done', return_id = ?2, offset_bytes = size, updated_at = ?3 WHERE id = ?1",
            params![id, return_id, chrono::Utc::now().to_rfc3339()],
        )?;
        Ok(())
    }

    pub fn fail_upload(&self, id: &str, status: u16, error: &str) -> Result<()> {
        self.tx.execute(
            "UPDATE uploads SET state = 'failed', error = ?2, error_status = ?3, offset_bytes = size, updated_at = ?4
             WHERE id = ?1",
            params![id, error, status, chrono::Utc::now().to_rfc3339()],
        )?;
        Ok(())
    }

    /// Set when upload `id` was last touched (tests of the idle expiry).
    #[cfg(test)]
    pub(crate) fn touch_upload_at(&self, id: &str, updated_at: &str) -> Result<()> {
        self.tx.execute(
            "UPDATE uploads SET updated_at = ?2 WHERE id = ?1",
            [id, updated_at],
        )?;
        Ok(())
    }

    /// Delete upload `id` if it is still open; whether it was.
    pub fn delete_open_upload(&self, id: &str) -> Result<bool> {
        Ok(self
            .tx
            .execute("DELETE FROM uploads WHERE id = ?1 AND state = 'open'", [id])?
            > 0)
    }

    pub fn delete_upload(&self, id: &str) -> Result<()> {
        self.tx.execute("DELETE FROM uploads WHERE id = ?1", [id])?;
        Ok(())
    }

    /// Delete open uploads last touched before `before` (RFC 3339); returns their ids.
    pub fn expire_uploads(&self, before: &str) -> Result<Vec<String>> {
        let mut st = self
            .tx
            .prepare("DELETE FROM uploads WHERE state = 'open' AND updated_at < ?1 RETURNING id")?;
        let v = st
            .query_map([before], |r| r.get(0))?
            .collect::<Result<Vec<String>>>()?;
        Ok(v)
    }

    /// Insert a return; it gets a random receipt (128 bits from the
    /// operating system, through a v4 UUID), read with [`Reader::return_receipt`].
    pub fn insert_return(&self, r: &ReturnRecord) -> Result<i64> {
        let receipt = uuid::Uuid::new_v4().simple().to_string();
        let id: i64 = self.tx.query_row(
            "INSERT INTO returns (bundle_id, sha256, size, team, received_at, path, receipt)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7) RETURNING id",
            params![
                r.bundle_id,
                r.sha256,
                r.size as i64,
                r.team,
                r.received_at,
                r.path,
                receipt
            ],
            |r| r.get(0),
        )?;
        Ok(id)
    }

    /// Insert a report with its body fingerprint; the caller has checked that the id is new.
    pub fn insert_report(&self, r: &ReportRow, body_sha256: &str) -> Result<()> {
        self.tx.prepare_cached(
            "INSERT INTO reports (report_id, bundle_id, event_id, control_code, kind, supersedes, outcome,
                reason, cause, lat, lon, accuracy_m, position_source, distance_m, observed_at, recorded_at,
                received_at, area_ha, notes, team, evidence_ok, flags, body_sha256, return_id)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19,
                ?20, ?21, ?22, ?23, ?24)",
        )?
        .execute(params![
            r.report_id, r.bundle_id, r.event_id, r.control_code, r.kind, r.supersedes, r.outcome,
            r.reason, r.cause, r.lat, r.lon, r.accuracy_m, r.position_source, r.distance_m,
            r.observed_at, r.recorded_at, r.received_at, r.area_ha, r.notes, r.team,
            i64::from(r.evidence_ok), flags_json(&r.flags), body_sha256, r.return_id
        ])?;
        Ok(())
    }

    /// Record a photo once (its file must already be durable).
    pub fn insert_photo(&self, p: &PhotoRow) -> Result<()> {
        self.tx.prepare_cached(
            "INSERT INTO photos (sha256, width, height, taken_at, lat, lon, direction_deg, bytes, stored_at,
                data_matches_header)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10) ON CONFLICT DO NOTHING",
        )?
        .execute(params![
            p.sha256, p.width, p.height, p.taken_at, p.lat, p.lon, p.direction_deg, p.bytes as i64,
            p.stored_at, p.data_matches_header
        ])?;
        Ok(())
    }

    pub fn insert_report_photos(&self, report_id: &str, photos: &[ReportPhotoRow]) -> Result<()> {
        let mut st = self.tx.prepare_cached(
            "INSERT INTO report_photos (report_id, sha256, position, original_name)
             VALUES (?1, ?2, ?3, ?4) ON CONFLICT DO NOTHING",
        )?;
        for (i, p) in photos.iter().enumerate() {
            st.execute(params![report_id, p.sha256, i as i64, p.original_name])?;
        }
        Ok(())
    }

    pub fn insert_photo_check(&self, c: &PhotoCheckRow) -> Result<()> {
        self.tx.prepare_cached(
            "INSERT INTO photo_checks (report_id, sha256, distance_m, after_detection, inside_window, reused_elsewhere)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6) ON CONFLICT DO NOTHING",
        )?
        .execute(params![
            c.report_id, c.sha256, c.distance_m, c.after_detection, c.inside_window,
            c.reused_elsewhere
        ])?;
        Ok(())
    }

    pub fn insert_results(&self, return_id: i64, rows: &[ResultRow]) -> Result<()> {
        let mut st = self.tx.prepare_cached(
            "INSERT INTO report_results (return_id, item_index, report_id, status, reason, flags)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
        )?;
        for (i, r) in rows.iter().enumerate() {
            st.execute(params![
                return_id,
                i as i64,
                r.report_id,
                r.status,
                r.reason,
                flags_json(&r.flags)
            ])?;
        }
        Ok(())
    }

    /// Mark an event as found in the field (origin `field`).
    pub fn mark_event_field_found(&self, event_id: i64) -> Result<()> {
        self.tx.execute(
            "UPDATE events SET origin = 'field' WHERE id = ?1",
            [event_id],
        )?;
        Ok(())
    }
}

pub(super) const REPORT_COLS: &str =
    "report_id, bundle_id, event_id, control_code, kind, supersedes, outcome,
    reason, cause, lat, lon, accuracy_m, position_source, distance_m, observed_at, recorded_at,
    received_at, area_ha, notes, team, evidence_ok, flags, return_id";

pub(super) fn report_row(r: &Row<'_>) -> Result<ReportRow> {
    let flags: String = r.get(21)?;
    Ok(ReportRow {
        report_id: r.get(0)?,
        bundle_id: r.get(1)?,
        event_id: r.get(2)?,
        control_code: r.get(3)?,
        kind: r.get(4)?,
        supersedes: r.get(5)?,
        outcome: r.get(6)?,
        reason: r.get(7)?,
        cause: r.get(8)?,
        lat: r.get(9)?,
        lon: r.get(10)?,
        accuracy_m: r.get(11)?,
        position_source: r.get(12)?,
        distance_m: r.get(13)?,
        observed_at: r.get(14)?,
        recorded_at: r.get(15)?,
        received_at: r.get(16)?,
        area_ha: r.get(17)?,
        notes: r.get(18)?,
        team: r.get(19)?,
        evidence_ok: r.get::<_, i64>(20)? != 0,
        flags: flags_of(&flags),
        return_id: r.get(22)?,
    })
}

impl Reader<'_> {
    pub fn upload(&self, id: &str) -> Result<Option<UploadRecord>> {
        self.conn
            .query_row(
                &format!("SELECT {UPLOAD_COLS} FROM uploads WHERE id = ?1"),
                [id],
                upload_row,
            )
            .optional()
    }

    pub fn upload_by_sha(&self, bundle_id: &str, sha256: &str) -> Result<Option<UploadRecord>> {
        self.conn
            .query_row(
                &format!("SELECT {UPLOAD_COLS} FROM uploads WHERE bundle_id = ?1 AND sha256 = ?2"),
                [bundle_id, sha256],
                upload_row,
            )
            .optional()
    }

    /// What the open uploads hold: over the server, for `bundle_id`, and
    /// for `owner`.
    pub fn open_uploads(&self, bundle_id: &str, owner: &str) -> Result<OpenUploads> {
        self.conn.query_row(
            "SELECT COUNT(*), COALESCE(SUM(size), 0), COUNT(*) FILTER (WHERE bundle_id = ?1),
                COUNT(*) FILTER (WHERE owner = ?2), COALESCE(SUM(size) FILTER (WHERE owner = ?2), 0)
             FROM uploads WHERE state = 'open'",
            [bundle_id, owner],
            |r| {
                let n = |i| r.get::<_, i64>(i).map(|v| v.max(0) as u64);
                Ok(OpenUploads {
                    count: n(0)?,
                    bytes: n(1)?,
                    for_bundle: n(2)?,
                    for_owner: n(3)?,
                    owner_bytes: n(4)?,
                })
            },
        )
    }

    /// The receipt of return `id`.
    pub fn return_receipt(&self, id: i64) -> Result<Option<String>> {
        Ok(self
            .conn
            .query_row("SELECT receipt FROM returns WHERE id = ?1", [id], |r| {
                r.get(0)
            })
            .optional()?
            .flatten())
    }

    /// The id of the return with receipt `receipt`.
    pub fn return_by_receipt(&self, receipt: &str) -> Result<Option<i64>> {
        self.conn
            .query_row(
                "SELECT id FROM returns WHERE receipt = ?1",
                [receipt],
                |r| r.get(0),
            )
            .optional()
    }

    /// Ids of every upload (open or not), for cleaning up their files.
    pub fn upload_ids(&self) -> Result<Vec<(String, String)>> {
        let mut st = self.conn.prepare("SELECT id, state FROM uploads")?;
        let v = st
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn return_by_sha(&self, sha256: &str) -> Result<Option<ReturnRecord>> {
        self.return_where("sha256 = ?1", &sha256)
    }

    pub fn return_by_id(&self, id: i64) -> Result<Option<ReturnRecord>> {
        self.return_where("id = ?1", &id)
    }

    fn return_where(&self, cond: &str, arg: &dyn rusqlite::ToSql) -> Result<Option<ReturnRecord>> {
        self
            .conn
            .query_row(
                &format!(
                    "SELECT id, bundle_id, sha256, size, team, received_at, path FROM returns WHERE {cond}"
                ),
                [arg],
                |r| {
                    Ok(ReturnRecord {
                        id: r.get(0)?,
                        bundle_id: r.get(1)?,
                        sha256: r.get(2)?,
                        size: r.get::<_, i64>(3)?.max(0) as u64,
                        team: r.get(4)?,
                        received_at: r.get(5)?,
                        path: r.get(6)?,
                    })
                },
            )
            .optional()
    }

    pub fn return_results(&self, return_id: i64) -> Result<Vec<ResultRow>> {
        let mut st = self.conn.prepare_cached(
            "SELECT report_id, status, reason, flags FROM report_results WHERE return_id = ?1 ORDER BY item_index",
        )?;
        let v = st
            .query_map([return_id], |r| {
                let flags: String = r.get(3)?;
                Ok(ResultRow {
                    report_id: r.get(0)?,
                    status: r.get(1)?,
                    reason: r.get(2)?,
                    flags: flags_of(&flags),
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// The body fingerprint and flags of a stored report, if it exists.
    pub fn report_fingerprint(&self, report_id: &str) -> Result<Option<(String, Vec<String>)>> {
        self.conn
            .query_row(
                "SELECT body_sha256, flags FROM reports WHERE report_id = ?1",
                [report_id],
                |r| Ok((r.get::<_, String>(0)?, flags_of(&r.get::<_, String>(1)?))),
            )
            .optional()
    }

    pub fn report(&self, report_id: &str) -> Result<Option<ReportRow>> {
        self.conn
            .query_row(
                &format!("SELECT {REPORT_COLS} FROM reports WHERE report_id = ?1"),
                [report_id],
                report_row,
            )
            .optional()
    }

    /// Every stored report, by report id (the facts statistics are built from).
    pub fn report_facts(&self) -> Result<Vec<ReportRow>> {
        let mut st = self.conn.prepare(&format!(
            "SELECT {REPORT_COLS} FROM reports ORDER BY report_id"
        ))?;
        let v = st.query_map([], report_row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Stored reports about `event_id` or any event merged into it.
    pub fn event_reports(&self, event_id: i64) -> Result<Vec<ReportRow>> {
        let mut st = self.conn.prepare(&format!(
            "WITH RECURSIVE fam(id) AS (SELECT CAST(?1 AS BIGINT) UNION SELECT e.id FROM events e JOIN fam ON e.merged_into = fam.id)
             SELECT {REPORT_COLS} FROM reports WHERE event_id IN (SELECT id FROM fam)
             ORDER BY observed_at, report_id"
        ))?;
        let v = st
            .query_map([event_id], report_row)?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn photo(&self, sha256: &str) -> Result<Option<PhotoRow>> {
        self.conn
            .query_row(
                "SELECT sha256, width, height, taken_at, lat, lon, direction_deg, bytes, stored_at,
                    data_matches_header
                 FROM photos WHERE sha256 = ?1",
                [sha256],
                |r| {
                    Ok(PhotoRow {
                        sha256: r.get(0)?,
                        width: r.get(1)?,
                        height: r.get(2)?,
                        taken_at: r.get(3)?,
                        lat: r.get(4)?,
                        lon: r.get(5)?,
                        direction_deg: r.get(6)?,
                        bytes: r.get::<_, i64>(7)?.max(0) as u64,
                        stored_at: r.get(8)?,
                        data_matches_header: r.get(9)?,
                    })
                },
            )
            .optional()
    }

    /// `PRAGMA integrity_check` (`"ok"` when the file is sound).
    /// PostgreSQL has no such check of its own: `"ok"`.
    pub fn integrity_check(&self) -> Result<String> {
        if self.conn.dialect() == super::engine::Dialect::Postgres {
            return Ok("ok".into());
        }
        self.conn
            .query_row("PRAGMA integrity_check", [], |r| r.get(0))
    }

    /// SHA-256 of every stored photo.
    pub fn photo_shas(&self) -> Result<Vec<String>> {
        let mut st = self.conn.prepare("SELECT sha256 FROM photos")?;
        let v = st
            .query_map([], |r| r.get(0))?
            .collect::<Result<Vec<String>>>()?;
        Ok(v)
    }

    /// Reports (other than `report_id`) that already hold photo `sha256`.
    /// Whether a photo is stored under a report other than `report_id`,
    /// the report it supersedes, and the reports that supersede it.
    pub fn photo_used_by_other(
        &self,
        sha256: &str,
        report_id: &str,
        supersedes: &str,
    ) -> Result<bool> {
        Ok(self.conn.query_row(
            "SELECT EXISTS (SELECT 1 FROM report_photos rp WHERE rp.sha256 = ?1 AND rp.report_id <> ?2
                AND rp.report_id <> ?3
                AND rp.report_id NOT IN (SELECT report_id FROM reports WHERE supersedes = ?2))",
            [sha256, report_id, supersedes],
            |r| r.get::<_, i64>(0),
        )? != 0)
    }

    pub fn report_photos(&self, report_id: &str) -> Result<Vec<ReportPhotoRow>> {
        let mut st = self.conn.prepare_cached(
            "SELECT sha256, original_name FROM report_photos WHERE report_id = ?1 ORDER BY position",
        )?;
        let v = st
            .query_map([report_id], |r| {
                Ok(ReportPhotoRow {
                    sha256: r.get(0)?,
                    original_name: r.get(1)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn photo_checks(&self, report_id: &str) -> Result<Vec<PhotoCheckRow>> {
        let mut st = self.conn.prepare_cached(
            "SELECT report_id, sha256, distance_m, after_detection, inside_window, reused_elsewhere
             FROM photo_checks WHERE report_id = ?1 ORDER BY sha256",
        )?;
        let v = st
            .query_map([report_id], |r| {
                Ok(PhotoCheckRow {
                    report_id: r.get(0)?,
                    sha256: r.get(1)?,
                    distance_m: r.get(2)?,
                    after_detection: r.get(3)?,
                    inside_window: r.get(4)?,
                    reused_elsewhere: r.get(5)?,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }
}
