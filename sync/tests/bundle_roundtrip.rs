//! Bundle round trip, determinism and refusal tests: write the invented trip
//! of `common`, open it back, and check that damaged, altered, expired or
//! odd bundles are refused with an error naming the entry.

mod common;

use std::io::{Cursor, Read, Write};

use chrono::Duration;
use geo::{Coord, Winding};
use groundproof_sync::bundle::{
    self, BundleLimits, Checklist, ExtraEntry, OpenedBundle, open_bundle, open_bundle_with_limits,
    write_bundle,
};
use groundproof_sync::{BUNDLE_FORMAT, BUNDLE_FORMAT_VERSION, SyncError};
use zip::write::SimpleFileOptions;

fn close(a: Coord<f64>, b: Coord<f64>) -> bool {
    // Coordinates are rounded to 1e-7 degree by the writer (module docs), so half a unit.
    (a.x - b.x).abs() <= 5e-8 && (a.y - b.y).abs() <= 5e-8
}

fn open_fixture(dir: &std::path::Path) -> OpenedBundle {
    let (path, _) = common::bundle_file(dir);
    open_bundle(&path, common::t(2026, 9, 2, 0)).expect("fixture opens")
}

#[test]
fn round_trip() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (path, written) = common::bundle_file(dir.path());
    let b = open_bundle(&path, common::t(2026, 9, 2, 0)).expect("opens");
    assert_eq!(b.manifest, written);
    assert_eq!(b.manifest.format, BUNDLE_FORMAT);
    assert_eq!(b.manifest.format_version, BUNDLE_FORMAT_VERSION);
    assert_eq!(b.header(), common::header());
    assert_eq!(b.checklist, Checklist::default_v1());
    assert_eq!(b.upload_key.key, common::KEY);
    assert_eq!(b.upload_key.key_id, "uk-0001");
    assert_eq!(b.route, common::route());
    assert_eq!(
        (
            b.manifest.counts.events,
            b.manifest.counts.control_points,
            b.manifest.counts.route_stops
        ),
        (4, 2, 6)
    );

    let input = common::events();
    assert_eq!(b.events.len(), input.len());
    for (got, want) in b.events.iter().zip(&input) {
        let strip = |e: &bundle::BundleEvent| bundle::BundleEvent {
            footprint: geo::MultiPolygon::new(vec![]),
            centroid: geo::Point::new(0.0, 0.0),
            ..e.clone()
        };
        assert_eq!(strip(got), strip(want));
        assert!(close(got.centroid.0, want.centroid.0));
        let ring = got.footprint.0[0].exterior();
        assert!(
            ring.is_ccw(),
            "{} must be wound counter-clockwise (RFC 7946 §3.1.6)",
            got.code
        );
        for c in &ring.0 {
            assert!(
                want.footprint.0[0]
                    .exterior()
                    .0
                    .iter()
                    .any(|w| close(*w, *c))
            );
        }
    }
    for (got, want) in b.controls.iter().zip(common::controls()) {
        assert_eq!(got.code, want.code);
        assert_eq!(got.visit_order, want.visit_order);
        assert_eq!(got.inclusion_probability, want.inclusion_probability);
        assert!(close(got.point.0, want.point.0));
    }
    assert_eq!(b.start.name, common::start().name);

    let names: Vec<&str> = b.entry_names().collect();
    assert_eq!(
        names,
        [
            "bundle.gpkg",
            "checklist.json",
            "events.geojson",
            "extras/field-sheet.html",
            "extras/preview-k0411.png",
            "points.geojson",
            "route.gpx",
            "upload-key.json"
        ]
    );
    for extra in common::extras() {
        assert_eq!(b.entry_bytes(&extra.name).expect("extra"), extra.bytes);
    }
    let gpkg = b.entry_bytes("bundle.gpkg").expect("gpkg");
    // OGC 12-128r18 Req 1: the file starts with "SQLite format 3\0".
    assert_eq!(&gpkg[..16], b"SQLite format 3\0");
    // Req 2: application_id "GPKG" at header offset 68, user_version 10300 at offset 60 (big-endian).
    assert_eq!(&gpkg[68..72], b"GPKG");
    assert_eq!(
        u32::from_be_bytes([gpkg[60], gpkg[61], gpkg[62], gpkg[63]]),
        10300
    );
    let manifest = b.entry_bytes("manifest.json").expect("manifest");
    assert!(
        String::from_utf8(manifest)
            .expect("utf8")
            .contains("\"groundproof-bundle\"")
    );
}

