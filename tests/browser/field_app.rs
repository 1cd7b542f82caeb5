//! Browser test of the field app (`/field/`) in headless Chromium, driven
//! over WebDriver as the pages' test is: the real server on a random
//! loopback port with the invented scenario, a bundle issued over the API.
//!
//! The walk: the app loads with no login; a tampered trip file and an
//! expired one are refused with the catalogue's message and nothing is
//! kept; the trip is paired through the link of the QR code on the trip
//! page a coordinator gets (the same code again is refused as used), opens
//! on the safety cautions, then the stops in visit order with the map
//! (footprints, route, phone and accuracy, no tiles); the target's and the
//! phone's UTM and MGRS match the server's formulas; with the phone's
//! position set (DevTools geolocation override) 500 m south of the first
//! stop, the distance and bearing match the field kit's geodesy (Karney,
//! geographiclib) within 1 m and 1°, and follow the phone as it moves; a confirmed visit with one photo is
//! refused by the checklist (two needed), then saved with two JPEGs with
//! EXIF (read on the phone); "not reached: safety" is one tap on the
//! second stop; a new clearing is recorded (an area of 0 refused); the return
//! file saved for the station opens with the sync crate's reader
//! (signature, checksums, the three reports, EXIF fields); the return is
//! sent with the paired team token over the resumable upload on a slow
//! link, the server is killed mid-upload, the app reloaded while it is
//! down, the server restarted: the send goes on by itself and the server
//! holds one return with the three
//! reports, the photos byte-identical (same SHA-256, same bytes on disk);
//! a correction of the safety report is sent and stored as a new report
//! naming the one it supersedes; a second team's trip opens beside the
//! first without mixing their stops or reports (paired by its typed code).
//! Then the server stops and the app loads again from its service worker,
//! opens the trip from the phone's store and switches to Portuguese.
//!
//! No console error is allowed at any step (but the browser's own lines for
//! the refusals and cut connections a step provokes on purpose). Fails when `CI` is set and
//! Chromium or ChromeDriver is missing; elsewhere it says SKIP on stderr.

#[path = "webdriver.rs"]
#[allow(dead_code)]
mod webdriver;

use groundproof_e2e::{TestServer, issue_from_station, load_scenario, open_bundle_at, post_json};
use groundproof_sync::field::distance_bearing;
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use serde_json::{Value, json};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};
use webdriver::Browser;

