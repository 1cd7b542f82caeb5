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
mod commit_watch;
mod engine;
mod events;
mod languages;
mod pages;
mod pairing;
mod pg_db;
mod returns;
mod schema;
mod schema_pg;
mod shared;
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
pub use commit_watch::{CommitStamp, CommitWatch};
pub use events::{EventFilter, EventRecord, EventWrite};
pub use pairing::PairingRecord;
pub use pg_db::{copy_postgres, scratch_postgres};
pub use returns::{
    OpenUploads, PhotoCheckRow, PhotoRow, RETURNS_MIGRATION, ReportPhotoRow, ReportRow, ResultRow,
    ReturnRecord, UploadRecord,
};
pub use shared::{SHARED_MIGRATION, StoredDraft, StoredSettings};
pub use sources::Source;
pub use station::StationEntry;
pub use stats::{AdjudicationRow, ControlRow, StatsEventRow, StatsReportRef};
pub use trips::ReturnSummary;
pub use zones::ZoneRecord;

use crate::error::{Error, Result};
use engine::Conn;
use rusqlite::{Connection, OpenFlags, TransactionBehavior};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::Duration;

/// Busy timeout for every connection (rusqlite's own default, made explicit).
const BUSY_TIMEOUT: Duration = Duration::from_secs(5);
/// Read connections kept open for reuse.
const READ_POOL: usize = 4;

/// The database: the SQLite file of one data directory (the default), or
/// a PostgreSQL database chosen at start (`--database postgres://…`).
pub struct Db {
    engine: Engine,
    /// Moves after every commit that may have changed a fact.
    generation: Arc<AtomicU64>,
}

enum Engine {
    Lite(Lite),
    Pg(pg_db::PgDb),
}

/// The embedded SQLite file.
struct Lite {
    path: PathBuf,
    writer: Mutex<Connection>,
    readers: Mutex<Vec<Connection>>,
    /// `PRAGMA data_version` of the writer when last looked at: it changes
    /// only when another connection (another process) commits.
    seen_data_version: AtomicU64,
}

/// Tables that hold no fact the statistics read: accounts, sessions,
/// tokens, login attempts and upload progress.
const BOOKKEEPING_TABLES: [&str; 10] = [
    "users",
    "sessions",
    "api_tokens",
    "team_tokens",
    "login_attempts",
    "uploads",
    "pairings",
    "admin_log",
    "org_settings",
    "station_drafts",
];

/// Which data the stored facts are: equal stamps mean no fact changed in
/// between (see [`Db::fact_stamp`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct FactStamp(u64);

/// A write transaction (`BEGIN IMMEDIATE` on SQLite; on PostgreSQL one
/// transaction under the database-wide write lock); dropped without
/// `commit` it rolls back.
pub struct Tx<'a> {
    tx: Conn<'a>,
}

/// A read-only view of the database.
pub struct Reader<'a> {
    conn: Conn<'a>,
}

fn configure(conn: &Connection) -> Result<()> {
    conn.busy_timeout(BUSY_TIMEOUT)?;
    conn.pragma_update(None, "foreign_keys", "ON")?;
    conn.pragma_update(None, "synchronous", "FULL")?;
    Ok(())
}

