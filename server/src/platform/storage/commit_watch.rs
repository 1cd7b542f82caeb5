//! A commit watch: a stamp that changes whenever anyone commits to the
//! database — this process's writer (facts and bookkeeping alike: sessions,
//! tokens, accounts) or another process (the command line, a second server
//! on the same database). Unlike [`Db::fact_stamp`] it moves for every
//! commit, so a cache of anything a bookkeeping write can change (the
//! verified bearer tokens of `platform::auth::VerifiedTokens`) can trust an
//! equal stamp.
//!
//! - SQLite: one read-only connection of its own whose `PRAGMA data_version`
//!   changes whenever any other connection commits to the file (about a
//!   microsecond: only the WAL index is read).
//! - PostgreSQL: the row of `gp_commit_stamp`, which every write
//!   transaction of every instance bumps just before it commits
//!   (`pg_db::transact`, facts and bookkeeping alike), read on one connection
//!   of the watch's own: one round trip, one row by its key. The bump
//!   commits with the write it counts, so a stamp taken before a lookup
//!   differs from every stamp taken after a commit the lookup did not see.
//!   It counts this database's writes only (a busy neighbour on the same
//!   cluster costs nothing); a write made past Groundproof (an UPDATE typed
//!   by hand) does not move it, and is seen within
//!   `auth::verified::KEEP_FOR`. The read blocks: callers on the async
//!   executor ask [`CommitWatch::is_instant`] first.

use super::engine::Conn;
use super::engine::pg::PgConn;
use super::{Db, Engine, configure};
use crate::error::Result;
use rusqlite::{Connection, OpenFlags};
use std::sync::Mutex;

/// Equal stamps of one [`CommitWatch`] mean no commit in between.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct CommitStamp(u64);

/// See the module documentation.
pub struct CommitWatch {
    inner: Watch,
}

enum Watch {
    Lite(Mutex<Connection>),
    /// Connected at first use, and again after a failed read.
    Pg {
        url: String,
        conn: Box<Mutex<Option<PgConn>>>,
    },
}

/// Where PostgreSQL stands: the count of committed write transactions.
const PG_STAMP: &str = "SELECT n FROM gp_commit_stamp WHERE id = 1";

impl Db {
    /// A new watch on this database's commits (on PostgreSQL it connects
    /// at its first stamp).
    pub fn commit_watch(&self) -> Result<CommitWatch> {
        let path = match &self.engine {
            Engine::Lite(lite) => &lite.path,
            Engine::Pg(pg) => {
                return Ok(CommitWatch {
                    inner: Watch::Pg {
                        url: pg.url().to_string(),
                        conn: Box::new(Mutex::new(None)),
                    },
                });
            }
        };
        let conn = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )?;
        configure(&conn)?;
        Ok(CommitWatch {
            inner: Watch::Lite(Mutex::new(conn)),
        })
    }
}

impl CommitWatch {
    /// Whether [`CommitWatch::stamp`] answers without waiting on a server
    /// (SQLite), so that it may be called on the async executor.
    pub fn is_instant(&self) -> bool {
        matches!(self.inner, Watch::Lite(_))
    }

    /// Where the database stands now.
    pub fn stamp(&self) -> Result<CommitStamp> {
        match &self.inner {
            Watch::Lite(conn) => {
                let conn = conn.lock().unwrap_or_else(|p| p.into_inner());
                let v: i64 = conn
                    .prepare_cached("PRAGMA data_version")?
                    .query_row([], |r| r.get(0))?;
                Ok(CommitStamp(v as u64))
            }
            Watch::Pg { url, conn } => {
                let mut conn = conn.lock().unwrap_or_else(|p| p.into_inner());
                if conn.as_ref().is_none_or(|c| c.is_closed()) {
                    *conn = Some(PgConn::connect(url)?);
                }
                let c = conn.as_ref().expect("connected above");
                let read = Conn::Pg(c).query_row(PG_STAMP, [], |r| {
                    Ok(CommitStamp(r.get::<_, i64>(0)? as u64))
                });
                if read.is_err() {
                    // Connect afresh next time (the server may have gone).
                    if let Some(c) = conn.take() {
                        close_off_executor(c);
                    }
                }
                read
            }
        }
    }
}

/// The sync client blocks on its own runtime when it closes, which panics
/// on an async executor thread (where the server's state may be dropped):
/// close on a thread of its own.
fn close_off_executor(conn: PgConn) {
    let _ = std::thread::Builder::new()
        .name("gp-pg-close".into())
        .spawn(move || drop(conn));
}

impl Drop for CommitWatch {
    fn drop(&mut self) {
        if let Watch::Pg { conn, .. } = &mut self.inner
            && let Some(c) = conn.get_mut().unwrap_or_else(|p| p.into_inner()).take()
        {
            close_off_executor(c);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::Role;

    /// Another handle on the same database, as another process has.
    fn reopen(db: &Db, dir: &std::path::Path) -> Db {
        match &db.engine {
            Engine::Lite(_) => Db::open(dir).unwrap(),
            Engine::Pg(pg) => Db::open_postgres(pg.url()).unwrap(),
        }
    }

    #[test]
    fn the_watch_moves_on_every_commit_of_any_connection() {
        let dir = tempfile::tempdir().unwrap();
        let db = super::super::test_db(dir.path());
        let watch = db.commit_watch().unwrap();
        let s0 = watch.stamp().unwrap();
        assert_eq!(watch.stamp().unwrap(), s0, "reading changes nothing");
        db.read(|r| r.api_tokens()).unwrap();
        assert_eq!(watch.stamp().unwrap(), s0, "reading changes nothing");
        // A bookkeeping write (the fact stamp stays for it) moves the watch.
        let fact = db.fact_stamp();
        db.write_bookkeeping(|tx| tx.insert_api_token("ab", Role::Manager, "t", 1))
            .unwrap();
        assert_eq!(db.fact_stamp(), fact);
        let s1 = watch.stamp().unwrap();
        assert_ne!(s1, s0);
        // A commit through another connection (another process) too.
        let other = reopen(&db, dir.path());
        other
            .write_bookkeeping(|tx| tx.revoke_api_token(1, 2).map(drop))
            .unwrap();
        let s2 = watch.stamp().unwrap();
        assert_ne!(s2, s1);
        // A stamp taken while a write runs differs from one after its
        // commit (what a lookup racing a revocation relies on).
        let during = other
            .write_bookkeeping(|tx| {
                tx.insert_api_token("ef", Role::Manager, "v", 4)?;
                watch.stamp()
            })
            .unwrap();
        assert_ne!(watch.stamp().unwrap(), during);
        // A transaction that rolls back is no commit.
        let s3 = watch.stamp().unwrap();
        let refused: Result<()> = db.write(|tx| {
            tx.insert_api_token("cd", Role::Manager, "u", 3)?;
            Err(crate::error::Error::Invalid("rolled back".into()))
        });
        assert!(refused.is_err());
        assert_eq!(watch.stamp().unwrap(), s3);
    }
}
