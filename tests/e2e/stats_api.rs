//! Statistics over HTTP before and after trips are issued, and the
//! adjudication log.

use groundproof_e2e::{TestServer, get, load_scenario, post_json};
use serde_json::json;

#[test]
fn coverage_counts_issued_events_and_csv_matches_json() {
    let s = TestServer::start();
    load_scenario(&s);
    let all = get(&s.url("/api/v1/stats/coverage")).json();
    let groups = all["coverage"].as_array().unwrap();
    let overall = groups.iter().find(|g| g["key"] == "all").unwrap();
    let events = overall["rows"][0]["events"].as_u64().unwrap();
    assert!(events > 100);
    assert_eq!(overall["rows"][0]["issued"], 0);
    assert_eq!(overall["rows"][0]["unvisited"].as_u64(), Some(events));

    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 6,
        "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let after = get(&s.url("/api/v1/stats/coverage?team=Team%20Amber")).json();
    let overall = after["coverage"]
        .as_array()
        .unwrap()
        .iter()
        .find(|g| g["key"] == "all")
        .unwrap()
        .clone();
    assert_eq!(
        overall["rows"][0]["events"], 6,
        "the team filter keeps the team's events"
    );
    assert_eq!(overall["rows"][0]["issued"], 6);

    let csv = get(&s.url("/api/v1/stats/coverage?format=csv&team=Team%20Amber"));
    assert_eq!(csv.status, 200);
    let line = csv
        .body
        .lines()
        .find(|l| l.starts_with("all,all,"))
        .unwrap()
        .to_string();
    assert_eq!(line, "all,all,6,6,0,0,6");
    // Time to visit: two labelled curves, all events and issued events only.
    let t = get(&s.url("/api/v1/stats/time-to-visit")).json();
    let labels: Vec<&str> = t["time_to_visit"]["curves"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["label"].as_str().unwrap())
        .collect();
    assert_eq!(labels.len(), 2, "{labels:?}");
    assert_eq!(get(&s.url("/api/v1/stats/nonsense")).status, 404);
    assert_eq!(get(&s.url("/api/v1/stats/coverage?format=xml")).status, 400);
}

#[test]
fn adjudications_are_validated_and_logged() {
    let s = TestServer::start();
    load_scenario(&s);
    let id = get(&s.url("/api/v1/events?limit=1")).json()["features"][0]["id"]
        .as_i64()
        .unwrap();
    let url = s.url(&format!("/api/v1/events/{id}/adjudications"));
    assert_eq!(
        post_json(&url, &json!({"outcome": "maybe", "reason": "x", "by": "m"})).status,
        400
    );
    assert_eq!(
        post_json(
            &url,
            &json!({"outcome": "confirmed", "reason": " ", "by": "m"})
        )
        .status,
        400
    );
    // "Not reached" settles no dispute: refused, naming the outcomes that do.
    let r = post_json(
        &url,
        &json!({"outcome": "not_reached", "reason": "nobody went", "by": "m"}),
    );
    assert_eq!(r.status, 400);
    assert!(r.body.contains("settle"), "{}", r.body);
    assert_eq!(
        post_json(
            &s.url("/api/v1/events/999999/adjudications"),
            &json!({"outcome": "confirmed", "reason": "r", "by": "m"})
        )
        .status,
        404
    );
    let ok = post_json(
        &url,
        &json!({"outcome": "false_alarm", "reason": "photos show standing forest", "by": "manager one"}),
    );
    assert_eq!(ok.status, 201, "{}", ok.body);
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
        "an adjudication settles the status"
    );
}

#[test]
fn the_target_share_stays_honest_at_zero_from_detection_and_from_issue() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 6,
        "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    // A report date 30 days ahead: the 6 events' 14 days from issue are
    // over, and none was visited.
    let as_of = (chrono::Utc::now() + chrono::Duration::days(30))
        .format("%Y-%m-%d")
        .to_string();
    let t = get(&s.url(&format!(
        "/api/v1/stats/target?team=Team%20Amber&as_of={as_of}"
    )))
    .json();
    let shares = t["target"].as_array().unwrap_or_else(|| panic!("{t}"));
    // The report date is applied per request (the kept figures were made at "now").
    assert_eq!(shares[1]["window_closed"], 6, "{t}");
    let from: Vec<&str> = shares.iter().map(|x| x["from"].as_str().unwrap()).collect();
    assert_eq!(from, vec!["detection", "issue"]);
    let issue = &shares[1];
    assert_eq!(issue["window_closed"], 6);
    assert_eq!(issue["visited_within"], 0);
    let ci = &issue["share"]["ci95"];
    assert_eq!(ci["lower"], 0.0);
    // Wilson 0/6: upper z²/(6 + z²) = 0.390334 (statistics.md §1.1 with
    // x = 0, z = 1.959964), not the point 0–0 Greenwood gave.
    let upper = ci["upper"].as_f64().unwrap();
    assert!((upper - 0.390334).abs() < 1e-6, "{upper}");
    let ground = get(&s.url("/api/v1/stats/found-on-ground")).json();
    assert_eq!(ground["found_on_ground"]["clearings"], 0);
}
