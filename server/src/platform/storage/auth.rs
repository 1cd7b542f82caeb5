//! Users, browser sessions, API tokens, team tokens and login attempts.
//!
//! Tokens are stored only as the hex SHA-256 of the token string. Times in
//! these tables are Unix seconds (INTEGER), because expiry and throttling
//! compare them in SQL. Disabling a user or changing a password deletes the
//! user's sessions in the same transaction (ASVS 5.0 7.4.2, 7.4.3).

use super::engine::{Dialect, OptionalExtension, Row};
use super::{Reader, Tx};
use crate::domain::Role;
use crate::error::{Error, Result};
use rusqlite::params;
use serde::Serialize;

/// Schema for this module; appended to the migration list.
pub const AUTH_MIGRATION: &str = r#"
    CREATE TABLE users (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL UNIQUE COLLATE NOCASE,
        role TEXT NOT NULL CHECK (role IN ('admin', 'coordinator', 'manager')),
        password_phc TEXT NOT NULL,
        created_at INTEGER NOT NULL,
        disabled INTEGER NOT NULL DEFAULT 0 CHECK (disabled IN (0, 1))
    );
    CREATE TABLE sessions (
        token_sha256 TEXT PRIMARY KEY,
        user_id INTEGER NOT NULL REFERENCES users(id) ON DELETE CASCADE,
        csrf_secret TEXT NOT NULL,
        created_at INTEGER NOT NULL,
        last_seen_at INTEGER NOT NULL
    ) WITHOUT ROWID;
    CREATE INDEX sessions_user ON sessions(user_id);
    CREATE TABLE api_tokens (
        id INTEGER PRIMARY KEY,
        token_sha256 TEXT NOT NULL UNIQUE,
        role TEXT NOT NULL CHECK (role IN ('admin', 'coordinator', 'manager')),
        label TEXT NOT NULL,
        created_at INTEGER NOT NULL,
        revoked_at INTEGER
    );
    CREATE TABLE team_tokens (
        id INTEGER PRIMARY KEY,
        token_sha256 TEXT NOT NULL UNIQUE,
        team_name TEXT NOT NULL,
        created_at INTEGER NOT NULL,
        revoked_at INTEGER
    );
    CREATE INDEX team_tokens_team ON team_tokens(team_name);
    CREATE TABLE login_attempts (
        id INTEGER PRIMARY KEY,
        user_name TEXT NOT NULL,
        client TEXT NOT NULL,
        at INTEGER NOT NULL,
        ok INTEGER NOT NULL CHECK (ok IN (0, 1))
    );
    CREATE INDEX login_attempts_user ON login_attempts(user_name, at);
    CREATE INDEX login_attempts_client ON login_attempts(client, at);
    CREATE INDEX login_attempts_at ON login_attempts(at);
"#;

/// A user account (without its password hash).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct User {
    pub id: i64,
    pub name: String,
    pub role: Role,
    /// Unix seconds.
    pub created_at: i64,
    pub disabled: bool,
}

/// A stored browser session and its user as they are now.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SessionRecord {
    pub token_sha256: String,
    pub user: User,
    pub csrf_secret: String,
    pub created_at: i64,
    pub last_seen_at: i64,
}

/// An API token as listed (the hash stays inside storage).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ApiTokenRecord {
    pub id: i64,
    pub role: Role,
    pub label: String,
    pub created_at: i64,
    pub revoked_at: Option<i64>,
}

/// A team token as listed (the hash stays inside storage).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct TeamTokenRecord {
    pub id: i64,
    pub team_name: String,
    pub created_at: i64,
    pub revoked_at: Option<i64>,
}

/// A stored login attempt (what the login throttling in `auth` counts).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LoginAttempt {
    /// Unix seconds.
    pub at: i64,
    /// Whether the password was right.
    pub ok: bool,
}

fn role_of(text: &str) -> Result<Role> {
    text.parse::<Role>().map_err(|e| {
        rusqlite::Error::FromSqlConversionFailure(0, rusqlite::types::Type::Text, Box::new(e))
            .into()
    })
}

const USER_COLS: &str = "u.id, u.name, u.role, u.created_at, u.disabled";

