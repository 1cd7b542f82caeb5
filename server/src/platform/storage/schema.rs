//! Versioned schema migrations, applied in order at start. The version is
//! SQLite's `user_version` (PostgreSQL: the row of `gp_schema`); a database
//! newer than the last migration here is refused. PostgreSQL's dialect of
//! each migration is in `schema_pg.rs`, same version numbers.

use crate::error::{Error, Result};
use rusqlite::{Connection, TransactionBehavior};

/// Migration `i` brings the schema from version `i` to `i + 1`.
const MIGRATIONS: &[&str] = &[
    // 1: sources, imports, alerts, events, zones.
    r#"
    CREATE TABLE sources (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL UNIQUE,
        pixel_size_m REAL NOT NULL CHECK (pixel_size_m > 0),
        revisit_days INTEGER NOT NULL CHECK (revisit_days > 0),
        created_at TEXT NOT NULL
    );
    CREATE TABLE imports (
        id INTEGER PRIMARY KEY,
        source_id INTEGER NOT NULL REFERENCES sources(id),
        file_name TEXT NOT NULL,
        imported_at TEXT NOT NULL,
        rows_read INTEGER NOT NULL,
        imported INTEGER NOT NULL,
        duplicates INTEGER NOT NULL,
        skipped INTEGER NOT NULL
    );
    CREATE TABLE events (
        id INTEGER PRIMARY KEY,
        merged_into INTEGER REFERENCES events(id),
        origin TEXT NOT NULL DEFAULT 'alerts',
        footprint TEXT NOT NULL,
        area_ha REAL NOT NULL,
        centroid_lon REAL NOT NULL,
        centroid_lat REAL NOT NULL,
        west REAL NOT NULL, south REAL NOT NULL, east REAL NOT NULL, north REAL NOT NULL,
        first_day INTEGER NOT NULL,
        last_day INTEGER NOT NULL,
        alert_count INTEGER NOT NULL,
        highest_confidence INTEGER NOT NULL,
        corroborated INTEGER NOT NULL,
        per_source TEXT NOT NULL,
        created_at TEXT NOT NULL,
        updated_at TEXT NOT NULL
    );
    CREATE INDEX events_live ON events(merged_into, last_day);
    CREATE TABLE alerts (
        id INTEGER PRIMARY KEY,
        source_id INTEGER NOT NULL REFERENCES sources(id),
        import_id INTEGER NOT NULL REFERENCES imports(id),
        lon REAL NOT NULL,
        lat REAL NOT NULL,
        lon_e7 INTEGER NOT NULL,
        lat_e7 INTEGER NOT NULL,
        day INTEGER NOT NULL,
        confidence INTEGER NOT NULL CHECK (confidence IN (0, 1)),
        cell INTEGER NOT NULL,
        event_id INTEGER NOT NULL REFERENCES events(id)
    );
    CREATE UNIQUE INDEX alerts_pixel ON alerts(source_id, lon_e7, lat_e7, day);
    CREATE INDEX alerts_cell ON alerts(cell);
    CREATE INDEX alerts_event ON alerts(event_id);
    CREATE TABLE zones (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL UNIQUE,
        priority INTEGER NOT NULL,
        geometry TEXT NOT NULL,
        west REAL NOT NULL, south REAL NOT NULL, east REAL NOT NULL, north REAL NOT NULL,
        imported_at TEXT NOT NULL
    );
    CREATE TABLE event_zones (
        event_id INTEGER NOT NULL REFERENCES events(id),
        zone_id INTEGER NOT NULL REFERENCES zones(id),
        PRIMARY KEY (event_id, zone_id)
    ) WITHOUT ROWID;
    CREATE INDEX event_zones_zone ON event_zones(zone_id, event_id);
    "#,
    // 2: teams and bundles (trips).
    r#"
    CREATE TABLE teams (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL UNIQUE,
        created_at TEXT NOT NULL
    );
    CREATE TABLE bundles (
        id TEXT PRIMARY KEY,
        team_id INTEGER NOT NULL REFERENCES teams(id),
        mode TEXT NOT NULL CHECK (mode IN ('response', 'assessment')),
        issued_at TEXT NOT NULL,
        due_at TEXT NOT NULL,
        expires_at TEXT NOT NULL,
        seed INTEGER,
        margin REAL,
        selection TEXT NOT NULL,
        start_lon REAL NOT NULL,
        start_lat REAL NOT NULL,
        route_m REAL NOT NULL,
        upload_key_id TEXT NOT NULL UNIQUE,
        upload_key BLOB NOT NULL,
        file_name TEXT NOT NULL,
        file_sha256 TEXT NOT NULL,
        file_size INTEGER NOT NULL,
        cancelled_at TEXT
    );
    CREATE TABLE bundle_items (
        bundle_id TEXT NOT NULL REFERENCES bundles(id),
        visit_order INTEGER NOT NULL,
        code TEXT NOT NULL,
        kind TEXT NOT NULL CHECK (kind IN ('event', 'control')),
        event_id INTEGER REFERENCES events(id),
        lon REAL NOT NULL,
        lat REAL NOT NULL,
        stratum TEXT,
        stratum_population INTEGER,
        inclusion_probability REAL,
        PRIMARY KEY (bundle_id, code)
    ) WITHOUT ROWID;
    CREATE INDEX bundle_items_event ON bundle_items(event_id);
    "#,
    // 3: uploads, returns, reports, photos, evidence checks, per-report results.
    crate::platform::storage::returns::RETURNS_MIGRATION,
    // 4: adjudications.
    crate::platform::storage::stats::ADJUDICATIONS_MIGRATION,
    // 5: users, sessions, API and team tokens, login attempts.
    crate::platform::storage::auth::AUTH_MIGRATION,
    // 6: covering indexes for the statistics.
    crate::platform::storage::stats::STATS_INDEXES_MIGRATION,
    // 7: upload owners, return receipts, photos whose data falls short of their header.
    crate::platform::storage::returns::HARDENING_MIGRATION,
    // 8: pairing codes for the field app.
    crate::platform::storage::pairing::PAIRING_MIGRATION,
    // 9: provenance of reports entered at the station from a paper sheet.
    crate::platform::storage::station::STATION_MIGRATION,
    // 10: the administration log (append-only) and disabled teams.
    crate::platform::storage::admin::ADMIN_MIGRATION,
    // 11: each user's chosen language for the pages.
    crate::platform::storage::languages::LANGUAGES_MIGRATION,
    // 12: the organisation's settings and the station entry's drafts, shared by instances.
    crate::platform::storage::shared::SHARED_MIGRATION,
];

