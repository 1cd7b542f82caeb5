//! The field app's figures in headless Chromium, phone-sized: opening a
//! 60-stop trip to its drawn list and map with the CPU slowed 4× (CDP
//! `Emulation.setCPUThrottlingRate`), and the JavaScript heap while a report
//! with three photos of about 5 MB is recorded and saved (CDP
//! `Runtime.getHeapUsage`, used size plus ArrayBuffer backing stores, sampled after each step: the highest sample is
//! printed, a sample and not the true peak). Prints one JSON line; the
//! budgets (1 s, about 50 MB) are stated beside the figures, not asserted.
//!
//! `cargo bench -p groundproof-e2e --bench field_app`

#[path = "../browser/webdriver.rs"]
#[allow(dead_code)]
mod webdriver;

use groundproof_e2e::{TestServer, load_scenario, post_json};
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use serde_json::{Value, json};
use std::time::{Duration, Instant};
use webdriver::Browser;

fn wait_for(b: &Browser, expr: &str, what: &str) -> Value {
    let start = Instant::now();
    loop {
        let v = b.script(&format!("return ({expr});"));
        if !(v.is_null() || v == json!(false) || v == json!(0) || v == json!("")) {
            return v;
        }
        assert!(
            start.elapsed() < Duration::from_secs(120),
            "waited for {what}"
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// Milliseconds from clicking `click` until `ready` holds, measured in the
/// page (performance.now, checked on every animation frame).
fn timed_click(b: &Browser, click: &str, ready: &str) -> f64 {
    b.script(&format!(
        "const t0 = performance.now(); document.querySelector('{click}').click();\
         return new Promise(res => {{ const f = () => ({ready}) ? res(performance.now() - t0) : requestAnimationFrame(f); f(); }});"
    ))
    .as_f64()
    .expect("milliseconds")
}

/// The JavaScript heap in MB, with the ArrayBuffer backing stores (where
/// the photos' bytes live) when Chromium reports them.
fn heap_mb(b: &Browser) -> f64 {
    let u = b.cdp("Runtime.getHeapUsage", json!({}));
    let part = |k: &str| u[k].as_f64().unwrap_or_default();
    (part("usedSize") + part("backingStorageSize")) / 1e6
}

fn main() {
    let b = match Browser::start() {
        Ok(b) => b,
        Err(e) => {
            groundproof_e2e::missing(&e.to_string());
            return;
        }
    };
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "max": 60, "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let id = r.json()["bundle"]["bundle"]["id"]
        .as_str()
        .expect("id")
        .to_string();
    let code = post_json(
        &s.url(&format!("/api/v1/bundles/{id}/pairings")),
        &json!({}),
    );
    let link = code.json()["link"].as_str().expect("link").to_string();

    b.goto(&s.url("/field/"));
    b.cdp(
        "Emulation.setDeviceMetricsOverride",
        json!({"width": 390, "height": 844, "deviceScaleFactor": 1, "mobile": true}),
    );
    b.cdp(
        "Browser.grantPermissions",
        json!({"origin": s.url(""), "permissions": ["geolocation"]}),
    );
    b.cdp(
        "Emulation.setGeolocationOverride",
        json!({"latitude": station.1, "longitude": station.0, "accuracy": 8}),
    );
    b.goto(&link);
    wait_for(&b, "document.getElementById('cautions')", "the trip");
    b.click("#cautions-ok");
    wait_for(&b, "document.getElementById('map')", "the stops");
    b.click("#to-trips");
    wait_for(&b, "document.getElementById('trips')", "the trip list");

    // Opening the trip to its drawn stops and map, CPU slowed 4×.
    b.cdp("Emulation.setCPUThrottlingRate", json!({"rate": 4}));
    let to_cautions = timed_click(
        &b,
        "#trips button.row",
        "document.getElementById('cautions')",
    );
    let to_map = timed_click(
        &b,
        "#cautions-ok",
        "document.querySelector('#map .leaflet-overlay-pane path') && document.querySelectorAll('#stops > li').length > 0",
    );
    let stop_count = b.script("return document.querySelectorAll('#stops > li').length;");
    b.cdp("Emulation.setCPUThrottlingRate", json!({"rate": 1}));

    // Recording with three photos of about 5 MB.
    let dir = tempfile::tempdir().expect("photos");
    let mut paths = Vec::new();
    let mut sizes = Vec::new();
    for seed in 1..=3u64 {
        let bytes = make_photo(
            seed,
            5600,
            4200,
            &PhotoMetaIn {
                taken_at_rfc3339: "2026-11-20T10:15:00Z".into(),
                lat: station.1,
                lon: station.0,
                direction_deg: 0.0,
            },
        );
        let p = dir.path().join(format!("IMG_{seed}.jpg"));
        std::fs::write(&p, &bytes).expect("photo");
        sizes.push(bytes.len());
        paths.push(p);
    }
    let _ = b.cdp("HeapProfiler.collectGarbage", json!({}));
    let before = heap_mb(&b);
    let mut peak = before;
    b.click("#stops > li .row");
    wait_for(&b, "document.getElementById('record')", "the stop");
    b.click("#record");
    b.click("input[name=outcome][value=confirmed]");
    b.click("input[name=cause][value=mining]");
    for (i, p) in paths.iter().enumerate() {
        b.choose_file("#photo-gallery", p);
        wait_for(
            &b,
            &format!(
                "document.querySelectorAll('#photo-list li').length === {}",
                i + 1
            ),
            "a photo",
        );
        peak = peak.max(heap_mb(&b));
    }
    b.script("document.getElementById('save').click();");
    wait_for(
        &b,
        "document.getElementById('stop-title') && document.querySelector('.notice.ok')",
        "saved",
    );
    peak = peak.max(heap_mb(&b));
    println!(
        "{}",
        json!({
            "bench": "field_app",
            "stops": stop_count,
            "open_trip_ms_cpu4x": (to_cautions + to_map).round(),
            "open_trip_budget_ms": 1000,
            "photo_bytes": sizes,
            "heap_mb_before": (before * 10.0).round() / 10.0,
            "heap_mb_highest_sample": (peak * 10.0).round() / 10.0,
            "heap_budget_mb": 50
        })
    );
}
