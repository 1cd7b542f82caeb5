//! Return packages: round trip and every way a package can be broken or
//! hostile (forged signature, unknown key, traversal, zip bombs, overlapping
//! entries crafted by hand, truncated or garbled reports, one bad report).

use std::io::{Cursor, Write};
use std::path::PathBuf;

use chrono::{DateTime, TimeZone, Utc};
use groundproof_sync::SyncError;
use groundproof_sync::bundle::{Checklist, ManifestEntry, UploadKey, sha256_hex};
use groundproof_sync::returns::{
    OpenedReturn, Position, PositionSource, REPORTS, RETURN_FORMAT, RETURN_MANIFEST, Report,
    ReportPhoto, ReturnHeader, ReturnLimits, ReturnManifest, SIGNATURE, Target, open_return,
    pack_return, photo_entry_name, sign_manifest,
};
use uuid::Uuid;
use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, ZipWriter};

const KEY: [u8; 32] = [0x5a; 32];
const KEY_ID: &str = "uk-0001";
const BUNDLE: Uuid = Uuid::from_u128(0x0b5e_55ed_0000_4000_8000_0000_0000_0001);

fn t(h: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 9, 3, h, 0, 0)
        .single()
        .expect("time")
}

fn key() -> UploadKey {
    UploadKey {
        key_id: KEY_ID.into(),
        key: KEY,
    }
}

fn lookup(b: &Uuid, k: &str) -> Option<[u8; 32]> {
    (*b == BUNDLE && k == KEY_ID).then_some(KEY)
}

fn photo_bytes(i: u8) -> Vec<u8> {
    let mut v = vec![0xff, 0xd8, 0xff, 0xe0];
    v.extend((0..4000u32).map(|n| (n as u8).wrapping_mul(i).wrapping_add(n as u8 / 7)));
    v.extend([0xff, 0xd9]);
    v
}

fn photo_ref(bytes: &[u8]) -> ReportPhoto {
    ReportPhoto {
        sha256: sha256_hex(bytes),
        original_name: "IMG_0001.jpg".into(),
        taken_at: Some(t(9)),
        lat: Some(-1.23),
        lon: Some(23.41),
        direction_deg: Some(90.0),
    }
}

fn report(id: u128, code: &str, photos: Vec<ReportPhoto>) -> Report {
    Report {
        report_id: Uuid::from_u128(id),
        bundle_id: BUNDLE,
        target: Target::Event {
            code: code.into(),
            event_id: 9001,
        },
        supersedes: None,
        outcome: "confirmed".into(),
        reason: None,
        cause: Some("smallholder_clearing".into()),
        position: Some(Position {
            lat: -1.2301,
            lon: 23.4102,
            accuracy_m: Some(4.0),
            source: PositionSource::Manual,
        }),
        observed_at: t(9),
        recorded_at: t(10),
        area_ha: Some(3.5),
        notes: "fresh stumps, burnt area".into(),
        photos,
    }
}

fn header() -> ReturnHeader {
    ReturnHeader {
        bundle_id: BUNDLE,
        team: "Team Kestrel".into(),
        checklist_version: 1,
        created_at: t(12),
        camera_zone: None,
    }
}

struct Fixture {
    _dir: tempfile::TempDir,
    zip: PathBuf,
    reports: Vec<Report>,
    photos: Vec<Vec<u8>>,
}

fn packed() -> Fixture {
    let dir = tempfile::tempdir().expect("dir");
    let photos = vec![photo_bytes(3), photo_bytes(5)];
    let mut paths = Vec::new();
    for (i, p) in photos.iter().enumerate() {
        let path = dir.path().join(format!("p{i}.jpg"));
        std::fs::write(&path, p).expect("photo");
        paths.push(path);
    }
    let a = photo_ref(&photos[0]);
    let b = photo_ref(&photos[1]);
    let reports = vec![
        report(3, "K0413", vec![a.clone(), b.clone()]),
        report(1, "K0411", vec![b, a]),
    ];
    let zip = dir.path().join("return.zip");
    let mut out = Cursor::new(Vec::new());
    pack_return(&mut out, &header(), &key(), &reports, &paths).expect("pack");
    std::fs::write(&zip, out.into_inner()).expect("write");
    Fixture {
        _dir: dir,
        zip,
        reports,
        photos,
    }
}

