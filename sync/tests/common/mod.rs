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
        camera_zone: None,
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

/// The entries of a ZIP in order, as (name, bytes); `None` when it is not
/// one the zip crate can read whole.
pub fn zip_entries(bytes: &[u8]) -> Option<Vec<(String, Vec<u8>)>> {
    use std::io::Read;
    let mut z = zip::ZipArchive::new(Cursor::new(bytes)).ok()?;
    let mut out = Vec::new();
    for i in 0..z.len() {
        let mut f = z.by_index(i).ok()?;
        let mut b = Vec::new();
        f.read_to_end(&mut b).ok()?;
        out.push((f.name().ok()?.into_owned(), b));
    }
    Some(out)
}

/// A ZIP of `entries` in order, stored (so no ratio limit stops a damaged
/// entry before its reader sees it).
pub fn zip_of(entries: &[(String, Vec<u8>)]) -> Vec<u8> {
    use std::io::Write;
    let mut z = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let opts =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (name, bytes) in entries {
        z.start_file(name.as_str(), opts).expect("start entry");
        z.write_all(bytes).expect("write entry");
    }
    z.finish().expect("finish zip").into_inner()
}

/// Sets the size and SHA-256 of `name` in a manifest's `entries` listing
/// (JSON) to those of `bytes`; the manifest unchanged when it is not JSON.
pub fn relist(manifest: &[u8], name: &str, bytes: &[u8]) -> Vec<u8> {
    let Ok(mut m) = serde_json::from_slice::<serde_json::Value>(manifest) else {
        return manifest.to_vec();
    };
    if let Some(list) = m.get_mut("entries").and_then(|e| e.as_array_mut()) {
        for e in list.iter_mut().filter(|e| e["name"] == name) {
            e["size"] = serde_json::json!(bytes.len());
            e["sha256"] = serde_json::json!(groundproof_sync::bundle::sha256_hex(bytes));
        }
    }
    serde_json::to_vec(&m).unwrap_or_default()
}

/// The workspace's committed corpus of seed inputs for `target`
/// (`tests/corpus/<target>/`), as (file name, bytes), sorted by name.
pub fn corpus(target: &str) -> Vec<(String, Vec<u8>)> {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../tests/corpus")
        .join(target);
    let mut out: Vec<(String, Vec<u8>)> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("corpus {}: {e}", dir.display()))
        .map(|e| {
            let p = e.expect("corpus entry").path();
            let name = p
                .file_name()
                .unwrap_or_default()
                .to_string_lossy()
                .into_owned();
            (name, std::fs::read(&p).expect("corpus file"))
        })
        .collect();
    out.sort();
    assert!(!out.is_empty(), "corpus {} is empty", dir.display());
    out
}

/// Writes `bytes` as corpus seed `name` of `target` when the environment
/// asks for it (`GROUNDPROOF_WRITE_CORPUS=1`), so the seeds follow a format
/// change; otherwise does nothing.
pub fn maybe_write_corpus(target: &str, name: &str, bytes: &[u8]) {
    if std::env::var_os("GROUNDPROOF_WRITE_CORPUS").is_none() {
        return;
    }
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../tests/corpus")
        .join(target);
    std::fs::create_dir_all(&dir).expect("corpus folder");
    std::fs::write(dir.join(name), bytes).expect("corpus seed");
}

/// Most memory the robustness tests' process may have held at any time
/// (its peak resident size): damaged inputs of a few kilobytes must not
/// make a reader hold anything near the readers' limits.
pub const PEAK_RSS_LIMIT: u64 = 512 << 20;

/// The peak resident size of this process so far (`VmHWM` in
/// `/proc/self/status`), where the system reports it.
pub fn peak_rss_bytes() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}
