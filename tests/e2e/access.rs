//! The access matrix of the README, route by route, over HTTP.

use groundproof::platform::auth::{Role, issue_api_token, issue_team_token, now_unix};
use groundproof_e2e::{TestServer, anonymous_get, get_as, load_scenario, post_json, post_json_as};
use serde_json::json;

fn token(s: &TestServer, role: Role) -> String {
    issue_api_token(&s.db, role, "access test", now_unix())
        .unwrap()
        .1
}

#[test]
fn who_may_do_what() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let trip = |team: &str| json!({"team": team, "zone": "Core", "max": 2, "start": {"lat": station.1, "lon": station.0}});
    let coordinator = token(&s, Role::Coordinator);
    let manager = token(&s, Role::Manager);

    // Nobody unauthenticated sees anything but the login page.
    for path in [
        "/api/v1/events",
        "/api/v1/stats",
        "/api/v1/bundles",
        "/api/v1/zones",
    ] {
        assert_eq!(anonymous_get(&s.url(path)).status, 401, "{path}");
    }
    assert_eq!(anonymous_get(&s.url("/login")).status, 200);
    assert_eq!(
        post_json_as(&s.url("/api/v1/bundles"), None, &trip("Team Amber")).status,
        401
    );

    // A manager cannot issue bundles or import; a coordinator can.
    assert_eq!(
        post_json_as(
            &s.url("/api/v1/bundles"),
            Some(&manager),
            &trip("Team Amber")
        )
        .status,
        403
    );
    assert_eq!(
        post_json_as(
            &s.url("/api/v1/sources"),
            Some(&manager),
            &json!({"name": "x-1", "pixel_size_m": 10, "revisit_days": 5})
        )
        .status,
        403
    );
    let amber = post_json_as(
        &s.url("/api/v1/bundles"),
        Some(&coordinator),
        &trip("Team Amber"),
    );
    assert_eq!(amber.status, 201, "{}", amber.body);
    let amber_id = amber.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();
    let basalt = post_json(&s.url("/api/v1/bundles"), &trip("Team Basalt"));
    let basalt_id = basalt.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();

    // A coordinator cannot adjudicate; a manager can. Managers see statistics.
    let event =
        get_as(&s.url("/api/v1/events?limit=1"), Some(&manager)).json()["features"][0]["id"]
            .as_i64()
            .unwrap();
    let adj = json!({"outcome": "confirmed", "reason": "photos", "by": "m"});
    let url = s.url(&format!("/api/v1/events/{event}/adjudications"));
    assert_eq!(post_json_as(&url, Some(&coordinator), &adj).status, 403);
    assert_eq!(post_json_as(&url, Some(&manager), &adj).status, 201);
    assert_eq!(
        get_as(&s.url("/api/v1/stats/coverage"), Some(&manager)).status,
        200
    );

    // A team token sees only its own bundles and nothing else.
    let team = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let mine = get_as(&s.url("/api/v1/bundles"), Some(&team)).json();
    let ids: Vec<&str> = mine
        .as_array()
        .unwrap()
        .iter()
        .map(|b| b["id"].as_str().unwrap())
        .collect();
    assert_eq!(ids, vec![amber_id.as_str()]);
    assert_eq!(
        get_as(
            &s.url(&format!("/api/v1/bundles/{amber_id}/download")),
            Some(&team)
        )
        .status,
        200
    );
    assert_eq!(
        get_as(
            &s.url(&format!("/api/v1/bundles/{basalt_id}/download")),
            Some(&team)
        )
        .status,
        404
    );
    assert_eq!(get_as(&s.url("/api/v1/events"), Some(&team)).status, 403);
    assert_eq!(get_as(&s.url("/api/v1/stats"), Some(&team)).status, 403);
    assert_eq!(
        post_json_as(&s.url("/api/v1/bundles"), Some(&team), &trip("Team Amber")).status,
        403
    );
    // A wrong token is no token.
    assert_eq!(
        get_as(&s.url("/api/v1/events"), Some("gp_0000")).status,
        401
    );
}

/// `POST /language` is open to all (the README's row): nobody signed in
/// gets a cookie only; an unknown language is refused.
#[test]
fn anyone_may_choose_the_pages_language() {
    let s = TestServer::start();
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into();
    let send = |body: &str| {
        agent
            .post(&s.url("/language"))
            .header("Content-Type", "application/x-www-form-urlencoded")
            .send(body.as_bytes())
            .expect("request reaches the server")
    };
    let r = send("lang=pt&next=/login");
    assert_eq!(r.status().as_u16(), 303);
    assert!(
        r.headers()
            .get("set-cookie")
            .and_then(|v| v.to_str().ok())
            .is_some_and(|c| c.starts_with("gp_lang=pt;"))
    );
    assert_eq!(send("lang=klingon").status().as_u16(), 400);
    // An outside address is not followed (no open redirect).
    let r = send("lang=es&next=//elsewhere.example/");
    assert_eq!(
        r.headers().get("location").and_then(|v| v.to_str().ok()),
        Some("/")
    );
}
