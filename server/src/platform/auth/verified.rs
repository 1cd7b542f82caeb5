//! Bearer tokens already verified, kept so that a script polling the API
//! does not cost a database read per request.
//!
//! An entry is the identity a token was found to have, kept under the
//! token's SHA-256 (never the token) together with the database's commit
//! stamp taken *before* the token was looked up ([`CommitWatch`]). It is
//! used only while the stamp is still the same, so any commit after the
//! lookup — revoking a token, disabling a team, cancelling a bundle, and also
//! every unrelated write — drops every entry at once: a revocation takes
//! effect at the next request, on this instance and in any other process on
//! the same database (the SQLite file, or PostgreSQL's `gp_commit_stamp`).
//! On top of that no entry is used for longer than
//! [`KEEP_FOR`], which bounds the lag wherever a commit could not be seen.
//!
//! Only identities that depend on nothing but stored rows are kept (API
//! tokens, and team tokens given by hand): a phone's paired token also
//! depends on its bundle's expiry time, and is looked up every time. Unknown
//! or refused tokens are never kept.

use super::Identity;
use crate::platform::storage::{CommitStamp, CommitWatch, Db};
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, Instant};

/// Longest time a verified token is used without being looked up again.
pub const KEEP_FOR: Duration = Duration::from_secs(2);
/// Most tokens kept (more valid tokens than this in two seconds: the
/// oldest stamp's entries are all dropped and the lookups start again).
pub const MAX_KEPT: usize = 1024;

/// See the module documentation. One per server (`web::AppState`).
#[derive(Default)]
pub struct VerifiedTokens {
    /// Opened at first use; `None` when it could not be (nothing is kept).
    watch: OnceLock<Option<CommitWatch>>,
    kept: Mutex<Kept>,
}

#[derive(Default)]
struct Kept {
    stamp: Option<CommitStamp>,
    entries: HashMap<[u8; 32], (Identity, Instant)>,
}

fn digest(token: &str) -> [u8; 32] {
    Sha256::digest(token.trim().as_bytes()).into()
}

impl VerifiedTokens {
    pub fn new() -> VerifiedTokens {
        VerifiedTokens::default()
    }

    /// The database's commit stamp now, to take before a lookup whose
    /// result goes to [`VerifiedTokens::keep`]; `None` when no watch could
    /// be opened or read (then nothing is kept or found).
    pub fn stamp(&self, db: &Db) -> Option<CommitStamp> {
        let watch = self.watch.get_or_init(|| {
            db.commit_watch()
                .inspect_err(|e| tracing::warn!("verified tokens are not kept: {e}"))
                .ok()
        });
        watch.as_ref()?.stamp().ok()
    }

    /// Whether [`VerifiedTokens::get`] answers without waiting on a
    /// database server (SQLite's watch), so that it may run on the async
    /// executor; on PostgreSQL the stamp is a round trip, taken off it.
    pub fn is_instant(&self, db: &Db) -> bool {
        !db.is_postgres()
    }

    /// The identity `token` was verified to have, when no commit happened
    /// since and it was verified less than [`KEEP_FOR`] ago.
    pub fn get(&self, db: &Db, token: &str) -> Option<Identity> {
        self.find(self.stamp(db)?, token)
    }

    /// [`VerifiedTokens::get`] with the stamp already taken.
    pub fn find(&self, stamp: CommitStamp, token: &str) -> Option<Identity> {
        let key = digest(token);
        let mut kept = self.kept.lock().unwrap_or_else(|p| p.into_inner());
        if kept.stamp != Some(stamp) {
            kept.stamp = Some(stamp);
            kept.entries.clear();
            return None;
        }
        match kept.entries.get(&key) {
            Some((identity, at)) if at.elapsed() < KEEP_FOR => Some(identity.clone()),
            Some(_) => {
                kept.entries.remove(&key);
                None
            }
            None => None,
        }
    }

