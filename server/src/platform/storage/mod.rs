//! Storage: the only module that speaks SQL.
//!
//! One SQLite file in the data directory. At open, a bootstrap connection
//! sets the busy timeout first, then WAL mode (once, outside any
//! transaction), then applies the versioned migrations in one `BEGIN
//! IMMEDIATE` transaction and refuses a database newer than this binary.
//! Every connection gets `foreign_keys=ON` and `synchronous=FULL` (field
//! data cannot be collected twice, so a commit must survive a power cut).
//! All writes go through one writer connection behind a mutex, each in a
//! `BEGIN IMMEDIATE` transaction so the busy timeout applies; reads use a
//! small pool. Callers on the async executor wrap calls in
//! `web::block`/`spawn_blocking`.
//!
//! [`Db::fact_stamp`] tells readers that cache what they derived from the
//! facts (the statistics) whether anything changed: it moves after every
//! committed [`Db::write`] and after a commit by another process, but not
//! after [`Db::write_bookkeeping`] (sessions, login attempts, tokens, upload
//! progress), which the statistics never read.

mod admin;
mod alerts;
mod auth;
mod backup;
mod bundles;
mod events;
mod languages;
mod pages;
mod pairing;
mod r_control2_extra;
mod returns;
mod schema;
mod sources;
mod station;
pub(crate) mod stats;
mod trips;
mod zones;

pub use admin::{ADMIN_MIGRATION, AdminLogEntry, LOG_FIELD_MAX_CHARS, TeamState};
pub use alerts::{NewAlert, StoredAlert, alerts_cells, e7};
pub use auth::{ApiTokenRecord, LoginAttempt, SessionRecord, TeamTokenRecord, User};
pub use backup::check_database;
pub use bundles::{BundleItem, BundleRecord, NewBundle, Team};
pub use events::{EventFilter, EventRecord, EventWrite};
pub use pairing::PairingRecord;
pub use returns::{
    OpenUploads, PhotoCheckRow, PhotoRow, RETURNS_MIGRATION, ReportPhotoRow, ReportRow, ResultRow,
    ReturnRecord, UploadRecord,
};
pub use sources::Source;
pub use station::StationEntry;
pub use stats::{AdjudicationRow, ControlRow, StatsEventRow, StatsReportRef};
pub use trips::ReturnSummary;
pub use zones::ZoneRecord;

use crate::error::{Error, Result};
use rusqlite::{Connection, OpenFlags, TransactionBehavior};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Duration;

/// Busy timeout for every connection (rusqlite's own default, made explicit).
const BUSY_TIMEOUT: Duration = Duration::from_secs(5);
/// Read connections kept open for reuse.
const READ_POOL: usize = 4;

/// The database of one data directory.
pub struct Db {
    path: PathBuf,
    writer: Mutex<Connection>,
    readers: Mutex<Vec<Connection>>,
    /// Moves after every commit that may have changed a fact.
    generation: AtomicU64,
    /// `PRAGMA data_version` of the writer when last looked at: it changes
    /// only when another connection (another process) commits.
    seen_data_version: AtomicU64,
}

/// Tables that hold no fact the statistics read: accounts, sessions,
/// tokens, login attempts and upload progress.
const BOOKKEEPING_TABLES: [&str; 8] = [
    "users",
    "sessions",
    "api_tokens",
    "team_tokens",
    "login_attempts",
    "uploads",
    "pairings",
    "admin_log",
];

/// Which data the stored facts are: equal stamps mean no fact changed in
/// between (see [`Db::fact_stamp`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct FactStamp(u64);

/// A write transaction (`BEGIN IMMEDIATE`); dropped without `commit` it
/// rolls back.
pub struct Tx<'a> {
    tx: rusqlite::Transaction<'a>,
}

/// A read-only view of the database.
pub struct Reader<'a> {
    conn: &'a Connection,
}

fn configure(conn: &Connection) -> Result<()> {
    conn.busy_timeout(BUSY_TIMEOUT)?;
    conn.pragma_update(None, "foreign_keys", "ON")?;
    conn.pragma_update(None, "synchronous", "FULL")?;
    Ok(())
}

