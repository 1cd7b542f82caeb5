//! The HTML pages over HTTP: every page answers with its key elements, a
//! bad import shows its errors with line numbers and changes nothing, a
//! bundle is issued and cancelled through the forms, the dashboard draws
//! its charts, and bad input on every form gets a page with a 4xx status.

use groundproof_e2e::{Reply, TestServer, admin_token, get, load_scenario, post_bytes};

const BOUNDARY: &str = "----groundproof-test-boundary";

/// A multipart/form-data body (RFC 7578) of text fields and file fields.
fn multipart(texts: &[(&str, &str)], files: &[(&str, &str, &[u8])]) -> Vec<u8> {
    let mut b = Vec::new();
    for (name, value) in texts {
        b.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n{value}\r\n"
            )
            .as_bytes(),
        );
    }
    for (name, file_name, bytes) in files {
        b.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"; filename=\"{file_name}\"\r\nContent-Type: application/octet-stream\r\n\r\n"
            )
            .as_bytes(),
        );
        b.extend_from_slice(bytes);
        b.extend_from_slice(b"\r\n");
    }
    b.extend_from_slice(format!("--{BOUNDARY}--\r\n").as_bytes());
    b
}

fn post_multipart(url: &str, body: &[u8]) -> Reply {
    post_bytes(
        url,
        &format!("multipart/form-data; boundary={BOUNDARY}"),
        body,
    )
}

fn post_form(url: &str, body: &str) -> Reply {
    post_bytes(url, "application/x-www-form-urlencoded", body.as_bytes())
}

/// A client that does not follow redirects.
fn raw_agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into()
}

/// Status and Location of a request (as the admin token) that is not followed.
fn no_follow(s: &TestServer, method: &str, path: &str, form: &str) -> (u16, String) {
    let auth = format!("Bearer {}", admin_token(s));
    let url = s.url(path);
    let r = if method == "POST" {
        raw_agent()
            .post(&url)
            .header("Authorization", &auth)
            .header("Content-Type", "application/x-www-form-urlencoded")
            .send(form.as_bytes())
    } else {
        raw_agent().get(&url).header("Authorization", &auth).call()
    }
    .expect("request reaches the server");
    let loc = r
        .headers()
        .get("location")
        .and_then(|v| v.to_str().ok())
        .unwrap_or_default()
        .to_string();
    (r.status().as_u16(), loc)
}

/// Log in through the login form; the `gp_session` cookie pair.
fn login(s: &TestServer, name: &str, role: groundproof::platform::auth::Role) -> String {
    let password = "a long test password, 2026";
    groundproof::platform::auth::create_user(
        &s.db,
        name,
        role,
        password,
        groundproof::platform::auth::now_unix(),
    )
    .expect("user");
    let body = format!(
        "name={name}&password={}&next=/",
        password.replace(' ', "+").replace(',', "%2C")
    );
    let r = raw_agent()
        .post(&s.url("/login"))
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded")
        .send(body.as_bytes())
        .expect("login reaches the server");
    assert_eq!(r.status().as_u16(), 303, "logged in");
    let cookie = r
        .headers()
        .get_all("set-cookie")
        .iter()
        .filter_map(|v| v.to_str().ok())
        .find(|c| c.starts_with("gp_session="))
        .expect("session cookie");
    cookie.split(';').next().unwrap_or_default().to_string()
}

/// A request with a session cookie from our own origin.
fn with_session(
    s: &TestServer,
    cookie: &str,
    method: &str,
    path: &str,
    content_type: &str,
    body: &[u8],
) -> Reply {
    let url = s.url(path);
    let r = if method == "POST" {
        raw_agent()
            .post(&url)
            .header("Cookie", cookie)
            .header("Origin", &s.url(""))
            .header("Content-Type", content_type)
            .send(body)
    } else {
        raw_agent().get(&url).header("Cookie", cookie).call()
    };
    let mut r = r.expect("request reaches the server");
    Reply {
        status: r.status().as_u16(),
        body: r.body_mut().read_to_string().unwrap_or_default(),
    }
}

fn event_count(s: &TestServer) -> usize {
    get(&s.url("/api/v1/events")).json()["features"]
        .as_array()
        .map_or(0, Vec::len)
}