#[test]
fn round_trip_is_deterministic_and_verified() {
    let f = packed();
    let opened = open_return(&f.zip, lookup, &ReturnLimits::default()).expect("open");
    assert!(opened.rejected.is_empty(), "{:?}", opened.rejected);
    let mut want = f.reports.clone();
    want.sort_by_key(|r| r.report_id);
    assert_eq!(opened.reports, want);
    assert_eq!(opened.manifest.format, RETURN_FORMAT);
    assert_eq!(opened.manifest.report_count, 2);
    assert_eq!(opened.manifest.photo_count, 2);
    for p in &f.photos {
        assert_eq!(&opened.photo_bytes(&sha256_hex(p)).expect("photo"), p);
    }
    assert_eq!(opened.photo_shas().count(), 2);
    // Same inputs, same bytes.
    let f2 = packed();
    assert_eq!(
        std::fs::read(&f.zip).expect("a"),
        std::fs::read(&f2.zip).expect("b")
    );
}

/// Builds a signed package from raw entries. `tweak` may change the manifest before
/// it is signed; `sign_key` signs it.
fn raw_package(
    entries: &[(&str, Vec<u8>)],
    report_count: u32,
    tweak: impl Fn(&mut ReturnManifest),
    sign_key: &[u8; 32],
) -> Vec<u8> {
    let mut listed: Vec<ManifestEntry> = entries
        .iter()
        .map(|(n, b)| ManifestEntry {
            name: (*n).into(),
            sha256: sha256_hex(b),
            size: b.len() as u64,
        })
        .collect();
    listed.sort_by(|a, b| a.name.cmp(&b.name));
    let mut manifest = ReturnManifest {
        format: RETURN_FORMAT.into(),
        format_version: 1,
        bundle_id: BUNDLE,
        upload_key_id: KEY_ID.into(),
        team: "Team Kestrel".into(),
        created_at: t(12),
        checklist_version: 1,
        report_count,
        photo_count: entries
            .iter()
            .filter(|(n, _)| n.starts_with("photos/"))
            .count() as u32,
        entries: listed,
        camera_zone: None,
    };
    tweak(&mut manifest);
    let mbytes = serde_json::to_vec(&manifest).expect("manifest");
    let sig = serde_json::to_vec(&sign_manifest(KEY_ID, sign_key, &mbytes)).expect("sig");
    let mut zip = ZipWriter::new(Cursor::new(Vec::new()));
    let opts = SimpleFileOptions::default().compression_method(CompressionMethod::Deflated);
    for (n, b) in entries.iter().map(|(n, b)| (*n, b.as_slice())).chain([
        (RETURN_MANIFEST, mbytes.as_slice()),
        (SIGNATURE, sig.as_slice()),
    ]) {
        zip.start_file(n, opts).expect("start");
        zip.write_all(b).expect("write");
    }
    zip.finish().expect("finish").into_inner()
}

fn open_bytes(bytes: &[u8]) -> Result<OpenedReturn, SyncError> {
    let dir = tempfile::tempdir().expect("dir");
    let path = dir.path().join("r.zip");
    std::fs::write(&path, bytes).expect("write");
    open_return(&path, lookup, &ReturnLimits::default())
}

fn reports_json(reports: &[Report]) -> Vec<u8> {
    serde_json::to_vec(reports).expect("json")
}

#[test]
fn raw_package_helper_makes_a_valid_package() {
    let r = report(1, "K0411", vec![]);
    let ok = raw_package(&[(REPORTS, reports_json(&[r]))], 1, |_| {}, &KEY);
    assert_eq!(open_bytes(&ok).expect("valid").reports.len(), 1);
}

#[test]
fn forged_signature_is_refused() {
    let r = report(1, "K0411", vec![]);
    let forged = raw_package(&[(REPORTS, reports_json(&[r]))], 1, |_| {}, &[0x11; 32]);
    let err = open_bytes(&forged).expect_err("forged");
    assert!(matches!(err, SyncError::BadSignature { .. }), "{err}");
    assert!(err.to_string().contains("signature.json"), "{err}");
}

