//! Account operations against the database, for the web layer and the
//! command line: log in, check a session or a bearer token, log out,
//! create users and tokens, and create the first admin.
//!
//! Password hashing is slow on purpose (tens of milliseconds), so it runs
//! outside the write transaction. Each login attempt is stored as a
//! failure *before* the password is checked, in the same transaction that
//! reads the throttling state, and turned into a success afterwards; so
//! many guesses sent at once are all counted. Callers on the async executor
//! run these functions in `web::block`.

use super::csrf::{csrf_token, new_csrf_secret, verify_csrf};
use super::password::{hash_password, needs_rehash, verify_dummy, verify_password};
use super::ratelimit::{Lockout, LoginThrottle};
use super::session::{SessionPolicy, SessionState, needs_touch, session_state};
use super::tokens::{
    is_api_token, is_session_token, is_team_token, new_api_token, new_session_token,
    new_team_token, sha256_hex,
};
use super::{Identity, Role, generate_password};
use crate::error::{Error, Fault, Result};
use crate::platform::storage::{ApiTokenRecord, Db, TeamTokenRecord, User};

/// Environment variable that sets the first admin's password.
pub const ADMIN_PASSWORD_ENV: &str = "GROUNDPROOF_ADMIN_PASSWORD";
/// Name of the account made at first run.
pub const FIRST_ADMIN_NAME: &str = "admin";
/// Longest user name, in characters.
const MAX_NAME_CHARS: usize = 64;
/// Longest client address stored with an attempt.
const MAX_CLIENT_CHARS: usize = 64;
/// Longest token label or team name, in characters.
/// The longest label or team name (characters).
pub const MAX_LABEL_CHARS: usize = 100;

/// Session lifetimes and login throttling.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct AuthConfig {
    pub session: SessionPolicy,
    pub lockout: LoginThrottle,
}

/// One login form submission.
#[derive(Debug, Clone, Copy)]
pub struct LoginRequest<'a> {
    pub name: &'a str,
    pub password: &'a str,
    /// The client's address as the server sees it (peer IP, or the
    /// forwarded address when behind a trusted proxy).
    pub client: &'a str,
    /// The session token this browser sent, if any; it is ended so each
    /// login gets a fresh id (no session fixation).
    pub previous_session: Option<&'a str>,
}

/// A session just made: give `token` to the browser once, in the cookie.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NewSession {
    pub token: String,
    pub csrf_secret: String,
    pub user: User,
}

/// What a login attempt came to.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum LoginOutcome {
    LoggedIn(NewSession),
    /// Unknown name, wrong password or disabled account: the same answer
    /// for all three.
    BadCredentials,
    /// Too many failures for this name or from this client.
    Locked {
        retry_after_secs: i64,
    },
}

/// A valid session, as looked up for one request.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SessionIdentity {
    pub user: User,
    pub csrf_secret: String,
    pub created_at: i64,
    pub last_seen_at: i64,
}

impl SessionIdentity {
    pub fn identity(&self) -> Identity {
        Identity::User {
            user_id: self.user.id,
            name: self.user.name.clone(),
            role: self.user.role,
        }
    }

    /// A fresh CSRF token for a form on the page being rendered.
    pub fn csrf_token(&self) -> Result<String> {
        csrf_token(&self.csrf_secret)
    }

    /// Whether a presented CSRF token belongs to this session.
    pub fn verify_csrf(&self, presented: &str) -> bool {
        verify_csrf(&self.csrf_secret, presented)
    }
}

/// What [`ensure_first_admin`] did.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FirstAdmin {
    /// Users exist already; nothing was done.
    AlreadySetUp,
    /// The `admin` account was made. `generated_password` is set when the
    /// password was made up here: print it once, it is not stored.
    Created {
        name: String,
        generated_password: Option<String>,
    },
}

fn clip(s: &str, max: usize) -> String {
    s.trim().chars().take(max).collect()
}

/// The key attempts are counted under: trimmed, lower case, bounded.
fn attempt_key(name: &str) -> String {
    clip(name, MAX_NAME_CHARS).to_lowercase()
}

