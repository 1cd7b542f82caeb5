//! Pairing a phone with a bundle over HTTP: a coordinator makes a code, a
//! phone with no credentials trades it once for the bundle and a team
//! token; used, expired, unknown and malformed codes and cancelled trips
//! are refused with their own word, and the phone's token dies with its
//! bundle.

use groundproof_e2e::{
    TestServer, bearer, get_as, issue_from_station, load_scenario, post_json, post_json_as, request,
};
use serde_json::{Value, json};

struct Redeemed {
    status: u16,
    token: Option<String>,
    body: Vec<u8>,
}

/// `POST /api/v1/pairings/redeem` with no credentials.
fn redeem(s: &TestServer, code: &str) -> Redeemed {
    let body = json!({ "code": code }).to_string();
    let headers = [("Content-Type", "application/json")];
    let a = request(
        "POST",
        &s.url("/api/v1/pairings/redeem"),
        &headers,
        body.as_bytes(),
    );
    Redeemed {
        status: a.status,
        token: a.header("groundproof-team-token").map(str::to_string),
        body: a.body,
    }
}

fn refusal(r: &Redeemed) -> String {
    let v: Value = serde_json::from_slice(&r.body).expect("a JSON refusal");
    assert!(v["error"].as_str().is_some_and(|e| !e.is_empty()), "{v}");
    v["refusal"].as_str().unwrap_or_default().to_string()
}

fn issue(s: &TestServer, team: &str) -> (String, Vec<u8>) {
    issue_from_station(s, json!({"team": team, "zone": "Core", "max": 2}))
}

#[test]
fn a_code_puts_one_bundle_on_one_phone_once() {
    let s = TestServer::start();
    load_scenario(&s);
    let (id, zip) = issue(&s, "Team Amber");
    let make = s.url(&format!("/api/v1/bundles/{id}/pairings"));

    // Nobody without the right makes codes: not anonymous, not a manager.
    assert_eq!(post_json_as(&make, None, &json!({})).status, 401);
    let (_, manager) = groundproof::platform::auth::issue_api_token(
        &s.db,
        groundproof::platform::auth::Role::Manager,
        "a manager",
        groundproof::platform::auth::now_unix(),
    )
    .expect("manager token");
    assert_eq!(post_json_as(&make, Some(&manager), &json!({})).status, 403);
    let r = post_json(&make, &json!({}));
    assert_eq!(r.status, 201, "{}", r.body);
    let p = r.json();
    let code = p["code"].as_str().expect("code").to_string();
    assert_eq!(code.len(), 11, "XXXXX-XXXXX: {code}");
    assert_eq!(&code[5..6], "-");
    let link = p["link"].as_str().expect("link");
    assert_eq!(
        link,
        s.url(&format!("/field/#pair={}", code.replace('-', "")))
    );
    assert!(p["qr_svg"].as_str().is_some_and(|q| q.starts_with("<svg")));
    assert!(p["expires_at"].as_str().is_some_and(|e| e.ends_with('Z')));

    // Typed in lower case with a stray space: the phone gets the very
    // bundle and a team token, with no credentials of its own.
    let got = redeem(&s, &format!(" {}", code.to_lowercase()));
    assert_eq!(got.status, 200, "{}", String::from_utf8_lossy(&got.body));
    assert_eq!(got.body, zip, "the bundle, byte for byte");
    let token = got.token.expect("a team token");
    let mine = get_as(&s.url("/api/v1/bundles"), Some(&token));
    assert_eq!(mine.status, 200, "{}", mine.body);
    assert!(mine.body.contains(&id));

    // Once only.
    let again = redeem(&s, &code);
    assert_eq!((again.status, refusal(&again).as_str()), (410, "used"));
    assert!(again.token.is_none());

    // Malformed and unknown codes.
    let bad = redeem(&s, "12345");
    assert_eq!((bad.status, refusal(&bad).as_str()), (400, "malformed"));
    let unknown = redeem(&s, "ZZZZZ-ZZZZZ");
    assert_eq!(
        (unknown.status, refusal(&unknown).as_str()),
        (404, "unknown")
    );

    // A code older than its lifetime.
    let now = groundproof::platform::auth::now_unix();
    let (old, _) = groundproof::platform::auth::issue_pairing(
        &s.db,
        &id,
        "test",
        now - groundproof::platform::auth::PAIRING_LIFETIME_SECS - 1,
    )
    .expect("an old code");
    let late = redeem(&s, &old);
    assert_eq!((late.status, refusal(&late).as_str()), (410, "expired"));

    // A code made before the trip was cancelled; the phone's token dies
    // with the trip.
    let waiting = post_json(&make, &json!({})).json()["code"]
        .as_str()
        .expect("code")
        .to_string();
    let r = post_json(&s.url(&format!("/api/v1/bundles/{id}/cancel")), &json!({}));
    assert_eq!(r.status, 200, "{}", r.body);
    let gone = redeem(&s, &waiting);
    assert_eq!(
        (gone.status, refusal(&gone).as_str()),
        (410, "trip_cancelled")
    );
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 401);
    // And no new code is made for it.
    assert_eq!(post_json(&make, &json!({})).status, 409);
}