#[test]
fn same_inputs_give_same_bytes() {
    let (a, _) = common::bundle_bytes();
    let (b, _) = common::bundle_bytes();
    assert!(a == b, "two writes of the same inputs differ");
    // And the bytes do depend on the inputs.
    let mut header = common::header();
    header.seed = Some(7);
    let mut out = Cursor::new(Vec::new());
    write_bundle(
        &mut out,
        &header,
        &common::events(),
        &common::controls(),
        &common::start(),
        &common::route(),
        &Checklist::default_v1(),
        &common::KEY,
        common::extras(),
    )
    .expect("valid");
    assert!(out.into_inner() != a);
}

#[test]
fn zip_entries_are_sorted_with_fixed_times_and_permissions() {
    let (bytes, _) = common::bundle_bytes();
    let mut zip = zip::ZipArchive::new(Cursor::new(bytes)).expect("zip");
    let names: Vec<String> = zip
        .file_names()
        .map(|n| n.expect("utf8").into_owned())
        .collect();
    let mut sorted = names.clone();
    sorted.sort();
    assert_eq!(names, sorted);
    for i in 0..zip.len() {
        let f = zip.by_index(i).expect("entry");
        assert_eq!(f.compression(), zip::CompressionMethod::Deflated);
        assert_eq!(f.last_modified(), Some(zip::DateTime::DEFAULT));
        assert_eq!(f.unix_mode().map(|m| m & 0o777), Some(0o644));
    }
}

/// Copies the fixture bundle, letting `edit` replace the content of any entry
/// (return `None` to drop it), and appending `extra` entries.
fn rewrite(
    dir: &std::path::Path,
    edit: impl Fn(&str, Vec<u8>) -> Option<Vec<u8>>,
    extra: &[(&str, &[u8])],
) -> std::path::PathBuf {
    let (bytes, _) = common::bundle_bytes();
    let mut src = zip::ZipArchive::new(Cursor::new(bytes)).expect("zip");
    let path = dir.join("edited.zip");
    let mut out = zip::ZipWriter::new(std::fs::File::create(&path).expect("create"));
    let opts = SimpleFileOptions::default();
    for i in 0..src.len() {
        let mut f = src.by_index(i).expect("entry");
        let name = f.name().expect("utf8").into_owned();
        let mut content = Vec::new();
        f.read_to_end(&mut content).expect("read");
        if let Some(content) = edit(&name, content) {
            out.start_file(name.as_str(), opts).expect("start");
            out.write_all(&content).expect("write");
        }
    }
    for (name, content) in extra {
        out.start_file(*name, opts).expect("start");
        out.write_all(content).expect("write");
    }
    out.finish().expect("finish");
    path
}

fn now() -> chrono::DateTime<chrono::Utc> {
    common::t(2026, 9, 2, 0)
}

#[test]
fn altered_entry_is_refused_naming_it() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = rewrite(
        dir.path(),
        |name, mut c| {
            if name == "events.geojson" {
                // Change one digit of the first area (19.5 → 19.6 would differ); flip one byte.
                let i = c.iter().position(|b| *b == b'9').expect("a digit 9");
                c[i] = b'8';
            }
            Some(c)
        },
        &[],
    );
    let err = open_bundle(&path, now()).expect_err("altered");
    assert!(
        matches!(&err, SyncError::ChecksumMismatch { name, .. } if name == "events.geojson"),
        "{err}"
    );
    assert!(err.to_string().contains("events.geojson"));
}

#[test]
fn one_flipped_byte_in_the_file_is_refused_naming_the_entry() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (path, _) = common::bundle_file(dir.path());
    let mut bytes = std::fs::read(&path).expect("read");
    let start = {
        let mut zip = zip::ZipArchive::new(Cursor::new(bytes.clone())).expect("zip");
        let f = zip.by_name("route.gpx").expect("gpx");
        f.data_start().expect("data start") + f.compressed_size() / 2
    };
    let at = usize::try_from(start).expect("fits");
    bytes[at] ^= 0x01;
    std::fs::write(&path, &bytes).expect("write");
    let err = open_bundle(&path, now()).expect_err("tampered");
    assert!(
        err.to_string().contains("route.gpx"),
        "error must name the entry: {err}"
    );
}

#[test]
fn expired_bundle_is_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (path, m) = common::bundle_file(dir.path());
    let err = open_bundle(&path, m.expires_at).expect_err("expired");
    assert!(matches!(err, SyncError::Expired { .. }), "{err}");
    assert!(open_bundle(&path, m.expires_at - Duration::seconds(1)).is_ok());
}

