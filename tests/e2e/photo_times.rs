//! Photo times without an offset (issue 12 item 14): a camera that writes its local time with
//! neither OffsetTimeOriginal nor a GPS time stamp, on a trip whose camera zone is set in the
//! field kit. The server must not read that local time as UTC.

use groundproof_e2e::{TestServer, get_bytes, load_scenario, post_json};
use groundproof_sync::client::PushOptions;
use groundproof_sync::field::{Snapshot, push};
use serde_json::json;
use std::io::Cursor;
use std::path::Path;
use std::time::Duration;

fn field(args: &[&str]) {
    let mut all = vec!["groundproof-field"];
    all.extend_from_slice(args);
    let code = groundproof_sync::field::run(all.clone()).expect("field command runs");
    assert_eq!(code, std::process::ExitCode::SUCCESS, "{all:?}");
}

/// A real JPEG with EXIF DateTimeOriginal `local` (no offset) and a GPS position (no GPS time).
fn local_time_photo(path: &Path, local: &str, lat: f64, lon: f64) {
    use exif::{Field, In, Rational, Tag, Value};
    let img = image::RgbImage::from_fn(320, 240, |x, y| {
        image::Rgb([90, (x % 251) as u8, (y % 241) as u8])
    });
    let mut plain = Cursor::new(Vec::new());
    image::DynamicImage::ImageRgb8(img)
        .write_to(&mut plain, image::ImageFormat::Jpeg)
        .expect("encode");
    let plain = plain.into_inner();
    let r = |v: f64| Rational {
        num: (v.abs() * 1e6).round() as u32,
        denom: 1_000_000,
    };
    let f = |tag, value| Field {
        tag,
        ifd_num: In::PRIMARY,
        value,
    };
    let ascii = |s: &str| Value::Ascii(vec![s.as_bytes().to_vec()]);
    let fields = [
        f(Tag::DateTimeOriginal, ascii(local)),
        f(
            Tag::GPSLatitudeRef,
            ascii(if lat < 0.0 { "S" } else { "N" }),
        ),
        f(
            Tag::GPSLatitude,
            Value::Rational(vec![r(lat), r(0.0), r(0.0)]),
        ),
        f(
            Tag::GPSLongitudeRef,
            ascii(if lon < 0.0 { "W" } else { "E" }),
        ),
        f(
            Tag::GPSLongitude,
            Value::Rational(vec![r(lon), r(0.0), r(0.0)]),
        ),
    ];
    let mut w = exif::experimental::Writer::new();
    for field in &fields {
        w.push_field(field);
    }
    let mut tiff = Cursor::new(Vec::new());
    w.write(&mut tiff, false).expect("exif");
    let tiff = tiff.into_inner();
    let mut out = plain[..2].to_vec();
    out.extend([0xff, 0xe1]);
    out.extend(((tiff.len() + 8) as u16).to_be_bytes());
    out.extend(b"Exif\0\0");
    out.extend(&tiff);
    out.extend(&plain[2..]);
    std::fs::write(path, out).expect("photo");
}

/// The camera zone of the trip is UTC−10:00; the photo says 10 hours earlier than UTC on its
/// clock. Read as UTC it would lie before the bundle was issued (`photo_outside_window`); in
/// its zone it is a minute from now, inside the window.
#[test]
fn a_local_photo_time_is_placed_in_the_trip_camera_zone() {
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 3,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let (status, bundle) = get_bytes(&s.url(r.json()["download"].as_str().unwrap()));
    assert_eq!(status, 200);
    let tmp = tempfile::tempdir().unwrap();
    let ws = tmp.path().join("ws");
    let zip = tmp.path().join("bundle.zip");
    std::fs::write(&zip, bundle).unwrap();
    let w = ws.to_str().unwrap();
    field(&["--workspace", w, "open", zip.to_str().unwrap()]);
    field(&["--workspace", w, "camera-zone", "-10:00"]);
    let snap = Snapshot::load(&ws).unwrap();
    let e = &snap.events[0];
    let wall_clock =
        chrono::Utc::now() + chrono::Duration::minutes(1) - chrono::Duration::hours(10);
    let photo = tmp.path().join("local.jpg");
    local_time_photo(
        &photo,
        &wall_clock.format("%Y:%m:%d %H:%M:%S").to_string(),
        e.lat,
        e.lon,
    );
    let at = format!("{},{}", e.lat, e.lon);
    field(&[
        "--workspace",
        w,
        "report",
        &e.code,
        "--outcome",
        "inconclusive",
        "--at",
        &at,
        "--photo",
        photo.to_str().unwrap(),
    ]);
    let options = PushOptions {
        chunk_bytes: 64 << 10,
        max_failures: 10,
        initial_backoff: Duration::from_millis(20),
        max_backoff: Duration::from_millis(200),
        max_total: Duration::from_secs(60),
        call_timeout: Duration::from_secs(30),
        progress: false,
        ca_file: None,
    };
    let summary = push(
        &ws,
        &s.url(""),
        Some(&groundproof_e2e::admin_token(&s)),
        &options,
    )
    .unwrap();
    assert_eq!(summary.accepted, 1);
    let rows = s.db.read(|x| x.report_facts()).unwrap();
    assert_eq!(rows.len(), 1);
    assert!(
        !rows[0]
            .flags
            .iter()
            .any(|f| f.starts_with("photo_outside_window")),
        "{:?}",
        rows[0].flags
    );
}

