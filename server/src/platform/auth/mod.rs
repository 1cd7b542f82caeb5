//! Accounts and access: who is asking, and may they do this.
//!
//! Pure rules live in small modules beside this one: password hashing
//! (`password`), random tokens and their stored SHA-256 (`tokens`), session
//! timeouts and the cookie (`session`), CSRF tokens and the same-origin
//! check (`csrf`), the login lockout (`ratelimit`) and the access matrix
//! (`access`). `flow` joins them to the database (`storage::Db`) for the
//! web layer: log in, look up a session, log out, check a bearer token,
//! create the first admin. No HTTP type appears here: the web layer passes
//! header values in and gets strings and plain structs out.
//!
//! Times are Unix seconds (`i64`) passed in by the caller, so every rule can
//! be tested with an injected clock; [`now_unix`] reads the real one.

mod access;
mod csrf;
mod flow;
mod pairing;
mod password;
mod ratelimit;
mod session;
mod tokens;
mod verified;

pub use access::{Action, MATRIX, Principal, allowed, matrix_markdown, may_fetch_bundle};
pub use csrf::{CSRF_FIELD, CSRF_HEADER, csrf_token, is_same_origin, new_csrf_secret, verify_csrf};
pub use flow::{
    ADMIN_PASSWORD_ENV, AuthConfig, FIRST_ADMIN_NAME, FirstAdmin, LoginOutcome, LoginRequest,
    MAX_LABEL_CHARS, NewSession, SessionIdentity, admin_password_from_env, authenticate_bearer,
    authenticate_session, bearer_token, change_password, create_user, ensure_first_admin,
    issue_api_token, issue_team_token, login, logout, prune, validate_label, validate_user_name,
};
pub use pairing::{
    PAIRING_CODE_CHARS, PAIRING_LIFETIME_SECS, PairedBundle, PairingRefusal, Redemption,
    TokenScope, display_code, issue_pairing, normalize_code, redeem_pairing, token_scope,
};
pub use password::{
    ARGON2_M_KIB, ARGON2_P, ARGON2_T, MAX_PASSWORD_CHARS, MIN_PASSWORD_CHARS,
    check_password_policy, generate_password, hash_password, needs_rehash, verify_password,
};
pub use ratelimit::{Attempt, Lockout, LockoutPolicy, LoginThrottle, lockout};
pub use session::{
    SESSION_COOKIE, SessionPolicy, SessionState, TOUCH_INTERVAL_SECS, clear_session_cookie,
    needs_touch, session_cookie, session_state, session_token_from_cookie_header,
};
pub use tokens::{API_TOKEN_PREFIX, new_api_token, new_session_token, new_team_token, sha256_hex};
pub use verified::{KEEP_FOR, MAX_KEPT, VerifiedTokens};

use crate::error::Error;
use std::str::FromStr;

/// The current time in Unix seconds.
pub fn now_unix() -> i64 {
    chrono::Utc::now().timestamp()
}

pub use crate::domain::Role;

impl From<Role> for Principal {
    /// The column of the access matrix a role acts as.
    fn from(role: Role) -> Principal {
        match role {
            Role::Admin => Principal::Admin,
            Role::Coordinator => Principal::Coordinator,
            Role::Manager => Principal::Manager,
        }
    }
}

impl FromStr for Role {
    type Err = Error;

    /// [`Role::parse`], refusing with [`Error::Invalid`].
    fn from_str(s: &str) -> Result<Role, Error> {
        Role::parse(s).map_err(Error::Invalid)
    }
}

/// Who a request acts for, once its credentials have been checked.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Identity {
    /// A user logged in through a browser session.
    User {
        user_id: i64,
        name: String,
        role: Role,
    },
    /// A script holding an API token (`gp_...`).
    ApiToken {
        token_id: i64,
        label: String,
        role: Role,
    },
    /// A field team holding its team token.
    Team { token_id: i64, team_name: String },
    /// No valid credentials.
    Anonymous,
}

impl Identity {
    /// The column of the access matrix this identity uses.
    pub fn principal(&self) -> Principal {
        match self {
            Identity::User { role, .. } | Identity::ApiToken { role, .. } => Principal::from(*role),
            Identity::Team { .. } => Principal::Team,
            Identity::Anonymous => Principal::Anonymous,
        }
    }

    /// Whether this identity may perform `action` (function level; data
    /// level checks such as [`may_fetch_bundle`] come on top).
    pub fn may(&self, action: Action) -> bool {
        allowed(self.principal(), action)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roles_parse_from_text_and_back() {
        for r in Role::ALL {
            assert_eq!(r.as_str().parse::<Role>().unwrap(), r);
            assert_eq!(r.to_string().to_uppercase().parse::<Role>().unwrap(), r);
        }
        assert_eq!(" Manager ".parse::<Role>().unwrap(), Role::Manager);
        let e = "team".parse::<Role>().unwrap_err().to_string();
        assert!(e.contains("unknown role 'team'"), "{e}");
        assert!("".parse::<Role>().is_err());
    }

    #[test]
    fn identities_map_to_principals() {
        let u = Identity::User {
            user_id: 1,
            name: "ana".into(),
            role: Role::Manager,
        };
        assert_eq!(u.principal(), Principal::Manager);
        assert!(!u.may(Action::IssueBundle));
        let t = Identity::Team {
            token_id: 2,
            team_name: "north".into(),
        };
        assert!(t.may(Action::UploadReturn));
        assert!(!Identity::Anonymous.may(Action::ViewEvents));
    }
}

/// The CSRF token of the current browser session, put into the request's
/// extensions by the web layer so pages can embed it in their forms.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CsrfToken(pub String);