    /// Keep what `token` was found to be by a lookup made after `stamp` was
    /// taken. Only API tokens and hand-given team tokens are kept.
    pub fn keep(&self, stamp: CommitStamp, token: &str, identity: &Identity) {
        if !matches!(identity, Identity::ApiToken { .. } | Identity::Team { .. }) {
            return;
        }
        let mut kept = self.kept.lock().unwrap_or_else(|p| p.into_inner());
        // A lookup that started before the last commit seen is not kept:
        // what it read may already be old.
        if kept.stamp != Some(stamp) {
            return;
        }
        if kept.entries.len() >= MAX_KEPT {
            kept.entries.clear();
        }
        kept.entries
            .insert(digest(token), (identity.clone(), Instant::now()));
    }

    /// How many tokens are kept now (for tests).
    pub fn len(&self) -> usize {
        self.kept
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .entries
            .len()
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::Role;
    use crate::platform::auth::{authenticate_bearer, issue_api_token, issue_team_token};

    fn lookup(v: &VerifiedTokens, db: &Db, token: &str) -> Identity {
        if let Some(i) = v.get(db, token) {
            return i;
        }
        let stamp = v.stamp(db).expect("a watch");
        let i = authenticate_bearer(db, token).unwrap();
        v.keep(stamp, token, &i);
        i
    }

    #[test]
    fn a_kept_token_is_dropped_by_the_next_commit() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        let v = VerifiedTokens::new();
        let (rec, token) = issue_api_token(&db, Role::Manager, "script", 1).unwrap();
        let first = lookup(&v, &db, &token);
        assert!(matches!(first, Identity::ApiToken { .. }));
        assert_eq!(v.get(&db, &token), Some(first), "kept");
        db.write_bookkeeping(|tx| tx.revoke_api_token(rec.id, 2))
            .unwrap();
        assert_eq!(v.get(&db, &token), None, "dropped at once");
        assert_eq!(lookup(&v, &db, &token), Identity::Anonymous);
        assert!(v.is_empty(), "a refused token is not kept");
    }

    #[test]
    fn a_lookup_that_raced_a_commit_is_not_kept() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        let v = VerifiedTokens::new();
        let (_, token) = issue_team_token(&db, "north", 1).unwrap();
        let before = v.stamp(&db).unwrap();
        let identity = authenticate_bearer(&db, &token).unwrap();
        issue_team_token(&db, "south", 2).unwrap();
        v.get(&db, &token); // sees the new stamp
        v.keep(before, &token, &identity);
        assert!(v.is_empty());
    }

    /// What keeping saves per bearer request, on the engine of the tests
    /// (`GROUNDPROOF_TEST_ENGINE`): the kept path (stamp and find) against
    /// the lookup (stamp and the token's row). By hand, with `--ignored
    /// --nocapture`: a timing, so not part of the normal run.
    #[test]
    #[ignore]
    fn a_kept_token_costs_less_than_a_lookup() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        let v = VerifiedTokens::new();
        let (_, token) = issue_api_token(&db, Role::Manager, "script", 1).unwrap();
        let n = 2000u32;
        let t = Instant::now();
        for _ in 0..n {
            let stamp = v.stamp(&db).unwrap();
            authenticate_bearer(&db, &token).unwrap();
            std::hint::black_box(stamp);
        }
        let looked_up = t.elapsed() / n;
        lookup(&v, &db, &token);
        let t = Instant::now();
        for _ in 0..n {
            assert!(v.get(&db, &token).is_some());
        }
        let kept = t.elapsed() / n;
        println!(
            "postgres={}: kept {kept:?} per request, looked up {looked_up:?}",
            db.is_postgres()
        );
        assert!(kept < looked_up);
    }

    #[test]
    fn an_entry_is_used_for_at_most_keep_for() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let v = VerifiedTokens::new();
        let (_, token) = issue_api_token(&db, Role::Admin, "old", 1).unwrap();
        lookup(&v, &db, &token);
        {
            let mut kept = v.kept.lock().unwrap();
            for (_, at) in kept.entries.values_mut() {
                *at = at.checked_sub(KEEP_FOR).unwrap();
            }
        }
        assert_eq!(v.get(&db, &token), None);
    }
}