fn assert_page(r: &Reply, status: u16, needles: &[&str]) {
    assert_eq!(r.status, status, "{}", r.body);
    assert!(
        r.body.starts_with("<!DOCTYPE html>"),
        "an HTML page: {}",
        &r.body[..r.body.len().min(200)]
    );
    for n in needles {
        if !r.body.contains(n) {
            let key = &n[..n.len().min(12)];
            let at = r.body.find(key).unwrap_or(0);
            panic!(
                "page lacks {n:?}; near {key:?}: {}",
                &r.body[at..(at + 160).min(r.body.len())]
            );
        }
    }
    // The layout: navigation and the safety cautions on every page.
    assert!(r.body.contains("<nav aria-label=\"Main\">"));
    assert!(
        r.body
            .contains("Do not approach active clearing operations")
    );
    assert!(r.body.contains("Photos of people need their consent"));
}

#[test]
fn every_page_renders_with_its_key_elements() {
    let s = TestServer::start();
    load_scenario(&s);
    let (status, loc) = no_follow(&s, "GET", "/", "");
    assert_eq!(
        (status, loc.as_str()),
        (303, "/events"),
        "an admin starts at the events"
    );

    let events = get(&s.url("/events"));
    assert_page(
        &events,
        200,
        &[
            "<svg",
            "Events in priority order",
            "name=\"zone\"",
            "name=\"min_area_ha\"",
            "href=\"/events/",
        ],
    );
    let id = get(&s.url("/api/v1/events?limit=1")).json()["features"][0]["id"]
        .as_i64()
        .unwrap();
    let one = get(&s.url(&format!("/events/{id}")));
    assert_page(
        &one,
        200,
        &[
            "Attributes",
            "Alerts (",
            "<svg",
            "optical-10m",
            "No report has been received",
        ],
    );
    assert_page(
        &get(&s.url("/events/99999999")),
        404,
        &["no event 99999999"],
    );
    assert_page(&get(&s.url("/events/abc")), 400, &["is not a number"]);
    assert_page(
        &get(&s.url("/events?from=2026-99-01")),
        400,
        &["is not a date; write it as YYYY-MM-DD"],
    );
    let core = get(&s.url("/events?zone=Core&status=unvisited"));
    assert_page(&core, 200, &["<option value=\"Core\" selected>"]);

    let import = get(&s.url("/import"));
    assert_page(
        &import,
        200,
        &[
            "action=\"/import/alerts\"",
            "action=\"/import/zones\"",
            "<option value=\"optical-10m\"",
            "name=\"skip_invalid\"",
            "64 MiB",
            "16 MiB",
        ],
    );
    let trips = get(&s.url("/trips"));
    assert_page(
        &trips,
        200,
        &[
            "Issue a bundle",
            "name=\"start_lat\"",
            "<option value=\"Team Amber\"",
            "No bundle has been issued yet",
        ],
    );
    let station = get(&s.url("/station"));
    assert_page(
        &station,
        200,
        &[
            "enctype=\"multipart/form-data\"",
            "name=\"package\"",
            "1 GiB",
        ],
    );
    let dash = get(&s.url("/dashboard"));
    assert_page(
        &dash,
        200,
        &[
            "<svg",
            "Kaplan",
            "all events (n = ",
            "issued events (n = ",
            "descriptive (response visits)",
            "Wilson 95% interval",
            "href=\"#w-wilson\"",
            "id=\"w-censoring\"",
            "Clearings the teams found on the ground",
            "from detection",
            "from issue",
            "/api/v1/stats/coverage?format=csv",
            "/api/v1/exports/events.geojson",
            "id=\"dashboard-map\"",
        ],
    );
    assert_eq!(
        dash.body.matches("<svg").count(),
        7,
        "the events map, monthly, time-to-visit, three trends and causes charts"
    );
    let summary = get(&s.url("/summary?zone=Core&from=2026-01-01"));
    assert_page(
        &summary,
        200,
        &[
            "Summary: Core, first detected from 2026-01-01",
            "@page { size: A4",
            "class=\"sheet\" id=\"teams\"",
            "Confirmation rate",
        ],
    );
    assert_eq!(summary.body.matches("class=\"sheet\"").count(), 4);
    let filtered = get(&s.url("/dashboard?zone=Core&team=Team%20Amber"));
    assert_page(&filtered, 200, &["<option value=\"Core\" selected>"]);
    let doc = scraper::Html::parse_document(&filtered.body);
    let links = scraper::Selector::parse("a[href]").unwrap();
    let hrefs: Vec<&str> = doc
        .select(&links)
        .filter_map(|a| a.value().attr("href"))
        .collect();
    assert!(
        hrefs.contains(&"/api/v1/stats/teams?format=csv&zone=Core&team=Team%20Amber"),
        "the CSV links keep the filters: {hrefs:?}"
    );
    let disputes = get(&s.url("/disputes"));
    assert_page(&disputes, 200, &["No disputed event"]);
    let css = get(&s.url("/static/app.css"));
    assert_eq!(css.status, 200);
    assert!(css.body.contains(".site-header"));
    assert_eq!(get(&s.url("/static/nothing.js")).status, 404);

    // Every form field has a label: each id an input, select or textarea
    // carries is named by a <label for>.
    for page in [&events, &import, &trips, &station, &dash] {
        let doc = scraper::Html::parse_document(&page.body);
        let fields =
            scraper::Selector::parse("input:not([type=hidden]), select, textarea").unwrap();
        for f in doc.select(&fields) {
            let id = f
                .value()
                .attr("id")
                .unwrap_or_else(|| panic!("field without id: {}", f.html()));
            let label = scraper::Selector::parse(&format!("label[for=\"{id}\"]")).unwrap();
            assert!(doc.select(&label).next().is_some(), "no label for #{id}");
        }
    }
}