#[test]
fn altered_entry_after_signing_is_refused() {
    // A report edited after signing: the manifest (and so the MAC) no longer matches.
    let f = packed();
    let bytes = std::fs::read(&f.zip).expect("read");
    let mut archive = zip::ZipArchive::new(Cursor::new(bytes)).expect("zip");
    let mut out = ZipWriter::new(Cursor::new(Vec::new()));
    for i in 0..archive.len() {
        let mut e = archive.by_index(i).expect("entry");
        let name = e.name().expect("name").into_owned();
        let mut content = Vec::new();
        std::io::Read::read_to_end(&mut e, &mut content).expect("read");
        if name == REPORTS {
            content = String::from_utf8(content)
                .expect("utf8")
                .replace("smallholder_clearing", "mining")
                .into_bytes();
        }
        out.start_file(name, SimpleFileOptions::default())
            .expect("start");
        out.write_all(&content).expect("write");
    }
    let err = open_bytes(&out.finish().expect("finish").into_inner()).expect_err("altered");
    assert!(
        matches!(&err, SyncError::SizeMismatch { name, .. } | SyncError::ChecksumMismatch { name, .. } if name == REPORTS),
        "{err}"
    );
}

#[test]
fn unknown_or_revoked_key_is_refused() {
    let f = packed();
    let err = open_return(&f.zip, |_, _| None, &ReturnLimits::default()).expect_err("revoked");
    assert!(
        matches!(&err, SyncError::UnknownKey { key_id, .. } if key_id == KEY_ID),
        "{err}"
    );
    // Signed under another key id than the server knows.
    let r = report(1, "K0411", vec![]);
    let dir = tempfile::tempdir().expect("dir");
    let path = dir.path().join("r.zip");
    let mut out = Cursor::new(Vec::new());
    let other = UploadKey {
        key_id: "uk-9999".into(),
        key: KEY,
    };
    pack_return(&mut out, &header(), &other, &[r], &[]).expect("pack");
    std::fs::write(&path, out.into_inner()).expect("write");
    let err = open_return(&path, lookup, &ReturnLimits::default()).expect_err("wrong id");
    assert!(matches!(err, SyncError::UnknownKey { .. }), "{err}");
}

#[test]
fn traversal_and_odd_names_are_refused() {
    for bad in [
        "../evil.json",
        "photos/../../etc/passwd",
        "/reports.json",
        "photos/x.jpg",
        "reports.json/",
    ] {
        let r = report(1, "K0411", vec![]);
        let pkg = raw_package(
            &[(REPORTS, reports_json(&[r])), (bad, b"x".to_vec())],
            1,
            |_| {},
            &KEY,
        );
        let err = open_bytes(&pkg).expect_err(bad);
        assert!(
            matches!(&err, SyncError::EntryNotAllowed { name, .. } if name == bad)
                || matches!(err, SyncError::Zip { .. }),
            "{bad}: {err}"
        );
    }
}

#[test]
fn highly_compressible_entry_trips_the_ratio_limit() {
    // 5 MiB of spaces inside a JSON array deflates about 1000:1, past the 100:1 JSON cap
    // (reliability.md §3, Apache POI MIN_INFLATE_RATIO) though below the 8 MiB size cap.
    let mut body = b"[".to_vec();
    body.extend(std::iter::repeat_n(b' ', 5 << 20));
    body.extend(b"]");
    let pkg = raw_package(&[(REPORTS, body)], 0, |_| {}, &KEY);
    let err = open_bytes(&pkg).expect_err("bomb");
    assert!(
        matches!(&err, SyncError::EntryNotAllowed { name, reason } if name == REPORTS && reason.contains("zip bomb")),
        "{err}"
    );
}

#[test]
fn entry_larger_than_declared_is_stopped_while_reading() {
    // The signed manifest claims 100 bytes; the entry inflates to 2 MiB. The reader
    // stops at byte 101, whatever the manifest or the ZIP headers say.
    let body = vec![b' '; 2 << 20];
    let pkg = raw_package(
        &[(REPORTS, body)],
        0,
        |m| {
            m.entries[0].size = 100;
        },
        &KEY,
    );
    let err = open_bytes(&pkg).expect_err("too large");
    assert!(
        matches!(&err, SyncError::EntryTooLarge { name, max: 100 } if name == REPORTS),
        "{err}"
    );
}

