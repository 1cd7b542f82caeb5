//! Trips over HTTP: every trip state on the trip page and in the list's
//! filters (issued, overdue by its due time, partly returned, returned,
//! cancelled, expired), and the preview: events removed and added by hand,
//! the start moved, the issued bundle equal to the preview (same codes, same
//! order), a stale preview refused with nothing stored.

use groundproof::domain::LonLat;
use groundproof::planning::{TripRequest, issue_bundle};
use groundproof::platform::settings::Settings;
use groundproof_e2e::{Reply, TestServer, get, get_bytes, load_scenario, post_bytes};
use serde_json::json;

fn post_form(s: &TestServer, path: &str, body: &str) -> Reply {
    post_bytes(
        &s.url(path),
        "application/x-www-form-urlencoded",
        body.as_bytes(),
    )
}

fn enc(s: &str) -> String {
    let mut out = String::new();
    for b in s.bytes() {
        match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'.' | b'_' | b'~' => {
                out.push(b as char)
            }
            _ => out.push_str(&format!("%{b:02X}")),
        }
    }
    out
}

fn station() -> (f64, f64) {
    mock_patrols::scenario().station
}

/// A trip issued through the API (3 events in the Core zone); its id.
fn issue_now(s: &TestServer, team: &str) -> String {
    let (lon, lat) = station();
    let r = groundproof_e2e::post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": team, "zone": "Core", "max": 3, "start": {"lat": lat, "lon": lon}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    r.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string()
}

/// A trip issued `days_ago` days ago (due after 7 days, expiring after 30).
fn issue_in_the_past(s: &TestServer, team: &str, days_ago: i64) -> String {
    let (lon, lat) = station();
    let req = TripRequest {
        zone: Some("Core".into()),
        max: Some(2),
        issued_at: Some(chrono::Utc::now() - chrono::Duration::days(days_ago)),
        ..TripRequest::response(team, LonLat::new(lon, lat).unwrap())
    };
    issue_bundle(&s.db, &s.data_path(), &Settings::default(), &req)
        .expect("issued")
        .bundle
        .id
}

/// The field kit plays the team for bundle `id` and its returns are sent.
fn come_back(
    s: &TestServer,
    id: &str,
    plan: &mock_patrols::field::TripPlan,
    dir: &std::path::Path,
) {
    let (status, zip) = get_bytes(&s.url(&format!("/api/v1/bundles/{id}/download")));
    assert_eq!(status, 200);
    let bundle = dir.join(format!("{id}.zip"));
    std::fs::write(&bundle, zip).unwrap();
    let trip = mock_patrols::field::make_trip_return(&bundle, &dir.join(id), plan, 11)
        .expect("a field return");
    for r in &trip.returns {
        let bytes = std::fs::read(&r.zip).unwrap();
        let reply = post_bytes(&s.url("/api/v1/returns"), "application/zip", &bytes);
        assert!(reply.status < 300, "{}", reply.body);
    }
}

/// The state the trip page shows.
fn page_state(s: &TestServer, id: &str) -> String {
    let r = get(&s.url(&format!("/trips/{id}")));
    assert_eq!(r.status, 200, "{}", r.body);
    let at = r.body.find("id=\"trip-state\">").expect("a state badge") + 16;
    r.body[at..at + r.body[at..].find('<').unwrap()].to_string()
}

/// The trip ids the list shows for a query.
fn listed(s: &TestServer, query: &str) -> Vec<String> {
    let r = get(&s.url(&format!("/trips?{query}")));
    assert_eq!(r.status, 200, "{}", r.body);
    r.body
        .match_indices("data-trip=\"")
        .map(|(i, _)| r.body[i + 11..i + 47].to_string())
        .collect()
}