impl Db {
    /// Open (creating if needed) the database in `data_dir`.
    pub fn open(data_dir: &Path) -> Result<Db> {
        std::fs::create_dir_all(data_dir)
            .map_err(|e| Error::io(format!("creating data directory {}", data_dir.display()), e))?;
        let path = data_dir.join("groundproof.sqlite3");
        let mut boot = Connection::open(&path)?;
        boot.busy_timeout(BUSY_TIMEOUT)?;
        let mode: String = boot.query_row("PRAGMA journal_mode=WAL", [], |r| r.get(0))?;
        if !mode.eq_ignore_ascii_case("wal") {
            return Err(Error::Invalid(format!(
                "the database at {} refused WAL mode (got '{mode}'); is it on a network file system?",
                path.display()
            )));
        }
        configure(&boot)?;
        // The writer does bulk imports: a 64 MiB page cache keeps a large
        // transaction from spilling to the WAL early.
        boot.pragma_update(None, "cache_size", -65_536)?;
        schema::migrate(&mut boot)?;
        let seen = data_version(&boot)?;
        Ok(Db {
            path,
            writer: Mutex::new(boot),
            readers: Mutex::new(Vec::new()),
            generation: AtomicU64::new(0),
            seen_data_version: AtomicU64::new(seen),
        })
    }

    /// Where the facts stand now. A stamp equal to one taken before means
    /// nothing that the statistics read has been committed since. Never
    /// blocks on a running write: that write moves the stamp when it commits.
    pub fn fact_stamp(&self) -> FactStamp {
        match self.writer.try_lock() {
            Ok(conn) => self.note_other_writers(&conn),
            Err(std::sync::TryLockError::Poisoned(p)) => self.note_other_writers(&p.into_inner()),
            // A write is running: it looks again once it holds SQLite's
            // write lock, and moves the stamp when it commits.
            Err(std::sync::TryLockError::WouldBlock) => {}
        }
        FactStamp(self.generation.load(Ordering::Acquire))
    }

