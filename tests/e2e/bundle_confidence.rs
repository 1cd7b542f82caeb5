//! Issue 14: a bundle names an alert's confidence "high" or "low" beside the
//! stored word (`confidence_level` in `events.geojson`), and the GPX and the
//! field sheet say so; a bundle written before that field still opens in the
//! field kit, and the return made with it is still taken in.

use crate::intake::{fast_push, open_workspace};
use groundproof_e2e::{
    TestServer, admin_token, issue_from_station, load_scenario, without_confidence_level,
};
use groundproof_sync::bundle::confidence_level;
use groundproof_sync::field::{Snapshot, push};
use serde_json::{Value, json};
use std::io::Read;

fn entry(zip: &[u8], name: &str) -> String {
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(zip)).expect("bundle zip");
    let mut text = String::new();
    z.by_name(name)
        .expect(name)
        .read_to_string(&mut text)
        .expect("UTF-8");
    text
}

#[test]
fn bundles_say_high_or_low_confidence_and_older_bundles_still_work() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, zip) = issue_from_station(
        &s,
        json!({"team": "Team Basalt", "zone": "Core", "max": 10}),
    );

    // The level beside the word, for every event.
    let fc: Value = serde_json::from_str(&entry(&zip, "events.geojson")).unwrap();
    let props: Vec<&Value> = fc["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| &f["properties"])
        .collect();
    assert!(!props.is_empty());
    for p in &props {
        let word = p["confidence"].as_str().unwrap();
        assert_eq!(
            p["confidence_level"].as_str(),
            confidence_level(word),
            "{p}"
        );
    }
    // The GPX descriptions and the field sheet say high/low confidence.
    let gpx = entry(&zip, "route.gpx");
    assert!(gpx.contains(" alert confidence"), "{gpx}");
    assert!(!gpx.contains("confidence confirmed") && !gpx.contains("confidence tentative"));
    let sheet = entry(&zip, "extras/field-sheet.html");
    let doc = scraper::Html::parse_document(&sheet);
    let sel = scraper::Selector::parse("article.card.event .confidence").unwrap();
    let words: Vec<String> = doc.select(&sel).map(|c| c.text().collect()).collect();
    assert_eq!(words.len(), props.len());
    assert!(
        words
            .iter()
            .all(|w| w == "Alert confidence: high" || w == "Alert confidence: low"),
        "{words:?}"
    );

    // The GeoPackage's events layer, as GDAL reads it.
    let gpkg = tempfile::tempdir().unwrap();
    let file = gpkg.path().join("bundle.gpkg");
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(&zip)).unwrap();
    let mut bytes = Vec::new();
    z.by_name("bundle.gpkg")
        .unwrap()
        .read_to_end(&mut bytes)
        .unwrap();
    std::fs::write(&file, bytes).unwrap();
    // `tool` says SKIP when GDAL is missing (and fails on CI).
    if let Some(out) =
        groundproof_e2e::tool("ogrinfo", &["-ro", "-al", file.to_str().unwrap(), "events"])
    {
        let text = String::from_utf8_lossy(&out.stdout);
        let levels = text
            .lines()
            .filter(|l| l.trim_start().starts_with("confidence_level (String) = "))
            .count();
        assert_eq!(levels, props.len(), "{text}");
    }

    // As a server wrote it before: the field kit opens it and reads the
    // level from the word.
    let old = without_confidence_level(&zip);
    assert!(!entry(&old, "events.geojson").contains("confidence_level"));
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "old", &old);
    let snap = Snapshot::load(&ws).unwrap();
    assert_eq!(snap.events.len(), props.len());
    assert!(
        snap.events
            .iter()
            .all(|e| confidence_level(&e.confidence).is_some())
    );
    // A report made with the older bundle is taken in.
    let e = &snap.events[0];
    let at = format!("{},{}", e.lat, e.lon);
    let args = [
        "groundproof-field",
        "--workspace",
        ws.to_str().unwrap(),
        "report",
        &e.code,
        "--outcome",
        "not_reached",
        "--reason",
        "access",
        "--at",
        &at,
    ];
    groundproof_sync::field::run(args.to_vec()).expect("the report is recorded");
    let summary = push(&ws, &s.url(""), Some(&admin_token(&s)), &fast_push()).unwrap();
    assert_eq!((summary.accepted, summary.rejected.len()), (1, 0));
}