/// Waits until the script expression `expr` is truthy; panics with `what`.
fn wait_for(b: &Browser, expr: &str, what: &str) -> Value {
    let start = Instant::now();
    loop {
        let v = b.script(&format!("return ({expr});"));
        let truthy = match &v {
            Value::Null => false,
            Value::Bool(x) => *x,
            Value::String(s) => !s.is_empty(),
            Value::Number(n) => n.as_f64() != Some(0.0),
            _ => true,
        };
        if truthy {
            return v;
        }
        assert!(
            start.elapsed() < Duration::from_secs(30),
            "waited 30 s for {what}; the page says:\n{}\nthe console: {:#?}",
            b.text("body"),
            b.console()
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// No console error since the last check.
fn assert_clean(b: &Browser, step: &str) {
    assert_clean_but(b, step, &[]);
}

/// No console error since the last check but the browser's own line for
/// each expected refusal (`expected`: parts of the "network" entry, such as
/// the path and the status the step provoked on purpose).
fn assert_clean_but(b: &Browser, step: &str, expected: &[&str]) {
    let errors: Vec<String> = b
        .console()
        .into_iter()
        .filter(|e| e.level == "SEVERE")
        .filter(|e| {
            expected.is_empty()
                || e.source != "network"
                || !expected.iter().all(|x| e.message.contains(x))
        })
        .map(|e| format!("{} {}", e.source, e.message))
        .collect();
    assert!(errors.is_empty(), "{step}: console errors: {errors:#?}");
    let unlabelled = b.script(
        "return Array.from(document.querySelectorAll('input, select, textarea'))\
         .filter(e => !(e.labels && e.labels.length) && !e.getAttribute('aria-label'))\
         .map(e => e.outerHTML.slice(0, 160));",
    );
    assert_eq!(
        unlabelled.as_array().map_or(0, Vec::len),
        0,
        "{step}: form controls without a label: {unlabelled}"
    );
}

/// The same ZIP with one byte of `events.geojson` changed (the manifest
/// still lists the old checksum).
fn tamper(bundle: &[u8]) -> Vec<u8> {
    let mut src = zip::ZipArchive::new(std::io::Cursor::new(bundle)).expect("bundle zip");
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    for i in 0..src.len() {
        let mut e = src.by_index(i).expect("entry");
        let name = e.name().expect("entry name").to_string();
        let mut bytes = Vec::new();
        e.read_to_end(&mut bytes).expect("entry bytes");
        if name == "events.geojson" {
            let at = bytes
                .iter()
                .position(|c| c.is_ascii_digit())
                .expect("a digit");
            bytes[at] = if bytes[at] == b'9' {
                b'8'
            } else {
                bytes[at] + 1
            };
        }
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .expect("start");
        out.write_all(&bytes).expect("write");
    }
    out.finish().expect("finish").into_inner()
}

/// The same ZIP with the manifest's times moved a year into the past: a
/// well-formed bundle that has expired (the manifest carries no checksum
/// of itself).
fn expire(bundle: &[u8]) -> Vec<u8> {
    let mut src = zip::ZipArchive::new(std::io::Cursor::new(bundle)).expect("bundle zip");
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let past = chrono::Utc::now() - chrono::Duration::days(365);
    for i in 0..src.len() {
        let mut e = src.by_index(i).expect("entry");
        let name = e.name().expect("entry name").to_string();
        let mut bytes = Vec::new();
        e.read_to_end(&mut bytes).expect("entry bytes");
        if name == "manifest.json" {
            let mut m: Value = serde_json::from_slice(&bytes).expect("manifest");
            for (k, days) in [("issued_at", 0), ("due_at", 1), ("expires_at", 2)] {
                m[k] = json!(
                    (past + chrono::Duration::days(days))
                        .to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
                );
            }
            bytes = serde_json::to_vec_pretty(&m).expect("json");
        }
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .expect("start");
        out.write_all(&bytes).expect("write");
    }
    out.finish().expect("finish").into_inner()
}

/// A JPEG with EXIF of 2400 × 1800 pixels (a few hundred kB: two make a
/// return of several upload chunks).
fn photo(dir: &Path, seed: u64, lat: f64, lon: f64) -> (PathBuf, Vec<u8>) {
    let bytes = make_photo(
        seed,
        2400,
        1800,
        &PhotoMetaIn {
            taken_at_rfc3339: "2026-11-20T10:15:00Z".into(),
            lat,
            lon,
            direction_deg: 90.0,
        },
    );
    assert!(bytes.starts_with(&[0xff, 0xd8, 0xff]), "a JPEG");
    let path = dir.join(format!("IMG_{seed}.jpg"));
    std::fs::write(&path, &bytes).expect("photo file");
    (path, bytes)
}

/// Saves the viewport as `CARGO_TARGET_TMPDIR/field-screenshots/<stem>.png`.
fn shot(b: &Browser, stem: &str) {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("field-screenshots");
    std::fs::create_dir_all(&dir).expect("screenshot folder");
    let path = dir.join(format!("{stem}.png"));
    b.screenshot(&path);
    println!("screenshot: {}", path.display());
}

/// The link of the QR code on the page a coordinator gets for pairing a
/// phone with `bundle_id` (`POST /trips/{id}/pair`, as the admin's API
/// token), after checking that the page shows the QR code and the code.
fn pairing_link(s: &TestServer, bundle_id: &str) -> String {
    let r = groundproof_e2e::post_bytes(
        &s.url(&format!("/trips/{bundle_id}/pair")),
        "application/x-www-form-urlencoded",
        b"",
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let page = scraper::Html::parse_document(&r.body);
    let one = |css: &str| {
        page.select(&scraper::Selector::parse(css).expect("selector"))
            .next()
            .unwrap_or_else(|| panic!("{css} on the pairing page"))
    };
    assert!(one("#pairing .qr svg rect").value().attr("fill").is_some());
    let code = one("#pairing-code").text().collect::<String>();
    let link = one("#pairing-link")
        .value()
        .attr("href")
        .expect("href")
        .to_string();
    assert_eq!(
        link,
        s.url(&format!("/field/#pair={}", code.trim().replace('-', "")))
    );
    link
}

/// The UTM (`data-utm`, 3 decimals) and MGRS (`data-mgrs`) the app shows
/// for a point match the server's own formulas: within 1 m as asked (they
/// agree to the millimetre), the MGRS square and digits exactly.
fn check_grid(b: &Browser, utm_css: &str, mgrs_css: &str, lat: f64, lon: f64) {
    use groundproof::planning::coords::{MgrsPrecision, to_mgrs, to_utm};
    let want = to_utm(lat, lon).expect("UTM");
    let got = b
        .script(&format!(
            "return document.querySelector('{utm_css}').dataset.utm;"
        ))
        .as_str()
        .unwrap_or_default()
        .to_string();
    let parts: Vec<&str> = got.split(' ').collect();
    assert_eq!(parts.len(), 3, "{got}");
    assert_eq!(
        parts[0],
        format!("{:02}{}", want.zone, want.hemisphere.letter())
    );
    let e: f64 = parts[1].parse().expect("easting");
    let n: f64 = parts[2].parse().expect("northing");
    assert!((e - want.easting).abs() < 1.0, "{got} vs {want}");
    assert!((n - want.northing).abs() < 1.0, "{got} vs {want}");
    let mgrs = b.script(&format!(
        "return document.querySelector('{mgrs_css}').dataset.mgrs;"
    ));
    assert_eq!(
        mgrs,
        json!(to_mgrs(lat, lon, MgrsPrecision::ONE_METRE).expect("MGRS"))
    );
}

/// The app's coordinate module against the server's on points that try
/// the rules: both hemispheres, the equator, the zone edges, the Norway and
/// Svalbard exceptions, the band limits and the antimeridian.
/// The app's photo time follows the field kit's rule (sync/src/photo/exif.rs,
/// its test `time_without_offset_uses_the_gps_utc_stamp`): the EXIF offset,
/// else the GPS UTC stamp, else the camera zone.
fn check_photo_time_rule(b: &Browser) {
    let got = b.script(
        "return import('./exif.js').then(m => [\
           m.photoTime('2025:01:02 06:04:05', '+03:00', null, null, 0),\
           m.photoTime('2025:01:02 06:04:05', null, '2025:01:02', [3, 4, 5], 600),\
           m.photoTime('2025:01:02 06:04:05', null, null, null, -240),\
           m.photoTime('2025:01:02 06:04:05', null, null, null, 0),\
           m.photoTime(null, null, '2025:01:02', [23, 59, 59.5], 0),\
           m.photoTime('2025:01:02 06:04:05', null, '2025:01:02', [25, 0, 0], 60)]);",
    );
    assert_eq!(
        got,
        json!([
            "2025-01-02T03:04:05Z",
            "2025-01-02T03:04:05Z",
            "2025-01-02T10:04:05Z",
            "2025-01-02T06:04:05Z",
            "2025-01-02T23:59:59.500Z",
            "2025-01-02T05:04:05Z"
        ]),
        "offset, GPS stamp, camera zone -04:00, UTC by default, GPS only, a bad GPS stamp then +01:00"
    );
}

fn check_grid_module(b: &Browser) {
    use groundproof::planning::coords::{MgrsPrecision, to_mgrs, to_utm};
    let points = [
        (-3.1, -60.025),
        (33.3, 44.4),
        (0.0, 10.0),
        (-0.000001, 10.0),
        (60.5, 4.5),
        (78.0, 20.0),
        (83.9, 179.9),
        (-79.9, -179.99),
        (-33.86, 151.2),
        (1.2, 102.0),
        (56.0, 3.0),
        (71.5, 33.0),
    ];
    let got = b.script(&format!(
        "return import('./coords.js').then(m => {}.map(([la, lo]) =>          [m.formatUtm(m.toUtm(la, lo), 3), m.toMgrs(la, lo, 5)]));",
        json!(points)
    ));
    for (i, (lat, lon)) in points.iter().enumerate() {
        let want = to_utm(*lat, *lon).expect("UTM");
        let row = &got[i];
        let utm = row[0].as_str().unwrap_or_default();
        let parts: Vec<&str> = utm.split(' ').collect();
        assert_eq!(
            parts[0],
            format!("{:02}{}", want.zone, want.hemisphere.letter()),
            "{lat} {lon}: {utm}"
        );
        let e: f64 = parts[1].parse().expect("easting");
        let n: f64 = parts[2].parse().expect("northing");
        assert!(
            (e - want.easting).abs() < 0.002 && (n - want.northing).abs() < 0.002,
            "{lat} {lon}: {utm} vs {want}"
        );
        assert_eq!(
            row[1],
            json!(to_mgrs(*lat, *lon, MgrsPrecision::ONE_METRE).expect("MGRS")),
            "{lat} {lon}"
        );
    }
}

fn sha256(bytes: &[u8]) -> String {
    groundproof_sync::bundle::sha256_hex(bytes)
}

#[test]
fn field_app_opens_a_trip_records_visits_and_sends_them_back() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let mut s = TestServer::start();
    load_scenario(&s);
    let work = tempfile::tempdir().expect("work folder");
    let (_, zip) = issue_from_station(&s, json!({"team": "Team Amber", "zone": "Core", "max": 4}));
    let bundle = open_bundle_at(&work.path().join("bundle.zip"), &zip);
    assert!(bundle.route.len() >= 2, "at least two stops");
    let tampered_path = work.path().join("tampered.zip");
    std::fs::write(&tampered_path, tamper(&zip)).expect("tampered saved");
    let expired_path = work.path().join("expired.zip");
    std::fs::write(&expired_path, expire(&zip)).expect("expired saved");

    // The phone stands 500 m or so south of the first stop.
    let first = bundle
        .events
        .iter()
        .find(|e| e.code == bundle.route[0])
        .expect("the first stop is an event");
    let (t_lat, t_lon) = (first.centroid.y(), first.centroid.x());
    let (p_lat, p_lon) = (t_lat - 0.0045, t_lon + 0.001);
    b.goto(&s.url("/field/"));
    // A phone-sized screen.
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
        json!({"latitude": p_lat, "longitude": p_lon, "accuracy": 7}),
    );

    // The app loads with no login, in English on an English browser.
    b.goto(&s.url("/field/"));
    wait_for(
        &b,
        "document.body.dataset.ready === 'yes'",
        "the app to start",
    );
    assert!(b.current_url().ends_with("/field/"), "{}", b.current_url());
    assert!(
        b.text("h1").contains("Groundproof field"),
        "{}",
        b.text("h1")
    );
    assert_clean(&b, "first load");

    // A tampered trip file is refused, and no trip is kept.
    b.choose_file("#bundle-file", &tampered_path);
    let msg = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent",
        "the refusal",
    );
    let msg = msg.as_str().unwrap_or_default();
    assert!(msg.contains("changed or damaged"), "{msg}");
    assert!(msg.contains("events.geojson"), "{msg}");
    assert!(b.find_all("#trips").is_empty(), "no trip kept");
    assert_clean(&b, "tampered bundle");
    shot(&b, "tampered");

    // So is an expired one.
    b.choose_file("#bundle-file", &expired_path);
    let msg = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent.includes('expired') && document.querySelector('.notice.error').textContent",
        "the refusal of the expired bundle",
    );
    assert!(
        msg.as_str()
            .unwrap_or_default()
            .contains("Ask the office for a new one"),
        "{msg}"
    );
    assert!(b.find_all("#trips").is_empty(), "no trip kept");
    assert_clean(&b, "expired bundle");

    // The trip page's QR code opens the app with a pairing code: the phone
    // gets the trip (checked as a file is) and opens it on the safety
    // cautions, with no token typed.
    let link = pairing_link(&s, &bundle.manifest.bundle_id.to_string());
    b.goto(&link);
    wait_for(&b, "document.getElementById('cautions')", "the cautions");
    assert!(
        b.current_url().ends_with("/field/"),
        "the code leaves the address: {}",
        b.current_url()
    );
    // The same code again is refused in words a field worker understands.
    b.goto(&link);
    let msg = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent",
        "the refusal of a used code",
    );
    assert!(
        msg.as_str().unwrap_or_default().contains("already used"),
        "{msg}"
    );
    assert_clean_but(&b, "used code", &["/api/v1/pairings/redeem", "410"]);
    shot(&b, "pairing-used");
    b.click(&format!(
        "button[data-bundle='{}']",
        bundle.manifest.bundle_id
    ));
    wait_for(&b, "document.getElementById('cautions')", "the cautions");
    let cautions = b.text("#cautions");
    for needle in [
        "Safety first",
        "armed people",
        "safety rules and the local law",
        "agree",
        "licensed people",
    ] {
        assert!(cautions.contains(needle), "{needle:?} in {cautions}");
    }
    assert_clean(&b, "cautions");
    shot(&b, "cautions");
    b.click("#cautions-ok");
    wait_for(&b, "document.getElementById('stops')", "the stops");
    let codes = b.script(
        "return Array.from(document.querySelectorAll('#stops > li')).map(li => li.dataset.code);",
    );
    let codes: Vec<String> = codes
        .as_array()
        .expect("codes")
        .iter()
        .map(|c| c.as_str().unwrap_or_default().to_string())
        .collect();
    assert_eq!(codes, bundle.route, "stops in visit order");
    // The trip's camera zone defaults to the bundle's (the organisation's zone on the issue
    // date), shown on the trip screen and ready to change.
    let zone = bundle
        .manifest
        .camera_zone
        .clone()
        .expect("the bundle carries a camera zone");
    let shown = b.script("return document.getElementById('camera-zone').value;");
    assert_eq!(
        shown.as_str(),
        Some(zone.offset.as_str()),
        "camera zone shown"
    );
    let line = b.script("return document.getElementById('camera-zone-shown').textContent;");
    let line = line.as_str().unwrap_or_default();
    assert!(
        line.contains(&format!("UTC{}", zone.offset)) && line.contains(&zone.name),
        "{line}"
    );
    // The map: every footprint, the route from the start through every
    // stop, the phone with its accuracy; no base layer, so no tile.
    let drawn = wait_for(
        &b,
        "(() => { const m = document.getElementById('map');          return m && m.dataset.phone && m.querySelector('.leaflet-overlay-pane path') &&          [Number(m.dataset.footprints), Number(m.dataset.stops), Number(m.dataset.routePoints),           m.dataset.phone, Number(m.dataset.accuracy), m.dataset.tiles,           m.querySelectorAll('img').length, m.querySelectorAll('.leaflet-overlay-pane path').length]; })()",
        "the map",
    );
    assert_eq!(
        drawn,
        json!([
            bundle.events.len(),
            bundle.route.len(),
            bundle.route.len() + 1,
            format!("{p_lat:.6},{p_lon:.6}"),
            7,
            "off",
            0,
            // footprints + route + start + stops + phone and its circle
            bundle.events.len() + 1 + 1 + bundle.route.len() + 2
        ]),
        "the map as drawn"
    );
    let states = b.script(
        "return Array.from(document.querySelectorAll('#stops > li')).map(li => li.dataset.state);",
    );
    assert!(
        states
            .as_array()
            .expect("states")
            .iter()
            .all(|s| s == "not_visited"),
        "{states}"
    );

    // The stop: its facts, and the way from the phone.
    b.click(&format!("#stops > li[data-code='{}'] .row", first.code));
    wait_for(
        &b,
        "document.getElementById('way') && document.getElementById('way').dataset.distance",
        "the distance to the stop",
    );
    let (want_d, want_b) = distance_bearing(p_lat, p_lon, t_lat, t_lon);
    let got_d: f64 = b
        .script("return Number(document.getElementById('way').dataset.distance);")
        .as_f64()
        .expect("distance");
    let got_b: f64 = b
        .script("return Number(document.getElementById('way').dataset.bearing);")
        .as_f64()
        .expect("bearing");
    assert!((got_d - want_d).abs() < 1.0, "distance {got_d} vs {want_d}");
    let db = (got_b - want_b).rem_euclid(360.0);
    assert!(db.min(360.0 - db) < 1.0, "bearing {got_b} vs {want_b}");
    let stop_text = b.text("main");
    assert!(
        stop_text.contains(&format!("{t_lat:.6}, {t_lon:.6}")),
        "{stop_text}"
    );
    assert!(stop_text.contains("± 7 m"), "accuracy shown: {stop_text}");
    // Walking on: the way updates with the phone's position.
    b.cdp(
        "Emulation.setGeolocationOverride",
        json!({"latitude": t_lat - 0.0009, "longitude": t_lon, "accuracy": 4}),
    );
    wait_for(
        &b,
        "Number(document.getElementById('way').dataset.distance) < 150",
        "the distance to update",
    );
    let (want_d, _) = distance_bearing(t_lat - 0.0009, t_lon, t_lat, t_lon);
    let got_d: f64 = b
        .script("return Number(document.getElementById('way').dataset.distance);")
        .as_f64()
        .expect("distance");
    assert!((got_d - want_d).abs() < 1.0, "distance {got_d} vs {want_d}");
    b.cdp(
        "Emulation.setGeolocationOverride",
        json!({"latitude": p_lat, "longitude": p_lon, "accuracy": 7}),
    );
    wait_for(
        &b,
        "Number(document.getElementById('way').dataset.distance) > 400",
        "the distance to update back",
    );
    // The target and the phone in UTM and MGRS, as the server computes them.
    check_grid(&b, "#target-utm", "#target-mgrs", t_lat, t_lon);
    check_grid(&b, "#fix-grid", "#fix-grid", p_lat, p_lon);
    check_grid_module(&b);
    check_photo_time_rule(&b);
    assert_clean(&b, "stop");
    shot(&b, "stop");

    // A confirmed visit with one photo is refused by the checklist ...
    let (p1, bytes1) = photo(work.path(), 1, p_lat, p_lon);
    let (p2, bytes2) = photo(work.path(), 2, p_lat, p_lon);
    b.click("#record");
    b.click("input[name=outcome][value=confirmed]");
    b.click("input[name=cause][value=mining]");
    b.type_into("#notes", "Fresh pit and tailings by the stream.");
    b.choose_file("#photo-gallery", &p1);
    wait_for(
        &b,
        "document.querySelectorAll('#photo-list li').length === 1",
        "one photo",
    );
    // The photo's EXIF position is read on the phone.
    let exif_lat: f64 = b
        .script("return Number(document.querySelector('#photo-list .exif').dataset.lat);")
        .as_f64()
        .expect("EXIF latitude");
    assert!(
        (exif_lat - p_lat).abs() < 1e-6,
        "EXIF {exif_lat} vs {p_lat}"
    );
    b.click("#save");
    let msg = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent",
        "the checklist's refusal",
    );
    assert!(
        msg.as_str()
            .unwrap_or_default()
            .contains("at least 2 photos"),
        "{msg}"
    );
    // ... and saved with two.
    b.choose_file("#photo-camera", &p2);
    wait_for(
        &b,
        "document.querySelectorAll('#photo-list li').length === 2",
        "two photos",
    );
    assert_clean(&b, "form");
    shot(&b, "form");
    // A phone without room for the photos: refused before anything is
    // written, with the sizes; the form keeps its photos and nothing saved
    // before is touched. The browser's estimate is made to say the phone
    // is nearly full (Chromium's quota override, `Storage.overrideQuotaForOrigin`,
    // did not reach `estimate()` reliably here).
    let used = b
        .script("return navigator.storage.estimate().then((e) => e.usage);")
        .as_f64()
        .expect("usage");
    b.script(&format!(
        "navigator.storage.estimate = async () => ({{ usage: {used}, quota: {used} + 100000 }}); return true;"
    ));
    b.click("#save");
    let full = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent.includes('free on the phone') && document.querySelector('.notice.error').textContent",
        "the refusal before writing",
    );
    assert!(
        full.as_str().unwrap_or_default().contains("NOT saved"),
        "{full}"
    );
    b.script("delete navigator.storage.estimate; return true;");
    b.click("#save");
    wait_for(
        &b,
        "document.querySelector('.notice.ok') && document.getElementById('stop-title')",
        "the saved report",
    );
    assert!(b.text(".notice.ok").contains("saved on this phone"));
    let unsent = wait_for(
        &b,
        "document.getElementById('storage').textContent",
        "the storage line",
    );
    assert!(
        unsent
            .as_str()
            .unwrap_or_default()
            .contains("Reports not sent: 1"),
        "{unsent}"
    );

    // "Not reached: safety" is one tap on the next stop.
    b.click("#to-stops");
    wait_for(&b, "document.getElementById('stops')", "the stops again");
    let second = &bundle.route[1];
    b.click(&format!("button[data-safety='{second}']"));
    wait_for(
        &b,
        &format!(
            "document.querySelector(\"#stops > li[data-code='{second}']\").dataset.state === 'unsent'"
        ),
        "the safety report",
    );
    assert_eq!(
        b.script(&format!(
            "return document.querySelector(\"#stops > li[data-code='{}']\").dataset.state;",
            first.code
        )),
        json!("unsent")
    );
    assert_clean(&b, "stops with reports");
    shot(&b, "stops");

    // A clearing found on the way: confirmed, with its cause, area and two
    // photos of its own; an area of 0 is refused first.
    let (p3, _) = photo(work.path(), 3, p_lat, p_lon);
    let (p4, _) = photo(work.path(), 4, p_lat, p_lon);
    b.click("#new-clearing");
    b.click("input[name=cause][value=fire]");
    b.type_into("#area", "0");
    b.choose_file("#photo-gallery", &p3);
    b.choose_file("#photo-gallery", &p4);
    wait_for(
        &b,
        "document.querySelectorAll('#photo-list li').length === 2",
        "the clearing's photos",
    );
    b.click("#save");
    let msg = wait_for(
        &b,
        "document.querySelector('.notice.error') && document.querySelector('.notice.error').textContent",
        "the refusal of a zero area",
    );
    assert!(msg.as_str().unwrap_or_default().contains("area"), "{msg}");
    b.type_into("#area", "1.5");
    // A DOM click: in this phone emulation ChromeDriver's Element Click
    // after typing into the re-drawn form did not reach the button (the
    // app saw no click event at all); a person's tap is a click event too.
    b.script("document.getElementById('save').click();");
    wait_for(
        &b,
        "document.querySelector('#new-clearings li.report')",
        "the new clearing on the trip",
    );
    assert_clean(&b, "new clearing");
    shot(&b, "new-clearing");

    // The return file, saved for the station, opens with the sync crate's
    // reader: signature, manifest, checksums and every report.
    let downloads = work.path().join("downloads");
    std::fs::create_dir_all(&downloads).expect("download folder");
    b.cdp(
        "Browser.setDownloadBehavior",
        json!({"behavior": "allow", "downloadPath": downloads.display().to_string()}),
    );
    b.click("#go-send");
    wait_for(&b, "document.getElementById('save-file')", "the send page");
    b.click("#save-file");
    let start = Instant::now();
    let saved = loop {
        let done: Vec<PathBuf> = std::fs::read_dir(&downloads)
            .expect("downloads")
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "zip"))
            .collect();
        if let Some(p) = done.into_iter().next() {
            break p;
        }
        assert!(start.elapsed() < Duration::from_secs(30), "no return file");
        std::thread::sleep(Duration::from_millis(100));
    };
    let key = bundle.upload_key.clone();
    let opened = groundproof_sync::returns::open_return(
        &saved,
        |id, key_id| (*id == bundle.manifest.bundle_id && key_id == key.key_id).then_some(key.key),
        &groundproof_sync::returns::ReturnLimits::default(),
    )
    .expect("the saved return opens with the sync reader");
    assert_eq!(opened.reports.len(), 3, "{:?}", opened.rejected);
    assert!(opened.rejected.is_empty(), "{:?}", opened.rejected);
    assert_eq!(opened.manifest.photo_count, 4);
    // Each photo carries what its EXIF says, read on the phone.
    for r in &opened.reports {
        for ph in &r.photos {
            assert!((ph.lat.expect("photo lat") - p_lat).abs() < 1e-6);
            assert!((ph.lon.expect("photo lon") - p_lon).abs() < 1e-6);
            assert_eq!(
                ph.taken_at.map(|t| t.to_rfc3339()),
                Some("2026-11-20T10:15:00+00:00".to_string())
            );
            assert_eq!(ph.direction_deg, Some(90.0));
        }
    }
    assert!(
        b.text(".notice.ok").contains("Return file saved"),
        "{}",
        b.text("main")
    );

    // Send with the team token the pairing gave the phone.
    let team_token = b
        .script("return document.getElementById('team-token').value;")
        .as_str()
        .unwrap_or_default()
        .to_string();
    assert_eq!(team_token.len(), 64, "the paired phone holds a team token");
    wait_for(
        &b,
        "navigator.serviceWorker.controller !== null",
        "the service worker",
    );
    // A slow link (100 kB/s up), so the send is caught half way.
    b.cdp("Network.enable", json!({}));
    let slow = |up: i64| json!({"offline": false, "latency": 0, "downloadThroughput": -1, "uploadThroughput": up});
    b.cdp("Network.emulateNetworkConditions", slow(100_000));
    b.click("#send-now");
    let size = wait_for(
        &b,
        "(() => { const p = document.getElementById('send-progress');          return p && Number(p.dataset.offset) > 0 && Number(p.dataset.offset) < Number(p.dataset.size)          && Number(p.dataset.size); })()",
        "the upload under way",
    );
    assert!(
        size.as_f64().unwrap_or_default() > 2.0 * 256.0 * 1024.0,
        "several chunks: {size}"
    );
    // The server dies mid-upload: the app backs off and says so.
    s.stop();
    wait_for(
        &b,
        "document.getElementById('send-progress').textContent.includes('Trying again')",
        "the app backing off",
    );
    // The app is closed and opened again while the server is down ...
    let app = s.url("/field/");
    b.goto(&app);
    wait_for(
        &b,
        "document.body.dataset.ready === 'yes' && document.getElementById('cautions')",
        "the app again, offline",
    );
    // ... the server comes back on the same data: the kept package goes on
    // from where the server stands, with no tap.
    s.restart();
    b.cdp("Network.emulateNetworkConditions", slow(-1));
    let done = wait_for(
        &b,
        "document.querySelector('.notice.ok') && document.querySelector('.notice.ok').textContent.includes('Sent:')          && document.querySelector('.notice.ok').textContent",
        "the resumed send's answer",
    );
    assert!(
        done.as_str().unwrap_or_default().contains("3 accepted"),
        "{done}"
    );
    assert_clean_but(&b, "resumed send", &["/api/v1/uploads"]);
    // Nothing duplicated: one return with two reports.
    let counts = s.db.read(|x| x.bundle_return_counts()).expect("counts");
    assert_eq!(
        counts.get(&bundle.manifest.bundle_id.to_string()),
        Some(&(1, 3)),
        "{counts:?}"
    );
    b.click("#cautions-ok");
    b.click("#go-send");
    wait_for(
        &b,
        "document.querySelectorAll('#send-results li').length === 3",
        "the server's answer",
    );
    let results = b.script(
        "return Array.from(document.querySelectorAll('#send-results li'))\
         .map(li => [li.dataset.report, li.dataset.status]);",
    );
    let results = results.as_array().expect("results");
    assert!(
        results.iter().all(|r| r[1] == "accepted"),
        "{results:?}: {}",
        b.text("main")
    );
    assert_clean(&b, "sent");
    shot(&b, "sent");

    // The server holds the three reports; the photos are the very same bytes.
    let mut confirmed = 0;
    let mut clearings = 0;
    for r in results {
        let id = r[0].as_str().expect("report id");
        let row =
            s.db.read(|x| x.report(id))
                .expect("read")
                .unwrap_or_else(|| panic!("report {id} stored"));
        assert_eq!(row.bundle_id, bundle.manifest.bundle_id.to_string());
        assert_eq!(row.team, "Team Amber");
        assert!((row.lat.expect("lat") - p_lat).abs() < 1e-9);
        assert_eq!(row.accuracy_m, Some(7.0));
        if row.kind.as_str() == "new_clearing" {
            clearings += 1;
            assert_eq!(row.outcome.as_str(), "confirmed");
            assert_eq!(row.cause.map(|c| c.as_str()), Some("fire"));
            assert_eq!(row.area_ha, Some(1.5));
        } else if row.outcome.as_str() == "confirmed" {
            confirmed += 1;
            assert_eq!(row.cause.map(|c| c.as_str()), Some("mining"));
            let mut got: Vec<String> =
                s.db.read(|x| x.report_photos(id))
                    .expect("photos")
                    .into_iter()
                    .map(|p| p.sha256)
                    .collect();
            got.sort();
            let mut want = vec![sha256(&bytes1), sha256(&bytes2)];
            want.sort();
            assert_eq!(got, want, "photo digests");
            for (sha, bytes) in [(sha256(&bytes1), &bytes1), (sha256(&bytes2), &bytes2)] {
                let stored =
                    std::fs::read(groundproof::intake::layout::photo_path(s.data_dir(), &sha))
                        .expect("stored photo");
                assert_eq!(&stored, bytes, "photo {sha} byte-identical");
            }
        } else {
            assert_eq!(row.outcome.as_str(), "not_reached");
            assert_eq!(row.reason.map(|r| r.as_str()), Some("safety"));
            assert_eq!(row.control_code.as_deref(), None);
        }
    }
    assert_eq!((confirmed, clearings), (1, 1));

    // A correction: a new report that names the one it supersedes.
    let (safety_id, _) = results
        .iter()
        .map(|r| (r[0].as_str().unwrap_or_default().to_string(), ()))
        .find(|(id, _)| {
            s.db.read(|x| x.report(id))
                .ok()
                .flatten()
                .is_some_and(|row| row.outcome.as_str() == "not_reached")
        })
        .expect("the safety report");
    b.click("#to-stops");
    b.click(&format!("#stops > li[data-code='{second}'] .row"));
    b.click(&format!("button[data-correct='{safety_id}']"));
    b.click("input[name=not_reached_reason][value=terrain]");
    b.click("#save");
    wait_for(
        &b,
        "document.querySelector('.notice.ok') && document.getElementById('stop-title')",
        "the saved correction",
    );
    assert!(b.text("main").contains("Corrects an earlier report"));
    b.click("#to-stops");
    b.click("#go-send");
    wait_for(&b, "document.getElementById('send-now')", "the send page");
    assert_eq!(
        b.script("return document.getElementById('team-token').value;"),
        json!(team_token),
        "the token is kept with the trip"
    );
    b.click("#send-now");
    wait_for(
        &b,
        "document.querySelectorAll('#send-results li').length === 1",
        "the server's answer to the correction",
    );
    let fix = b.script(
        "const li = document.querySelector('#send-results li'); return [li.dataset.report, li.dataset.status];",
    );
    assert_eq!(fix[1], "accepted", "{}", b.text("main"));
    let row =
        s.db.read(|x| x.report(fix[0].as_str().unwrap_or_default()))
            .expect("read")
            .expect("the correction is stored");
    assert_eq!(row.supersedes.as_deref(), Some(safety_id.as_str()));
    assert_eq!(row.reason.map(|r| r.as_str()), Some("terrain"));
    assert_clean(&b, "correction sent");

    // Several trips stay apart: a second team's trip opens with its own
    // stops, none visited, and the first keeps its reports.
    let (_, zip2) =
        issue_from_station(&s, json!({"team": "Team Basalt", "zone": "Core", "max": 3}));
    let bundle2 = open_bundle_at(&work.path().join("bundle2.zip"), &zip2);
    // This one by typing its pairing code (as read off the coordinator's
    // screen, in lower case).
    let r = post_json(
        &s.url(&format!(
            "/api/v1/bundles/{}/pairings",
            bundle2.manifest.bundle_id
        )),
        &json!({}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let code2 = r.json()["code"].as_str().expect("code").to_lowercase();
    b.click("#to-trips");
    b.type_into("#pair-code", &code2);
    b.click("#pair-button");
    wait_for(&b, "document.getElementById('cautions')", "the second trip");
    b.click("#cautions-ok");
    wait_for(
        &b,
        "document.getElementById('stops')",
        "the second trip's stops",
    );
    let codes2 = b.script(
        "return Array.from(document.querySelectorAll('#stops > li')).map(li => li.dataset.code);",
    );
    assert_eq!(codes2, json!(bundle2.route));
    let states2 = b.script(
        "return Array.from(document.querySelectorAll('#stops > li')).map(li => li.dataset.state);",
    );
    assert!(
        states2
            .as_array()
            .expect("states")
            .iter()
            .all(|s| s == "not_visited"),
        "{states2}"
    );
    b.click("#to-trips");
    wait_for(
        &b,
        "document.querySelectorAll('#trips > li').length === 2",
        "two trips on the phone",
    );
    b.click(&format!(
        "button[data-bundle='{}']",
        bundle.manifest.bundle_id
    ));
    b.click("#cautions-ok");
    wait_for(
        &b,
        "document.getElementById('stops')",
        "the first trip again",
    );
    assert_clean(&b, "two trips");

    // The service worker controls the page; then the server goes away.
    wait_for(
        &b,
        "navigator.serviceWorker.controller !== null",
        "the service worker",
    );
    drop(s);
    b.goto(&app);
    wait_for(
        &b,
        "document.body.dataset.ready === 'yes' && document.getElementById('cautions')",
        "the app from the service worker, on the last trip",
    );
    b.click("#cautions-ok");
    wait_for(&b, "document.getElementById('stops')", "the stops offline");
    assert_eq!(
        b.script(&format!(
            "return document.querySelector(\"#stops > li[data-code='{}']\").dataset.state;",
            first.code
        )),
        json!("recorded"),
        "the stop's report was received"
    );
    b.choose("#lang", "pt");
    wait_for(
        &b,
        "document.documentElement.lang === 'pt' && document.getElementById('stops')",
        "Portuguese",
    );
    let main = b.text("main");
    assert!(main.contains("Paradas na ordem de visita"), "{main}");
    assert!(main.contains("Recebido pelo escritório"), "{main}");
    assert_clean(&b, "offline, in Portuguese");
    shot(&b, "offline-pt");
}