/// The advisory lock held while PostgreSQL's schema is brought up to date,
/// so that instances starting at once apply each migration once ("gp-migrate").
const MIGRATE_LOCK: i64 = 0x6770_2d6d_6967_7261;

/// The schema version this binary writes.
pub const LATEST: i64 = MIGRATIONS.len() as i64;

pub fn migrate(conn: &mut Connection) -> Result<()> {
    let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
    let current: i64 = tx.query_row("PRAGMA user_version", [], |r| r.get(0))?;
    if current > LATEST {
        return Err(Error::SchemaTooNew {
            found: current,
            supported: LATEST,
        });
    }
    for (i, sql) in MIGRATIONS.iter().enumerate().skip(current as usize) {
        tx.execute_batch(sql)?;
        tx.pragma_update(None, "user_version", (i + 1) as i64)?;
        tracing::info!(version = i + 1, "applied schema migration");
    }
    tx.commit()?;
    Ok(())
}

/// Bring a PostgreSQL database up to date in one transaction under
/// [`MIGRATE_LOCK`]; refuse one newer than this binary. Also makes the
/// engine's own tables: the schema version and the fact stamp row.
pub(super) fn migrate_pg(conn: &super::engine::pg::PgConn) -> Result<()> {
    use super::schema_pg::PG_MIGRATIONS;
    let c = super::engine::Conn::Pg(conn);
    conn.batch(&format!(
        "BEGIN; SELECT pg_advisory_xact_lock({MIGRATE_LOCK});
         CREATE TABLE IF NOT EXISTS gp_schema (id BIGINT PRIMARY KEY CHECK (id = 1), version BIGINT NOT NULL);
         INSERT INTO gp_schema (id, version) VALUES (1, 0) ON CONFLICT DO NOTHING;
         CREATE TABLE IF NOT EXISTS gp_fact_stamp (id BIGINT PRIMARY KEY CHECK (id = 1), n BIGINT NOT NULL);
         INSERT INTO gp_fact_stamp (id, n) VALUES (1, 0) ON CONFLICT DO NOTHING;
         CREATE TABLE IF NOT EXISTS gp_commit_stamp (id BIGINT PRIMARY KEY CHECK (id = 1), n BIGINT NOT NULL);
         INSERT INTO gp_commit_stamp (id, n) VALUES (1, 0) ON CONFLICT DO NOTHING;"
    ))?;
    let out = (|| {
        let current: i64 = c.query_row("SELECT version FROM gp_schema WHERE id = 1", [], |r| {
            r.get(0)
        })?;
        if current > LATEST {
            return Err(Error::SchemaTooNew {
                found: current,
                supported: LATEST,
            });
        }
        for (i, sql) in PG_MIGRATIONS.iter().enumerate().skip(current as usize) {
            conn.batch(sql)?;
            c.execute(
                "UPDATE gp_schema SET version = ?1 WHERE id = 1",
                [(i + 1) as i64],
            )?;
            tracing::info!(version = i + 1, "applied schema migration (PostgreSQL)");
        }
        conn.batch("COMMIT")
    })();
    if out.is_err() {
        let _ = conn.batch("ROLLBACK");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_dialects_have_every_migration() {
        assert_eq!(
            super::super::schema_pg::PG_MIGRATIONS.len(),
            MIGRATIONS.len()
        );
    }
}