/// User names: 1 to 64 of ASCII letters, digits, `.`, `_`, `-`, starting
/// with a letter or digit.
pub fn validate_user_name(name: &str) -> Result<()> {
    let ok_start = name
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_alphanumeric());
    let ok_chars = name
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || matches!(c, '.' | '_' | '-'));
    let n = name.chars().count();
    if !ok_start || !ok_chars || n > MAX_NAME_CHARS {
        let shown = clip(name, MAX_NAME_CHARS);
        let english = format!(
            "user name '{shown}' is not allowed: use 1 to {MAX_NAME_CHARS} letters, digits, '.', '_' or '-', starting with a letter or digit"
        );
        let args: [(&str, &dyn std::fmt::Display); 2] =
            [("name", &shown), ("max", &MAX_NAME_CHARS)];
        return Err(Error::said(Fault::Invalid, "why-user-name", &args, english));
    }
    Ok(())
}

/// Labels and team names: trimmed, 1 to 100 characters, no control
/// characters. Returns the trimmed text.
pub fn validate_label(text: &str, what: &str) -> Result<String> {
    let t = text.trim();
    let n = t.chars().count();
    if n == 0 || n > MAX_LABEL_CHARS || t.chars().any(char::is_control) {
        return Err(Error::Invalid(format!(
            "{what} must be 1 to {MAX_LABEL_CHARS} characters without control characters"
        )));
    }
    Ok(t.to_string())
}

/// Check a login form and, when it is right, start a session.
pub fn login(db: &Db, req: &LoginRequest<'_>, now: i64, cfg: &AuthConfig) -> Result<LoginOutcome> {
    let key = attempt_key(req.name);
    let client = clip(req.client, MAX_CLIENT_CHARS);
    let since = now.saturating_sub(cfg.lockout.lookback_secs());
    // Throttle check and the attempt record, in one transaction.
    let started = db.write_bookkeeping(|tx| {
        let r = tx.reader();
        let by_pair = r.login_attempts_for_user_from(&key, &client, since)?;
        let by_name = r.login_attempts_for_user(&key, since)?;
        let by_client = r.login_attempts_for_client(&client, since)?;
        let lock = cfg.lockout.decide(&by_pair, &by_name, &by_client, now);
        if let Lockout::LockedUntil(until) = lock {
            return Ok(Err(until));
        }
        let attempt = tx.record_login_attempt(&key, &client, now, false)?;
        let creds = if req.name.trim().chars().count() <= MAX_NAME_CHARS {
            r.user_credentials(req.name.trim())?
        } else {
            None
        };
        Ok(Ok((attempt, creds)))
    })?;
    let (attempt, creds) = match started {
        Err(until) => {
            return Ok(LoginOutcome::Locked {
                retry_after_secs: until.saturating_sub(now).max(1),
            });
        }
        Ok(v) => v,
    };
    let (user, phc) = match creds {
        Some((user, phc)) => {
            if !verify_password(req.password, &phc) || user.disabled {
                return Ok(LoginOutcome::BadCredentials);
            }
            (user, phc)
        }
        None => {
            verify_dummy(req.password);
            return Ok(LoginOutcome::BadCredentials);
        }
    };
    // A hash with old parameters is replaced (same password, new hash);
    // a password that no longer meets the rules keeps its old hash.
    let upgraded = if needs_rehash(&phc) {
        hash_password(req.password).ok()
    } else {
        None
    };
    let token = new_session_token()?;
    let csrf_secret = new_csrf_secret()?;
    db.write_bookkeeping(|tx| {
        tx.mark_login_attempt_ok(attempt)?;
        if let Some(prev) = req.previous_session.filter(|t| is_session_token(t)) {
            tx.delete_session(&sha256_hex(prev))?;
        }
        tx.insert_session(&sha256_hex(&token), user.id, &csrf_secret, now)?;
        if let Some(p) = &upgraded {
            tx.upgrade_password_hash(user.id, p)?;
        }
        Ok(())
    })?;
    Ok(LoginOutcome::LoggedIn(NewSession {
        token,
        csrf_secret,
        user,
    }))
}

