//! The server keeps bearer tokens it has verified (`auth::VerifiedTokens`),
//! so a script polling the API costs no database read per request. A token
//! revoked while it is kept must still be refused at the very next request:
//! revoked by this server, by another process on the same database (the
//! command line, a second server), or by disabling its team.

use groundproof::platform::admin::{
    Actor, add_team, create_team_token, revoke_team_token, set_team_disabled,
};
use groundproof::platform::auth::{Role, issue_api_token, now_unix};
use groundproof_e2e::{TestServer, get_as};

/// Asks often enough that the token is surely kept, each answer `status`;
/// a token answered 200 is then kept (on either engine).
fn poll(s: &TestServer, path: &str, token: &str, status: u16) {
    for _ in 0..5 {
        assert_eq!(get_as(&s.url(path), Some(token)).status, status, "{path}");
    }
    if status == 200 {
        assert!(!s.tokens.is_empty(), "the token is kept between requests");
    }
}

#[test]
fn a_revoked_api_token_is_refused_at_the_next_request() {
    let s = TestServer::start();
    let (rec, token) = issue_api_token(&s.db, Role::Manager, "poller", now_unix()).unwrap();
    poll(&s, "/api/v1/stats", &token, 200);
    s.db.write_bookkeeping(|tx| tx.revoke_api_token(rec.id, now_unix()))
        .unwrap();
    assert_eq!(get_as(&s.url("/api/v1/stats"), Some(&token)).status, 401);

    // Revoked by another process on the same database (a handle of its
    // own: the SQLite file, or other connections to PostgreSQL).
    let (rec, token) = issue_api_token(&s.db, Role::Coordinator, "other", now_unix()).unwrap();
    poll(&s, "/api/v1/events", &token, 200);
    let other = s.open_db().unwrap();
    other
        .write_bookkeeping(|tx| tx.revoke_api_token(rec.id, now_unix()))
        .unwrap();
    assert_eq!(get_as(&s.url("/api/v1/events"), Some(&token)).status, 401);
}

#[test]
fn a_revoked_or_disabled_team_token_is_refused_at_the_next_request() {
    let s = TestServer::start();
    let me = Actor::CommandLine;
    add_team(&s.db, &me, "Team North", now_unix()).unwrap();
    let (rec, token) = create_team_token(&s.db, &me, "Team North", now_unix()).unwrap();
    poll(&s, "/api/v1/bundles", &token, 200);
    revoke_team_token(&s.db, &me, rec.id, now_unix()).unwrap();
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 401);

    // A team disabled loses its tokens at once.
    let team = add_team(&s.db, &me, "Team South", now_unix()).unwrap();
    let (_, token) = create_team_token(&s.db, &me, "Team South", now_unix()).unwrap();
    poll(&s, "/api/v1/bundles", &token, 200);
    set_team_disabled(&s.db, &me, team.id, true, now_unix()).unwrap();
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 401);
}
