//! Browser session rules: timeouts and the cookie.
//!
//! A session ends after 30 minutes without a request (idle) or 8 hours
//! after login (absolute), whichever comes first. Both are the top of the
//! OWASP Session Management Cheat Sheet's ranges for low-risk applications
//! ("15-30 minutes" idle, "4-8 hours" absolute for a full-day user), as
//! adopted in the project's reliability notes (section 3). The absolute
//! limit is kept at 8 h rather than 12 h because the bundles hold
//! locations of possibly illegal activity.
//!
//! `last_seen_at` is written at most once a minute ([`TOUCH_INTERVAL_SECS`])
//! to spare the single writer; a session may therefore end up to one
//! minute early, never late.
//!
//! Cookie: `gp_session`, `HttpOnly` (scripts cannot read it, ASVS 5.0
//! 3.3.4), `Path=/`, `Secure` when the request came over TLS (3.3.1),
//! `SameSite=Lax` (3.3.2), `Max-Age` equal to the absolute timeout. Lax
//! rather than Strict: every state change is a POST that also needs a CSRF
//! token and passes the same-origin check, so Strict would add no defence
//! there, while Lax keeps a link to an event page (in a message or a
//! printed sheet's QR code) opening logged in instead of on the login form.
//! A cross-site POST, image or frame still carries no cookie under Lax.

use super::tokens::is_session_token;

/// Name of the session cookie.
pub const SESSION_COOKIE: &str = "gp_session";
/// `last_seen_at` is refreshed when it is at least this old (seconds).
pub const TOUCH_INTERVAL_SECS: i64 = 60;

/// How long sessions live.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SessionPolicy {
    /// Seconds without a request after which the session ends.
    pub idle_secs: i64,
    /// Seconds after login after which the session ends regardless.
    pub absolute_secs: i64,
}

impl Default for SessionPolicy {
    fn default() -> Self {
        SessionPolicy {
            idle_secs: 30 * 60,
            absolute_secs: 8 * 3600,
        }
    }
}

/// Whether a stored session may still be used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SessionState {
    Active,
    IdleExpired,
    AbsoluteExpired,
}

/// Decide the state of a session made at `created_at` and last used at
/// `last_seen_at`, at time `now` (all Unix seconds). The absolute limit is
/// checked first. A clock that went backwards does not revive or end a
/// session by itself: negative ages count as zero.
pub fn session_state(
    created_at: i64,
    last_seen_at: i64,
    now: i64,
    policy: &SessionPolicy,
) -> SessionState {
    if now.saturating_sub(created_at) >= policy.absolute_secs {
        SessionState::AbsoluteExpired
    } else if now.saturating_sub(last_seen_at) >= policy.idle_secs {
        SessionState::IdleExpired
    } else {
        SessionState::Active
    }
}

/// Whether `last_seen_at` should be written again at `now`.
pub fn needs_touch(last_seen_at: i64, now: i64) -> bool {
    now.saturating_sub(last_seen_at) >= TOUCH_INTERVAL_SECS
}

/// The `Set-Cookie` value that gives the browser its session token.
/// `secure` is true when the request came over TLS.
pub fn session_cookie(token: &str, secure: bool, policy: &SessionPolicy) -> String {
    format!(
        "{SESSION_COOKIE}={token}; Path=/; Max-Age={}; HttpOnly; SameSite=Lax{}",
        policy.absolute_secs.max(0),
        if secure { "; Secure" } else { "" }
    )
}

/// The `Set-Cookie` value that removes the session cookie (logout).
pub fn clear_session_cookie(secure: bool) -> String {
    format!(
        "{SESSION_COOKIE}=; Path=/; Max-Age=0; HttpOnly; SameSite=Lax{}",
        if secure { "; Secure" } else { "" }
    )
}

/// The session token in a `Cookie` request header, if there is a
/// well-formed one.
pub fn session_token_from_cookie_header(header: &str) -> Option<&str> {
    header
        .split(';')
        .filter_map(|pair| pair.trim().split_once('='))
        .filter(|(name, _)| *name == SESSION_COOKIE)
        .map(|(_, value)| value.trim())
        .find(|value| is_session_token(value))
}

#[cfg(test)]
mod tests {
    use super::*;

    // Expiry tests use the defaults: 1800 s idle, 28,800 s absolute (OWASP
    // Session Management Cheat Sheet ranges, see the module text).
    const T0: i64 = 1_750_000_000;

    #[test]
    fn idle_timeout_ends_an_unused_session() {
        let p = SessionPolicy::default();
        assert_eq!(session_state(T0, T0, T0, &p), SessionState::Active);
        assert_eq!(session_state(T0, T0, T0 + 1799, &p), SessionState::Active);
        assert_eq!(
            session_state(T0, T0, T0 + 1800, &p),
            SessionState::IdleExpired
        );
        // Used 20 minutes in: alive at 49 minutes, gone at 50.
        assert_eq!(
            session_state(T0, T0 + 1200, T0 + 2999, &p),
            SessionState::Active
        );
        assert_eq!(
            session_state(T0, T0 + 1200, T0 + 3000, &p),
            SessionState::IdleExpired
        );
    }

    #[test]
    fn absolute_timeout_ends_even_a_busy_session() {
        let p = SessionPolicy::default();
        let end = T0 + 8 * 3600;
        assert_eq!(
            session_state(T0, end - 10, end - 1, &p),
            SessionState::Active
        );
        assert_eq!(
            session_state(T0, end - 10, end, &p),
            SessionState::AbsoluteExpired
        );
        // Both limits passed: the absolute one is reported.
        assert_eq!(
            session_state(T0, T0, end + 5, &p),
            SessionState::AbsoluteExpired
        );
        // A clock that went backwards keeps the session as it was.
        assert_eq!(session_state(T0, T0, T0 - 100, &p), SessionState::Active);
    }

    #[test]
    fn touch_is_rate_limited() {
        assert!(!needs_touch(T0, T0 + 59));
        assert!(needs_touch(T0, T0 + 60));
    }

    #[test]
    fn cookie_attributes() {
        let p = SessionPolicy::default();
        let tok = "0123456789abcdef0123456789abcdef";
        assert_eq!(
            session_cookie(tok, true, &p),
            "gp_session=0123456789abcdef0123456789abcdef; Path=/; Max-Age=28800; HttpOnly; SameSite=Lax; Secure"
        );
        let plain = session_cookie(tok, false, &p);
        assert!(plain.ends_with("SameSite=Lax") && !plain.contains("Secure"));
        assert_eq!(
            clear_session_cookie(false),
            "gp_session=; Path=/; Max-Age=0; HttpOnly; SameSite=Lax"
        );
    }

    #[test]
    fn token_is_read_from_the_cookie_header() {
        let tok = "0123456789abcdef0123456789abcdef";
        let h = format!("theme=dark; gp_session={tok}; other=1");
        assert_eq!(session_token_from_cookie_header(&h), Some(tok));
        assert_eq!(session_token_from_cookie_header("gp_session=junk"), None);
        assert_eq!(session_token_from_cookie_header("xgp_session=abc"), None);
        assert_eq!(session_token_from_cookie_header(""), None);
        // A junk duplicate before the real one does not hide it.
        let h = format!("gp_session=../../x; gp_session={tok}");
        assert_eq!(session_token_from_cookie_header(&h), Some(tok));
    }
}