#[test]
fn a_trip_walks_through_its_states_on_its_page_and_in_the_list() {
    let s = TestServer::start();
    load_scenario(&s);
    let work = tempfile::tempdir().unwrap();
    let issued = issue_now(&s, "Team Amber");
    let overdue = issue_in_the_past(&s, "Team Basalt", 10);
    let expired = issue_in_the_past(&s, "Team Amber", 40);
    let partly = issue_now(&s, "Team Basalt");
    let returned = issue_now(&s, "Team Amber");
    let cancelled = issue_now(&s, "Team Basalt");

    assert_eq!(page_state(&s, &issued), "issued");
    // Past due (7 days) with nothing back; past expiry (30 days) is expired.
    assert_eq!(page_state(&s, &overdue), "overdue");
    assert_eq!(page_state(&s, &expired), "expired");

    // One stop left unvisited: partly returned. Every stop reported (one
    // not reached counts as reported): returned.
    come_back(
        &s,
        &partly,
        &mock_patrols::field::TripPlan::default(),
        work.path(),
    );
    assert_eq!(page_state(&s, &partly), "partly returned");
    let all = mock_patrols::field::TripPlan {
        unvisited: 0,
        ..Default::default()
    };
    come_back(&s, &returned, &all, work.path());
    assert_eq!(page_state(&s, &returned), "returned");
    let page = get(&s.url(&format!("/trips/{returned}"))).body;
    assert!(
        page.contains("id=\"trip-returns\""),
        "the returns are listed"
    );
    assert!(!page.contains("none yet"), "every stop lists its report");
    assert!(page.contains("/api/v1/bundles/") && page.contains("/pair\""));

    let r = post_form(&s, &format!("/trips/{cancelled}/cancel"), "csrf_token=");
    assert_eq!(r.status, 200, "{}", r.body);
    assert_eq!(page_state(&s, &cancelled), "cancelled");
    assert!(
        !get(&s.url(&format!("/trips/{cancelled}")))
            .body
            .contains(&format!("action=\"/trips/{cancelled}/cancel\"")),
        "a cancelled trip offers no cancel"
    );

    // The list filters by state and by team.
    for (state, id) in [
        ("issued", &issued),
        ("overdue", &overdue),
        ("expired", &expired),
        ("partly_returned", &partly),
        ("returned", &returned),
        ("cancelled", &cancelled),
    ] {
        assert_eq!(
            listed(&s, &format!("state={state}")),
            vec![id.clone()],
            "{state}"
        );
    }
    let mut amber = listed(&s, "team=Team+Amber");
    amber.sort();
    let mut want = vec![issued.clone(), expired.clone(), returned.clone()];
    want.sort();
    assert_eq!(amber, want);
    assert_eq!(
        listed(&s, "team=Team+Amber&state=overdue"),
        Vec::<String>::new()
    );
    assert_eq!(listed(&s, "").len(), 6);
    let bad = get(&s.url("/trips?state=lost"));
    assert_eq!(bad.status, 400);
    assert!(bad.body.contains("is not a trip state"), "{}", bad.body);
    let unknown = get(&s.url("/trips/00000000-0000-4000-8000-000000000000"));
    assert_eq!(unknown.status, 404);
    assert_eq!(get(&s.url("/trips/not-a-trip")).status, 400);
}

/// The value of the hidden or text input `name` in a page.
fn input(body: &str, name: &str) -> String {
    let key = format!("name=\"{name}\" value=\"");
    let at = body.find(&key).unwrap_or_else(|| panic!("no input {name}")) + key.len();
    body[at..at + body[at..].find('"').unwrap()].to_string()
}

/// The stop codes of a preview or trip page, in visit order.
fn codes(body: &str) -> Vec<String> {
    body.match_indices("<tr data-code=\"")
        .map(|(i, _)| body[i + 15..i + 20].to_string())
        .collect()
}

fn bundles(s: &TestServer) -> usize {
    s.db.read(|r| r.bundles()).unwrap().len()
}

