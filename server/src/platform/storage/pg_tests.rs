//! Tests of the PostgreSQL engine itself, on the server at
//! `GROUNDPROOF_TEST_POSTGRES` (`.ci/run` starts a throwaway cluster on
//! loopback). Without it they say SKIP, except under `CI=true`, where they
//! fail.

use super::*;
use crate::platform::auth::Role;

/// A new database on the test server, or `None` (SKIP) off CI.
fn server() -> Option<String> {
    match std::env::var("GROUNDPROOF_TEST_POSTGRES") {
        Ok(url) if !url.trim().is_empty() => Some(url.trim().to_string()),
        _ => {
            let ci = std::env::var("CI").is_ok_and(|v| !matches!(v.trim(), "" | "0" | "false"));
            assert!(
                !ci,
                "CI is set and GROUNDPROOF_TEST_POSTGRES is not: the PostgreSQL tests cannot run"
            );
            eprintln!("SKIP: GROUNDPROOF_TEST_POSTGRES is not set");
            None
        }
    }
}

fn fresh() -> Option<String> {
    server().map(|url| scratch_postgres(&url).unwrap())
}

#[test]
fn migrates_once_even_when_instances_start_together() {
    let Some(url) = fresh() else { return };
    let opened: Vec<_> = (0..4)
        .map(|_| {
            let url = url.clone();
            std::thread::spawn(move || Db::open_postgres(&url).map(|_| ()))
        })
        .collect();
    for t in opened {
        t.join().unwrap().unwrap();
    }
    let db = Db::open_postgres(&url).unwrap();
    let version: i64 = db
        .read(|r| {
            r.conn
                .query_row("SELECT version FROM gp_schema", [], |x| x.get(0))
        })
        .unwrap();
    assert_eq!(version, schema::LATEST);
}

#[test]
fn refuses_a_newer_database() {
    let Some(url) = fresh() else { return };
    let db = Db::open_postgres(&url).unwrap();
    db.write(|tx| tx.tx.execute("UPDATE gp_schema SET version = 999", []))
        .unwrap();
    drop(db);
    match Db::open_postgres(&url) {
        Err(Error::SchemaTooNew { found: 999, .. }) => {}
        Err(other) => panic!("unexpected error {other}"),
        Ok(_) => panic!("opened a database newer than the binary"),
    }
}

#[test]
fn values_keep_their_types() {
    let Some(url) = fresh() else { return };
    let db = Db::open_postgres(&url).unwrap();
    let s = db
        .write(|tx| tx.add_source("optical-10m", 10.5, 5))
        .unwrap();
    assert_eq!(db.read(|r| r.sources()).unwrap(), vec![s.clone()]);
    // A SUM of BIGINT is NUMERIC in PostgreSQL and reads as an integer.
    let (n, sum): (i64, i64) = db
        .read(|r| {
            r.conn
                .query_row("SELECT COUNT(*), SUM(revisit_days) FROM sources", [], |x| {
                    Ok((x.get(0)?, x.get(1)?))
                })
        })
        .unwrap();
    assert_eq!((n, sum), (1, 5));
    // One user name in any letter case, as SQLite's NOCASE.
    db.write_bookkeeping(|tx| tx.add_user("Ana", Role::Manager, "x", 1))
        .unwrap();
    let again = db.write_bookkeeping(|tx| tx.add_user("ana", Role::Manager, "x", 1));
    assert!(matches!(again, Err(Error::Conflict(_))), "{again:?}");
    assert!(db.read(|r| r.user_by_name("ANA")).unwrap().is_some());
}

#[test]
fn the_logs_are_append_only() {
    let Some(url) = fresh() else { return };
    let db = Db::open_postgres(&url).unwrap();
    db.write_bookkeeping(|tx| tx.append_admin_log(10, "a", "b", "c", "d"))
        .unwrap();
    for sql in [
        "UPDATE admin_log SET actor = 'someone else'",
        "DELETE FROM admin_log",
        "TRUNCATE admin_log",
    ] {
        let e = db
            .write(|tx| tx.tx.execute(sql, []))
            .unwrap_err()
            .to_string();
        assert!(e.contains("append-only"), "{e}");
    }
    assert_eq!(db.read(|r| r.admin_log(None, 10)).unwrap().len(), 1);
}

#[test]
fn the_fact_stamp_moves_on_facts_only_and_across_instances() {
    let Some(url) = fresh() else { return };
    let db = Db::open_postgres(&url).unwrap();
    let s0 = db.fact_stamp();
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .unwrap();
    let s1 = db.fact_stamp();
    assert_ne!(s1, s0, "a committed write moves it");
    let u = db
        .write_bookkeeping(|tx| tx.add_user("ana", Role::Manager, "x", 1))
        .unwrap();
    db.write_bookkeeping(|tx| tx.insert_session("a".repeat(64).as_str(), u.id, "s", 1))
        .unwrap();
    // Our own write seen by the watcher again must not move it either.
    std::thread::sleep(pg_db::STAMP_POLL * 3);
    assert_eq!(db.fact_stamp(), s1, "bookkeeping leaves it");
    db.write_bookkeeping(|tx| tx.add_source("radar-10m", 10.0, 12))
        .unwrap();
    let s2 = db.fact_stamp();
    assert_ne!(s2, s1, "a fact through the bookkeeping door moves it");
    // Another instance on the same database writes a fact.
    let other = Db::open_postgres(&url).unwrap();
    other
        .write(|tx| tx.add_source("optical-30m", 30.0, 8))
        .unwrap();
    let deadline = std::time::Instant::now() + pg_db::STAMP_POLL * 8;
    while db.fact_stamp() == s2 {
        assert!(
            std::time::Instant::now() < deadline,
            "another instance's fact write was not noticed"
        );
        std::thread::sleep(pg_db::STAMP_POLL / 5);
    }
}

#[test]
fn writers_on_two_instances_take_turns() {
    let Some(url) = fresh() else { return };
    let a = Db::open_postgres(&url).unwrap();
    let b = Db::open_postgres(&url).unwrap();
    // Check-then-insert in both at once: one wins, the other sees it.
    let names = std::thread::scope(|s| {
        let ta = s.spawn(|| a.write(|tx| tx.add_source("same", 10.0, 5)));
        let tb = s.spawn(|| b.write(|tx| tx.add_source("same", 10.0, 5)));
        [ta.join().unwrap(), tb.join().unwrap()]
    });
    let won = names.iter().filter(|r| r.is_ok()).count();
    let conflicts = names
        .iter()
        .filter(|r| matches!(r, Err(Error::Conflict(_))))
        .count();
    assert_eq!((won, conflicts), (1, 1), "{names:?}");
}

#[test]
fn a_failed_write_leaves_nothing() {
    let Some(url) = fresh() else { return };
    let db = Db::open_postgres(&url).unwrap();
    let r: Result<()> = db.write(|tx| {
        tx.add_source("optical-10m", 10.0, 5)?;
        Err(Error::Invalid("stop".into()))
    });
    assert!(r.is_err());
    assert!(db.read(|r| r.sources()).unwrap().is_empty());
    // The connection went back to the pool in a usable state.
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .unwrap();
    assert_eq!(db.read(|r| r.sources()).unwrap().len(), 1);
}