/// The session for a cookie token, if it is valid now. An expired session,
/// or one whose user is disabled, is deleted and gives `None`.
pub fn authenticate_session(
    db: &Db,
    token: &str,
    now: i64,
    cfg: &AuthConfig,
) -> Result<Option<SessionIdentity>> {
    if !is_session_token(token) {
        return Ok(None);
    }
    let hash = sha256_hex(token);
    let Some(rec) = db.read(|r| r.session_by_hash(&hash))? else {
        return Ok(None);
    };
    if rec.user.disabled {
        db.write_bookkeeping(|tx| tx.delete_user_sessions(rec.user.id))?;
        return Ok(None);
    }
    match session_state(rec.created_at, rec.last_seen_at, now, &cfg.session) {
        SessionState::Active => {
            let mut last_seen_at = rec.last_seen_at;
            if needs_touch(rec.last_seen_at, now) {
                db.write_bookkeeping(|tx| tx.touch_session(&hash, now))?;
                last_seen_at = now;
            }
            Ok(Some(SessionIdentity {
                user: rec.user,
                csrf_secret: rec.csrf_secret,
                created_at: rec.created_at,
                last_seen_at,
            }))
        }
        SessionState::IdleExpired | SessionState::AbsoluteExpired => {
            db.write_bookkeeping(|tx| tx.delete_session(&hash))?;
            Ok(None)
        }
    }
}

/// End the session of this token; returns whether there was one.
pub fn logout(db: &Db, token: &str) -> Result<bool> {
    if !is_session_token(token) {
        return Ok(false);
    }
    db.write_bookkeeping(|tx| tx.delete_session(&sha256_hex(token)))
}

/// The token in an `Authorization: Bearer ...` header value.
pub fn bearer_token(header: &str) -> Option<&str> {
    let (scheme, rest) = header.trim().split_once(' ')?;
    scheme
        .eq_ignore_ascii_case("bearer")
        .then(|| rest.trim())
        .filter(|t| !t.is_empty())
}

/// Who holds this API token (`gp_...`) or team token; `Anonymous` when it
/// is unknown, revoked or malformed.
pub fn authenticate_bearer(db: &Db, token: &str) -> Result<Identity> {
    let token = token.trim();
    if is_api_token(token) {
        let hash = sha256_hex(token);
        return Ok(match db.read(|r| r.api_token_by_hash(&hash))? {
            Some(t) => Identity::ApiToken {
                token_id: t.id,
                label: t.label,
                role: t.role,
            },
            None => Identity::Anonymous,
        });
    }
    if is_team_token(token) {
        let hash = sha256_hex(token);
        return Ok(match db.read(|r| r.team_token_by_hash(&hash))? {
            Some(t) => Identity::Team {
                token_id: t.id,
                team_name: t.team_name,
            },
            None => Identity::Anonymous,
        });
    }
    Ok(Identity::Anonymous)
}

/// Create a user after checking the name and the password rules.
pub fn create_user(db: &Db, name: &str, role: Role, password: &str, now: i64) -> Result<User> {
    validate_user_name(name)?;
    let phc = hash_password(password)?;
    db.write_bookkeeping(|tx| tx.add_user(name, role, &phc, now))
}

/// Set a new password; every session of the user ends (log in again).
pub fn change_password(db: &Db, user_id: i64, new_password: &str) -> Result<()> {
    let phc = hash_password(new_password)?;
    db.write_bookkeeping(|tx| tx.set_user_password(user_id, &phc))
}

/// Make an API token with a role; the token text is returned once.
pub fn issue_api_token(
    db: &Db,
    role: Role,
    label: &str,
    now: i64,
) -> Result<(ApiTokenRecord, String)> {
    let label = validate_label(label, "an API token label")?;
    let token = new_api_token()?;
    let rec =
        db.write_bookkeeping(|tx| tx.insert_api_token(&sha256_hex(&token), role, &label, now))?;
    Ok((rec, token))
}

