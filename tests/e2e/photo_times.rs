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
