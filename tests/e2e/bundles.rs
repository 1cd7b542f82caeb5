//! Trips over HTTP on the demo scenario: a response bundle and an
//! assessment bundle, checked by our own reader and by outside tools
//! (GDAL's ogrinfo 3.6, xmllint against the GPX 1.1 schema).

use groundproof_e2e::{TestServer, get, get_bytes, load_scenario, post_json, tool};
use groundproof_sync::bundle::open_bundle;
use serde_json::json;
use std::path::Path;

fn issue(s: &TestServer, body: serde_json::Value) -> (String, std::path::PathBuf) {
    let r = post_json(&s.url("/api/v1/bundles"), &body);
    assert_eq!(r.status, 201, "{}", r.body);
    let j = r.json();
    let id = j["bundle"]["bundle"]["id"].as_str().unwrap().to_string();
    let (status, bytes) = get_bytes(&s.url(j["download"].as_str().unwrap()));
    assert_eq!(status, 200);
    let path = s.data_dir().join(format!("download-{id}.zip"));
    std::fs::write(&path, bytes).unwrap();
    (id, path)
}

fn extract(zip_path: &Path, dir: &Path) {
    let mut z = zip::ZipArchive::new(std::fs::File::open(zip_path).unwrap()).unwrap();
    for i in 0..z.len() {
        let mut e = z.by_index(i).unwrap();
        let out = dir.join(e.enclosed_name().unwrap());
        std::fs::create_dir_all(out.parent().unwrap()).unwrap();
        std::io::copy(&mut e, &mut std::fs::File::create(out).unwrap()).unwrap();
    }
}

fn check_with_tools(dir: &Path, events: usize, points: usize) {
    for (file, layer, count, geom) in [
        ("bundle.gpkg", "events", events, "Multi Polygon"),
        ("bundle.gpkg", "points", points, "Point"),
        ("events.geojson", "", events, "Polygon"),
    ] {
        let f = dir.join(file);
        let mut args = vec!["-ro", "-so", f.to_str().unwrap()];
        if !layer.is_empty() {
            args.push(layer);
        } else {
            args.insert(0, "-al");
        }
        let Some(o) = tool("ogrinfo", &args) else {
            return;
        };
        let text = String::from_utf8_lossy(&o.stdout);
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(o.status.success(), "{file}: {err}");
        assert!(
            !err.contains("Warning") && !err.contains("ERROR"),
            "{file}: {err}"
        );
        assert!(
            text.contains(&format!("Feature Count: {count}")),
            "{file} {layer}: {text}"
        );
        assert!(text.contains(geom), "{file} {layer}: {text}");
        assert!(
            text.contains("4326") || text.contains("WGS 84"),
            "{file}: {text}"
        );
    }
    let gpx = dir.join("route.gpx");
    if let Some(o) = tool(
        "ogrinfo",
        &["-ro", "-so", gpx.to_str().unwrap(), "waypoints"],
    ) {
        let text = String::from_utf8_lossy(&o.stdout);
        assert!(
            text.contains(&format!("Feature Count: {}", points)),
            "{text}"
        );
    }
    let xsd = groundproof_e2e::gpx_schema();
    if let Some(o) = tool(
        "xmllint",
        &[
            "--noout",
            "--schema",
            xsd.to_str().unwrap(),
            gpx.to_str().unwrap(),
        ],
    ) {
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    }
}

fn sheet_cards(dir: &Path) -> Vec<String> {
    let html = std::fs::read_to_string(dir.join("extras/field-sheet.html")).unwrap();
    let doc = scraper::Html::parse_document(&html);
    assert!(doc.errors.is_empty(), "{:?}", doc.errors);
    let sel = scraper::Selector::parse(".card.event").unwrap();
    doc.select(&sel)
        .filter_map(|c| c.value().attr("data-code").map(str::to_string))
        .collect()
}

