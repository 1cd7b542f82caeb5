//! Browser test of the coordinator's trip flow in headless Chromium: the
//! issue form → the preview (its pan-and-zoom map drawn, zoomed in with the
//! map's own button) → one event added by hand by its code, one by a click
//! on the map, and the start moved by a click on the map → the preview updated → issued → the
//! bundle's stops equal the preview's → the trip page, whose map zooms
//! too. Every page: no console error, every control labelled.
//!
//! Fails when `CI` is set and Chromium or ChromeDriver is missing; elsewhere
//! it says SKIP on stderr and passes.

use super::webdriver::Browser;
use super::{assert_clean, log_in, password_of};
use groundproof::alerts::events::ranked_events;
use groundproof::demo::load;
use groundproof::domain::Day;
use groundproof::platform::settings::Settings;
use groundproof::platform::storage::EventFilter;
use groundproof_e2e::TestServer;
use std::time::{Duration, Instant};

/// Waits until the script returns true.
fn wait_for(b: &Browser, script: &str, what: &str) {
    let start = Instant::now();
    while b.script(&format!("return !!({script});")).as_bool() != Some(true) {
        assert!(
            start.elapsed() < Duration::from_secs(10),
            "waited 10 s for {what}"
        );
        std::thread::sleep(Duration::from_millis(50));
    }
}

/// The live map is drawn (the SVG hidden on screen) and zooms in with its button.
fn zoom_in(b: &Browser, id: &str) {
    wait_for(
        b,
        &format!(
            "document.querySelector('#{id}.leaflet-container') && !document.getElementById('{id}').hidden"
        ),
        "the live map",
    );
    let hidden_svg = b.script(
        "return getComputedStyle(document.querySelector('.map-block .static-map')).display;",
    );
    assert_eq!(
        hidden_svg.as_str(),
        Some("none"),
        "the SVG gives way on screen"
    );
    let before = b.script(&format!(
        "return document.getElementById('{id}').gpMap.getZoom();"
    ));
    b.click(&format!("#{id} .leaflet-control-zoom-in"));
    let before = before.as_f64().expect("a zoom level");
    wait_for(
        b,
        &format!("document.getElementById('{id}').gpMap.getZoom() > {before}"),
        "the map to zoom in",
    );
    assert!(
        !b.find_all(&format!("#{id} .leaflet-control-scale"))
            .is_empty(),
        "a scale bar"
    );
    assert!(
        !b.find_all(&format!("#{id} .map-legend")).is_empty(),
        "a legend"
    );
    assert!(
        b.find_all(&format!("#{id} .leaflet-tile")).is_empty(),
        "no base layer"
    );
}

/// The stop codes of the page's stop table, in order.
fn codes(b: &Browser) -> Vec<String> {
    let v = b.script(
        "return Array.from(document.querySelectorAll('tr[data-code]')).map(r => r.dataset.code);",
    );
    v.as_array()
        .expect("codes")
        .iter()
        .map(|c| c.as_str().unwrap_or_default().to_string())
        .collect()
}

#[test]
fn a_coordinator_previews_adds_an_event_by_hand_issues_and_opens_the_trip() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    load(&s.db, s.data_dir(), &Settings::default()).expect("demo loads");
    let demo_trips = s.db.read(|r| r.bundles()).unwrap().len();
    let station = mock_patrols::scenario().station;
    let outside = ranked_events(
        &s.db,
        &EventFilter::default(),
        &Settings::default().priority,
        Day::today(),
    )
    .expect("events")
    .into_iter()
    .find(|e| !e.record.zones.iter().any(|z| z == "Core"))
    .expect("an event outside the Core zone");
    let code = groundproof::planning::codes::event_code(outside.record.id);

    b.goto(&s.url("/trips"));
    log_in(&b, "coordinator", password_of("coordinator"));
    b.goto(&s.url("/trips"));
    b.choose("#t-team", "Team Amber");
    b.choose("#t-zone", "Core");
    b.type_into("#t-max", "4");
    b.type_into("#t-lat", &format!("{:.6}", station.1));
    b.type_into("#t-lon", &format!("{:.6}", station.0));
    b.click_to_navigate("#t-preview");
    assert!(b.text("h1").starts_with("Trip preview"), "{}", b.text("h1"));
    assert_clean(&b, "preview");
    assert_eq!(codes(&b).len(), 4);
    zoom_in(&b, "preview-map");

    // Add one event by its code; move the start with a click on the map.
    b.type_into("#p-add", &code);
    b.script(
        "const m = document.getElementById('preview-map').gpMap;\
         const c = m.getCenter();\
         m.fire('click', {latlng: L.latLng(c.lat + 0.001, c.lng + 0.001)});",
    );
    let lat = b.script("return document.getElementById('p-lat').value;");
    let lat: f64 = lat
        .as_str()
        .unwrap_or_default()
        .parse()
        .expect("a latitude");
    assert!((lat - station.1).abs() > 1e-7, "the click moved the start");
    // And one more from the map: an event of the zone not in the trip,
    // clicked (its dot), joins the codes to add.
    let picked = b.script(
        "const m = document.getElementById('preview-map').gpMap; let code = null;\
         m.eachLayer(l => { const t = l.getTooltip && l.getTooltip();\
           if (!code && l instanceof L.CircleMarker && t && String(t.getContent()).includes('click to add')) {\
             code = String(t.getContent()).slice(0, 5); l.fire('click'); } });\
         return code;",
    );
    let picked = picked.as_str().expect("a candidate on the map").to_string();
    let add = b.script("return document.getElementById('p-add').value;");
    assert!(
        add.as_str().unwrap_or_default().contains(&picked),
        "{add} holds {picked}"
    );
    b.click_to_navigate("#update-preview");
    assert_clean(&b, "updated preview");
    let previewed = codes(&b);
    assert_eq!(previewed.len(), 6, "{previewed:?}");
    assert!(previewed.contains(&code), "{previewed:?}");
    assert!(previewed.contains(&picked), "{previewed:?}");
    assert_eq!(
        s.db.read(|r| r.bundles()).unwrap().len(),
        demo_trips,
        "only the demo's trips"
    );

    b.click_to_navigate("#issue-trip");
    assert_eq!(b.text("h1"), "Bundle issued");
    assert_clean(&b, "issued");
    assert_eq!(codes(&b), previewed, "issued as previewed");

    // The trip can be reopened from its address.
    b.click_to_navigate(".ok-box a[href^=\"/trips/\"]");
    assert!(b.text("h1").starts_with("Trip"), "{}", b.text("h1"));
    assert_eq!(b.text("#trip-state"), "issued");
    assert_clean(&b, "trip page");
    zoom_in(&b, "trip-map");
}