/// The organisation's zone as an admin saves it on the settings page (session cookie, CSRF
/// token of the page); the form's other values are the defaults.
fn set_organisation_zone(s: &TestServer, zone: &str) {
    use groundproof::platform::auth::{Role, create_user, now_unix};
    let password = "a long admin password 2026";
    create_user(&s.db, "zone-admin", Role::Admin, password, now_unix()).expect("admin");
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into();
    let form = |pairs: &[(&str, &str)]| {
        pairs
            .iter()
            .map(|(k, v)| format!("{k}={}", v.replace('+', "%2B").replace('/', "%2F")))
            .collect::<Vec<_>>()
            .join("&")
    };
    let login = agent
        .post(&s.url("/login"))
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded")
        .send(
            form(&[
                ("name", "zone-admin"),
                ("password", password),
                ("next", "/"),
            ])
            .replace(' ', "+"),
        )
        .expect("login");
    let cookie = login
        .headers()
        .get_all("set-cookie")
        .iter()
        .filter_map(|v| v.to_str().ok())
        .find(|c| c.starts_with("gp_session="))
        .map(|c| c.split(';').next().unwrap_or_default().to_string())
        .expect("session");
    let mut page = agent
        .get(&s.url("/admin/settings"))
        .header("Cookie", &cookie)
        .call()
        .expect("settings page");
    let body = page.body_mut().read_to_string().expect("page");
    let doc = scraper::Html::parse_document(&body);
    let sel = scraper::Selector::parse("input[type=hidden][name=csrf_token]").unwrap();
    let csrf = doc
        .select(&sel)
        .next()
        .and_then(|e| e.value().attr("value"))
        .expect("CSRF token")
        .to_string();
    let fields = [
        ("csrf_token", csrf.as_str()),
        ("area", "0.3"),
        ("recency", "0.25"),
        ("corroboration", "0.2"),
        ("confidence", "0.1"),
        ("zone", "0.15"),
        ("area_ref_ha", "10"),
        ("recency_days", "30"),
        ("tolerance_m", "100"),
        ("time_zone", zone),
        ("default_language", "en"),
    ];
    let r = agent
        .post(&s.url("/admin/settings"))
        .header("Cookie", &cookie)
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded")
        .send(form(&fields))
        .expect("settings saved");
    assert_eq!(r.status().as_u16(), 303, "settings saved");
}

/// The organisation's zone is `Etc/GMT+4` (UTC−04:00; POSIX sign, IANA tz database). The team
/// sets nothing: the bundle carries the zone, the field kit takes it as the trip's camera
/// zone, the return carries it, and the photo (local time, no offset, no GPS time) is stored
/// at its UTC instant: local wall clock + 4 hours.
#[test]
fn the_organisation_zone_is_the_default_camera_zone() {
    let s = TestServer::start();
    load_scenario(&s);
    set_organisation_zone(&s, "Etc/GMT+4");
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 3,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let (status, bundle) = get_bytes(&s.url(r.json()["download"].as_str().unwrap()));
    assert_eq!(status, 200);
    let tmp = tempfile::tempdir().unwrap();
    let ws = tmp.path().join("ws");
    let zip = tmp.path().join("bundle.zip");
    std::fs::write(&zip, bundle).unwrap();
    let w = ws.to_str().unwrap();
    field(&["--workspace", w, "open", zip.to_str().unwrap()]);
    let snap = Snapshot::load(&ws).unwrap();
    let zone = snap
        .camera_zone
        .clone()
        .expect("the bundle carries a camera zone");
    assert_eq!(
        (zone.offset.as_str(), zone.name.as_str()),
        ("-04:00", "Etc/GMT+4")
    );
    let e = &snap.events[0];
    let instant = chrono::Utc::now() + chrono::Duration::minutes(1);
    let wall_clock = instant - chrono::Duration::hours(4);
    let photo = tmp.path().join("local.jpg");
    let local = wall_clock.format("%Y:%m:%d %H:%M:%S").to_string();
    local_time_photo(&photo, &local, e.lat, e.lon);
    let sha = groundproof_sync::bundle::sha256_hex(&std::fs::read(&photo).unwrap());
    let at = format!("{},{}", e.lat, e.lon);
    let p = photo.to_str().unwrap();
    field(&[
        "--workspace",
        w,
        "report",
        &e.code,
        "--outcome",
        "inconclusive",
        "--at",
        &at,
        "--photo",
        p,
    ]);
    let options = PushOptions {
        chunk_bytes: 64 << 10,
        max_failures: 10,
        initial_backoff: Duration::from_millis(20),
        max_backoff: Duration::from_millis(200),
        max_total: Duration::from_secs(60),
        call_timeout: Duration::from_secs(30),
        progress: false,
        ca_file: None,
    };
    let token = groundproof_e2e::admin_token(&s);
    let summary = push(&ws, &s.url(""), Some(&token), &options).unwrap();
    assert_eq!(summary.accepted, 1);
    let row = s.db.read(|x| x.photo(&sha)).unwrap().expect("photo stored");
    let stored = chrono::DateTime::parse_from_rfc3339(row.taken_at.as_deref().expect("a time"))
        .expect("RFC 3339");
    let want = local_naive(&local).and_utc() + chrono::Duration::hours(4);
    assert_eq!(stored.with_timezone(&chrono::Utc), want);
}

fn local_naive(exif: &str) -> chrono::NaiveDateTime {
    chrono::NaiveDateTime::parse_from_str(exif, "%Y:%m:%d %H:%M:%S").expect("local time")
}