impl Db {
    /// Open (creating if needed) the SQLite database in `data_dir`.
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
            engine: Engine::Lite(Lite {
                path,
                writer: Mutex::new(boot),
                readers: Mutex::new(Vec::new()),
                seen_data_version: AtomicU64::new(seen),
            }),
            generation: Arc::new(AtomicU64::new(0)),
        })
    }

    /// Open the database `database` names: a `postgres://` or
    /// `postgresql://` URL, or nothing for the SQLite file in `data_dir`.
    pub fn open_with(data_dir: &Path, database: Option<&str>) -> Result<Db> {
        match database {
            None => Db::open(data_dir),
            Some(url) if url.starts_with("postgres://") || url.starts_with("postgresql://") => {
                Db::open_postgres(url)
            }
            Some(other) => Err(Error::Invalid(format!(
                "--database: '{}' is not a postgres:// URL (leave it out for the SQLite file in the data directory)",
                pg_db::redacted(other)
            ))),
        }
    }

    /// Connect to the PostgreSQL database at `url` and bring its schema up
    /// to date.
    pub fn open_postgres(url: &str) -> Result<Db> {
        let generation = Arc::new(AtomicU64::new(0));
        let pg = pg_db::PgDb::open(url, Arc::clone(&generation))?;
        Ok(Db {
            engine: Engine::Pg(pg),
            generation,
        })
    }

    /// Which engine holds the data.
    pub fn is_postgres(&self) -> bool {
        matches!(self.engine, Engine::Pg(_))
    }

    /// Where the facts stand now. A stamp equal to one taken before means
    /// nothing that the statistics read has been committed since. Never
    /// blocks on a running write: that write moves the stamp when it commits.
    /// On PostgreSQL another instance's commits are seen by a watcher
    /// thread within [`pg_db::STAMP_POLL`].
    pub fn fact_stamp(&self) -> FactStamp {
        if let Engine::Lite(lite) = &self.engine {
            match lite.writer.try_lock() {
                Ok(conn) => self.note_other_writers(lite, &conn),
                Err(std::sync::TryLockError::Poisoned(p)) => {
                    self.note_other_writers(lite, &p.into_inner())
                }
                // A write is running: it looks again once it holds SQLite's
                // write lock, and moves the stamp when it commits.
                Err(std::sync::TryLockError::WouldBlock) => {}
            }
        }
        FactStamp(self.generation.load(Ordering::Acquire))
    }

    /// Move the stamp if another process committed since we last looked.
    fn note_other_writers(&self, lite: &Lite, conn: &Connection) {
        // If the pragma fails, assume a change: a needless recompute is
        // harmless, a missed one is not.
        let now = data_version(conn).unwrap_or(u64::MAX);
        if lite.seen_data_version.swap(now, Ordering::AcqRel) != now || now == u64::MAX {
            self.generation.fetch_add(1, Ordering::AcqRel);
        }
    }

    /// The SQLite file (`None` on PostgreSQL).
    pub fn sqlite_path(&self) -> Option<&Path> {
        match &self.engine {
            Engine::Lite(l) => Some(&l.path),
            Engine::Pg(_) => None,
        }
    }

    /// Run `f` in one write transaction; commit when it returns `Ok`. The
    /// fact stamp moves after the commit (so a reader that sees the old
    /// stamp cannot have read the new facts under it).
    pub fn write<T>(&self, f: impl FnOnce(&Tx<'_>) -> Result<T>) -> Result<T> {
        let out = match &self.engine {
            Engine::Lite(lite) => {
                let mut conn = lite.writer.lock().unwrap_or_else(|p| p.into_inner());
                self.transact(lite, &mut conn, f)?
            }
            Engine::Pg(pg) => pg.write(true, f)?.0,
        };
        self.generation.fetch_add(1, Ordering::AcqRel);
        Ok(out)
    }

    /// `f` in one `BEGIN IMMEDIATE` transaction on the locked writer,
    /// committed when it returns `Ok`; other processes' commits are noted
    /// before and once BEGIN holds SQLite's write lock (BEGIN may have
    /// waited for one).
    fn transact<T>(
        &self,
        lite: &Lite,
        conn: &mut Connection,
        f: impl FnOnce(&Tx<'_>) -> Result<T>,
    ) -> Result<T> {
        self.note_other_writers(lite, conn);
        let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
        self.note_other_writers(lite, &tx);
        let out = f(&Tx {
            tx: Conn::Lite(&tx),
        })?;
        tx.commit()?;
        Ok(out)
    }

    /// [`Db::write`] for bookkeeping that no statistic reads (sessions,
    /// login attempts, accounts, tokens, upload progress): the fact stamp
    /// stays, so a session touch does not make every cached figure stale.
    /// Should `f` change a row of any other rowid table after all, the stamp
    /// moves as for [`Db::write`]. SQLite's update hook does not see WITHOUT
    /// ROWID tables (`event_zones`, `bundle_items`, `report_photos`,
    /// `photo_checks`, `report_results`): those are written only through
    /// [`Db::write`]. (PostgreSQL: the transaction's own table statistics
    /// tell, for every table.)
    pub fn write_bookkeeping<T>(&self, f: impl FnOnce(&Tx<'_>) -> Result<T>) -> Result<T> {
        let lite = match &self.engine {
            Engine::Lite(lite) => lite,
            Engine::Pg(pg) => {
                let (out, strayed) = pg.write(false, f)?;
                if strayed {
                    self.generation.fetch_add(1, Ordering::AcqRel);
                }
                return Ok(out);
            }
        };
        let mut conn = lite.writer.lock().unwrap_or_else(|p| p.into_inner());
        let strayed = Arc::new(AtomicBool::new(false));
        let flag = Arc::clone(&strayed);
        conn.update_hook(Some(
            move |_: rusqlite::hooks::Action, _: &str, table: &str, _: i64| {
                if !BOOKKEEPING_TABLES.contains(&table) {
                    flag.store(true, Ordering::Release);
                }
            },
        ))?;
        let out = self.transact(lite, &mut conn, f);
        conn.update_hook(None::<fn(rusqlite::hooks::Action, &str, &str, i64)>)?;
        if strayed.load(Ordering::Acquire) {
            self.generation.fetch_add(1, Ordering::AcqRel);
        }
        out
    }

    /// Run `f` on a read connection.
    pub fn read<T>(&self, f: impl FnOnce(&Reader<'_>) -> Result<T>) -> Result<T> {
        let lite = match &self.engine {
            Engine::Lite(lite) => lite,
            Engine::Pg(pg) => return pg.read(f),
        };
        let pooled = lite.readers.lock().unwrap_or_else(|p| p.into_inner()).pop();
        let conn = match pooled {
            Some(c) => c,
            None => {
                let c = Connection::open_with_flags(
                    &lite.path,
                    OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
                )?;
                configure(&c)?;
                c
            }
        };
        let out = f(&Reader {
            conn: Conn::Lite(&conn),
        });
        let mut pool = lite.readers.lock().unwrap_or_else(|p| p.into_inner());
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
        Reader { conn: self.tx }
    }
}

/// The database a storage test runs on: PostgreSQL when
/// `GROUNDPROOF_TEST_ENGINE=postgres` (a new database on the server at
/// `GROUNDPROOF_TEST_POSTGRES`), else the SQLite file in `dir`.
#[cfg(test)]
pub(crate) fn test_db(dir: &Path) -> Db {
    if std::env::var("GROUNDPROOF_TEST_ENGINE").is_ok_and(|e| e.trim() == "postgres") {
        let url = std::env::var("GROUNDPROOF_TEST_POSTGRES").expect(
            "GROUNDPROOF_TEST_ENGINE=postgres needs GROUNDPROOF_TEST_POSTGRES=postgres://…",
        );
        return Db::open_postgres(&scratch_postgres(url.trim()).unwrap()).unwrap();
    }
    Db::open(dir).unwrap()
}

#[cfg(test)]
mod pg_tests;

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
        let other = Connection::open(db.sqlite_path().unwrap()).unwrap();
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
        let db = test_db(dir.path());
        let r: Result<()> = db.write(|tx| {
            tx.add_source("optical-10m", 10.0, 5)?;
            Err(Error::Invalid("stop".into()))
        });
        assert!(r.is_err());
        assert!(db.read(|r| r.sources()).unwrap().is_empty());
    }
}
