//! Sources, zones, alert import and event queries over HTTP, on the demo
//! scenario's files.

use groundproof_e2e::{TestServer, get, load_scenario, post_bytes, post_json};
use serde_json::json;

#[test]
fn events_by_zone_over_http() {
    let s = TestServer::start();
    load_scenario(&s);
    let all = get(&s.url("/api/v1/events")).json();
    let n_all = all["features"].as_array().unwrap().len();
    assert!(n_all > 100, "{n_all} events");

    let core = get(&s.url("/api/v1/events?zone=Core")).json();
    let features = core["features"].as_array().unwrap();
    assert!(!features.is_empty() && features.len() < n_all);
    let mut last = f64::INFINITY;
    for f in features {
        let p = &f["properties"];
        assert!(p["zones"].as_array().unwrap().iter().any(|z| z == "Core"));
        assert_eq!(p["in_priority_zone"], true);
        // Issue 14: the alert confidence by its level name beside the stored word.
        let level = match p["highest_confidence"].as_str().unwrap() {
            "confirmed" => "high",
            "tentative" => "low",
            other => panic!("confidence {other}"),
        };
        assert_eq!(p["confidence_level"], level);
        let prio = p["priority"].as_f64().unwrap();
        assert!(prio <= last + 1e-12, "ordered by priority");
        last = prio;
        let t = f["geometry"]["type"].as_str().unwrap();
        assert!(t == "Polygon" || t == "MultiPolygon");
    }
    // Filters combine: a minimum area and a source.
    let big = get(&s.url("/api/v1/events?zone=Core&min_area_ha=1&source=optical-30m")).json();
    for f in big["features"].as_array().unwrap() {
        assert!(f["properties"]["area_ha"].as_f64().unwrap() >= 1.0);
        assert!(
            f["properties"]["sources"]
                .as_array()
                .unwrap()
                .iter()
                .any(|x| x == "optical-30m")
        );
    }
    // Corroboration shows up on some events of the scenario.
    assert!(
        all["features"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f["properties"]["corroborated"] == true)
    );

    // One event by id.
    let id = features[0]["id"].as_i64().unwrap();
    let one = get(&s.url(&format!("/api/v1/events/{id}")));
    assert_eq!(one.status, 200);
    assert_eq!(one.json()["id"].as_i64(), Some(id));
}

#[test]
fn bad_requests_get_clear_errors_and_change_nothing() {
    let s = TestServer::start();
    load_scenario(&s);
    let before = get(&s.url("/api/v1/events")).body;

    let bad = "longitude,latitude,detected_on,confidence\n-60.8,-3.5,2025-03-01,confirmed\n-60.8,x,2025-03-01,confirmed\n";
    let r = post_bytes(
        &s.url("/api/v1/alerts?source=optical-10m"),
        "text/csv",
        bad.as_bytes(),
    );
    assert_eq!(r.status, 422);
    let j = r.json();
    assert_eq!(j["rejected"]["errors"][0]["line"], 3);
    assert_eq!(j["rejected"]["errors"][0]["field"], "latitude");

    assert_eq!(
        post_bytes(
            &s.url("/api/v1/alerts?source=nosuch"),
            "text/csv",
            bad.as_bytes()
        )
        .status,
        404
    );
    assert_eq!(
        post_bytes(&s.url("/api/v1/alerts?source=optical-10m"), "text/csv", b"").status,
        400
    );
    assert_eq!(get(&s.url("/api/v1/events?zone=Nowhere")).status, 404);
    assert_eq!(get(&s.url("/api/v1/events?from=yesterday")).status, 400);
    assert_eq!(get(&s.url("/api/v1/events/abc")).status, 400);
    let dup = post_json(
        &s.url("/api/v1/sources"),
        &json!({"name": "optical-10m", "pixel_size_m": 10, "revisit_days": 5}),
    );
    assert_eq!(dup.status, 409);
    let neg = post_json(
        &s.url("/api/v1/sources"),
        &json!({"name": "x", "pixel_size_m": -1, "revisit_days": 5}),
    );
    assert_eq!(neg.status, 400);
    assert_eq!(
        post_bytes(
            &s.url("/api/v1/zones"),
            "application/json",
            b"{\"type\":\"Point\"}"
        )
        .status,
        400
    );

    assert_eq!(
        get(&s.url("/api/v1/events")).body,
        before,
        "nothing changed"
    );
}