    /// Move the stamp if another process committed since we last looked.
    fn note_other_writers(&self, conn: &Connection) {
        // If the pragma fails, assume a change: a needless recompute is
        // harmless, a missed one is not.
        let now = data_version(conn).unwrap_or(u64::MAX);
        if self.seen_data_version.swap(now, Ordering::AcqRel) != now || now == u64::MAX {
            self.generation.fetch_add(1, Ordering::AcqRel);
        }
    }

    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Run `f` in one write transaction; commit when it returns `Ok`. The
    /// fact stamp moves after the commit (so a reader that sees the old
    /// stamp cannot have read the new facts under it).
    pub fn write<T>(&self, f: impl FnOnce(&Tx<'_>) -> Result<T>) -> Result<T> {
        let mut conn = self.writer.lock().unwrap_or_else(|p| p.into_inner());
        let out = self.transact(&mut conn, f)?;
        self.generation.fetch_add(1, Ordering::AcqRel);
        Ok(out)
    }

    /// `f` in one `BEGIN IMMEDIATE` transaction on the locked writer,
    /// committed when it returns `Ok`; other processes' commits are noted
    /// before and once BEGIN holds SQLite's write lock (BEGIN may have
    /// waited for one).
    fn transact<T>(
        &self,
        conn: &mut Connection,
        f: impl FnOnce(&Tx<'_>) -> Result<T>,
    ) -> Result<T> {
        self.note_other_writers(conn);
        let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
        self.note_other_writers(&tx);
        let wrapped = Tx { tx };
        let out = f(&wrapped)?;
        wrapped.tx.commit()?;
        Ok(out)
    }

    /// [`Db::write`] for bookkeeping that no statistic reads (sessions,
    /// login attempts, accounts, tokens, upload progress): the fact stamp
    /// stays, so a session touch does not make every cached figure stale.
    /// Should `f` change a row of any other rowid table after all, the stamp
    /// moves as for [`Db::write`]. SQLite's update hook does not see WITHOUT
    /// ROWID tables (`event_zones`, `bundle_items`, `report_photos`,
    /// `photo_checks`, `report_results`): those are written only through
    /// [`Db::write`].
    pub fn write_bookkeeping<T>(&self, f: impl FnOnce(&Tx<'_>) -> Result<T>) -> Result<T> {
        let mut conn = self.writer.lock().unwrap_or_else(|p| p.into_inner());
        let strayed = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&strayed);
        conn.update_hook(Some(
            move |_: rusqlite::hooks::Action, _: &str, table: &str, _: i64| {
                if !BOOKKEEPING_TABLES.contains(&table) {
                    flag.store(true, Ordering::Release);
                }
            },
        ))?;
        let out = self.transact(&mut conn, f);
        conn.update_hook(None::<fn(rusqlite::hooks::Action, &str, &str, i64)>)?;
        if strayed.load(Ordering::Acquire) {
            self.generation.fetch_add(1, Ordering::AcqRel);
        }
        out
    }

    /// Run `f` on a read connection.
    pub fn read<T>(&self, f: impl FnOnce(&Reader<'_>) -> Result<T>) -> Result<T> {
        let pooled = self.readers.lock().unwrap_or_else(|p| p.into_inner()).pop();
        let conn = match pooled {
            Some(c) => c,
            None => {
                let c = Connection::open_with_flags(
                    &self.path,
                    OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
                )?;
                configure(&c)?;
                c
            }
        };
        let out = f(&Reader { conn: &conn });
        let mut pool = self.readers.lock().unwrap_or_else(|p| p.into_inner());
        if pool.len() < READ_POOL {
            pool.push(conn);
        }
        out
    }
}

fn data_version(conn: &Connection) -> Result<u64> {
    let v: i64 = conn.query_row("PRAGMA data_version", [], |r| r.get(0))?;
    Ok(v as u64)
}

impl<'a> Tx<'a> {
    /// Reads inside this transaction (they see its own writes).
    pub fn reader(&self) -> Reader<'_> {
        Reader { conn: &self.tx }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn opens_with_the_promised_settings() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        db.read(|r| {
            let mode: String = r.conn.query_row("PRAGMA journal_mode", [], |x| x.get(0))?;
            let fk: i64 = r.conn.query_row("PRAGMA foreign_keys", [], |x| x.get(0))?;
            let sync: i64 = r.conn.query_row("PRAGMA synchronous", [], |x| x.get(0))?;
            assert_eq!((mode.as_str(), fk, sync), ("wal", 1, 2));
            Ok(())
        })
        .unwrap();
        drop(db);
        // Reopening applies no migration twice.
        Db::open(dir.path()).unwrap();
    }

    #[test]
    fn refuses_a_newer_database() {
        let dir = tempfile::tempdir().unwrap();
        drop(Db::open(dir.path()).unwrap());
        let c = Connection::open(dir.path().join("groundproof.sqlite3")).unwrap();
        c.pragma_update(None, "user_version", 999).unwrap();
        drop(c);
        match Db::open(dir.path()) {
            Err(Error::SchemaTooNew { found: 999, .. }) => {}
            Err(other) => panic!("unexpected error {other}"),
            Ok(_) => panic!("opened a database newer than the binary"),
        }
    }

    #[test]
    fn the_fact_stamp_moves_on_facts_only() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let s0 = db.fact_stamp();
        assert_eq!(db.fact_stamp(), s0, "reading changes nothing");
        db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        let s1 = db.fact_stamp();
        assert_ne!(s1, s0, "a committed write moves it");
        // Accounts and sessions are bookkeeping: the stamp stays.
        let u = db
            .write_bookkeeping(|tx| {
                tx.add_user("ana", crate::platform::auth::Role::Manager, "x", 1)
            })
            .unwrap();
        db.write_bookkeeping(|tx| tx.insert_session("a".repeat(64).as_str(), u.id, "s", 1))
            .unwrap();
        db.write_bookkeeping(|tx| tx.touch_session(&"a".repeat(64), 2))
            .unwrap();
        assert_eq!(db.fact_stamp(), s1);
        // A fact written through the bookkeeping door still moves it.
        db.write_bookkeeping(|tx| tx.add_source("radar-10m", 10.0, 12))
            .unwrap();
        let s2 = db.fact_stamp();
        assert_ne!(s2, s1);
        // Another process committing moves it too.
        let other = Connection::open(db.path()).unwrap();
        other
            .execute(
                "INSERT INTO sources (name, pixel_size_m, revisit_days, created_at) \
                 VALUES ('x', 30, 8, '2026-12-02T00:00:00Z')",
                [],
            )
            .unwrap();
        assert_ne!(
            db.fact_stamp(),
            s2,
            "a commit by another connection moves it"
        );
    }

    #[test]
    fn failed_write_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let r: Result<()> = db.write(|tx| {
            tx.add_source("optical-10m", 10.0, 5)?;
            Err(Error::Invalid("stop".into()))
        });
        assert!(r.is_err());
        assert!(db.read(|r| r.sources()).unwrap().is_empty());
    }
}