/// Rewrites the uncompressed-size fields of `name` in the local and central headers.
fn understate_size(zip: &mut [u8], name: &str, size: u32) {
    let n = name.as_bytes();
    let mut i = 0;
    let mut patched = 0;
    while i + 46 < zip.len() {
        let sig: [u8; 4] = zip[i..i + 4].try_into().expect("4 bytes");
        if &sig == b"PK\x03\x04" && &zip[i + 30..i + 30 + n.len()] == n {
            zip[i + 22..i + 26].copy_from_slice(&size.to_le_bytes()); // APPNOTE 4.3.7
            patched += 1;
        }
        if &sig == b"PK\x01\x02" && &zip[i + 46..i + 46 + n.len()] == n {
            zip[i + 24..i + 28].copy_from_slice(&size.to_le_bytes()); // APPNOTE 4.3.12
            patched += 1;
        }
        i += 1;
    }
    assert_eq!(patched, 2, "local and central header patched");
}

#[test]
fn entry_whose_header_understates_its_size_is_refused() {
    // Honest manifest (2 MiB), but the ZIP headers claim 100 bytes: the reader must not
    // believe the headers; it either reads the real bytes and checks them, or fails.
    let mut body = b"[".to_vec();
    body.extend(std::iter::repeat_n(b'\n', 90_000));
    body.extend(b"]");
    let mut pkg = raw_package(&[(REPORTS, body)], 0, |_| {}, &KEY);
    understate_size(&mut pkg, REPORTS, 100);
    let err = open_bytes(&pkg).expect_err("understated");
    assert!(err.to_string().contains(REPORTS), "{err}");
}

/// CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320), bit by bit.
fn crc32(data: &[u8]) -> u32 {
    let mut crc = !0u32;
    for &b in data {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc = if crc & 1 == 1 {
                (crc >> 1) ^ 0xEDB8_8320
            } else {
                crc >> 1
            };
        }
    }
    !crc
}

fn local_header(name: &str, data: &[u8]) -> Vec<u8> {
    // APPNOTE 4.3.7: local file header, stored (method 0), no data descriptor.
    let mut h = b"PK\x03\x04".to_vec();
    h.extend(20u16.to_le_bytes()); // version needed
    h.extend(0u16.to_le_bytes()); // flags
    h.extend(0u16.to_le_bytes()); // method: stored
    h.extend(0u16.to_le_bytes()); // time
    h.extend(0x21u16.to_le_bytes()); // date 1980-01-01
    h.extend(crc32(data).to_le_bytes());
    h.extend((data.len() as u32).to_le_bytes());
    h.extend((data.len() as u32).to_le_bytes());
    h.extend((name.len() as u16).to_le_bytes());
    h.extend(0u16.to_le_bytes());
    h.extend(name.as_bytes());
    h
}

fn central_header(name: &str, data: &[u8], offset: u32) -> Vec<u8> {
    // APPNOTE 4.3.12: central directory file header.
    let mut h = b"PK\x01\x02".to_vec();
    h.extend(20u16.to_le_bytes()); // made by
    h.extend(20u16.to_le_bytes()); // needed
    h.extend(0u16.to_le_bytes());
    h.extend(0u16.to_le_bytes());
    h.extend(0u16.to_le_bytes());
    h.extend(0x21u16.to_le_bytes());
    h.extend(crc32(data).to_le_bytes());
    h.extend((data.len() as u32).to_le_bytes());
    h.extend((data.len() as u32).to_le_bytes());
    h.extend((name.len() as u16).to_le_bytes());
    h.extend(0u16.to_le_bytes()); // extra
    h.extend(0u16.to_le_bytes()); // comment
    h.extend(0u16.to_le_bytes()); // disk
    h.extend(0u16.to_le_bytes()); // internal attrs
    h.extend(0u32.to_le_bytes()); // external attrs
    h.extend(offset.to_le_bytes());
    h.extend(name.as_bytes());
    h
}