#[test]
fn a_bad_alert_file_shows_its_errors_and_imports_nothing() {
    let s = TestServer::start();
    load_scenario(&s);
    let before = event_count(&s);
    let csv = b"longitude,latitude,date,confidence\n-60.10,-3.20,2026-01-05,confirmed\nwest,-3.20,2026-01-05,confirmed\n-60.11,-3.21,2026-02-30,confirmed\n";
    let body = multipart(&[("source", "optical-10m")], &[("file", "bad.csv", csv)]);
    let r = post_multipart(&s.url("/import/alerts"), &body);
    assert_page(
        &r,
        422,
        &[
            "Nothing was imported",
            "bad.csv: line 3: field",
            "bad.csv: line 4: field",
            "2 error(s)",
        ],
    );
    assert_eq!(event_count(&s), before, "nothing changed");

    // With skip-invalid the good row goes in and the bad ones are listed.
    let body = multipart(
        &[("source", "optical-10m"), ("skip_invalid", "on")],
        &[("file", "bad.csv", csv)],
    );
    let r = post_multipart(&s.url("/import/alerts"), &body);
    assert_page(
        &r,
        200,
        &["Imported bad.csv as optical-10m", "Skipped rows", "line 3"],
    );

    // Missing source, empty file, a binary file, an unknown source, not multipart.
    let r = post_multipart(
        &s.url("/import/alerts"),
        &multipart(&[], &[("file", "a.csv", csv)]),
    );
    assert_page(&r, 400, &["Choose the source"]);
    let r = post_multipart(
        &s.url("/import/alerts"),
        &multipart(&[("source", "optical-10m")], &[("file", "a.csv", b"")]),
    );
    assert_page(&r, 400, &["No alert file was sent"]);
    let png = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13];
    let r = post_multipart(
        &s.url("/import/alerts"),
        &multipart(&[("source", "optical-10m")], &[("file", "x.png", &png)]),
    );
    assert_page(&r, 415, &["is not a text file"]);
    let r = post_multipart(
        &s.url("/import/alerts"),
        &multipart(&[("source", "radar-99m")], &[("file", "a.csv", csv)]),
    );
    assert_page(&r, 404, &["unknown source"]);
    let r = post_bytes(&s.url("/import/alerts"), "text/plain", b"hello");
    assert_page(&r, 400, &["multipart/form-data"]);

    // Zones: a broken file and a too-large one change nothing.
    let zones_before = get(&s.url("/api/v1/zones")).body;
    let r = post_multipart(
        &s.url("/import/zones"),
        &multipart(
            &[],
            &[(
                "file",
                "z.geojson",
                b"{\"type\": \"FeatureCollection\", \"features\": [{}]}",
            )],
        ),
    );
    assert!(r.status == 400 || r.status == 422, "{}", r.status);
    assert!(r.body.contains("Nothing was imported"));
    let big = vec![b' '; 16 * 1024 * 1024 + 1];
    let r = post_multipart(
        &s.url("/import/zones"),
        &multipart(&[], &[("file", "big.geojson", &big)]),
    );
    assert_page(&r, 413, &["larger than the limit of 16 MiB"]);
    assert_eq!(get(&s.url("/api/v1/zones")).body, zones_before);
}

