//! The `groundproof-field` binary end to end in a subprocess: open a bundle,
//! list, show, record reports (manual position and photo GPS), a refused
//! report, a new clearing, an amendment, status, pack, and the pack opened
//! again with `open_return` as the server would.

mod common;

use std::io::Cursor;
use std::path::Path;
use std::process::Command;

use chrono::{Duration, Utc};
use exif::{Field, In, Rational, Tag, Value};
use groundproof_sync::bundle::{BundleHeader, Checklist, write_bundle};
use groundproof_sync::returns::{PositionSource, ReturnLimits, Target, open_return};

struct Run {
    ok: bool,
    stdout: String,
    stderr: String,
}

fn field(ws: &Path, args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_groundproof-field"))
        .arg("--workspace")
        .arg(ws)
        .args(args)
        .output()
        .expect("run groundproof-field");
    Run {
        ok: out.status.success(),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

fn must(ws: &Path, args: &[&str]) -> String {
    let r = field(ws, args);
    assert!(r.ok, "{args:?} failed: {}\n{}", r.stderr, r.stdout);
    r.stdout
}

/// The fixture trip with a validity window around now (the fixture header's own
/// window lies in the past).
pub fn current_header() -> BundleHeader {
    let now = Utc::now();
    BundleHeader {
        issued_at: now - Duration::days(1),
        due_at: now + Duration::days(7),
        expires_at: now + Duration::days(30),
        ..common::header()
    }
}

fn write_current_bundle(path: &Path) {
    let mut out = Cursor::new(Vec::new());
    write_bundle(
        &mut out,
        &current_header(),
        &common::events(),
        &common::controls(),
        &common::start(),
        &common::route(),
        &Checklist::default_v1(),
        &common::KEY,
        common::extras(),
    )
    .expect("bundle");
    std::fs::write(path, out.into_inner()).expect("write bundle");
}

/// A small real JPEG (image crate, baseline encoder); `shade` makes it unique.
fn jpeg(shade: u8) -> Vec<u8> {
    let img = image::RgbImage::from_fn(48, 32, |x, y| {
        image::Rgb([shade, (x * 5) as u8, (y * 7) as u8])
    });
    let mut out = Cursor::new(Vec::new());
    image::DynamicImage::ImageRgb8(img)
        .write_to(&mut out, image::ImageFormat::Jpeg)
        .expect("encode jpeg");
    out.into_inner()
}

/// `jpeg` with an EXIF APP1 segment (written by kamadak-exif) carrying GPS tags.
fn jpeg_with_gps(shade: u8, lat: f64, lon: f64) -> Vec<u8> {
    let r = |v: f64| Rational {
        num: (v.abs() * 1e6).round() as u32,
        denom: 1_000_000,
    };
    let f = |tag, value| Field {
        tag,
        ifd_num: In::PRIMARY,
        value,
    };
    let fields = [
        f(Tag::GPSLatitudeRef, Value::Ascii(vec![b"S".to_vec()])),
        f(
            Tag::GPSLatitude,
            Value::Rational(vec![r(lat), r(0.0), r(0.0)]),
        ),
        f(Tag::GPSLongitudeRef, Value::Ascii(vec![b"E".to_vec()])),
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
    let plain = jpeg(shade);
    let mut out = plain[..2].to_vec(); // SOI
    out.extend([0xff, 0xe1]);
    out.extend(((tiff.len() + 8) as u16).to_be_bytes());
    out.extend(b"Exif\0\0");
    out.extend(&tiff);
    out.extend(&plain[2..]);
    out
}

#[test]
fn field_kit_end_to_end() {
    let dir = tempfile::tempdir().expect("dir");
    let ws = dir.path().join("ws");
    let bundle = dir.path().join("trip.zip");
    write_current_bundle(&bundle);
    let photos: Vec<_> = (0..3u8)
        .map(|i| {
            let p = dir.path().join(format!("IMG_{i}.jpg"));
            std::fs::write(&p, jpeg(40 * i)).expect("photo");
            p
        })
        .collect();
    let gps_photo = dir.path().join("gps.jpg");
    std::fs::write(&gps_photo, jpeg_with_gps(200, 1.25, 23.43)).expect("gps photo");
    let p = |i: usize| photos[i].to_str().expect("utf8 path");

    // An expired bundle is refused with the expiry in the message.
    let (expired, _) = common::bundle_file(dir.path());
    let r = field(&ws, &["open", expired.to_str().expect("path")]);
    assert!(!r.ok && r.stderr.contains("expired"), "{}", r.stderr);

    let out = must(&ws, &["open", bundle.to_str().expect("path")]);
    assert!(out.contains("4 events, 2 control points"), "{out}");
    assert!(ws.join("bundle/route.gpx").exists());
    assert!(!ws.join("bundle/upload-key.json").exists());

    let out = must(&ws, &["list"]);
    let lines: Vec<&str> = out.lines().skip(1).collect();
    assert_eq!(lines.len(), 6, "{out}");
    assert!(lines[0].contains("K0411") && lines[0].contains("not visited"));
    assert!(lines[1].contains("C0001") && lines[1].contains("control"));

    let out = must(&ws, &["show", "K0411", "--from", "-1.20,23.40"]);
    assert!(out.contains("event K0411 (id 9001)"), "{out}");
    assert!(out.contains("m, bearing"), "{out}");

    let out = must(
        &ws,
        &[
            "report",
            "K0411",
            "--outcome",
            "confirmed",
            "--cause",
            "mining",
            "--photo",
            p(0),
            p(1),
            "--at",
            "-1.228,23.412,5",
            "--notes",
            "pits and tailings",
        ],
    );
    let first_id = out
        .split_whitespace()
        .nth(2)
        .expect("report id in output")
        .to_owned();

    // The checklist's two-photo rule for confirmed.
    let r = field(
        &ws,
        &[
            "report",
            "K0412",
            "--outcome",
            "confirmed",
            "--photo",
            p(2),
            "--at",
            "-1.25,23.43",
        ],
    );
    assert!(
        !r.ok && r.stderr.contains("at least 2 photos"),
        "{}",
        r.stderr
    );
    // Unknown code.
    let r = field(
        &ws,
        &[
            "report",
            "X9999",
            "--outcome",
            "inconclusive",
            "--at",
            "0,0",
        ],
    );
    assert!(
        !r.ok && r.stderr.contains("not in this bundle"),
        "{}",
        r.stderr
    );
    // Position from the photo's GPS.
    must(
        &ws,
        &[
            "report",
            "K0412",
            "--outcome",
            "false_alarm",
            "--reason",
            "cloud_or_shadow",
            "--photo",
            gps_photo.to_str().expect("p"),
        ],
    );
    must(
        &ws,
        &[
            "report",
            "--new-clearing",
            "--outcome",
            "confirmed",
            "--cause",
            "fire",
            "--at",
            "-1.26,23.44",
            "--area-ha",
            "2.5",
            "--photo",
            p(1),
            p(2),
        ],
    );
    must(
        &ws,
        &["amend", &first_id, "--notes", "pits, tailings and a camp"],
    );
    let r = field(&ws, &["amend", &first_id, "--notes", "again"]);
    assert!(
        !r.ok && r.stderr.contains("already amended"),
        "{}",
        r.stderr
    );

    let out = must(&ws, &["list"]);
    assert!(out.contains("reported: confirmed (not sent)"), "{out}");
    assert!(out.contains("reported: false_alarm"), "{out}");
    assert!(out.contains("new clearings reported: 1"), "{out}");
    let out = must(&ws, &["status"]);
    assert!(out.contains("4 recorded: 4 not sent"), "{out}");
    assert!(out.contains("visited    2 of 6 stops"), "{out}");

    let ret = dir.path().join("return.zip");
    let out = must(&ws, &["pack", "--out", ret.to_str().expect("p")]);
    assert!(out.contains("packed 4 reports and 4 photos"), "{out}");

    let header = current_header();
    let mut opened = open_return(
        &ret,
        |b, k| (*b == header.bundle_id && k == header.upload_key_id).then_some(common::KEY),
        &ReturnLimits::default(),
    )
    .expect("server opens the pack");
    opened.apply_checklist(&Checklist::default_v1());
    assert!(opened.rejected.is_empty(), "{:?}", opened.rejected);
    assert_eq!(opened.reports.len(), 4);
    let by_gps = opened
        .reports
        .iter()
        .find(|r| r.outcome == "false_alarm")
        .expect("false alarm");
    let pos = by_gps.position.expect("position from photo");
    assert_eq!(pos.source, PositionSource::PhotoGps);
    assert!((pos.lat + 1.25).abs() < 1e-6 && (pos.lon - 23.43).abs() < 1e-6);
    let amended = opened
        .reports
        .iter()
        .find(|r| r.supersedes.is_some())
        .expect("amendment");
    assert_eq!(amended.supersedes.map(|u| u.to_string()), Some(first_id));
    assert_eq!(amended.notes, "pits, tailings and a camp");
    assert_eq!(amended.photos.len(), 2, "photos carried over");
    assert!(
        opened
            .reports
            .iter()
            .any(|r| r.target == Target::NewClearing && r.area_ha == Some(2.5))
    );
    for sha in opened.photo_shas() {
        let bytes = opened.photo_bytes(sha).expect("photo");
        assert_eq!(&bytes[..3], &[0xff, 0xd8, 0xff]);
    }
}

/// A stop whose centroid sits a hair south of the equator (floating noise of a pixel centred
/// on it) is shown as 0.000000, not as -0.0000000, which reads as the southern hemisphere, and
/// with the six decimals the field sheet prints (`planning::coords::format_dd`), so a team
/// comparing the two sees the same digits.
#[test]
fn positions_on_the_equator_have_one_hemisphere() {
    let dir = tempfile::tempdir().expect("dir");
    let ws = dir.path().join("ws");
    let bundle = dir.path().join("trip.zip");
    let mut events = common::events();
    events[0].centroid = geo::Point::new(23.43, -1e-12);
    let mut out = Cursor::new(Vec::new());
    write_bundle(
        &mut out,
        &current_header(),
        &events,
        &common::controls(),
        &common::start(),
        &common::route(),
        &Checklist::default_v1(),
        &common::KEY,
        common::extras(),
    )
    .expect("bundle");
    std::fs::write(&bundle, out.into_inner()).expect("write bundle");
    must(&ws, &["open", bundle.to_str().expect("path")]);
    let out = must(&ws, &["show", &events[0].code]);
    assert!(out.contains("position     0.000000, 23.430000"), "{out}");
    assert!(!out.contains("-0.0"), "{out}");
}

/// `jpeg` with an EXIF DateTimeOriginal and no offset and no GPS time: the camera's local time.
fn jpeg_with_local_time(shade: u8, local: &str) -> Vec<u8> {
    let field = Field {
        tag: Tag::DateTimeOriginal,
        ifd_num: In::PRIMARY,
        value: Value::Ascii(vec![local.as_bytes().to_vec()]),
    };
    let mut w = exif::experimental::Writer::new();
    w.push_field(&field);
    let mut tiff = Cursor::new(Vec::new());
    w.write(&mut tiff, false).expect("exif");
    let tiff = tiff.into_inner();
    let plain = jpeg(shade);
    let mut out = plain[..2].to_vec();
    out.extend([0xff, 0xe1]);
    out.extend(((tiff.len() + 8) as u16).to_be_bytes());
    out.extend(b"Exif\0\0");
    out.extend(&tiff);
    out.extend(&plain[2..]);
    out
}

/// A camera that writes its local time with no offset and no GPS time: the time is placed in
/// the camera zone set for the trip (`camera-zone`), so 10:00 local at UTC+03:00 is 07:00Z
/// (hand computation); without it the kit says it takes UTC.
#[test]
fn photo_times_without_offset_use_the_trip_camera_zone() {
    let dir = tempfile::tempdir().expect("dir");
    let ws = dir.path().join("ws");
    let bundle = dir.path().join("trip.zip");
    write_current_bundle(&bundle);
    must(&ws, &["open", bundle.to_str().expect("path")]);
    let out = must(&ws, &["camera-zone"]);
    assert!(out.contains("+00:00"), "{out}");
    let day = (Utc::now() - Duration::days(1)).date_naive();
    let photo = dir.path().join("local.jpg");
    let local = format!("{} 10:00:00", day.format("%Y:%m:%d"));
    std::fs::write(&photo, jpeg_with_local_time(90, &local)).expect("photo");
    let out = must(&ws, &["camera-zone", "+03:00"]);
    assert!(out.contains("+03:00"), "{out}");
    must(
        &ws,
        &[
            "report",
            "K0411",
            "--outcome",
            "inconclusive",
            "--at",
            "-1.2,23.4",
            "--photo",
            photo.to_str().expect("path"),
        ],
    );
    let out = must(&ws, &["show", "K0411"]);
    let want = format!("at {}T07:00:00+00:00", day.format("%Y-%m-%d"));
    assert!(out.contains(&want), "{want} in {out}");
    assert!(!field(&ws, &["camera-zone", "+25:00"]).ok);
}