#[test]
fn a_large_redeem_body_is_refused_before_it_is_read() {
    let s = TestServer::start();
    let big = "x".repeat(4096);
    let r = redeem(&s, &big);
    assert_eq!(r.status, 413, "{}", String::from_utf8_lossy(&r.body));
}

/// A phone's credential from pairing reaches its one bundle: not the other
/// trips of its team (list, record, file, uploads), and not at all once the
/// bundle is cancelled or has expired.
#[test]
fn a_phones_credential_reaches_only_its_bundle() {
    let s = TestServer::start();
    load_scenario(&s);
    let (mine, _) = issue(&s, "Team Amber");
    let (other, _) = issue(&s, "Team Amber");
    let code = post_json(
        &s.url(&format!("/api/v1/bundles/{mine}/pairings")),
        &json!({}),
    )
    .json()["code"]
        .as_str()
        .expect("code")
        .to_string();
    let token = redeem(&s, &code).token.expect("a token");

    let list = get_as(&s.url("/api/v1/bundles"), Some(&token));
    assert_eq!(list.status, 200, "{}", list.body);
    assert!(
        list.body.contains(&mine) && !list.body.contains(&other),
        "{}",
        list.body
    );
    assert_eq!(
        get_as(&s.url(&format!("/api/v1/bundles/{mine}")), Some(&token)).status,
        200
    );
    assert_eq!(
        get_as(&s.url(&format!("/api/v1/bundles/{other}")), Some(&token)).status,
        404
    );
    let (status, _) = get_bytes_as(&s, &format!("/api/v1/bundles/{mine}/download"), &token);
    assert_eq!(status, 200);
    let (status, _) = get_bytes_as(&s, &format!("/api/v1/bundles/{other}/download"), &token);
    assert_eq!(status, 404);

    // Uploads: one for its bundle is opened, one for the other is not.
    let body = |b: &str| json!({"bundle_id": b, "size": 100, "sha256": "0".repeat(64)});
    let ok = post_json_as(&s.url("/api/v1/uploads"), Some(&token), &body(&mine));
    assert_eq!(ok.status, 201, "{}", ok.body);
    let no = post_json_as(&s.url("/api/v1/uploads"), Some(&token), &body(&other));
    assert_eq!(no.status, 404, "{}", no.body);
    // An upload of the other bundle, opened by the office, is unknown to it.
    let office = post_json(&s.url("/api/v1/uploads"), &body(&other));
    assert_eq!(office.status, 201, "{}", office.body);
    let uid = office.json()["upload_id"].as_str().expect("id").to_string();
    assert_eq!(
        get_as(&s.url(&format!("/api/v1/returns/{uid}")), Some(&token)).status,
        404
    );

    // Expired: the same token speaks for nobody (checked a year on).
    let hash = groundproof::platform::auth::sha256_hex(&token);
    let id =
        s.db.read(|r| r.team_token_by_hash(&hash))
            .expect("read")
            .expect("live token")
            .id;
    let now = groundproof::platform::auth::now_unix();
    use groundproof::platform::auth::{TokenScope, token_scope};
    assert!(matches!(
        token_scope(&s.db, id, now).expect("scope"),
        TokenScope::Bundle(_)
    ));
    assert_eq!(
        token_scope(&s.db, id, now + 400 * 86_400).expect("scope"),
        TokenScope::Dead
    );
    // A team token given by hand keeps the team's reach.
    let (_, hand) =
        groundproof::platform::auth::issue_team_token(&s.db, "Team Amber", now).expect("token");
    let all = get_as(&s.url("/api/v1/bundles"), Some(&hand));
    assert!(all.body.contains(&mine) && all.body.contains(&other));
}

/// GET with a bearer token: (status, body bytes).
fn get_bytes_as(s: &TestServer, path: &str, token: &str) -> (u16, Vec<u8>) {
    let auth = bearer(token);
    let a = request(
        "GET",
        &s.url(path),
        &[("Authorization", auth.as_str())],
        b"",
    );
    (a.status, a.body)
}
