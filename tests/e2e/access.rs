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
    // The printable summary is a statistics page: a manager's, not a team's.
    assert_eq!(get_as(&s.url("/summary"), Some(&team)).status, 403);
    assert_eq!(get_as(&s.url("/summary"), Some(&manager)).status, 200);
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

/// Status of a request with a bearer token (or none), redirects not followed.
fn status_as(method: &str, url: &str, token: Option<&str>, body: &[u8]) -> u16 {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into();
    let auth = token.map(|t| format!("Bearer {t}"));
    let r = if method == "GET" {
        let mut b = agent.get(url);
        if let Some(a) = &auth {
            b = b.header("Authorization", a);
        }
        b.call()
    } else {
        let mut b = agent
            .post(url)
            .header("Content-Type", "application/x-www-form-urlencoded");
        if let Some(a) = &auth {
            b = b.header("Authorization", a);
        }
        b.send(body)
    };
    r.expect("request reaches the server").status().as_u16()
}

/// The station entry's routes (issue 13): coordinators and admins only
/// (`EnterFromPaper`); managers and teams are refused, nobody anonymous
/// gets in.
#[test]
fn station_entry_routes_follow_the_matrix() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let trip = json!({"team": "Team Amber", "zone": "Core", "max": 2, "start": {"lat": station.1, "lon": station.0}});
    let made = post_json(&s.url("/api/v1/bundles"), &trip);
    assert_eq!(made.status, 201, "{}", made.body);
    let id = made.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();
    let coordinator = token(&s, Role::Coordinator);
    let manager = token(&s, Role::Manager);
    let team = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let sha = "ab".repeat(32);
    let routes = [
        ("GET", format!("/station/trips/{id}")),
        ("POST", format!("/station/trips/{id}")),
        ("POST", format!("/station/trips/{id}/photos")),
        ("POST", format!("/station/trips/{id}/discard")),
        ("GET", format!("/station/trips/{id}/thumbs/{sha}")),
    ];
    for (method, path) in &routes {
        let url = s.url(path);
        let anon = status_as(method, &url, None, b"");
        assert!(
            anon == 401 || anon == 303,
            "{method} {path} anonymous: {anon}"
        );
        assert_eq!(
            status_as(method, &url, Some(&manager), b""),
            403,
            "{method} {path} manager"
        );
        assert_eq!(
            status_as(method, &url, Some(&team), b""),
            403,
            "{method} {path} team"
        );
    }
    // The coordinator reaches each handler: the page, a form kept (303),
    // an empty multipart refused by the handler (400, not 403), the
    // discard (303), and a thumbnail not in the entry (404).
    let url = |p: &str| s.url(&format!("/station/trips/{id}{p}"));
    let c = Some(coordinator.as_str());
    assert_eq!(status_as("GET", &url(""), c, b""), 200);
    assert_eq!(
        status_as(
            "POST",
            &url(""),
            c,
            b"sheet=x&local_offset=%2B00:00&action=keep"
        ),
        303
    );
    assert_eq!(status_as("POST", &url("/photos"), c, b""), 400);
    assert_eq!(
        status_as("GET", &url(&format!("/thumbs/{sha}")), c, b""),
        404
    );
    assert_eq!(status_as("POST", &url("/discard"), c, b""), 303);
}

/// Every administration route, for every column of the access matrix:
/// admins only (`Action::Administer`). Bearer tokens carry no cookie and so
/// need no CSRF token; an admin's request reaches its handler (which may
/// refuse the empty form or the unknown id), every other caller is stopped
/// first (403, or 401 / the login page for nobody).
#[test]
fn every_administration_route_is_for_admins_only() {
    let s = TestServer::start();
    let no_follow: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into();
    let call = |method: &str, path: &str, token: Option<&str>| -> (u16, String) {
        let url = s.url(path);
        let auth = token.map(|t| format!("Bearer {t}"));
        let r = if method == "GET" {
            let mut r = no_follow.get(&url);
            if let Some(a) = &auth {
                r = r.header("Authorization", a);
            }
            r.call()
        } else {
            let mut r = no_follow
                .post(&url)
                .header("Content-Type", "application/x-www-form-urlencoded");
            if let Some(a) = &auth {
                r = r.header("Authorization", a);
            }
            r.send(&b""[..])
        }
        .expect("reply");
        let loc = r
            .headers()
            .get("location")
            .and_then(|v| v.to_str().ok())
            .unwrap_or_default()
            .to_string();
        (r.status().as_u16(), loc)
    };
    let admin = token(&s, Role::Admin);
    let coordinator = token(&s, Role::Coordinator);
    let manager = token(&s, Role::Manager);
    groundproof::platform::admin::add_team(
        &s.db,
        &groundproof::platform::admin::Actor::CommandLine,
        "Team Amber",
        now_unix(),
    )
    .unwrap();
    let team = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let routes = [
        ("GET", "/admin"),
        ("GET", "/admin/log"),
        ("GET", "/admin/users"),
        ("POST", "/admin/users"),
        ("POST", "/admin/users/999/role"),
        ("POST", "/admin/users/999/password"),
        ("POST", "/admin/users/999/disable"),
        ("POST", "/admin/users/999/enable"),
        ("GET", "/admin/teams"),
        ("POST", "/admin/teams"),
        ("POST", "/admin/teams/999/disable"),
        ("POST", "/admin/teams/999/enable"),
        ("POST", "/admin/teams/999/tokens"),
        ("POST", "/admin/tokens/999/revoke"),
        ("GET", "/admin/api-tokens"),
        ("POST", "/admin/api-tokens"),
        ("POST", "/admin/api-tokens/999/revoke"),
        ("GET", "/admin/sources"),
        ("POST", "/admin/sources"),
        ("POST", "/admin/sources/999"),
        ("GET", "/admin/settings"),
        ("POST", "/admin/settings"),
    ];
    for (method, path) in routes {
        let (st, _) = call(method, path, Some(&admin));
        assert!(
            matches!(st, 200 | 400 | 404 | 409),
            "admin {method} {path}: {st}"
        );
        for (who, t) in [
            ("coordinator", &coordinator),
            ("manager", &manager),
            ("team", &team),
        ] {
            assert_eq!(call(method, path, Some(t)).0, 403, "{who} {method} {path}");
        }
        let (st, loc) = call(method, path, None);
        assert!(
            st == 401 || (st == 303 && loc.starts_with("/login")),
            "nobody {method} {path}: {st} {loc}"
        );
    }
    // Nothing an admin's empty forms sent was changed.
    assert!(s.db.read(|r| r.admin_log(None, 10)).unwrap().len() == 1);
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
