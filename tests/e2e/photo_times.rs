//! Photo times without an offset (issue 12 item 14): a camera that writes its local time with
//! neither OffsetTimeOriginal nor a GPS time stamp, on a trip whose camera zone is set in the
//! field kit. The server must not read that local time as UTC.

use crate::intake::{fast_push, open_workspace};
use groundproof_e2e::{
    TestServer, admin_token, bearer, field_kit as field, form_body, issue_from_station,
    load_scenario, request,
};
use groundproof_sync::field::{Snapshot, push};
use serde_json::json;
use std::io::Cursor;
use std::path::Path;

/// A trip of Team Amber (3 events in the core zone) opened in the field
/// kit's workspace `root/ws`.
fn trip_workspace(s: &TestServer, root: &Path) -> std::path::PathBuf {
    let (_, zip) = issue_from_station(s, json!({"team": "Team Amber", "zone": "Core", "max": 3}));
    open_workspace(root, "ws", &zip)
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
    let tmp = tempfile::tempdir().unwrap();
    let ws = trip_workspace(&s, tmp.path());
    let w = ws.to_str().unwrap();
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
    let summary = push(&ws, &s.url(""), Some(&admin_token(&s)), &fast_push()).unwrap();
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

/// The organisation's zone as an admin saves it on the settings page (the
/// page's own form, sent with the admin's API token); the form's other
/// values are the defaults.
fn set_organisation_zone(s: &TestServer, zone: &str) {
    let fields = [
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
    let auth = bearer(&admin_token(s));
    let headers = [
        ("Authorization", auth.as_str()),
        ("Content-Type", "application/x-www-form-urlencoded"),
    ];
    let body = form_body(&fields);
    let r = request("POST", &s.url("/admin/settings"), &headers, body.as_bytes());
    assert_eq!(r.status, 303, "settings saved: {}", r.text());
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
    let tmp = tempfile::tempdir().unwrap();
    let ws = trip_workspace(&s, tmp.path());
    let w = ws.to_str().unwrap();
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
    let summary = push(&ws, &s.url(""), Some(&admin_token(&s)), &fast_push()).unwrap();
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