fn user_row(r: &Row<'_>, at: usize) -> Result<User> {
    Ok(User {
        id: r.get(at)?,
        name: r.get(at + 1)?,
        role: role_of(&r.get::<_, String>(at + 2)?)?,
        created_at: r.get(at + 3)?,
        disabled: r.get::<_, i64>(at + 4)? != 0,
    })
}

fn api_row(r: &Row<'_>) -> Result<ApiTokenRecord> {
    Ok(ApiTokenRecord {
        id: r.get(0)?,
        role: role_of(&r.get::<_, String>(1)?)?,
        label: r.get(2)?,
        created_at: r.get(3)?,
        revoked_at: r.get(4)?,
    })
}

fn team_row(r: &Row<'_>) -> Result<TeamTokenRecord> {
    Ok(TeamTokenRecord {
        id: r.get(0)?,
        team_name: r.get(1)?,
        created_at: r.get(2)?,
        revoked_at: r.get(3)?,
    })
}

/// `u.name` equals `?1` in any letter case (SQLite: the column's NOCASE
/// collation; PostgreSQL: `lower`, as its unique index on `lower(name)`).
fn name_is(conn: super::engine::Conn<'_>) -> &'static str {
    match conn.dialect() {
        super::engine::Dialect::Sqlite => "u.name = ?1",
        super::engine::Dialect::Postgres => "lower(u.name) = lower(?1)",
    }
}

fn is_unique_violation(e: &Error) -> bool {
    match e {
        Error::Db(rusqlite::Error::SqliteFailure(f, _)) => {
            f.extended_code == rusqlite::ffi::SQLITE_CONSTRAINT_UNIQUE
                || f.extended_code == rusqlite::ffi::SQLITE_CONSTRAINT_PRIMARYKEY
        }
        Error::Postgres(p) => p.code() == Some(&postgres::error::SqlState::UNIQUE_VIOLATION),
        _ => false,
    }
}

impl Tx<'_> {
    /// Create a user; a name already taken (in any letter case) is a
    /// conflict. The caller has validated the name and hashed the password.
    pub fn add_user(&self, name: &str, role: Role, password_phc: &str, now: i64) -> Result<User> {
        let id: i64 = match self.tx.query_row(
            "INSERT INTO users (name, role, password_phc, created_at) VALUES (?1, ?2, ?3, ?4) RETURNING id",
            params![name, role.as_str(), password_phc, now],
            |r| r.get(0),
        ) {
            Ok(id) => id,
            Err(e) if is_unique_violation(&e) => {
                return Err(Error::Conflict(format!("user '{name}' already exists")));
            }
            Err(e) => return Err(e),
        };
        Ok(User {
            id,
            name: name.to_string(),
            role,
            created_at: now,
            disabled: false,
        })
    }

    fn expect_one_user(&self, changed: usize, user_id: i64) -> Result<()> {
        if changed == 0 {
            return Err(Error::NotFound(format!("no user with id {user_id}")));
        }
        Ok(())
    }

    /// Change a user's role; it applies from the next request on.
    pub fn set_user_role(&self, user_id: i64, role: Role) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE users SET role = ?1 WHERE id = ?2",
            params![role.as_str(), user_id],
        )?;
        self.expect_one_user(n, user_id)
    }

    /// Disable or enable a user. Disabling ends all the user's sessions.
    pub fn set_user_disabled(&self, user_id: i64, disabled: bool) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE users SET disabled = ?1 WHERE id = ?2",
            params![disabled, user_id],
        )?;
        self.expect_one_user(n, user_id)?;
        if disabled {
            self.delete_user_sessions(user_id)?;
        }
        Ok(())
    }

    /// Replace a user's password hash and end all the user's sessions.
    pub fn set_user_password(&self, user_id: i64, password_phc: &str) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE users SET password_phc = ?1 WHERE id = ?2",
            params![password_phc, user_id],
        )?;
        self.expect_one_user(n, user_id)?;
        self.delete_user_sessions(user_id)?;
        Ok(())
    }

    /// Replace a password hash made with old parameters, keeping sessions
    /// (same password, new hash: used at login).
    pub fn upgrade_password_hash(&self, user_id: i64, password_phc: &str) -> Result<()> {
        let n = self.tx.execute(
            "UPDATE users SET password_phc = ?1 WHERE id = ?2",
            params![password_phc, user_id],
        )?;
        self.expect_one_user(n, user_id)
    }

    /// Store a new session.
    pub fn insert_session(
        &self,
        token_sha256: &str,
        user_id: i64,
        csrf_secret: &str,
        now: i64,
    ) -> Result<()> {
        self.tx.execute(
            "INSERT INTO sessions (token_sha256, user_id, csrf_secret, created_at, last_seen_at)
             VALUES (?1, ?2, ?3, ?4, ?4)",
            params![token_sha256, user_id, csrf_secret, now],
        )?;
        Ok(())
    }

    /// Record that the session was used at `now`.
    pub fn touch_session(&self, token_sha256: &str, now: i64) -> Result<()> {
        self.tx.execute(
            "UPDATE sessions SET last_seen_at = ?1 WHERE token_sha256 = ?2 AND last_seen_at < ?1",
            params![now, token_sha256],
        )?;
        Ok(())
    }

    /// Delete one session; returns whether it existed.
    pub fn delete_session(&self, token_sha256: &str) -> Result<bool> {
        Ok(self.tx.execute(
            "DELETE FROM sessions WHERE token_sha256 = ?1",
            [token_sha256],
        )? > 0)
    }

    /// Delete every session of a user; returns how many.
    pub fn delete_user_sessions(&self, user_id: i64) -> Result<usize> {
        self.tx
            .execute("DELETE FROM sessions WHERE user_id = ?1", [user_id])
    }

    /// Delete sessions idle since before `idle_before` or made before
    /// `created_before`; returns how many.
    pub fn delete_expired_sessions(&self, idle_before: i64, created_before: i64) -> Result<usize> {
        self.tx.execute(
            "DELETE FROM sessions WHERE last_seen_at <= ?1 OR created_at <= ?2",
            params![idle_before, created_before],
        )
    }

    /// Store a new API token.
    pub fn insert_api_token(
        &self,
        token_sha256: &str,
        role: Role,
        label: &str,
        now: i64,
    ) -> Result<ApiTokenRecord> {
        let id: i64 = self.tx.query_row(
            "INSERT INTO api_tokens (token_sha256, role, label, created_at) VALUES (?1, ?2, ?3, ?4) RETURNING id",
            params![token_sha256, role.as_str(), label, now],
            |r| r.get(0),
        )?;
        Ok(ApiTokenRecord {
            id,
            role,
            label: label.to_string(),
            created_at: now,
            revoked_at: None,
        })
    }

    /// Revoke an API token; false if it is unknown or already revoked.
    pub fn revoke_api_token(&self, id: i64, now: i64) -> Result<bool> {
        Ok(self.tx.execute(
            "UPDATE api_tokens SET revoked_at = ?1 WHERE id = ?2 AND revoked_at IS NULL",
            params![now, id],
        )? > 0)
    }

    /// Store a new team token.
    pub fn insert_team_token(
        &self,
        token_sha256: &str,
        team_name: &str,
        now: i64,
    ) -> Result<TeamTokenRecord> {
        let id: i64 = self.tx.query_row(
            "INSERT INTO team_tokens (token_sha256, team_name, created_at) VALUES (?1, ?2, ?3) RETURNING id",
            params![token_sha256, team_name, now],
            |r| r.get(0),
        )?;
        Ok(TeamTokenRecord {
            id,
            team_name: team_name.to_string(),
            created_at: now,
            revoked_at: None,
        })
    }

    /// Revoke a team token; false if it is unknown or already revoked.
    pub fn revoke_team_token(&self, id: i64, now: i64) -> Result<bool> {
        Ok(self.tx.execute(
            "UPDATE team_tokens SET revoked_at = ?1 WHERE id = ?2 AND revoked_at IS NULL",
            params![now, id],
        )? > 0)
    }

    /// Revoke every live token of a team; returns how many.
    pub fn revoke_team_tokens_of(&self, team_name: &str, now: i64) -> Result<usize> {
        self.tx.execute(
            "UPDATE team_tokens SET revoked_at = ?1 WHERE team_name = ?2 AND revoked_at IS NULL",
            params![now, team_name],
        )
    }

    /// Record one login attempt; returns its id.
    pub fn record_login_attempt(
        &self,
        user_name: &str,
        client: &str,
        now: i64,
        ok: bool,
    ) -> Result<i64> {
        let id: i64 = self.tx.query_row(
            "INSERT INTO login_attempts (user_name, client, at, ok) VALUES (?1, ?2, ?3, ?4) RETURNING id",
            params![user_name, client, now, ok],
            |r| r.get(0),
        )?;
        Ok(id)
    }

    /// Mark a recorded attempt as successful (login records every attempt
    /// as a failure first, so concurrent guesses all count).
    pub fn mark_login_attempt_ok(&self, id: i64) -> Result<()> {
        self.tx
            .execute("UPDATE login_attempts SET ok = 1 WHERE id = ?1", [id])?;
        Ok(())
    }

    /// Delete attempts older than `before`; returns how many.
    pub fn prune_login_attempts(&self, before: i64) -> Result<usize> {
        self.tx
            .execute("DELETE FROM login_attempts WHERE at < ?1", [before])
    }
}