/// Make a team token; the token text is returned once.
pub fn issue_team_token(db: &Db, team_name: &str, now: i64) -> Result<(TeamTokenRecord, String)> {
    let team = validate_label(team_name, "a team name")?;
    let token = new_team_token()?;
    let rec = db.write_bookkeeping(|tx| tx.insert_team_token(&sha256_hex(&token), &team, now))?;
    Ok((rec, token))
}

/// The first admin's password from [`ADMIN_PASSWORD_ENV`], if set and not
/// blank.
pub fn admin_password_from_env() -> Option<String> {
    std::env::var(ADMIN_PASSWORD_ENV)
        .ok()
        .filter(|p| !p.trim().is_empty())
}

/// If no user exists, create `admin` with `password` (which must meet the
/// rules) or, when `None`, with a random password that is returned once.
pub fn ensure_first_admin(db: &Db, password: Option<&str>, now: i64) -> Result<FirstAdmin> {
    if db.read(|r| r.user_count())? > 0 {
        return Ok(FirstAdmin::AlreadySetUp);
    }
    let (password, generated) = match password {
        Some(p) => (p.to_string(), false),
        None => (generate_password()?, true),
    };
    let phc = hash_password(&password).map_err(|e| match e {
        Error::Invalid(m) => Error::Invalid(format!("{ADMIN_PASSWORD_ENV}: {m}")),
        // The password check's refusal carries a message id for pages; the
        // operator reading this at start needs the variable's name.
        Error::Said(_, s) => Error::Invalid(format!("{ADMIN_PASSWORD_ENV}: {}", s.english)),
        other => other,
    })?;
    let created = db.write_bookkeeping(|tx| {
        if tx.reader().user_count()? > 0 {
            return Ok(false);
        }
        tx.add_user(FIRST_ADMIN_NAME, Role::Admin, &phc, now)?;
        Ok(true)
    })?;
    Ok(if created {
        FirstAdmin::Created {
            name: FIRST_ADMIN_NAME.to_string(),
            generated_password: generated.then_some(password),
        }
    } else {
        FirstAdmin::AlreadySetUp
    })
}

