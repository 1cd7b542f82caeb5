//! The database's side of `groundproof backup` and `restore`: SQLite's
//! online backup (a consistent copy of a live database, page by page,
//! while the server keeps writing) and the check of a restored copy.

use super::Db;
use crate::error::{Error, Result};
use rusqlite::{Connection, OpenFlags};
use std::path::Path;
use std::time::Duration;

/// Pages copied per step: small steps let writers in between (SQLite
/// starts over when another connection writes during the copy, so the
/// copy is consistent whatever happens meanwhile).
const PAGES_PER_STEP: std::ffi::c_int = 1024;

impl Db {
    /// Copy the database, as it stands at one instant, into a new file
    /// `dest` (which must not exist), then fsync it.
    pub fn backup_into(&self, dest: &Path) -> Result<()> {
        if dest.exists() {
            return Err(Error::Invalid(format!(
                "{} exists already; a backup writes a new file",
                dest.display()
            )));
        }
        let Some(path) = self.sqlite_path() else {
            return Err(Error::Invalid(
                "groundproof backup copies the embedded SQLite database; for PostgreSQL use its own tools (pg_dump or pg_basebackup) together with the data directory".into(),
            ));
        };
        let src = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )?;
        src.busy_timeout(super::BUSY_TIMEOUT)?;
        let mut dst = Connection::open(dest)?;
        {
            let b = rusqlite::backup::Backup::new(&src, &mut dst)?;
            b.run_to_completion(PAGES_PER_STEP, Duration::from_millis(5), None)?;
        }
        // The copy is a plain rollback-journal file: one file, no WAL.
        dst.execute_batch("PRAGMA journal_mode=DELETE;")?;
        drop(dst);
        std::fs::File::open(dest)
            .and_then(|f| f.sync_all())
            .map_err(|e| Error::io(format!("syncing {}", dest.display()), e))
    }
}

/// Refuse a database file that SQLite finds damaged (`PRAGMA
/// integrity_check`), naming the first problem.
pub fn check_database(path: &Path) -> Result<()> {
    let c = Connection::open_with_flags(path, OpenFlags::SQLITE_OPEN_READ_ONLY)
        .map_err(|e| Error::Invalid(format!("{}: not a database ({e})", path.display())))?;
    let verdict: String = c
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .map_err(|e| Error::Invalid(format!("{}: not a database ({e})", path.display())))?;
    if verdict != "ok" {
        return Err(Error::Invalid(format!(
            "{}: the database is damaged: {verdict}",
            path.display()
        )));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_backup_holds_what_was_committed_and_passes_the_check() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        let out = dir.path().join("copy.sqlite3");
        db.backup_into(&out).unwrap();
        check_database(&out).unwrap();
        let copy = tempfile::tempdir().unwrap();
        std::fs::copy(&out, copy.path().join("groundproof.sqlite3")).unwrap();
        let back = Db::open(copy.path()).unwrap();
        let names: Vec<String> = back
            .read(|r| r.sources())
            .unwrap()
            .into_iter()
            .map(|s| s.name)
            .collect();
        assert_eq!(names, ["optical-10m"]);
        assert!(db.backup_into(&out).is_err(), "never over an existing file");
        std::fs::write(&out, b"not a database at all, just text").unwrap();
        assert!(check_database(&out).is_err());
    }
}