impl Reader<'_> {
    pub fn user_count(&self) -> Result<i64> {
        self.conn
            .query_row("SELECT COUNT(*) FROM users", [], |r| r.get(0))
    }

    pub fn users(&self) -> Result<Vec<User>> {
        let mut st = self
            .conn
            .prepare(&format!("SELECT {USER_COLS} FROM users u ORDER BY u.name"))?;
        let v = st
            .query_map([], |r| user_row(r, 0))?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    pub fn user_by_id(&self, id: i64) -> Result<Option<User>> {
        self.conn
            .query_row(
                &format!("SELECT {USER_COLS} FROM users u WHERE u.id = ?1"),
                [id],
                |r| user_row(r, 0),
            )
            .optional()
    }

    /// A user by name (any letter case).
    pub fn user_by_name(&self, name: &str) -> Result<Option<User>> {
        self.conn
            .query_row(
                &format!(
                    "SELECT {USER_COLS} FROM users u WHERE {}",
                    name_is(self.conn)
                ),
                [name],
                |r| user_row(r, 0),
            )
            .optional()
    }

    /// A user and the stored PHC string, for checking a password.
    pub fn user_credentials(&self, name: &str) -> Result<Option<(User, String)>> {
        self.conn
            .query_row(
                &format!(
                    "SELECT {USER_COLS}, u.password_phc FROM users u WHERE {}",
                    name_is(self.conn)
                ),
                [name],
                |r| Ok((user_row(r, 0)?, r.get(5)?)),
            )
            .optional()
    }

    /// A session by the SHA-256 of its token, with its user as stored now.
    pub fn session_by_hash(&self, token_sha256: &str) -> Result<Option<SessionRecord>> {
        self.conn
            .query_row(
                &format!(
                    "SELECT s.token_sha256, s.csrf_secret, s.created_at, s.last_seen_at, {USER_COLS}
                     FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.token_sha256 = ?1"
                ),
                [token_sha256],
                |r| {
                    Ok(SessionRecord {
                        token_sha256: r.get(0)?,
                        csrf_secret: r.get(1)?,
                        created_at: r.get(2)?,
                        last_seen_at: r.get(3)?,
                        user: user_row(r, 4)?,
                    })
                },
            )
            .optional()
    }

    /// How many sessions a user has.
    pub fn session_count(&self, user_id: i64) -> Result<i64> {
        self.conn.query_row(
            "SELECT COUNT(*) FROM sessions WHERE user_id = ?1",
            [user_id],
            |r| r.get(0),
        )
    }

    /// A live (not revoked) API token by hash.
    pub fn api_token_by_hash(&self, token_sha256: &str) -> Result<Option<ApiTokenRecord>> {
        self.conn
            .query_row(
                "SELECT id, role, label, created_at, revoked_at FROM api_tokens
                 WHERE token_sha256 = ?1 AND revoked_at IS NULL",
                [token_sha256],
                api_row,
            )
            .optional()
    }

    pub fn api_tokens(&self) -> Result<Vec<ApiTokenRecord>> {
        let mut st = self.conn.prepare(
            "SELECT id, role, label, created_at, revoked_at FROM api_tokens ORDER BY id",
        )?;
        let v = st.query_map([], api_row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// A live team token by hash: not revoked, and, for a token a phone got
    /// by pairing, its bundle not cancelled.
    pub fn team_token_by_hash(&self, token_sha256: &str) -> Result<Option<TeamTokenRecord>> {
        self.conn
            .query_row(
                "SELECT id, team_name, created_at, revoked_at FROM team_tokens t
                 WHERE token_sha256 = ?1 AND revoked_at IS NULL
                   AND NOT EXISTS (SELECT 1 FROM pairings p JOIN bundles b ON b.id = p.bundle_id
                                   WHERE p.token_id = t.id AND b.cancelled_at IS NOT NULL)",
                [token_sha256],
                team_row,
            )
            .optional()
    }

    pub fn team_tokens(&self) -> Result<Vec<TeamTokenRecord>> {
        let mut st = self.conn.prepare(
            "SELECT id, team_name, created_at, revoked_at FROM team_tokens ORDER BY team_name, id",
        )?;
        let v = st.query_map([], team_row)?.collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    fn attempts(&self, sql: &str, key: &str, since: i64) -> Result<Vec<LoginAttempt>> {
        let mut st = self.conn.prepare(sql)?;
        let v = st
            .query_map(params![key, since], |r| {
                Ok(LoginAttempt {
                    at: r.get(0)?,
                    ok: r.get::<_, i64>(1)? != 0,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Attempts for a user name at or after `since`, oldest first.
    pub fn login_attempts_for_user(
        &self,
        user_name: &str,
        since: i64,
    ) -> Result<Vec<LoginAttempt>> {
        self.attempts(
            "SELECT at, ok FROM login_attempts WHERE user_name = ?1 AND at >= ?2 ORDER BY at, id",
            user_name,
            since,
        )
    }

    /// Attempts for a user name from one client address at or after
    /// `since`, oldest first.
    pub fn login_attempts_for_user_from(
        &self,
        user_name: &str,
        client: &str,
        since: i64,
    ) -> Result<Vec<LoginAttempt>> {
        let mut st = self.conn.prepare(
            "SELECT at, ok FROM login_attempts WHERE user_name = ?1 AND client = ?2 AND at >= ?3
             ORDER BY at, id",
        )?;
        let v = st
            .query_map(params![user_name, client, since], |r| {
                Ok(LoginAttempt {
                    at: r.get(0)?,
                    ok: r.get::<_, i64>(1)? != 0,
                })
            })?
            .collect::<Result<Vec<_>>>()?;
        Ok(v)
    }

    /// Attempts from a client address at or after `since`, oldest first.
    pub fn login_attempts_for_client(&self, client: &str, since: i64) -> Result<Vec<LoginAttempt>> {
        self.attempts(
            "SELECT at, ok FROM login_attempts WHERE client = ?1 AND at >= ?2 ORDER BY at, id",
            client,
            since,
        )
    }

    /// Whether `needle` appears in any stored value of any table (the
    /// check that a secret is stored only as its hash). Reads every row.
    pub fn holds_text(&self, needle: &str) -> Result<bool> {
        let tables: Vec<String> = {
            let sql = match self.conn.dialect() {
                Dialect::Sqlite => "SELECT name FROM sqlite_master WHERE type = 'table'",
                Dialect::Postgres => {
                    "SELECT tablename FROM pg_tables WHERE schemaname = current_schema()"
                }
            };
            let mut st = self.conn.prepare(sql)?;
            st.query_map([], |r| r.get(0))?
                .collect::<Result<Vec<_>>>()?
        };
        for t in tables {
            let t = t.replace('"', "\"\"");
            let hit = match self.conn.dialect() {
                // Every column of the row, as text, side by side.
                Dialect::Sqlite => {
                    let cols: Vec<String> = {
                        let mut st = self.conn.prepare(&format!("PRAGMA table_info(\"{t}\")"))?;
                        st.query_map([], |r| r.get::<_, String>(1))?
                            .collect::<Result<Vec<_>>>()?
                    };
                    let any = cols
                        .iter()
                        .map(|c| {
                            format!(
                                "instr(CAST(\"{}\" AS TEXT), ?1) > 0",
                                c.replace('"', "\"\"")
                            )
                        })
                        .collect::<Vec<_>>()
                        .join(" OR ");
                    format!("SELECT EXISTS (SELECT 1 FROM \"{t}\" WHERE {any})")
                }
                // The whole row as text.
                Dialect::Postgres => {
                    format!(
                        "SELECT EXISTS (SELECT 1 FROM \"{t}\" x WHERE strpos(CAST(x AS TEXT), ?1) > 0)"
                    )
                }
            };
            let found: i64 = self.conn.query_row(&hit, [needle], |r| r.get(0))?;
            if found != 0 {
                return Ok(true);
            }
        }
        Ok(false)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::platform::storage::Db;

    const T0: i64 = 1_750_000_000;
    // Not a real hash: storage does not look inside it.
    const PHC: &str = "$argon2id$v=19$m=19456,t=2,p=1$c2FsdHNhbHQ$dGFn";

    fn db() -> (tempfile::TempDir, Db) {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        (dir, db)
    }

    #[test]
    fn users_round_trip_and_names_are_unique_in_any_case() {
        let (_d, db) = db();
        let u = db
            .write(|tx| tx.add_user("ana", Role::Coordinator, PHC, T0))
            .unwrap();
        let got = db.read(|r| r.user_by_name("ANA")).unwrap().unwrap();
        assert_eq!(got, u);
        assert_eq!(db.read(|r| r.user_by_id(u.id)).unwrap(), Some(u.clone()));
        let (cu, phc) = db.read(|r| r.user_credentials("ana")).unwrap().unwrap();
        assert_eq!((cu, phc.as_str()), (u.clone(), PHC));
        match db.write(|tx| tx.add_user("Ana", Role::Manager, PHC, T0)) {
            Err(Error::Conflict(m)) => assert!(m.contains("already exists")),
            other => panic!("expected a conflict, got {other:?}"),
        }
        db.write(|tx| tx.set_user_role(u.id, Role::Manager))
            .unwrap();
        assert_eq!(
            db.read(|r| r.user_by_id(u.id)).unwrap().unwrap().role,
            Role::Manager
        );
        assert!(matches!(
            db.write(|tx| tx.set_user_role(999, Role::Admin)),
            Err(Error::NotFound(_))
        ));
        assert_eq!(db.read(|r| r.user_count()).unwrap(), 1);
        assert_eq!(db.read(|r| r.users()).unwrap().len(), 1);
    }

    #[test]
    fn disabling_or_new_password_ends_sessions() {
        let (_d, db) = db();
        let u = db
            .write(|tx| tx.add_user("ana", Role::Manager, PHC, T0))
            .unwrap();
        db.write(|tx| {
            tx.insert_session("h1", u.id, "c1", T0)?;
            tx.insert_session("h2", u.id, "c2", T0)
        })
        .unwrap();
        let s = db.read(|r| r.session_by_hash("h1")).unwrap().unwrap();
        assert_eq!(
            (
                s.user.id,
                s.csrf_secret.as_str(),
                s.created_at,
                s.last_seen_at
            ),
            (u.id, "c1", T0, T0)
        );
        db.write(|tx| tx.touch_session("h1", T0 + 90)).unwrap();
        db.write(|tx| tx.touch_session("h1", T0 + 30)).unwrap(); // never moves back
        assert_eq!(
            db.read(|r| r.session_by_hash("h1"))
                .unwrap()
                .unwrap()
                .last_seen_at,
            T0 + 90
        );
        db.write(|tx| tx.set_user_password(u.id, "$other")).unwrap();
        assert_eq!(db.read(|r| r.session_count(u.id)).unwrap(), 0);
        db.write(|tx| tx.insert_session("h3", u.id, "c3", T0))
            .unwrap();
        db.write(|tx| tx.set_user_disabled(u.id, true)).unwrap();
        assert_eq!(db.read(|r| r.session_count(u.id)).unwrap(), 0);
        assert!(db.read(|r| r.user_by_id(u.id)).unwrap().unwrap().disabled);
    }

    #[test]
    fn sessions_delete_one_and_expired() {
        let (_d, db) = db();
        let u = db
            .write(|tx| tx.add_user("ana", Role::Manager, PHC, T0))
            .unwrap();
        db.write(|tx| {
            tx.insert_session("old", u.id, "c", T0)?;
            tx.insert_session("idle", u.id, "c", T0 + 100)?;
            tx.insert_session("live", u.id, "c", T0 + 1000)
        })
        .unwrap();
        assert!(db.write(|tx| tx.delete_session("nope")).is_ok_and(|d| !d));
        // Idle cutoff T0+500 removes "idle"; absolute cutoff T0 removes "old".
        assert_eq!(
            db.write(|tx| tx.delete_expired_sessions(T0 + 500, T0))
                .unwrap(),
            2
        );
        assert!(db.write(|tx| tx.delete_session("live")).unwrap());
        assert!(db.read(|r| r.session_by_hash("live")).unwrap().is_none());
    }

    #[test]
    fn api_and_team_tokens_round_trip_and_revoke() {
        let (_d, db) = db();
        let a = db
            .write(|tx| tx.insert_api_token("ha", Role::Coordinator, "nightly import", T0))
            .unwrap();
        assert_eq!(
            db.read(|r| r.api_token_by_hash("ha")).unwrap(),
            Some(a.clone())
        );
        assert!(db.write(|tx| tx.revoke_api_token(a.id, T0 + 5)).unwrap());
        assert!(!db.write(|tx| tx.revoke_api_token(a.id, T0 + 6)).unwrap());
        assert_eq!(db.read(|r| r.api_token_by_hash("ha")).unwrap(), None);
        assert_eq!(
            db.read(|r| r.api_tokens()).unwrap()[0].revoked_at,
            Some(T0 + 5)
        );

        let t = db
            .write(|tx| tx.insert_team_token("ht", "north", T0))
            .unwrap();
        db.write(|tx| tx.insert_team_token("ht2", "north", T0))
            .unwrap();
        assert_eq!(
            db.read(|r| r.team_token_by_hash("ht")).unwrap(),
            Some(t.clone())
        );
        assert!(
            db.write(|tx| tx.insert_team_token("ht", "south", T0))
                .is_err(),
            "hash is unique"
        );
        assert_eq!(
            db.write(|tx| tx.revoke_team_tokens_of("north", T0 + 1))
                .unwrap(),
            2
        );
        assert_eq!(db.read(|r| r.team_token_by_hash("ht2")).unwrap(), None);
        assert!(!db.write(|tx| tx.revoke_team_token(t.id, T0 + 2)).unwrap());
        assert_eq!(db.read(|r| r.team_tokens()).unwrap().len(), 2);
    }

    #[test]
    fn login_attempts_by_user_and_client_with_pruning() {
        let (_d, db) = db();
        db.write(|tx| {
            tx.record_login_attempt("ana", "10.0.0.1", T0, false)?;
            let id = tx.record_login_attempt("ana", "10.0.0.2", T0 + 10, false)?;
            tx.mark_login_attempt_ok(id)?;
            tx.record_login_attempt("bo", "10.0.0.1", T0 + 20, false)?;
            Ok(())
        })
        .unwrap();
        let ana = db.read(|r| r.login_attempts_for_user("ana", T0)).unwrap();
        assert_eq!(
            ana,
            vec![
                LoginAttempt { at: T0, ok: false },
                LoginAttempt {
                    at: T0 + 10,
                    ok: true
                }
            ]
        );
        let c1 = db
            .read(|r| r.login_attempts_for_client("10.0.0.1", T0 + 1))
            .unwrap();
        assert_eq!(
            c1,
            vec![LoginAttempt {
                at: T0 + 20,
                ok: false
            }]
        );
        assert_eq!(db.write(|tx| tx.prune_login_attempts(T0 + 15)).unwrap(), 2);
        assert!(
            db.read(|r| r.login_attempts_for_user("ana", 0))
                .unwrap()
                .is_empty()
        );
    }
}