#[test]
fn a_bundle_is_issued_and_cancelled_through_the_forms() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let bad = post_form(&s.url("/trips"), "team=Team+Amber&zone=Core&max=4");
    assert_page(
        &bad,
        400,
        &["Start latitude: required", "Nothing was changed"],
    );
    let bad = post_form(
        &s.url("/trips"),
        &format!(
            "team=Team+Nobody&max=4&start_lat={}&start_lon={}",
            station.1, station.0
        ),
    );
    assert_page(&bad, 404, &["unknown team"]);
    assert_eq!(
        get(&s.url("/api/v1/bundles"))
            .json()
            .as_array()
            .map(Vec::len),
        Some(0),
        "nothing issued"
    );

    let form = format!(
        "csrf_token=&team=Team+Amber&mode=response&zone=Core&max=4&margin=0.1&controls=&seed=&start_lat={}&start_lon={}&start_name=Station",
        station.1, station.0
    );
    let r = post_form(&s.url("/trips"), &form);
    assert_page(
        &r,
        201,
        &[
            "Bundle issued",
            "<svg",
            "Download the bundle",
            "Stops in visit order",
        ],
    );
    let bundles = get(&s.url("/api/v1/bundles")).json();
    let id = bundles[0]["id"].as_str().unwrap().to_string();
    assert!(r.body.contains(&format!("/api/v1/bundles/{id}/download")));
    assert_eq!(bundles[0]["events"], 4);

    let list = get(&s.url("/trips"));
    assert_page(
        &list,
        200,
        &[&id, "st-issued", &format!("action=\"/trips/{id}/cancel\"")],
    );
    let (status, loc) = no_follow(&s, "POST", &format!("/trips/{id}/cancel"), "csrf_token=");
    assert_eq!(
        (status, loc.clone()),
        (303, format!("/trips?cancelled={id}"))
    );
    let after = get(&s.url(&loc));
    assert_page(&after, 200, &["was cancelled", "st-cancelled"]);
    assert_page(
        &post_form(&s.url("/trips/not-a-uuid/cancel"), ""),
        400,
        &["is not a UUID"],
    );
}

