//! Intake end to end: a bundle issued over HTTP, opened and filled by the
//! real field kit (reports with mock photos that carry EXIF GPS and time),
//! pushed with the field kit's resumable client through a connection that
//! is cut, or posted whole; hostile packages; evidence flags; and a kill -9
//! of the real binary during intake.

use groundproof::intake::layout::{photo_path, thumb_path};
use groundproof::platform::storage::{Db, ReportRow};
use groundproof_e2e::{TestServer, get, get_bytes, load_scenario, post_bytes, post_json};
use groundproof_sync::client::PushOptions;
use groundproof_sync::field::Snapshot;
use groundproof_sync::field::push;
use groundproof_sync::returns::{Report, ReturnHeader, pack_return, sha256_file};
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use serde_json::json;
use std::io::{Read, Write};
use std::net::{Shutdown, SocketAddr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

// ---------- helpers ----------

pub(crate) fn issue_bundle(base: &str, team: &str) -> (String, Vec<u8>) {
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &format!("{base}/api/v1/bundles"),
        &json!({"team": team, "zone": "Core", "max": 10,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let j = r.json();
    let id = j["bundle"]["bundle"]["id"].as_str().unwrap().to_string();
    let (status, bytes) = get_bytes(&format!("{base}{}", j["download"].as_str().unwrap()));
    assert_eq!(status, 200);
    (id, bytes)
}

fn field(args: &[&str]) {
    let mut all = vec!["groundproof-field"];
    all.extend_from_slice(args);
    let code = groundproof_sync::field::run(all.clone()).expect("field command runs");
    assert_eq!(code, std::process::ExitCode::SUCCESS, "{all:?}");
}

/// A workspace with the bundle opened.
pub(crate) fn open_workspace(root: &Path, name: &str, bundle: &[u8]) -> PathBuf {
    let ws = root.join(name);
    let zip = root.join(format!("{name}-bundle.zip"));
    std::fs::write(&zip, bundle).unwrap();
    field(&[
        "--workspace",
        ws.to_str().unwrap(),
        "open",
        zip.to_str().unwrap(),
    ]);
    ws
}

pub(crate) fn rfc(t: chrono::DateTime<chrono::Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}

/// A mock photo file at (lat, lon) taken at `when`.
fn photo(
    dir: &Path,
    seed: u64,
    lat: f64,
    lon: f64,
    when: chrono::DateTime<chrono::Utc>,
) -> PathBuf {
    let bytes = make_photo(
        seed,
        480,
        360,
        &PhotoMetaIn {
            taken_at_rfc3339: rfc(when),
            lat,
            lon,
            direction_deg: 90.0,
        },
    );
    assert!(!bytes.is_empty());
    let p = dir.join(format!("photo-{seed}.jpg"));
    std::fs::write(&p, bytes).unwrap();
    p
}

/// Records a confirmed report with two photos at the centroid of each of
/// the first `n` events (photos taken one minute from now: after issue,
/// before expiry, after every detection).
pub(crate) fn record_events(ws: &Path, n: usize, seed: u64) -> Vec<String> {
    let snap = Snapshot::load(ws).unwrap();
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let mut codes = Vec::new();
    for (i, e) in snap.events.iter().take(n).enumerate() {
        let s = seed + 10 * i as u64;
        let a = photo(ws, s, e.lat, e.lon, when);
        let b = photo(ws, s + 1, e.lat, e.lon, when);
        field(&[
            "--workspace",
            ws.to_str().unwrap(),
            "report",
            &e.code,
            "--outcome",
            "confirmed",
            "--cause",
            "mining",
            "--photo",
            a.to_str().unwrap(),
            b.to_str().unwrap(),
        ]);
        codes.push(e.code.clone());
    }
    codes
}

pub(crate) fn fast_push() -> PushOptions {
    PushOptions {
        chunk_bytes: 64 << 10,
        max_failures: 40,
        initial_backoff: Duration::from_millis(20),
        max_backoff: Duration::from_millis(200),
        max_total: Duration::from_secs(120),
        call_timeout: Duration::from_secs(30),
        progress: false,
        ca_file: None,
    }
}

pub(crate) fn facts(db: &Db) -> Vec<ReportRow> {
    db.read(|r| r.report_facts()).unwrap()
}

/// Stored state without the fields that depend on when a package arrived.
fn canonical(db: &Db) -> Vec<String> {
    facts(db)
        .into_iter()
        .map(|mut r| {
            r.received_at = groundproof::domain::Timestamp::from(chrono::DateTime::UNIX_EPOCH);
            r.return_id = 0;
            let photos = db.read(|x| x.report_photos(&r.report_id)).unwrap();
            let checks = db.read(|x| x.photo_checks(&r.report_id)).unwrap();
            format!("{r:?} {photos:?} {checks:?}")
        })
        .collect()
}

/// Every stored report's photos are on disk with their thumbnails, and each
/// file's SHA-256 is its name.
fn assert_evidence_on_disk(db: &Db, data: &Path) {
    for r in facts(db) {
        for p in db.read(|x| x.report_photos(&r.report_id)).unwrap() {
            let path = photo_path(data, &p.sha256);
            let (sha, _) = sha256_file(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            assert_eq!(sha, p.sha256);
            assert!(thumb_path(data, &p.sha256).exists());
        }
    }
}

pub(crate) fn pack(ws: &Path, out: &Path, all: bool) -> Vec<u8> {
    let mut args = vec![
        "--workspace",
        ws.to_str().unwrap(),
        "pack",
        "--out",
        out.to_str().unwrap(),
    ];
    if all {
        args.push("--all");
    }
    field(&args);
    std::fs::read(out).unwrap()
}

/// A loopback TCP proxy to `target` that drops the connection once the
/// bytes sent upstream reach each of `cuts` (counted over all connections).
pub(crate) struct CutProxy {
    addr: SocketAddr,
    cuts_done: Arc<AtomicUsize>,
    pub(crate) target: Arc<Mutex<SocketAddr>>,
}

impl CutProxy {
    pub(crate) fn start(target: SocketAddr, cuts: Vec<u64>) -> CutProxy {
        let listener = TcpListener::bind("127.0.0.1:0").unwrap();
        let addr = listener.local_addr().unwrap();
        let sent = Arc::new(AtomicU64::new(0));
        let cuts_done = Arc::new(AtomicUsize::new(0));
        let target = Arc::new(Mutex::new(target));
        let (s2, c2, t2) = (sent.clone(), cuts_done.clone(), target.clone());
        std::thread::spawn(move || {
            for client in listener.incoming() {
                let Ok(client) = client else { continue };
                let to = *t2.lock().unwrap();
                let Ok(server) = TcpStream::connect(to) else {
                    let _ = client.shutdown(Shutdown::Both);
                    continue;
                };
                let (sent, done, cuts) = (s2.clone(), c2.clone(), cuts.clone());
                let (mut c_in, mut s_out) =
                    (client.try_clone().unwrap(), server.try_clone().unwrap());
                let (c_close, s_close) = (client.try_clone().unwrap(), server.try_clone().unwrap());
                std::thread::spawn(move || {
                    let mut buf = [0u8; 8192];
                    loop {
                        let n = match c_in.read(&mut buf) {
                            Ok(0) | Err(_) => break,
                            Ok(n) => n,
                        };
                        let before = sent.fetch_add(n as u64, Ordering::SeqCst);
                        let k = done.load(Ordering::SeqCst);
                        if k < cuts.len() && before + n as u64 >= cuts[k] {
                            done.fetch_add(1, Ordering::SeqCst);
                            // Forward part of this read, then drop both sides.
                            let _ = s_out.write_all(&buf[..n / 2]);
                            let _ = c_close.shutdown(Shutdown::Both);
                            let _ = s_close.shutdown(Shutdown::Both);
                            break;
                        }
                        if s_out.write_all(&buf[..n]).is_err() {
                            break;
                        }
                    }
                    let _ = s_out.shutdown(Shutdown::Write);
                });
                let (mut s_in, mut c_out) = (server, client);
                std::thread::spawn(move || {
                    let _ = std::io::copy(&mut s_in, &mut c_out);
                    let _ = c_out.shutdown(Shutdown::Both);
                });
            }
        });
        CutProxy {
            addr,
            cuts_done,
            target,
        }
    }

    pub(crate) fn url(&self) -> String {
        format!("http://{}", self.addr)
    }
}

// ---------- acceptance ----------

#[test]
fn ten_reports_through_a_connection_cut_twice_and_whole_through_the_station() {
    let s = TestServer::start();
    load_scenario(&s);
    let (bundle_id, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws1", &bundle);
    record_events(&ws, 10, 1);

    let proxy = CutProxy::start(s.addr, vec![150_000, 700_000]);
    let summary = push(
        &ws,
        &proxy.url(),
        Some(&groundproof_e2e::admin_token(&s)),
        &fast_push(),
    )
    .expect("push completes through the cuts");
    assert_eq!(
        proxy.cuts_done.load(Ordering::SeqCst),
        2,
        "the proxy cut twice"
    );
    assert!(summary.retries >= 2, "{summary:?}");
    assert_eq!(
        (summary.accepted, summary.duplicate, summary.rejected.len()),
        (10, 0, 0)
    );

    let rows = facts(&s.db);
    assert_eq!(rows.len(), 10);
    assert!(
        rows.iter()
            .all(|r| r.bundle_id == bundle_id && r.kind == groundproof::domain::TargetKind::Event)
    );
    assert!(
        rows.iter().all(|r| r.evidence_ok && r.flags.is_empty()),
        "{rows:#?}"
    );
    let shas = s.db.read(|r| r.photo_shas()).unwrap();
    assert_eq!(shas.len(), 20, "each photo stored once");
    for r in &rows {
        let checks = s.db.read(|x| x.photo_checks(&r.report_id)).unwrap();
        assert_eq!(checks.len(), 2);
        for c in checks {
            assert!(c.distance_m.is_some_and(|d| d <= 100.0), "{c:?}");
            assert_eq!(
                (c.after_detection, c.inside_window, c.reused_elsewhere),
                (Some(true), Some(true), false)
            );
        }
    }
    assert_evidence_on_disk(&s.db, s.data_dir());
    // The results document is kept.
    let doc = get(&s.url(&format!("/api/v1/returns/{}", summary.return_id)));
    assert_eq!(doc.status, 200);
    assert_eq!(doc.json()["results"].as_array().unwrap().len(), 10);
    // Reports are listed per event, with photo links that serve JPEGs.
    let ev = rows[0].event_id.unwrap();
    let list = get(&s.url(&format!("/api/v1/events/{ev}/reports"))).json();
    let thumb = list["reports"][0]["photos"][0]["thumbnail"]
        .as_str()
        .unwrap()
        .to_string();
    let (st, bytes) = get_bytes(&s.url(&thumb));
    assert_eq!((st, &bytes[..2]), (200, &[0xFF, 0xD8][..]));

    // The station path: ten more reports, packed and posted whole.
    let ws2 = open_workspace(tmp.path(), "ws2", &bundle);
    let snap = Snapshot::load(&ws2).unwrap();
    assert_eq!(snap.events.len(), 10);
    record_events(&ws2, 10, 500);
    let zip = pack(&ws2, &tmp.path().join("station.zip"), false);
    let r = post_bytes(&s.url("/api/v1/returns"), "application/zip", &zip);
    assert_eq!(r.status, 200, "{}", r.body);
    let res = r.json();
    let statuses: Vec<&str> = res["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x["status"].as_str().unwrap())
        .collect();
    assert_eq!(statuses, vec!["accepted"; 10]);
    assert_eq!(facts(&s.db).len(), 20);
    assert_eq!(s.db.read(|r| r.photo_shas()).unwrap().len(), 40);
    assert_evidence_on_disk(&s.db, s.data_dir());
}

// ---------- idempotency and order ----------

/// The SQLite files of one data directory copied into another.
pub(crate) fn copy_data(from: &Path, to: &Path) {
    groundproof_e2e::copy_sqlite(from, to);
}

fn take_in_bytes(db: &Db, data: &Path, zip: &[u8]) -> groundproof::intake::ReturnDocument {
    let opts = groundproof::intake::IntakeOptions::default();
    let mut f = groundproof::intake::uploads::IncomingFile::new(data, 1 << 30).unwrap();
    f.write(zip).unwrap();
    groundproof::intake::uploads::take_in_whole(db, data, &opts, f).expect("taken in")
}

#[test]
fn the_same_package_three_times_and_packages_in_any_order_give_the_same_state() {
    let mut s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let pristine = s.snapshot_db(&tmp.path().join("pristine"));

    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 3, 1);
    let p1 = pack(&ws, &tmp.path().join("p1.zip"), false);
    record_events_from(&ws, 3, 3, 100);
    let p2 = pack(&ws, &tmp.path().join("p2.zip"), true); // overlaps p1
    let ws_b = open_workspace(tmp.path(), "wsb", &bundle);
    record_events(&ws_b, 2, 900);
    let p3 = pack(&ws_b, &tmp.path().join("p3.zip"), false);

    // Three times the same package over HTTP: one set of rows, same answer.
    let first = post_bytes(&s.url("/api/v1/returns"), "application/zip", &p1);
    assert_eq!(first.status, 200, "{}", first.body);
    let state = canonical(&s.db);
    for _ in 0..2 {
        let again = post_bytes(&s.url("/api/v1/returns"), "application/zip", &p1);
        assert_eq!(again.body, first.body);
        assert_eq!(canonical(&s.db), state);
    }
    // p2 holds p1's three reports again: duplicates.
    let r2 = post_bytes(&s.url("/api/v1/returns"), "application/zip", &p2).json();
    let dup = r2["results"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|x| x["status"] == "duplicate")
        .count();
    assert_eq!(dup, 3);

    // Orders of the three packages on copies of the same starting database.
    let orders: [[usize; 3]; 4] = [[0, 1, 2], [2, 1, 0], [1, 0, 2], [1, 2, 0]];
    let packages = [&p1, &p2, &p3];
    let mut states = Vec::new();
    for (k, order) in orders.iter().enumerate() {
        let dir = tmp.path().join(format!("order-{k}"));
        let db = pristine.open_copy(&dir);
        for &i in order {
            take_in_bytes(&db, &dir, packages[i]);
        }
        assert_eq!(facts(&db).len(), 8);
        assert_evidence_on_disk(&db, &dir);
        states.push(canonical(&db));
    }
    assert!(
        states.windows(2).all(|w| w[0] == w[1]),
        "order changed the stored state"
    );
}

/// Like [`record_events`] for events `skip..skip + n`.
pub(crate) fn record_events_from(ws: &Path, skip: usize, n: usize, seed: u64) {
    let snap = Snapshot::load(ws).unwrap();
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    for (i, e) in snap.events.iter().skip(skip).take(n).enumerate() {
        let a = photo(ws, seed + 2 * i as u64, e.lat, e.lon, when);
        let b = photo(ws, seed + 2 * i as u64 + 1, e.lat, e.lon, when);
        field(&[
            "--workspace",
            ws.to_str().unwrap(),
            "report",
            &e.code,
            "--outcome",
            "confirmed",
            "--cause",
            "fire",
            "--photo",
            a.to_str().unwrap(),
            b.to_str().unwrap(),
        ]);
    }
}

// ---------- hostile and broken packages ----------

fn outbox_reports(ws: &Path) -> Vec<Report> {
    groundproof_sync::outbox::Outbox::open(ws)
        .unwrap()
        .reports()
        .unwrap()
        .into_iter()
        .map(|r| r.report)
        .collect()
}

fn hex(b: &[u8]) -> String {
    b.iter().map(|x| format!("{x:02x}")).collect()
}

fn key_of(ws: &Path) -> (String, [u8; 32]) {
    let k = Snapshot::load(ws).unwrap().upload_key().unwrap();
    (k.key_id, k.key)
}

/// A signed return made by hand: `entries` (name, bytes, deflate) listed in
/// a manifest with `listed` sizes (default: the real ones).
pub(crate) fn signed_zip(
    ws: &Path,
    entries: &[(&str, Vec<u8>, bool)],
    reports: u32,
    photos: u32,
) -> Vec<u8> {
    let snap = Snapshot::load(ws).unwrap();
    let (key_id, key) = key_of(ws);
    let listed: Vec<_> = entries
        .iter()
        .map(|(n, b, _)| {
            let p = std::env::temp_dir().join(format!("gp-intake-{}", std::process::id()));
            std::fs::write(&p, b).unwrap();
            let (sha, size) = sha256_file(&p).unwrap();
            json!({"name": n, "sha256": sha, "size": size})
        })
        .collect();
    let manifest = serde_json::to_vec(&json!({
        "format": "groundproof-return", "format_version": 1, "bundle_id": snap.bundle_id,
        "upload_key_id": key_id, "team": snap.team, "created_at": "2026-01-01T00:00:00Z",
        "checklist_version": 1, "report_count": reports, "photo_count": photos, "entries": listed
    }))
    .unwrap();
    let mac = groundproof_sync::returns::hmac_sha256(&key, &manifest);
    let sig = serde_json::to_vec(
        &json!({"algorithm": "HMAC-SHA256", "key_id": key_id, "mac": hex(&mac)}),
    )
    .unwrap();
    let mut out = std::io::Cursor::new(Vec::new());
    {
        let mut z = zip::ZipWriter::new(&mut out);
        let mut all: Vec<(&str, Vec<u8>, bool)> = entries.to_vec();
        all.push(("return-manifest.json", manifest, false));
        all.push(("signature.json", sig, false));
        for (name, bytes, deflate) in all {
            let method = if deflate {
                zip::CompressionMethod::Deflated
            } else {
                zip::CompressionMethod::Stored
            };
            let opts = zip::write::SimpleFileOptions::default().compression_method(method);
            z.start_file(name, opts).unwrap();
            z.write_all(&bytes).unwrap();
        }
        z.finish().unwrap();
    }
    out.into_inner()
}

pub(crate) fn post_zip(s: &TestServer, zip: &[u8]) -> groundproof_e2e::Reply {
    post_bytes(&s.url("/api/v1/returns"), "application/zip", zip)
}

fn nothing_stored(s: &TestServer) {
    assert!(facts(&s.db).is_empty());
    assert!(s.db.read(|r| r.photo_shas()).unwrap().is_empty());
    let ev = s.data_dir().join("evidence");
    let files = walk(&ev);
    assert!(files.is_empty(), "{files:?}");
}

fn walk(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    if let Ok(it) = std::fs::read_dir(dir) {
        for e in it.flatten() {
            let p = e.path();
            if p.is_dir() {
                out.extend(walk(&p));
            } else {
                out.push(p);
            }
        }
    }
    out
}

/// A JPEG whose frame header declares 65535 x 65535 pixels.
fn huge_header_jpeg(small: &[u8]) -> Vec<u8> {
    let mut b = small.to_vec();
    let i = b
        .windows(2)
        .position(|w| w == [0xFF, 0xC0])
        .expect("baseline SOF0");
    // SOF0: FFC0, length (2), precision (1), height (2), width (2).
    b[i + 5..i + 9].copy_from_slice(&[0xFF, 0xFF, 0xFF, 0xFF]);
    b
}

#[test]
fn bad_photos_bad_signatures_and_bad_archives_are_refused_with_reasons() {
    let s = TestServer::start();
    load_scenario(&s);
    let (bundle_id, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 2, 1);
    let good = outbox_reports(&ws);
    let snap = Snapshot::load(&ws).unwrap();
    let (key_id, key) = key_of(&ws);
    let header = ReturnHeader {
        bundle_id: snap.bundle_id,
        team: snap.team.clone(),
        checklist_version: 1,
        created_at: chrono::Utc::now(),
        camera_zone: None,
    };
    let ob = groundproof_sync::outbox::Outbox::open(&ws).unwrap();
    let mut photos: Vec<PathBuf> = good
        .iter()
        .flat_map(|r| r.photos.iter().map(|p| ob.photo_path(&p.sha256)))
        .collect();

    // --- Path traversal, ZIP bomb, garbled JSON, forged signature: whole package refused. ---
    let traversal = signed_zip(
        &ws,
        &[
            ("reports.json", b"[]".to_vec(), false),
            ("../evil.txt", b"x".to_vec(), false),
        ],
        0,
        0,
    );
    let r = post_zip(&s, &traversal);
    assert_eq!(r.status, 422, "{}", r.body);
    assert!(r.body.contains("evil.txt"), "{}", r.body);
    let bomb = signed_zip(&ws, &[("reports.json", vec![b' '; 64 << 20], true)], 0, 0);
    assert!(bomb.len() < 1 << 20, "the bomb is small: {}", bomb.len());
    let r = post_zip(&s, &bomb);
    assert_eq!(r.status, 422, "{}", r.body);
    assert!(r.body.contains("reports.json"), "{}", r.body);
    let garbled = signed_zip(
        &ws,
        &[("reports.json", b"[{\"report_id\": \"".to_vec(), false)],
        1,
        0,
    );
    let r = post_zip(&s, &garbled);
    assert_eq!(r.status, 422, "{}", r.body);
    assert!(r.body.contains("reports.json"), "{}", r.body);
    let forged_path = tmp.path().join("forged.zip");
    let wrong = groundproof_sync::bundle::UploadKey {
        key_id: key_id.clone(),
        key: [7u8; 32],
    };
    pack_return(
        std::fs::File::create(&forged_path).unwrap(),
        &header,
        &wrong,
        &good,
        &photos,
    )
    .unwrap();
    let r = post_zip(&s, &std::fs::read(&forged_path).unwrap());
    assert_eq!(r.status, 403, "{}", r.body);
    assert!(r.body.contains("signature"), "{}", r.body);
    nothing_stored(&s);

    // --- One corrupt photo and one pixel flood: those reports refused, the rest kept. ---
    let ok_photo = std::fs::read(&photos[0]).unwrap();
    // A broken Huffman table: the 16 code-length counts of the first DHT
    // segment (FFC4, length, class/id, counts) all set to 255, far more
    // codes than 16-bit code lengths allow (ITU-T T.81 Annex C).
    let mut corrupt = ok_photo.clone();
    let dht = corrupt
        .windows(2)
        .position(|w| w == [0xFF, 0xC4])
        .expect("a DHT segment");
    corrupt[dht + 5..dht + 21].copy_from_slice(&[0xFF; 16]);
    let corrupt_path = tmp.path().join("corrupt.jpg");
    std::fs::write(&corrupt_path, &corrupt).unwrap();
    let flood_path = tmp.path().join("flood.jpg");
    std::fs::write(&flood_path, huge_header_jpeg(&ok_photo)).unwrap();
    let mut reports = good.clone();
    for (i, (path, id)) in [
        (&corrupt_path, "00000000-0000-4000-8000-00000000000a"),
        (&flood_path, "00000000-0000-4000-8000-00000000000b"),
    ]
    .into_iter()
    .enumerate()
    {
        let (sha, _) = sha256_file(path).unwrap();
        let mut r = good[i].clone();
        r.report_id = id.parse().unwrap();
        r.photos[0].sha256 = sha;
        r.photos[0].original_name = format!("bad-{i}.jpg");
        r.photos.truncate(1);
        r.outcome = "inconclusive".into();
        r.cause = None;
        reports.push(r);
        photos.push(path.clone());
    }
    let mixed_path = tmp.path().join("mixed.zip");
    pack_return(
        std::fs::File::create(&mixed_path).unwrap(),
        &header,
        &groundproof_sync::bundle::UploadKey {
            key_id: key_id.clone(),
            key,
        },
        &reports,
        &photos,
    )
    .unwrap();
    let r = post_zip(&s, &std::fs::read(&mixed_path).unwrap());
    assert_eq!(r.status, 200, "{}", r.body);
    let doc = r.json();
    let results = doc["results"].as_array().unwrap();
    let by_id = |id: &str| {
        results
            .iter()
            .find(|x| x["report_id"] == id)
            .unwrap()
            .clone()
    };
    let a = by_id("00000000-0000-4000-8000-00000000000a");
    assert_eq!(a["status"], "rejected");
    assert!(a["reason"].as_str().unwrap().contains("bad-0.jpg"), "{a}");
    let b = by_id("00000000-0000-4000-8000-00000000000b");
    assert_eq!(b["status"], "rejected");
    assert!(b["reason"].as_str().unwrap().contains("65535x65535"), "{b}");
    assert_eq!(
        results.iter().filter(|x| x["status"] == "accepted").count(),
        2
    );
    assert_eq!(facts(&s.db).len(), 2);
    assert_eq!(
        s.db.read(|r| r.photo_shas()).unwrap().len(),
        4,
        "no bad photo stored"
    );
    assert_evidence_on_disk(&s.db, s.data_dir());
    assert_eq!(
        walk(&s.data_dir().join("evidence")).len(),
        8,
        "4 photos + 4 thumbnails, nothing else"
    );

    // --- A report naming an event outside the bundle is rejected with a reason. ---
    let mut stray = good[0].clone();
    stray.report_id = "00000000-0000-4000-8000-00000000000c".parse().unwrap();
    if let groundproof_sync::returns::Target::Event { code, .. } = &mut stray.target {
        *code = "K9999".into();
    }
    let stray_path = tmp.path().join("stray.zip");
    let keep: Vec<PathBuf> = stray
        .photos
        .iter()
        .map(|p| ob.photo_path(&p.sha256))
        .collect();
    pack_return(
        std::fs::File::create(&stray_path).unwrap(),
        &header,
        &groundproof_sync::bundle::UploadKey {
            key_id: key_id.clone(),
            key,
        },
        std::slice::from_ref(&stray),
        &keep,
    )
    .unwrap();
    let r = post_zip(&s, &std::fs::read(&stray_path).unwrap()).json();
    assert_eq!(r["results"][0]["status"], "rejected");
    assert!(
        r["results"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("K9999"),
        "{r}"
    );

    // --- A cancelled bundle's key is refused. ---
    let c = post_json(
        &s.url(&format!("/api/v1/bundles/{bundle_id}/cancel")),
        &json!({}),
    );
    assert_eq!(c.status, 200, "{}", c.body);
    record_events_from(&ws, 2, 1, 77);
    let r = push(
        &ws,
        &s.url(""),
        Some(&groundproof_e2e::admin_token(&s)),
        &fast_push(),
    );
    let err = r
        .expect_err("a cancelled bundle's push is refused")
        .to_string();
    assert!(err.contains("cancelled"), "{err}");
    assert_eq!(facts(&s.db).len(), 2);
}

// ---------- evidence flags ----------

#[test]
fn a_far_photo_and_a_photo_from_before_the_detection_are_flagged_not_rejected() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    let snap = Snapshot::load(&ws).unwrap();
    let e = &snap.events[0];
    let soon = chrono::Utc::now() + chrono::Duration::minutes(1);
    let first = chrono::NaiveDate::parse_from_str(&e.first_detected, "%Y-%m-%d").unwrap();
    let before = first.and_hms_opt(8, 0, 0).unwrap().and_utc() - chrono::Duration::days(5);
    // 0.01 degree of latitude north is about 1.1 km (1 degree of latitude is
    // about 110.6 km, common practice), far beyond the 100 m tolerance.
    let far = photo(&ws, 1, e.lat + 0.01, e.lon, soon);
    let old = photo(&ws, 2, e.lat, e.lon, before);
    let at = format!("{},{}", e.lat, e.lon);
    field(&[
        "--workspace",
        ws.to_str().unwrap(),
        "report",
        &e.code,
        "--outcome",
        "confirmed",
        "--cause",
        "logging_road",
        "--at",
        &at,
        "--time",
        &rfc(soon),
        "--photo",
        far.to_str().unwrap(),
        old.to_str().unwrap(),
    ]);
    let (far_sha, _) = sha256_file(&far).unwrap();
    let (old_sha, _) = sha256_file(&old).unwrap();
    let summary = push(
        &ws,
        &s.url(""),
        Some(&groundproof_e2e::admin_token(&s)),
        &fast_push(),
    )
    .unwrap();
    assert_eq!(summary.accepted, 1, "flagged, not rejected");
    let rows = facts(&s.db);
    assert_eq!(rows.len(), 1);
    let r = &rows[0];
    assert!(!r.evidence_ok);
    assert!(
        r.distance_m.is_some_and(|d| d <= 100.0),
        "the reported position is fine: {r:?}"
    );
    assert!(
        r.flags
            .contains(&format!("photo_far_from_target:{far_sha}")),
        "{:?}",
        r.flags
    );
    assert!(
        r.flags
            .contains(&format!("photo_before_detection:{old_sha}")),
        "{:?}",
        r.flags
    );
    assert!(
        r.flags.contains(&format!("photo_outside_window:{old_sha}")),
        "{:?}",
        r.flags
    );
    assert!(
        !r.flags
            .iter()
            .any(|f| f.contains("far") && f.contains(&old_sha)),
        "{:?}",
        r.flags
    );
    let checks = s.db.read(|x| x.photo_checks(&r.report_id)).unwrap();
    let far_check = checks.iter().find(|c| c.sha256 == far_sha).unwrap();
    let d = far_check.distance_m.unwrap();
    assert!(d > 900.0 && d < 1200.0, "{d}");
    let old_check = checks.iter().find(|c| c.sha256 == old_sha).unwrap();
    assert_eq!(
        (old_check.after_detection, old_check.inside_window),
        (Some(false), Some(false))
    );
}

// ---------- kill -9 during intake ----------

/// `target/<profile>/groundproof`, next to the test executable's folder,
/// brought up to date once per test process by `cargo build --workspace
/// --tests` (cargo builds a dependency's binaries only for that package's
/// own tests, and a stale one would refuse the newer schema). The whole
/// workspace's test build, not `-p groundproof-server`: that one unifies
/// features differently and recompiled the TLS dependencies in the middle
/// of the suite, where after `cargo test --workspace` this is a no-op.
pub(crate) fn binary() -> PathBuf {
    static BUILT: std::sync::OnceLock<PathBuf> = std::sync::OnceLock::new();
    BUILT
        .get_or_init(|| {
            let exe = std::env::current_exe().unwrap();
            let dir = exe.parent().unwrap().parent().unwrap();
            let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".into());
            let mut args = vec!["build", "--workspace", "--tests"];
            if dir.ends_with("release") {
                args.push("--release");
            }
            let st = std::process::Command::new(cargo)
                .args(&args)
                .status()
                .unwrap();
            assert!(st.success(), "building the groundproof binary");
            dir.join("groundproof")
        })
        .clone()
}

/// Starts `groundproof serve` on a random loopback port with more
/// arguments after `serve` and more environment; returns the child and its
/// address.
pub(crate) fn spawn_server_with(
    data: &Path,
    args: &[&str],
    envs: &[(&str, String)],
) -> (std::process::Child, SocketAddr) {
    let mut child = std::process::Command::new(binary())
        .args([
            "serve",
            "--data",
            data.to_str().unwrap(),
            "--bind",
            "127.0.0.1:0",
        ])
        .args(args)
        .envs(envs.iter().map(|(k, v)| (*k, v.as_str())))
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("the groundproof binary starts (cargo builds it for the tests)");
    let mut out = child.stdout.take().unwrap();
    let mut text = String::new();
    let mut buf = [0u8; 256];
    let deadline = Instant::now() + Duration::from_secs(30);
    // The first run prints the admin's password before the address line.
    while !text
        .split("http://")
        .nth(1)
        .is_some_and(|t| t.contains('\n'))
        && Instant::now() < deadline
    {
        let n = out.read(&mut buf).unwrap_or(0);
        if n == 0 {
            break;
        }
        text.push_str(&String::from_utf8_lossy(&buf[..n]));
    }
    let addr = text
        .split("http://")
        .nth(1)
        .and_then(|t| t.split('/').next())
        .and_then(|a| a.parse().ok())
        .unwrap_or_else(|| panic!("no address in {text:?}"));
    // Keep draining stdout so the server never blocks on a full pipe.
    std::thread::spawn(move || {
        let _ = std::io::copy(&mut out, &mut std::io::sink());
    });
    (child, addr)
}

#[test]
fn kill_9_during_intake_loses_no_acknowledged_report_and_leaves_no_half_rows() {
    // Prepare a data directory with a bundle through the in-process server.
    let tmp = tempfile::tempdir().unwrap();
    let data = tmp.path().join("data");
    let (bundle, token, database) = {
        let s = TestServer::start();
        load_scenario(&s);
        let (_, bundle) = issue_bundle(&s.url(""), "Team Amber");
        // The SQLite files are copied; a PostgreSQL database stays where it is.
        groundproof_e2e::copy_sqlite(s.data_dir(), &data);
        // The admin token is in the database too.
        (bundle, groundproof_e2e::admin_token(&s), s.database_args())
    };
    let database: Vec<&str> = database.iter().map(String::as_str).collect();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 10, 1);

    let (mut child, addr) = spawn_server_with(&data, &database, &[]);
    let proxy = CutProxy::start(addr, vec![]);
    let url = proxy.url();
    let ws2 = ws.clone();
    let token2 = token.clone();
    let pusher = std::thread::spawn(move || {
        let mut o = fast_push();
        o.chunk_bytes = 16 << 10;
        push(&ws2, &url, Some(&token2), &o)
    });
    // Kill the server three times while the push runs, restarting it each time.
    for k in 0..3u64 {
        std::thread::sleep(Duration::from_millis(150 + 100 * k));
        child.kill().unwrap(); // SIGKILL
        child.wait().unwrap();
        let (c, a) = spawn_server_with(&data, &database, &[]);
        child = c;
        *proxy.target.lock().unwrap() = a;
    }
    let first = pusher.join().unwrap();
    // Push again (the outbox resends whatever was not acknowledged).
    let again = push(&ws, &proxy.url(), Some(&token), &fast_push());
    let acknowledged: Vec<String> = groundproof_sync::outbox::Outbox::open(&ws)
        .unwrap()
        .reports()
        .unwrap()
        .into_iter()
        .filter(|r| r.state == groundproof_sync::outbox::PushState::Acknowledged)
        .map(|r| r.report.report_id.to_string())
        .collect();
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(first.is_ok() || again.is_ok(), "{first:?} / {again:?}");
    assert_eq!(
        acknowledged.len(),
        10,
        "every report acknowledged in the end"
    );

    let db = match database.as_slice() {
        ["--database", url] => Db::open_postgres(url).unwrap(),
        _ => Db::open(&data).unwrap(),
    };
    assert_eq!(db.read(|r| r.integrity_check()).unwrap(), "ok");
    let cleaned = groundproof::intake::cleanup(&db, &data).unwrap();
    println!("clean-up after the kills: {cleaned:?}");
    let rows = facts(&db);
    let stored: Vec<String> = rows.iter().map(|r| r.report_id.clone()).collect();
    for id in &acknowledged {
        assert!(stored.contains(id), "acknowledged report {id} lost");
    }
    assert_eq!(rows.len(), 10, "no report stored twice");
    for r in &rows {
        assert_eq!(
            db.read(|x| x.report_photos(&r.report_id)).unwrap().len(),
            2,
            "no half rows"
        );
    }
    assert_evidence_on_disk(&db, &data);
    // After the clean-up, every evidence file is named by a photo row.
    let shas = db.read(|r| r.photo_shas()).unwrap();
    assert_eq!(walk(&data.join("evidence")).len(), 2 * shas.len());
}
