//! A small invented trip used by the bundle tests: four clearing events, two
//! control points and a start point, all made up (common practice: fixtures
//! made in the test code; coordinates are arbitrary).

#![allow(dead_code, reason = "each test binary uses a different part")]

use std::io::Cursor;

use chrono::{DateTime, TimeZone, Utc};
use geo::{MultiPolygon, Point, polygon};
use groundproof_sync::bundle::{
    BundleEvent, BundleHeader, Checklist, ControlPoint, ExtraEntry, Manifest, StartPoint,
    write_bundle,
};

pub fn t(y: i32, mo: u32, d: u32, h: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(y, mo, d, h, 0, 0)
        .single()
        .expect("valid time")
}

pub fn header() -> BundleHeader {
    BundleHeader {
        bundle_id: uuid::Uuid::from_u128(0x0b5e_55ed_0000_4000_8000_0000_0000_0001),
        team: "Team Kestrel & <Heron>".into(),
        mode: "assessment".into(),
        issued_at: t(2026, 9, 1, 6),
        due_at: t(2026, 9, 8, 18),
        expires_at: t(2026, 9, 30, 0),
        upload_key_id: "uk-0001".into(),
        seed: Some(20_260_901),
    }
}

/// A square footprint of `d` degrees with its south-west corner at (x, y), wound
/// clockwise when `cw` (the writer must rewind it).
fn square(x: f64, y: f64, d: f64, cw: bool) -> MultiPolygon<f64> {
    let p = if cw {
        polygon![(x: x, y: y), (x: x, y: y + d), (x: x + d, y: y + d), (x: x + d, y: y)]
    } else {
        polygon![(x: x, y: y), (x: x + d, y: y), (x: x + d, y: y + d), (x: x, y: y + d)]
    };
    MultiPolygon::new(vec![p])
}

fn event(i: u32, x: f64, y: f64, cw: bool) -> BundleEvent {
    BundleEvent {
        code: format!("K{:04}", 410 + i),
        event_id: 9000 + i64::from(i),
        footprint: square(x, y, 0.004, cw),
        centroid: Point::new(x + 0.002, y + 0.002),
        area_ha: 19.5 + f64::from(i),
        first_detected: format!("2026-08-0{i}"),
        last_detected: format!("2026-08-2{i}"),
        sources: if i.is_multiple_of(2) {
            vec!["optical-10m".into(), "radar-10m".into()]
        } else {
            vec!["optical-30m".into()]
        },
        confidence: if i.is_multiple_of(2) {
            "confirmed"
        } else {
            "tentative"
        }
        .into(),
        corroborated: i.is_multiple_of(2),
        priority: 1.0 / f64::from(i),
        visit_order: 2 * i - 1,
        inclusion_probability: Some(0.25),
        stratum: Some(format!("stratum-{}", i % 2)),
    }
}

pub fn events() -> Vec<BundleEvent> {
    vec![
        event(1, 23.41, -1.23, false),
        event(2, 23.43, -1.25, true),
        event(3, 23.45, -1.21, false),
        event(4, 23.47, -1.27, false),
    ]
}

pub fn controls() -> Vec<ControlPoint> {
    vec![
        ControlPoint {
            code: "C0001".into(),
            point: Point::new(23.42, -1.24),
            visit_order: 2,
            inclusion_probability: Some(0.01),
        },
        ControlPoint {
            code: "C0002".into(),
            point: Point::new(23.46, -1.26),
            visit_order: 6,
            inclusion_probability: None,
        },
    ]
}

pub fn start() -> StartPoint {
    StartPoint {
        name: "Camp Ridge".into(),
        point: Point::new(23.40, -1.20),
    }
}

pub fn route() -> Vec<String> {
    ["K0411", "C0001", "K0412", "K0413", "C0002", "K0414"]
        .iter()
        .map(|s| (*s).to_owned())
        .collect()
}

pub const KEY: [u8; 32] = [0x5a; 32];

pub fn extras() -> Vec<ExtraEntry> {
    vec![
        ExtraEntry {
            name: "extras/field-sheet.html".into(),
            bytes: b"<!doctype html><title>Field sheet</title>".to_vec(),
        },
        ExtraEntry {
            name: "extras/preview-k0411.png".into(),
            bytes: vec![0x89, b'P', b'N', b'G', 0, 1, 2, 3],
        },
    ]
}

/// The fixture bundle as bytes, with its manifest.
pub fn bundle_bytes() -> (Vec<u8>, Manifest) {
    let mut out = Cursor::new(Vec::new());
    let manifest = write_bundle(
        &mut out,
        &header(),
        &events(),
        &controls(),
        &start(),
        &route(),
        &Checklist::default_v1(),
        &KEY,
        extras(),
    )
    .expect("fixture bundle is valid");
    (out.into_inner(), manifest)
}

/// The fixture bundle written to `dir/bundle.zip`.
pub fn bundle_file(dir: &std::path::Path) -> (std::path::PathBuf, Manifest) {
    let (bytes, manifest) = bundle_bytes();
    let path = dir.join("bundle.zip");
    std::fs::write(&path, bytes).expect("write bundle");
    (path, manifest)
}