#[test]
fn overlapping_entries_are_refused() {
    // Fifield's overlap: entry A's stored data quotes a whole second entry B, whose
    // central record points inside A. Both names are allowed and each local header
    // matches its central record, so only the range check can catch it.
    let b_data = br#"[]"#.to_vec();
    let b_name = REPORTS;
    let b_local = local_header(b_name, &b_data);
    let mut a_data = b_local.clone();
    a_data.extend(&b_data);
    let a_name = photo_entry_name(&sha256_hex(&a_data));
    let a_local = local_header(&a_name, &a_data);
    let b_offset = a_local.len() as u32; // B's local header starts where A's data starts
    let mut zip = a_local.clone();
    zip.extend(&a_data);
    let cd_start = zip.len() as u32;
    let mut cd = central_header(&a_name, &a_data, 0);
    cd.extend(central_header(b_name, &b_data, b_offset));
    zip.extend(&cd);
    // APPNOTE 4.3.16: end of central directory record.
    zip.extend(b"PK\x05\x06");
    zip.extend(0u16.to_le_bytes());
    zip.extend(0u16.to_le_bytes());
    zip.extend(2u16.to_le_bytes());
    zip.extend(2u16.to_le_bytes());
    zip.extend((cd.len() as u32).to_le_bytes());
    zip.extend(cd_start.to_le_bytes());
    zip.extend(0u16.to_le_bytes());
    let err = open_bytes(&zip).expect_err("overlap");
    assert!(
        matches!(&err, SyncError::EntryNotAllowed { reason, .. } if reason.contains("overlaps")),
        "{err}"
    );
}

#[test]
fn truncated_and_garbled_reports_json_are_refused_by_name() {
    let r = report(1, "K0411", vec![]);
    let full = reports_json(&[r]);
    for body in [
        full[..full.len() / 2].to_vec(),
        b"{\"reports\": []}".to_vec(),
        b"\xff\xfe garbage".to_vec(),
    ] {
        let pkg = raw_package(&[(REPORTS, body)], 1, |_| {}, &KEY);
        let err = open_bytes(&pkg).expect_err("bad json");
        assert!(
            matches!(&err, SyncError::InvalidEntry { name, .. } if name == REPORTS),
            "{err}"
        );
    }
}

#[test]
fn one_bad_report_does_not_spoil_the_others() {
    let p = photo_bytes(7);
    let good1 = report(1, "K0411", vec![photo_ref(&p), photo_ref(&photo_bytes(8))]);
    let mut missing_photo = report(2, "K0412", vec![photo_ref(&photo_bytes(9))]);
    missing_photo.notes = "photo not in the package".into();
    let good3 = report(3, "K0413", vec![photo_ref(&p), photo_ref(&photo_bytes(8))]);
    let mut no_reason = report(4, "K0414", vec![]);
    no_reason.outcome = "false_alarm".into();
    no_reason.cause = None;
    let mut items: Vec<serde_json::Value> = [&good1, &missing_photo, &good3, &no_reason]
        .iter()
        .map(|r| serde_json::to_value(r).expect("v"))
        .collect();
    items.push(serde_json::json!({"report_id": Uuid::from_u128(5), "outcome": 5}));
    items.push(serde_json::to_value(&good1).expect("dup"));
    let body = serde_json::to_vec(&items).expect("json");
    let pkg = raw_package(
        &[
            (REPORTS, body),
            (&photo_entry_name(&sha256_hex(&p)), p.clone()),
            (
                &photo_entry_name(&sha256_hex(&photo_bytes(8))),
                photo_bytes(8),
            ),
        ],
        6,
        |_| {},
        &KEY,
    );
    let mut opened = open_bytes(&pkg).expect("package is fine");
    let ids: Vec<u128> = opened
        .reports
        .iter()
        .map(|r| r.report_id.as_u128())
        .collect();
    assert_eq!(ids, vec![1, 3, 4]);
    let bad: Vec<(usize, Option<u128>)> = opened
        .rejected
        .iter()
        .map(|r| (r.index, r.report_id.map(|u| u.as_u128())))
        .collect();
    assert_eq!(bad, vec![(1, Some(2)), (4, Some(5)), (5, Some(1))]);
    assert!(opened.rejected[0].reason.contains("not in the return"));
    assert!(opened.rejected[2].reason.contains("twice"));
    // The checklist then refuses the false alarm without a reason, keeping the others.
    opened.apply_checklist(&Checklist::default_v1());
    let ids: Vec<u128> = opened
        .reports
        .iter()
        .map(|r| r.report_id.as_u128())
        .collect();
    assert_eq!(ids, vec![1, 3]);
    let last = opened
        .rejected
        .iter()
        .find(|r| r.report_id == Some(Uuid::from_u128(4)))
        .expect("rejected by checklist");
    assert_eq!(last.index, 3);
    assert!(last.reason.contains("needs a reason"), "{}", last.reason);
}