#[test]
fn the_preview_stores_nothing_and_issues_exactly_what_it_showed() {
    let s = TestServer::start();
    load_scenario(&s);
    let (lon, lat) = station();
    let first = post_form(
        &s,
        "/trips/preview",
        &format!(
            "csrf_token=&team=Team+Amber&mode=response&zone=Core&max=4&start_lat={lat}&start_lon={lon}&walking_kmh=2.5&due_days=5"
        ),
    );
    assert_eq!(first.status, 200, "{}", first.body);
    assert_eq!(bundles(&s), 0, "a preview stores nothing");
    let bundle_files = std::fs::read_dir(s.data_path().join("bundles"))
        .map(|d| d.count())
        .unwrap_or(0);
    assert_eq!(bundle_files, 0, "a preview writes no file");
    let shown = codes(&first.body);
    assert_eq!(shown.len(), 4, "{shown:?}");
    assert!(first.body.contains("km straight-line"));
    assert!(
        first.body.contains("id=\"preview-map-data\""),
        "the map's data"
    );

    // Untick the second stop; add an event outside the Core zone by its code;
    // move the start by a few hundred metres.
    let order = input(&first.body, "order");
    let ids: Vec<&str> = order.split(',').collect();
    let events = get(&s.url("/api/v1/events")).json();
    let outside = events["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| !f["properties"]["zones"].to_string().contains("Core"))
        .expect("an event outside Core");
    let outside_id = outside["id"].as_i64().unwrap();
    let outside_code = groundproof::planning::codes::event_code(outside_id);
    let removed_code = shown[1].clone();
    let removed_id = groundproof::planning::select::parse_event_ref(&removed_code).unwrap();
    let kept: Vec<String> = ids
        .iter()
        .filter(|i| **i != removed_id.to_string())
        .map(|i| format!("&event={i}"))
        .collect();
    let (lat2, lon2) = (lat + 0.003, lon - 0.002);
    let carried = "team=Team+Amber&mode=response&zone=Core&max=4&walking_kmh=2.5&due_days=5";
    let seed = input(&first.body, "seed");
    let second_form = format!(
        "csrf_token=&{carried}&hand=1&seed={seed}&order={}{}&add={}&start_lat={lat2}&start_lon={lon2}",
        enc(&order),
        kept.concat(),
        outside_code
    );
    let second = post_form(&s, "/trips/preview", &second_form);
    assert_eq!(second.status, 200, "{}", second.body);
    let previewed = codes(&second.body);
    assert_eq!(previewed.len(), 4, "{previewed:?}");
    assert!(previewed.contains(&outside_code), "{previewed:?}");
    assert!(!previewed.contains(&removed_code), "{previewed:?}");
    assert_eq!(bundles(&s), 0, "still nothing stored");

    // Issue from the second preview: the form as the page holds it.
    let order2 = input(&second.body, "order");
    let expect2 = input(&second.body, "expect");
    let ticks: String = order2.split(',').map(|i| format!("&event={i}")).collect();
    let issue_form = format!(
        "csrf_token=&{carried}&hand=1&seed={seed}&order={}{ticks}&expect={}&start_lat={lat2}&start_lon={lon2}",
        enc(&order2),
        enc(&expect2)
    );
    // A stale preview (another order) is refused, nothing stored, new preview shown.
    let stale = post_form(
        &s,
        "/trips",
        &issue_form.replace(
            &enc(&expect2),
            &enc(&previewed
                .iter()
                .rev()
                .cloned()
                .collect::<Vec<_>>()
                .join(" ")),
        ),
    );
    assert_eq!(stale.status, 409, "{}", stale.body);
    assert!(
        stale.body.contains("the facts changed since the preview"),
        "{}",
        stale.body
    );
    assert!(stale.body.contains("Trip preview"));
    assert_eq!(bundles(&s), 0, "nothing issued from a stale preview");

    let issued = post_form(&s, "/trips", &issue_form);
    assert_eq!(issued.status, 201, "{}", issued.body);
    let b = &s.db.read(|r| r.bundles()).unwrap()[0];
    let mut items = s.db.read(|r| r.bundle_items(&b.id)).unwrap();
    items.sort_by_key(|i| i.visit_order);
    let got: Vec<String> = items.iter().map(|i| i.code.clone()).collect();
    assert_eq!(
        got, previewed,
        "the bundle's stops and order are the preview's"
    );
    assert_eq!(expect2.split(' ').collect::<Vec<_>>(), got);
    assert!((b.start_lat - lat2).abs() < 1e-9 && (b.start_lon - lon2).abs() < 1e-9);
    assert!(
        issued.body.contains(&format!("href=\"/trips/{}\"", b.id)),
        "the issued page links to the trip"
    );
    // Due after 5 days, as typed.
    let due = chrono::DateTime::parse_from_rfc3339(&b.due_at).unwrap();
    let at = chrono::DateTime::parse_from_rfc3339(&b.issued_at).unwrap();
    assert_eq!((due - at).num_days(), 5);
}

#[test]
fn the_preview_refuses_what_it_cannot_do_with_a_message() {
    let s = TestServer::start();
    load_scenario(&s);
    let (lon, lat) = station();
    let base =
        format!("csrf_token=&team=Team+Amber&zone=Core&max=3&start_lat={lat}&start_lon={lon}");
    // An assessment sample cannot be edited by hand.
    let r = post_form(
        &s,
        "/trips/preview",
        &format!("{base}&mode=assessment&hand=1&event=1"),
    );
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(
        r.body
            .contains("only a response trip can be edited by hand"),
        "{}",
        r.body
    );
    // An unknown code typed by hand: the preview without it, and why.
    let r = post_form(&s, "/trips/preview", &format!("{base}&add=Z9999"));
    assert_eq!(r.status, 404, "{}", r.body);
    assert!(
        r.body.contains("Z9999") && r.body.contains("does not exist"),
        "{}",
        r.body
    );
    assert_eq!(codes(&r.body).len(), 3, "the preview is still shown");
    let r = post_form(&s, "/trips/preview", &format!("{base}&add=not-a-code"));
    assert_eq!(r.status, 400);
    assert!(r.body.contains("not an event code"), "{}", r.body);
    let r = post_form(&s, "/trips/preview", &format!("{base}&extent=%7Bnope"));
    assert_eq!(r.status, 400);
    assert!(r.body.contains("Extent: not GeoJSON"), "{}", r.body);
    assert_eq!(bundles(&s), 0);
}

#[test]
fn the_api_preview_and_issue_agree_when_handed_back_the_events_and_order() {
    let s = TestServer::start();
    load_scenario(&s);
    let (lon, lat) = station();
    let body =
        json!({"team": "Team Amber", "zone": "Core", "max": 5, "start": {"lat": lat, "lon": lon}});
    let url = s.url("/api/v1/bundles/preview");
    let p = groundproof_e2e::post_json(&url, &body);
    assert_eq!(p.status, 200, "{}", p.body);
    assert_eq!(bundles(&s), 0, "a preview stores nothing");
    let j = p.json();
    let expect: Vec<String> = serde_json::from_value(j["expect_order"].clone()).unwrap();
    assert_eq!(expect.len(), 5);
    // Hand back the events without the first-ranked one, by code.
    let selected: Vec<i64> = serde_json::from_value(j["plan"]["selected"].clone()).unwrap();
    let kept: Vec<String> = selected[1..]
        .iter()
        .map(|i| groundproof::planning::codes::event_code(*i))
        .collect();
    let mut hand = body.clone();
    hand["events"] = json!(kept);
    let p2 = groundproof_e2e::post_json(&url, &hand).json();
    let expect2: Vec<String> = serde_json::from_value(p2["expect_order"].clone()).unwrap();
    assert_eq!(expect2.len(), 4);
    assert!(!expect2.contains(&kept_out(&selected)), "{expect2:?}");
    hand["expect_order"] = json!(expect2);
    hand["seed"] = p2["plan"]["seed"].clone();
    let r = groundproof_e2e::post_json(&s.url("/api/v1/bundles"), &hand);
    assert_eq!(r.status, 201, "{}", r.body);
    let id = r.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();
    let mut items = s.db.read(|r| r.bundle_items(&id)).unwrap();
    items.sort_by_key(|i| i.visit_order);
    let got: Vec<String> = items.into_iter().map(|i| i.code).collect();
    assert_eq!(got, expect2);
    // The same order again but reversed is a conflict: nothing stored.
    hand["expect_order"] = json!(expect2.iter().rev().collect::<Vec<_>>());
    let r = groundproof_e2e::post_json(&s.url("/api/v1/bundles"), &hand);
    assert_eq!(r.status, 409, "{}", r.body);
    assert_eq!(bundles(&s), 1);
}

fn kept_out(selected: &[i64]) -> String {
    groundproof::planning::codes::event_code(selected[0])
}
