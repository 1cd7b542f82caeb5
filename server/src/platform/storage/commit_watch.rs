//! A commit watch: one read-only connection of its own whose
//! `PRAGMA data_version` changes whenever any other connection commits to
//! the database file — this process's writer (facts and bookkeeping alike:
//! sessions, tokens, accounts) or another process (the command line, a
//! second server on the same file). Unlike [`Db::fact_stamp`] it moves for
//! every commit, so a cache of anything a bookkeeping write can change (the
//! verified bearer tokens of `platform::auth::VerifiedTokens`) can trust an
//! equal stamp.

use super::{Db, configure};
use crate::error::Result;
use rusqlite::{Connection, OpenFlags};
use std::sync::Mutex;

/// Equal stamps of one [`CommitWatch`] mean no commit in between.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct CommitStamp(u64);

/// See the module documentation.
pub struct CommitWatch {
    conn: Mutex<Connection>,
}

impl Db {
    /// A new watch on this database's commits.
    pub fn commit_watch(&self) -> Result<CommitWatch> {
        // On PostgreSQL there is no watch yet: the tokens are then checked
        // on every request (DEVELOPERS.md, "Not yet").
        let Some(path) = self.sqlite_path() else {
            return Err(crate::error::Error::Invalid(
                "no commit watch on PostgreSQL yet".into(),
            ));
        };
        let conn = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )?;
        configure(&conn)?;
        Ok(CommitWatch {
            conn: Mutex::new(conn),
        })
    }
}

impl CommitWatch {
    /// Where the database stands now: a short read transaction that only
    /// reads the WAL index (no table is touched), about a microsecond.
    pub fn stamp(&self) -> Result<CommitStamp> {
        let conn = self.conn.lock().unwrap_or_else(|p| p.into_inner());
        let v: i64 = conn
            .prepare_cached("PRAGMA data_version")?
            .query_row([], |r| r.get(0))?;
        Ok(CommitStamp(v as u64))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::Role;

    #[test]
    fn the_watch_moves_on_every_commit_of_any_connection() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let watch = db.commit_watch().unwrap();
        let s0 = watch.stamp().unwrap();
        assert_eq!(watch.stamp().unwrap(), s0, "reading changes nothing");
        // A bookkeeping write (the fact stamp stays for it) moves the watch.
        let fact = db.fact_stamp();
        db.write_bookkeeping(|tx| tx.insert_api_token("ab", Role::Manager, "t", 1))
            .unwrap();
        assert_eq!(db.fact_stamp(), fact);
        let s1 = watch.stamp().unwrap();
        assert_ne!(s1, s0);
        // A commit through another connection (another process) too.
        let other = Db::open(dir.path()).unwrap();
        other
            .write_bookkeeping(|tx| tx.revoke_api_token(1, 2).map(drop))
            .unwrap();
        assert_ne!(watch.stamp().unwrap(), s1);
        // A transaction that rolls back is no commit.
        let s2 = watch.stamp().unwrap();
        let refused: Result<()> = db.write(|tx| {
            tx.insert_api_token("cd", Role::Manager, "u", 3)?;
            Err(crate::error::Error::Invalid("rolled back".into()))
        });
        assert!(refused.is_err());
        assert_eq!(watch.stamp().unwrap(), s2);
    }
}