/// Delete expired sessions and attempts too old to matter; returns the
/// two counts. Run it now and then (at start, hourly).
pub fn prune(db: &Db, now: i64, cfg: &AuthConfig) -> Result<(usize, usize)> {
    db.write_bookkeeping(|tx| {
        let sessions = tx.delete_expired_sessions(
            now.saturating_sub(cfg.session.idle_secs),
            now.saturating_sub(cfg.session.absolute_secs),
        )?;
        let attempts = tx.prune_login_attempts(now.saturating_sub(cfg.lockout.lookback_secs()))?;
        Ok((sessions, attempts))
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::platform::auth::{Action, Principal};

    const T0: i64 = 1_750_000_000;
    const PW: &str = "long enough password";

    fn setup() -> (tempfile::TempDir, Db, User) {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let u = create_user(&db, "ana", Role::Coordinator, PW, T0).unwrap();
        (dir, db, u)
    }

    fn req<'a>(name: &'a str, password: &'a str, prev: Option<&'a str>) -> LoginRequest<'a> {
        LoginRequest {
            name,
            password,
            client: "192.0.2.7",
            previous_session: prev,
        }
    }

    fn logged_in(o: LoginOutcome) -> NewSession {
        match o {
            LoginOutcome::LoggedIn(s) => s,
            other => panic!("expected a login, got {other:?}"),
        }
    }

    #[test]
    fn login_then_session_then_logout() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        assert_eq!(s.user, u);
        let id = authenticate_session(&db, &s.token, T0 + 5, &cfg)
            .unwrap()
            .unwrap();
        assert_eq!(id.identity().principal(), Principal::Coordinator);
        let tok = id.csrf_token().unwrap();
        assert!(id.verify_csrf(&tok));
        // The database holds the hash, never the token.
        assert!(db.read(|r| r.session_by_hash(&s.token)).unwrap().is_none());
        assert!(logout(&db, &s.token).unwrap());
        assert!(
            authenticate_session(&db, &s.token, T0 + 6, &cfg)
                .unwrap()
                .is_none()
        );
        assert!(!logout(&db, &s.token).unwrap());
    }

    #[test]
    fn wrong_password_unknown_user_and_disabled_user_look_the_same() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        let bad = |name: &str, pw: &str| login(&db, &req(name, pw, None), T0, &cfg).unwrap();
        assert_eq!(
            bad("ana", "long enough passworD"),
            LoginOutcome::BadCredentials
        );
        assert_eq!(bad("nobody", PW), LoginOutcome::BadCredentials);
        db.write(|tx| tx.set_user_disabled(u.id, true)).unwrap();
        assert_eq!(bad("ana", PW), LoginOutcome::BadCredentials);
        // Name lookup ignores letter case.
        db.write(|tx| tx.set_user_disabled(u.id, false)).unwrap();
        logged_in(bad("ANA", PW));
    }

    #[test]
    fn login_rotates_the_session_id() {
        let (_d, db, _u) = setup();
        let cfg = AuthConfig::default();
        let first = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        let second =
            logged_in(login(&db, &req("ana", PW, Some(&first.token)), T0 + 10, &cfg).unwrap());
        assert_ne!(first.token, second.token);
        assert_ne!(first.csrf_secret, second.csrf_secret);
        assert!(
            authenticate_session(&db, &first.token, T0 + 11, &cfg)
                .unwrap()
                .is_none()
        );
        assert!(
            authenticate_session(&db, &second.token, T0 + 11, &cfg)
                .unwrap()
                .is_some()
        );
    }

    #[test]
    fn idle_and_absolute_expiry_delete_the_session() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        // Used every 20 minutes: idle never passes 30 min, absolute 8 h ends it.
        let mut t = T0;
        while t + 1200 < T0 + 8 * 3600 {
            t += 1200;
            assert!(
                authenticate_session(&db, &s.token, t, &cfg)
                    .unwrap()
                    .is_some(),
                "at {t}"
            );
        }
        assert!(
            authenticate_session(&db, &s.token, T0 + 8 * 3600, &cfg)
                .unwrap()
                .is_none()
        );
        assert_eq!(db.read(|r| r.session_count(u.id)).unwrap(), 0);
        // Idle: 30 minutes without a request.
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        assert!(
            authenticate_session(&db, &s.token, T0 + 1799, &cfg)
                .unwrap()
                .is_some()
        );
        assert!(
            authenticate_session(&db, &s.token, T0 + 1799 + 1800, &cfg)
                .unwrap()
                .is_none()
        );
        assert_eq!(db.read(|r| r.session_count(u.id)).unwrap(), 0);
    }

    #[test]
    fn role_change_and_disable_apply_on_the_next_request() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        db.write(|tx| tx.set_user_role(u.id, Role::Manager))
            .unwrap();
        let id = authenticate_session(&db, &s.token, T0 + 1, &cfg)
            .unwrap()
            .unwrap();
        assert!(!id.identity().may(Action::IssueBundle));
        db.write(|tx| tx.set_user_disabled(u.id, true)).unwrap();
        assert!(
            authenticate_session(&db, &s.token, T0 + 2, &cfg)
                .unwrap()
                .is_none()
        );
    }

    #[test]
    fn password_change_ends_sessions() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        change_password(&db, u.id, "another long password").unwrap();
        assert!(
            authenticate_session(&db, &s.token, T0 + 1, &cfg)
                .unwrap()
                .is_none()
        );
        assert_eq!(
            login(&db, &req("ana", PW, None), T0 + 2, &cfg).unwrap(),
            LoginOutcome::BadCredentials
        );
        logged_in(
            login(
                &db,
                &req("ana", "another long password", None),
                T0 + 3,
                &cfg,
            )
            .unwrap(),
        );
        assert!(change_password(&db, u.id, "short").is_err());
    }

    #[test]
    fn lockout_survives_a_restart_and_refuses_even_the_right_password() {
        let dir = tempfile::tempdir().unwrap();
        let cfg = AuthConfig::default();
        {
            let db = Db::open(dir.path()).unwrap();
            create_user(&db, "ana", Role::Manager, PW, T0).unwrap();
            for i in 0..5 {
                let o = login(&db, &req("ana", "wrong password!", None), T0 + i, &cfg).unwrap();
                assert_eq!(o, LoginOutcome::BadCredentials);
            }
        }
        let db = Db::open(dir.path()).unwrap();
        // Default policy: 5 failures in 15 min lock for 15 min after the
        // fifth (at T0 + 4), so until T0 + 904.
        match login(&db, &req("ana", PW, None), T0 + 10, &cfg).unwrap() {
            LoginOutcome::Locked { retry_after_secs } => assert_eq!(retry_after_secs, 894),
            other => panic!("expected a lock, got {other:?}"),
        }
        logged_in(login(&db, &req("ana", PW, None), T0 + 904, &cfg).unwrap());
    }

    #[test]
    fn one_client_guessing_many_names_is_locked() {
        let (_d, db, _u) = setup();
        let cfg = AuthConfig::default();
        // 30 failures over 30 names from one address (the per-address bound).
        for i in 0..30 {
            let name = format!("guess{i}");
            let o = login(&db, &req(&name, "wrong password!", None), T0 + i, &cfg).unwrap();
            assert_eq!(o, LoginOutcome::BadCredentials);
        }
        let o = login(&db, &req("ana", PW, None), T0 + 40, &cfg).unwrap();
        assert!(matches!(o, LoginOutcome::Locked { .. }), "{o:?}");
        // Another client may still log in as ana.
        let other = LoginRequest {
            client: "198.51.100.3",
            ..req("ana", PW, None)
        };
        logged_in(login(&db, &other, T0 + 40, &cfg).unwrap());
        let (_, pruned) = prune(&db, T0 + 41 + 4500, &cfg).unwrap();
        // Lookback 4500 s (the per-name hour and its lock): at T0 + 4541
        // all 31 attempts (T0..T0 + 40) are old.
        assert_eq!(pruned, 31);
    }

    #[test]
    fn a_guesser_behind_a_shared_address_does_not_lock_out_the_others_there() {
        let (_d, db, _u) = setup();
        let cfg = AuthConfig::default();
        create_user(&db, "bo", Role::Coordinator, PW, T0).unwrap();
        // Five wrong guesses for bo from the NAT's address lock bo there...
        for i in 0..5 {
            let o = login(&db, &req("bo", "wrong password!", None), T0 + i, &cfg).unwrap();
            assert_eq!(o, LoginOutcome::BadCredentials);
        }
        let o = login(&db, &req("bo", PW, None), T0 + 10, &cfg).unwrap();
        assert!(matches!(o, LoginOutcome::Locked { .. }), "{o:?}");
        // ...but ana behind the same address logs in, and bo elsewhere too.
        logged_in(login(&db, &req("ana", PW, None), T0 + 11, &cfg).unwrap());
        let away = LoginRequest {
            client: "198.51.100.3",
            ..req("bo", PW, None)
        };
        logged_in(login(&db, &away, T0 + 12, &cfg).unwrap());
    }

    #[test]
    fn old_hash_parameters_are_upgraded_at_login() {
        let (_d, db, u) = setup();
        let cfg = AuthConfig::default();
        // A valid argon2id hash with lighter parameters (m=256, t=2, p=1),
        // made with argon2 0.6.0 by this test.
        let light = argon2::Argon2::new(
            argon2::Algorithm::Argon2id,
            argon2::Version::V0x13,
            argon2::Params::new(256, 2, 1, Some(32)).unwrap(),
        );
        let old = argon2::PasswordHasher::hash_password_with_salt(
            &light,
            PW.as_bytes(),
            b"saltsaltsaltsalt",
        )
        .unwrap()
        .to_string();
        assert!(needs_rehash(&old));
        db.write(|tx| tx.upgrade_password_hash(u.id, &old)).unwrap();
        logged_in(login(&db, &req("ana", PW, None), T0, &cfg).unwrap());
        let (_, now) = db.read(|r| r.user_credentials("ana")).unwrap().unwrap();
        assert!(!needs_rehash(&now) && verify_password(PW, &now));
    }

    #[test]
    fn bearer_tokens_identify_scripts_and_teams() {
        let (_d, db, _u) = setup();
        let (api, api_tok) = issue_api_token(&db, Role::Manager, "weekly export", T0).unwrap();
        let (team, team_tok) = issue_team_token(&db, "north", T0).unwrap();
        assert_eq!(
            authenticate_bearer(&db, &api_tok).unwrap(),
            Identity::ApiToken {
                token_id: api.id,
                label: "weekly export".into(),
                role: Role::Manager
            }
        );
        assert_eq!(
            authenticate_bearer(&db, &team_tok).unwrap(),
            Identity::Team {
                token_id: team.id,
                team_name: "north".into()
            }
        );
        assert_eq!(
            bearer_token(&format!("Bearer {team_tok}")),
            Some(team_tok.as_str())
        );
        assert_eq!(bearer_token("Basic abc"), None);
        db.write(|tx| tx.revoke_team_token(team.id, T0 + 1))
            .unwrap();
        assert_eq!(
            authenticate_bearer(&db, &team_tok).unwrap(),
            Identity::Anonymous
        );
        assert_eq!(
            authenticate_bearer(&db, "gp_junk").unwrap(),
            Identity::Anonymous
        );
        // A session token is not a bearer token.
        let s = logged_in(login(&db, &req("ana", PW, None), T0, &AuthConfig::default()).unwrap());
        assert_eq!(
            authenticate_bearer(&db, &s.token).unwrap(),
            Identity::Anonymous
        );
        assert!(issue_api_token(&db, Role::Admin, " ", T0).is_err());
        assert!(issue_team_token(&db, "bad\nname", T0).is_err());
    }

    #[test]
    fn first_admin_is_made_once() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let e = ensure_first_admin(&db, Some("short"), T0)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains(ADMIN_PASSWORD_ENV) && e.contains("too short"),
            "{e}"
        );
        let FirstAdmin::Created {
            name,
            generated_password: Some(pw),
        } = ensure_first_admin(&db, None, T0).unwrap()
        else {
            panic!("expected a generated password");
        };
        assert_eq!(name, "admin");
        let s =
            logged_in(login(&db, &req("admin", &pw, None), T0, &AuthConfig::default()).unwrap());
        assert_eq!(s.user.role, Role::Admin);
        assert_eq!(
            ensure_first_admin(&db, None, T0).unwrap(),
            FirstAdmin::AlreadySetUp
        );

        let dir2 = tempfile::tempdir().unwrap();
        let db2 = Db::open(dir2.path()).unwrap();
        assert_eq!(
            ensure_first_admin(&db2, Some("given admin password"), T0).unwrap(),
            FirstAdmin::Created {
                name: "admin".into(),
                generated_password: None
            }
        );
        logged_in(
            login(
                &db2,
                &req("admin", "given admin password", None),
                T0,
                &AuthConfig::default(),
            )
            .unwrap(),
        );
    }

    #[test]
    fn user_names_are_checked() {
        for ok in ["ana", "a.b-c_d", "A1"] {
            assert!(validate_user_name(ok).is_ok(), "{ok}");
        }
        for bad in ["", ".ana", "an a", "ana/..", "é", &"a".repeat(65)] {
            assert!(validate_user_name(bad).is_err(), "{bad}");
        }
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        assert!(create_user(&db, "bad name", Role::Manager, PW, T0).is_err());
        assert_eq!(db.read(|r| r.user_count()).unwrap(), 0);
    }
}