#[test]
fn other_format_version_is_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = rewrite(
        dir.path(),
        |name, c| {
            if name == "manifest.json" {
                let text = String::from_utf8(c).expect("utf8");
                Some(
                    text.replace("\"format_version\": 1", "\"format_version\": 2")
                        .into_bytes(),
                )
            } else {
                Some(c)
            }
        },
        &[],
    );
    let err = open_bundle(&path, now()).expect_err("version 2");
    assert!(
        matches!(
            err,
            SyncError::UnsupportedVersion {
                found: 2,
                supported: 1
            }
        ),
        "{err}"
    );
}

#[test]
fn bad_names_unlisted_and_missing_entries_are_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    for evil in [
        "../evil.html",
        "/etc/passwd",
        "extras/../../x.html",
        "extras\\x.html",
        "notes.txt",
    ] {
        let path = rewrite(dir.path(), |_, c| Some(c), &[(evil, b"x")]);
        let err = open_bundle(&path, now()).expect_err(evil);
        assert!(
            matches!(&err, SyncError::EntryNotAllowed { name, .. } if name == evil),
            "{evil}: {err}"
        );
    }
    let path = rewrite(
        dir.path(),
        |_, c| Some(c),
        &[("extras/smuggled.html", b"x")],
    );
    let err = open_bundle(&path, now()).expect_err("unlisted");
    assert!(
        matches!(&err, SyncError::UnlistedEntry { name } if name == "extras/smuggled.html"),
        "{err}"
    );
    let path = rewrite(dir.path(), |n, c| (n != "route.gpx").then_some(c), &[]);
    let err = open_bundle(&path, now()).expect_err("missing");
    assert!(
        matches!(&err, SyncError::MissingEntry { name } if name == "route.gpx"),
        "{err}"
    );
}

#[test]
fn limits_are_enforced() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (path, m) = common::bundle_file(dir.path());
    let gpkg_size = m
        .entries
        .iter()
        .find(|e| e.name == "bundle.gpkg")
        .expect("gpkg")
        .size;
    let small = BundleLimits {
        max_entry_bytes: gpkg_size - 1,
        ..BundleLimits::default()
    };
    let err = open_bundle_with_limits(&path, now(), small).expect_err("entry too large");
    assert!(
        matches!(&err, SyncError::EntryTooLarge { name, .. } if name == "bundle.gpkg"),
        "{err}"
    );
    let few = BundleLimits {
        max_entries: 8,
        ..BundleLimits::default()
    };
    let err = open_bundle_with_limits(&path, now(), few).expect_err("too many entries");
    assert!(
        matches!(err, SyncError::TooManyEntries { count: 9, max: 8 }),
        "{err}"
    );

    // A manifest that under-states a size: the reader counts while decompressing.
    let path = rewrite(
        dir.path(),
        |name, c| {
            if name == "manifest.json" {
                let mut v: serde_json::Value = serde_json::from_slice(&c).expect("json");
                for e in v["entries"].as_array_mut().expect("entries") {
                    if e["name"] == "route.gpx" {
                        e["size"] = serde_json::json!(10);
                    }
                }
                Some(serde_json::to_vec(&v).expect("json"))
            } else {
                Some(c)
            }
        },
        &[],
    );
    let err = open_bundle(&path, now()).expect_err("understated size");
    assert!(
        matches!(&err, SyncError::EntryTooLarge { name, max: 10 } if name == "route.gpx"),
        "{err}"
    );
}

#[test]
fn writer_refuses_bad_input() {
    let write = |events: &[bundle::BundleEvent], extras: Vec<ExtraEntry>, route: &[String]| {
        write_bundle(
            Cursor::new(Vec::new()),
            &common::header(),
            events,
            &common::controls(),
            &common::start(),
            route,
            &Checklist::default_v1(),
            &common::KEY,
            extras,
        )
    };
    let bad_extra = vec![ExtraEntry {
        name: "extras/../x.html".into(),
        bytes: vec![],
    }];
    assert!(matches!(
        write(&common::events(), bad_extra, &common::route()),
        Err(SyncError::InvalidInput(_))
    ));
    let mut events = common::events();
    events[1].code = "K412".into();
    let err = write(&events, vec![], &common::route()).expect_err("bad code");
    assert!(err.to_string().contains("K412"), "{err}");
    let mut events = common::events();
    events[0].first_detected = "2026-13-01".into();
    assert!(write(&events, vec![], &common::route()).is_err());
    let mut route = common::route();
    route.swap(0, 1);
    let err = write(&common::events(), vec![], &route).expect_err("order");
    assert!(err.to_string().contains("visit_order"), "{err}");
}

#[test]
fn fixture_opens_before_expiry() {
    let dir = tempfile::tempdir().expect("tempdir");
    let b = open_fixture(dir.path());
    assert_eq!(b.events.len(), 4);
}
