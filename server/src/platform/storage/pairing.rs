//! Pairing codes: a short-lived, single-use code that puts one bundle onto
//! one phone's field app (DESIGN.md vocabulary). Only the SHA-256 of a code
//! is stored, as for tokens. Redeeming marks the code used and stores the
//! team token made for the phone in the same transaction, so a code can
//! never hand out two credentials. Times are Unix seconds.

use super::engine::{OptionalExtension, Row};
use super::{Reader, Tx};
use crate::error::Result;
use rusqlite::params;

/// Schema for this module; appended to the migration list. `token_id` is
/// the team token the redeeming phone received (a phone's token stops
/// working when its bundle is cancelled: see `Reader::team_token_by_hash`).
pub const PAIRING_MIGRATION: &str = r#"
    CREATE TABLE pairings (
        id INTEGER PRIMARY KEY,
        code_sha256 TEXT NOT NULL UNIQUE,
        bundle_id TEXT NOT NULL REFERENCES bundles(id),
        created_by TEXT NOT NULL,
        created_at INTEGER NOT NULL,
        expires_at INTEGER NOT NULL,
        used_at INTEGER,
        token_id INTEGER REFERENCES team_tokens(id)
    );
    CREATE INDEX pairings_bundle ON pairings(bundle_id);
    CREATE INDEX pairings_token ON pairings(token_id);
"#;

/// A pairing code as stored (without the code itself).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PairingRecord {
    pub id: i64,
    pub bundle_id: String,
    pub created_by: String,
    pub created_at: i64,
    pub expires_at: i64,
    pub used_at: Option<i64>,
    pub token_id: Option<i64>,
}

fn pairing_row(r: &Row<'_>) -> Result<PairingRecord> {
    Ok(PairingRecord {
        id: r.get(0)?,
        bundle_id: r.get(1)?,
        created_by: r.get(2)?,
        created_at: r.get(3)?,
        expires_at: r.get(4)?,
        used_at: r.get(5)?,
        token_id: r.get(6)?,
    })
}

impl Tx<'_> {
    /// Store a new pairing code (by its hash) for `bundle_id`.
    pub fn insert_pairing(
        &self,
        code_sha256: &str,
        bundle_id: &str,
        created_by: &str,
        now: i64,
        expires_at: i64,
    ) -> Result<PairingRecord> {
        let id: i64 = self.tx.query_row(
            "INSERT INTO pairings (code_sha256, bundle_id, created_by, created_at, expires_at)
             VALUES (?1, ?2, ?3, ?4, ?5) RETURNING id",
            params![code_sha256, bundle_id, created_by, now, expires_at],
            |r| r.get(0),
        )?;
        Ok(PairingRecord {
            id,
            bundle_id: bundle_id.to_string(),
            created_by: created_by.to_string(),
            created_at: now,
            expires_at,
            used_at: None,
            token_id: None,
        })
    }

    /// Mark a pairing used by the phone that received team token
    /// `token_id`; false if it was used already (the caller holds the
    /// write transaction, so two phones cannot both win).
    pub fn use_pairing(&self, id: i64, token_id: i64, now: i64) -> Result<bool> {
        Ok(self.tx.execute(
            "UPDATE pairings SET used_at = ?1, token_id = ?2 WHERE id = ?3 AND used_at IS NULL",
            params![now, token_id, id],
        )? > 0)
    }
}

impl Reader<'_> {
    /// The bundle whose pairing gave the phone team token `token_id`, if
    /// the token came from a pairing.
    pub fn paired_bundle_of_token(&self, token_id: i64) -> Result<Option<String>> {
        self.conn
            .query_row(
                "SELECT bundle_id FROM pairings WHERE token_id = ?1",
                [token_id],
                |r| r.get(0),
            )
            .optional()
    }

    /// A pairing by the hash of its code.
    pub fn pairing_by_hash(&self, code_sha256: &str) -> Result<Option<PairingRecord>> {
        self.conn
            .query_row(
                "SELECT id, bundle_id, created_by, created_at, expires_at, used_at, token_id
                 FROM pairings WHERE code_sha256 = ?1",
                [code_sha256],
                pairing_row,
            )
            .optional()
    }

    /// Every pairing of one bundle, oldest first.
    pub fn pairings_of(&self, bundle_id: &str) -> Result<Vec<PairingRecord>> {
        let mut st = self.conn.prepare(
            "SELECT id, bundle_id, created_by, created_at, expires_at, used_at, token_id
             FROM pairings WHERE bundle_id = ?1 ORDER BY id",
        )?;
        let v = st
            .query_map([bundle_id], pairing_row)?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }
}