#[test]
fn station_and_disputes_forms_refuse_bad_input_with_a_page() {
    let s = TestServer::start();
    load_scenario(&s);
    let r = post_multipart(
        &s.url("/station"),
        &multipart(&[("csrf_token", "")], &[("package", "return.zip", b"")]),
    );
    assert_page(
        &r,
        400,
        &["The return was not taken in", "No return package was sent"],
    );
    let r = post_multipart(
        &s.url("/station"),
        &multipart(&[], &[("package", "return.zip", b"this is not a zip file")]),
    );
    assert!((400..500).contains(&r.status), "{} {}", r.status, r.body);
    assert!(r.body.contains("The return was not taken in"));

    let id = get(&s.url("/api/v1/events?limit=1")).json()["features"][0]["id"]
        .as_i64()
        .unwrap();
    let url = s.url(&format!("/disputes/{id}/adjudicate"));
    assert_page(
        &post_form(&url, "outcome=maybe&reason=x&by=m"),
        400,
        &["Outcome: choose"],
    );
    assert_page(
        &post_form(&url, "outcome=confirmed&reason=+&by=m"),
        400,
        &["Reason: say why"],
    );
    let (status, loc) = no_follow(
        &s,
        "POST",
        &format!("/disputes/{id}/adjudicate"),
        "outcome=false_alarm&reason=standing+forest+in+photos&by=Manager+One",
    );
    assert_eq!(
        (status, loc.as_str()),
        (303, format!("/disputes?done={id}").as_str())
    );
    // The decider is the caller (here the admin token's label), not the typed name.
    let log = s.db.read(|r| r.adjudications()).expect("adjudications");
    assert_eq!(
        log.last().map(|a| a.decided_by.as_str()),
        Some("end-to-end tests")
    );
    let geo = get(&s.url("/api/v1/exports/events.geojson")).json();
    let f = geo["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["id"] == id)
        .unwrap()
        .clone();
    assert_eq!(
        f["properties"]["status"], "false_alarm",
        "the decision settles the status"
    );
    assert_page(
        &get(&s.url(&format!("/events/{id}"))),
        200,
        &["st-false_alarm"],
    );
}

#[test]
fn a_session_user_sees_their_name_and_forms_carry_the_csrf_token() {
    use groundproof::platform::auth::Role;
    let s = TestServer::start();
    load_scenario(&s);
    let coord = login(&s, "coord-one", Role::Coordinator);
    let page = with_session(&s, &coord, "GET", "/import", "", b"");
    assert_page(
        &page,
        200,
        &[
            "Signed in as <strong>coord-one</strong> (coordinator)",
            "action=\"/logout\"",
        ],
    );
    // The token: a hidden field in the urlencoded forms, in the query of the multipart ones.
    let doc = scraper::Html::parse_document(&page.body);
    let sel = scraper::Selector::parse("form[action^=\"/import/alerts?csrf_token=\"]").unwrap();
    let action = doc
        .select(&sel)
        .next()
        .expect("multipart form with token")
        .value()
        .attr("action")
        .unwrap()
        .to_string();
    let hidden =
        scraper::Selector::parse("form[action=\"/logout\"] input[type=hidden][name=csrf_token]")
            .unwrap();
    assert!(
        doc.select(&hidden).next().is_some(),
        "logout form has the token"
    );
    let csv = b"longitude,latitude,date,confidence\nwest,-3.20,2026-01-05,confirmed\n";
    let body = multipart(&[("source", "optical-10m")], &[("file", "one.csv", csv)]);
    let ct = format!("multipart/form-data; boundary={BOUNDARY}");
    let r = with_session(&s, &coord, "POST", &action, &ct, &body);
    assert_page(&r, 422, &["one.csv: line 2: field"]);
    // Without the token the access layer refuses the form.
    let r = with_session(&s, &coord, "POST", "/import/alerts", &ct, &body);
    assert_eq!(r.status, 403, "{}", r.body);

    // A manager starts at the dashboard and sees no import link.
    let mgr = login(&s, "mgr-one", Role::Manager);
    let r = raw_agent()
        .get(&s.url("/"))
        .header("Cookie", &mgr)
        .call()
        .expect("reply");
    assert_eq!(
        r.headers().get("location").and_then(|v| v.to_str().ok()),
        Some("/dashboard")
    );
    let dash = with_session(&s, &mgr, "GET", "/disputes", "", b"");
    assert_page(
        &dash,
        200,
        &["Signed in as <strong>mgr-one</strong> (manager)"],
    );
    assert!(
        !dash.body.contains("href=\"/import\""),
        "managers do not import (access matrix)"
    );
    // The manager's name is the decider: no name field is asked for.
    let id = get(&s.url("/api/v1/events?limit=1")).json()["features"][0]["id"]
        .as_i64()
        .unwrap();
    let form = doc_token(&dash.body);
    let r = with_session(
        &s,
        &mgr,
        "POST",
        &format!("/disputes/{id}/adjudicate"),
        "application/x-www-form-urlencoded",
        format!("csrf_token={form}&outcome=confirmed&reason=fresh+stumps+in+photos").as_bytes(),
    );
    assert_eq!(r.status, 303, "{}", r.body);
    let log = s.db.read(|r| r.adjudications()).expect("adjudications");
    let last = log.last().expect("one decision");
    assert_eq!(
        (
            last.event_id,
            last.outcome.as_str(),
            last.decided_by.as_str()
        ),
        (id, "confirmed", "mgr-one")
    );
}

/// The CSRF token of the first hidden csrf_token field of a page.
fn doc_token(body: &str) -> String {
    let doc = scraper::Html::parse_document(body);
    let sel = scraper::Selector::parse("input[type=hidden][name=csrf_token]").unwrap();
    doc.select(&sel)
        .next()
        .and_then(|e| e.value().attr("value"))
        .expect("a token")
        .to_string()
}
