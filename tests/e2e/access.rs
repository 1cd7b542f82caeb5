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

/// A form POST (urlencoded) as a token holder; the status.
fn post_form_as(s: &TestServer, path: &str, token: Option<&str>, body: &str) -> u16 {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into();
    let mut r = agent
        .post(&s.url(path))
        .header("Content-Type", "application/x-www-form-urlencoded");
    if let Some(t) = token {
        r = r.header("Authorization", &format!("Bearer {t}"));
    }
    r.send(body.as_bytes())
        .expect("reaches the server")
        .status()
        .as_u16()
}

#[test]
fn who_may_open_preview_and_issue_trips() {
    let s = TestServer::start();
    load_scenario(&s);
    let (lon, lat) = mock_patrols::scenario().station;
    let coordinator = token(&s, Role::Coordinator);
    let manager = token(&s, Role::Manager);
    let team = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let trip =
        json!({"team": "Team Amber", "zone": "Core", "max": 2, "start": {"lat": lat, "lon": lon}});
    let id = post_json(&s.url("/api/v1/bundles"), &trip).json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();
    let page = format!("/trips/{id}");
    // GET /trips/{id}: everyone who sees events (ViewEvents); not a team, not anonymous.
    assert_eq!(get_as(&s.url(&page), Some(&manager)).status, 200);
    assert_eq!(get_as(&s.url(&page), Some(&coordinator)).status, 200);
    assert_eq!(get_as(&s.url(&page), Some(&team)).status, 403);
    let anon = anonymous_get(&s.url(&page));
    assert!(
        anon.status == 401
            || (anon.body.contains("<title>Log in") && !anon.body.contains("trip-stops")),
        "anonymous sees the login page: {} {}",
        anon.status,
        anon.body
    );
    // A manager sees the trip but is offered no download, pairing or cancel.
    let seen = get_as(&s.url(&page), Some(&manager)).body;
    assert!(
        !seen.contains("/download\"") && !seen.contains("/cancel\""),
        "{seen}"
    );
    // POST /trips/preview and POST /api/v1/bundles/preview: IssueBundle.
    let form = format!("team=Team+Amber&zone=Core&max=2&start_lat={lat}&start_lon={lon}");
    assert_eq!(
        post_form_as(&s, "/trips/preview", Some(&coordinator), &form),
        200
    );
    assert_eq!(
        post_form_as(&s, "/trips/preview", Some(&manager), &form),
        403
    );
    assert_eq!(post_form_as(&s, "/trips/preview", Some(&team), &form), 403);
    assert_ne!(post_form_as(&s, "/trips/preview", None, &form), 200);
    let api = s.url("/api/v1/bundles/preview");
    assert_eq!(post_json_as(&api, Some(&coordinator), &trip).status, 200);
    assert_eq!(post_json_as(&api, Some(&manager), &trip).status, 403);
    assert_eq!(post_json_as(&api, Some(&team), &trip).status, 403);
    assert_eq!(post_json_as(&api, None, &trip).status, 401);
    // Previews stored nothing: still the one bundle.
    assert_eq!(s.db.read(|r| r.bundles()).unwrap().len(), 1);
}