#[test]
fn response_and_assessment_bundles_for_the_demo_scenario() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let start = json!({"lat": station.1, "lon": station.0, "name": "field station"});

    let (id, path) = issue(
        &s,
        json!({"team": "Team Amber", "zone": "Core", "max": 10, "start": start}),
    );
    let b = open_bundle(&path, chrono::Utc::now()).expect("every checksum verifies");
    assert_eq!(b.manifest.bundle_id.to_string(), id);
    assert_eq!(b.events.len(), 10);
    let dir = s.data_dir().join("response");
    extract(&path, &dir);
    // Waypoints: one per event plus the start.
    check_with_tools(&dir, 10, 11);
    let mut cards = sheet_cards(&dir);
    let mut codes: Vec<String> = b.events.iter().map(|e| e.code.clone()).collect();
    cards.sort();
    codes.sort();
    assert_eq!(cards, codes, "a card for every event");
    // Response mode takes events in priority order.
    let prio: Vec<f64> = {
        let mut v: Vec<_> = b.events.iter().map(|e| e.priority).collect();
        v.sort_by(|a, b| b.total_cmp(a));
        v
    };
    let all = get(&s.url("/api/v1/events?zone=Core&limit=10")).json();
    let top: Vec<f64> = all["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["properties"]["priority"].as_f64().unwrap())
        .collect();
    for (a, b) in prio.iter().zip(&top) {
        assert!((a - b).abs() < 1e-3);
    }

    let body = json!({"team": "Team Basalt", "mode": "assessment", "zone": "Riverside Community Land",
        "margin": 0.3, "controls": 2, "seed": 7, "start": start});
    let (_id2, path2) = issue(&s, body.clone());
    let a = open_bundle(&path2, chrono::Utc::now()).expect("checksums verify");
    assert_eq!(a.manifest.seed, Some(7));
    assert_eq!(a.controls.len(), 2);
    assert!(
        a.events
            .iter()
            .all(|e| e.inclusion_probability.is_some_and(|p| p > 0.0 && p <= 1.0))
    );
    let dir2 = s.data_dir().join("assessment");
    extract(&path2, &dir2);
    check_with_tools(&dir2, a.events.len(), a.events.len() + 3);
    assert_eq!(sheet_cards(&dir2).len(), a.events.len());
    // The same seed draws the same sample.
    let (_id3, path3) = issue(&s, body);
    let again = open_bundle(&path3, chrono::Utc::now()).unwrap();
    let ids = |x: &groundproof_sync::bundle::OpenedBundle| {
        let mut v: Vec<i64> = x.events.iter().map(|e| e.event_id).collect();
        v.sort();
        v
    };
    assert_eq!(ids(&a), ids(&again));

    let list = get(&s.url("/api/v1/bundles")).json();
    assert_eq!(list.as_array().unwrap().len(), 3);
}

#[test]
fn bad_trip_requests_record_no_bundle() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let start = json!({"lat": station.1, "lon": station.0});
    let cases = [
        (
            json!({"team": "Nobody", "zone": "Core", "start": start}),
            404,
            "unknown team",
        ),
        (
            json!({"team": "Team Amber", "zone": "Atlantis", "start": start}),
            404,
            "unknown zone",
        ),
        (
            json!({"team": "Team Amber", "zone": "Core", "min_area_ha": 100000, "start": start}),
            400,
            "no events",
        ),
        (
            json!({"team": "Team Amber", "zone": "Core", "start": {"lat": 95, "lon": 0}}),
            400,
            "latitude",
        ),
        (
            json!({"team": "Team Amber", "zone": "Core", "mode": "assessment", "margin": 0.7, "start": start}),
            400,
            "margin",
        ),
        (
            json!({"team": "Team Amber", "zone": "Core", "mode": "assessment", "margin": 0.3, "controls": 5000,
                "control_min_distance_m": 5000, "start": start}),
            400,
            "control points",
        ),
    ];
    for (body, status, words) in cases {
        let r = post_json(&s.url("/api/v1/bundles"), &body);
        assert_eq!(r.status, status, "{body}: {}", r.body);
        assert!(r.body.contains(words), "{body}: {}", r.body);
    }
    assert_eq!(
        get(&s.url("/api/v1/bundles"))
            .json()
            .as_array()
            .unwrap()
            .len(),
        0
    );
    let leftovers = std::fs::read_dir(s.data_dir().join("bundles"))
        .map(|d| d.count())
        .unwrap_or(0);
    assert_eq!(leftovers, 0, "no bundle file left behind");
}

#[test]
fn a_cancelled_bundle_cannot_be_downloaded() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Cedar", "zone": "Core", "max": 3,
        "start": {"lat": station.1, "lon": station.0}}),
    );
    let j = r.json();
    let id = j["bundle"]["bundle"]["id"].as_str().unwrap().to_string();
    assert_eq!(
        post_json(&s.url(&format!("/api/v1/bundles/{id}/cancel")), &json!({})).status,
        200
    );
    assert_eq!(
        get_bytes(&s.url(&format!("/api/v1/bundles/{id}/download"))).0,
        409
    );
    assert_eq!(
        post_json(&s.url(&format!("/api/v1/bundles/{id}/cancel")), &json!({})).status,
        409
    );
}

#[test]
fn the_status_filter_reads_the_reconciled_statuses() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let start = json!({"lat": station.1, "lon": station.0});
    // No report is in yet: every event is unvisited, none confirmed.
    let (_, path) = issue(
        &s,
        json!({"team": "Team Cedar", "zone": "Core", "max": 3, "status": ["unvisited"], "start": start}),
    );
    let opened = open_bundle(&path, chrono::Utc::now()).unwrap();
    assert_eq!(opened.events.len(), 3);
    for (status, code, words) in [
        ("confirmed", 400, "no events"),
        ("bogus", 400, "status 'bogus'"),
    ] {
        let r = post_json(
            &s.url("/api/v1/bundles"),
            &json!({"team": "Team Cedar", "zone": "Core", "status": [status], "start": start}),
        );
        assert_eq!(r.status, code, "{status}: {}", r.body);
        assert!(r.body.contains(words), "{status}: {}", r.body);
    }
}
