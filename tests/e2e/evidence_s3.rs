//! Evidence on an S3-compatible store (issue 15): the real server started
//! with `--evidence s3://gp-test/<prefix>` against the S3 test server that
//! `.ci/run` starts (s3s-fs on loopback, `GROUNDPROOF_TEST_S3`), each test
//! under a prefix of its own. Under `CI=true` the tests fail when that
//! server is missing.

use super::intake::{
    CutProxy, copy_data, facts, open_workspace, pack, record_events, record_events_from,
};
use super::s3::{S3, call, complete, read};
use groundproof::intake::layout::{chunk_key, incoming_key, photo_key, thumb_key, upload_prefix};
use groundproof::platform::storage::Db;
use groundproof_e2e::{TestServer, load_scenario, post_json_as};
use groundproof_sync::field::push;
use serde_json::json;
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use std::process::Child;
use std::time::Duration;

fn hex_sha(b: &[u8]) -> String {
    hex::encode(Sha256::digest(b))
}

/// A data directory with the scenario loaded (sources, zones, teams,
/// alerts) and an admin token for it.
fn prepared(root: &Path) -> (PathBuf, String) {
    let data = root.join("data");
    let s = TestServer::start();
    load_scenario(&s);
    copy_data(s.data_dir(), &data);
    (data, groundproof_e2e::admin_token(&s))
}

/// Issues a bundle for Team Amber through the server at `base`; its id and bytes.
fn issue(base: &str, token: &str) -> (String, Vec<u8>) {
    let station = mock_patrols::scenario().station;
    let r = post_json_as(
        &format!("{base}/api/v1/bundles"),
        Some(token),
        &json!({"team": "Team Amber", "zone": "Core", "max": 10,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let j = r.json();
    let id = j["bundle"]["bundle"]["id"].as_str().unwrap().to_string();
    let url = format!("{base}{}", j["download"].as_str().unwrap());
    let (st, bytes, _) = call("GET", &url, token, &[], b"");
    assert_eq!(st, 200);
    (id, bytes)
}

fn stop(mut child: Child) {
    child.kill().unwrap(); // SIGKILL
    child.wait().unwrap();
}

fn files_under(dir: &Path) -> usize {
    let Ok(it) = std::fs::read_dir(dir) else {
        return 0;
    };
    it.flatten()
        .map(|e| {
            if e.path().is_dir() {
                files_under(&e.path())
            } else {
                1
            }
        })
        .sum()
}

// A return with photos goes in through a server on S3; photos and
// thumbnails come back byte-identical; an upload begun on one server
// process continues on a second one after a kill -9 (its chunks are in the
// store, not on the first one's disk); objects no row names are removed
// when the second one starts. Failed before this change: `--evidence` was
// an unknown argument.
#[test]
fn evidence_on_s3_round_trip_resumable_across_processes_and_orphans() {
    let Some(s3) = S3::from_env() else { return };
    let store = s3.store();
    let tmp = tempfile::tempdir().unwrap();
    let (data, token) = prepared(tmp.path());
    let (a, addr) = s3.spawn(&data);
    let base = format!("http://{addr}");

    // The bundle is in the store (the row's SHA-256), not in the data directory.
    let (bundle, bytes) = issue(&base, &token);
    let db = Db::open(&data).unwrap();
    let row = db.read(|r| r.bundle(&bundle)).unwrap().unwrap();
    let kept = read(&store, &format!("bundles/{}.zip", row.file_sha256));
    assert_eq!(kept, bytes);
    assert_eq!(hex_sha(&kept), row.file_sha256);
    assert_eq!(row.file_name, format!("{}.zip", row.file_sha256));
    assert_eq!(files_under(&data.join("bundles")), 0);

    // A return of two reports with two photos each, pushed whole.
    let ws = open_workspace(tmp.path(), "ws", &bytes);
    record_events(&ws, 2, 41);
    let mut o = super::intake::fast_push();
    o.chunk_bytes = 32 << 10;
    push(&ws, &base, Some(&token), &o).expect("pushed");
    let shas = db.read(|r| r.photo_shas()).unwrap();
    assert_eq!(shas.len(), 4);
    for sha in &shas {
        let (st, photo, _) = call(
            "GET",
            &format!("{base}/api/v1/photos/{sha}/original"),
            &token,
            &[],
            b"",
        );
        assert_eq!(st, 200);
        // Content-addressed: the bytes served hash to their name, which is
        // the SHA-256 the field kit computed of the camera's file.
        assert_eq!(&hex_sha(&photo), sha);
        assert_eq!(photo, read(&store, &photo_key(sha)));
        let (st, thumb, _) = call(
            "GET",
            &format!("{base}/api/v1/photos/{sha}/thumbnail"),
            &token,
            &[],
            b"",
        );
        assert_eq!(st, 200);
        assert!(thumb.starts_with(&[0xFF, 0xD8]), "a JPEG thumbnail");
        assert_eq!(thumb, read(&store, &thumb_key(sha)));
    }
    let ret = db.read(|r| r.return_by_id(1)).unwrap().expect("return 1");
    assert!(store.exists(&incoming_key(&ret.sha256)).unwrap());
    assert_eq!(
        files_under(&data.join("evidence")),
        0,
        "no evidence on local disk"
    );
    assert_eq!(
        files_under(&data.join("returns")),
        0,
        "no package left on local disk"
    );

    // A second return through the resumable protocol: half on process A.
    record_events_from(&ws, 2, 2, 77);
    let zip = pack(&ws, &tmp.path().join("second.zip"), false);
    let sha = hex_sha(&zip);
    let r = post_json_as(
        &format!("{base}/api/v1/uploads"),
        Some(&token),
        &json!({"bundle_id": bundle, "size": zip.len(), "sha256": sha}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let id = r.json()["upload_id"].as_str().unwrap().to_string();
    let half = zip.len() / 2;
    let patch = |base: &str, at: usize, body: &[u8]| super::s3::patch(base, &token, &id, at, body);
    assert_eq!(patch(&base, 0, &zip[..half]), 204);
    assert_eq!(read(&store, &chunk_key(&id, 0)), &zip[..half]);
    assert_eq!(
        files_under(&data.join("uploads")),
        0,
        "chunks only in the store"
    );
    stop(a);

    // Orphans: a photo, a thumbnail, an upload's chunk and a bundle no row names.
    let ghost = "ee".repeat(32);
    let gone = [
        photo_key(&ghost),
        thumb_key(&ghost),
        chunk_key(&"f".repeat(32), 0),
        format!("bundles/{}.zip", uuid::Uuid::new_v4()),
    ];
    for k in &gone {
        store.put_bytes(k, b"orphan".to_vec()).unwrap();
    }

    // Process B on the same data directory and bucket.
    let (b, addr) = s3.spawn(&data);
    let base = format!("http://{addr}");
    for k in &gone {
        assert!(!store.exists(k).unwrap(), "{k} removed at start-up");
    }
    let url = format!("{base}/api/v1/uploads/{id}");
    let (st, _, offset) = call("HEAD", &url, &token, &[], b"");
    assert_eq!((st, offset), (204, Some(half.to_string())));
    assert_eq!(patch(&base, half, &zip[half..]), 204);
    assert_eq!(complete(&url, &token), ["accepted", "accepted"]);
    assert!(
        store.list(&upload_prefix(&id)).unwrap().is_empty(),
        "chunks go once kept"
    );
    assert!(store.exists(&incoming_key(&sha)).unwrap());
    assert_eq!(db.read(|r| r.photo_shas()).unwrap().len(), 8);
    // The first return's photos, served by B, unchanged.
    for sha in &shas {
        let (st, photo, _) = call(
            "GET",
            &format!("{base}/api/v1/photos/{sha}/original"),
            &token,
            &[],
            b"",
        );
        assert_eq!((st, hex_sha(&photo)), (200, sha.clone()));
    }
    stop(b);
}

// kill -9 of the server three times while a return is pushed through a
// server on S3: every acknowledged report is stored once, and no photo row
// names an object the store lacks (the object is put before the row
// commits). Failed before this change: `--evidence` was an unknown argument.
#[test]
fn kill_9_during_intake_on_s3_leaves_no_row_without_its_object() {
    let Some(s3) = S3::from_env() else { return };
    let store = s3.store();
    let tmp = tempfile::tempdir().unwrap();
    let (data, token) = prepared(tmp.path());
    let (mut child, addr) = s3.spawn(&data);
    let (_, bundle) = issue(&format!("http://{addr}"), &token);
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 6, 5);

    let proxy = CutProxy::start(addr, vec![]);
    let (ws2, url, token2) = (ws.clone(), proxy.url(), token.clone());
    let pusher = std::thread::spawn(move || {
        let mut o = super::intake::fast_push();
        o.chunk_bytes = 16 << 10;
        push(&ws2, &url, Some(&token2), &o)
    });
    for k in 0..3u64 {
        std::thread::sleep(Duration::from_millis(200 + 150 * k));
        stop(child);
        let (c, a) = s3.spawn(&data);
        child = c;
        *proxy.target.lock().unwrap() = a;
    }
    let first = pusher.join().unwrap();
    let again = push(&ws, &proxy.url(), Some(&token), &super::intake::fast_push());
    stop(child);
    assert!(first.is_ok() || again.is_ok(), "{first:?} / {again:?}");

    let db = Db::open(&data).unwrap();
    let rows = facts(&db);
    assert_eq!(rows.len(), 6, "every report stored once");
    for r in &rows {
        let photos = db.read(|x| x.report_photos(&r.report_id)).unwrap();
        assert_eq!(photos.len(), 2, "no half rows");
        for p in photos {
            assert_eq!(hex_sha(&read(&store, &photo_key(&p.sha256))), p.sha256);
            assert!(store.exists(&thumb_key(&p.sha256)).unwrap());
        }
    }
    // The clean-up leaves exactly the objects the rows name.
    groundproof::platform::evidence::install(&data, s3.store());
    groundproof::intake::cleanup(&db, &data).unwrap();
    let shas = db.read(|r| r.photo_shas()).unwrap();
    assert_eq!(store.list("evidence/").unwrap().len(), 2 * shas.len());
    assert!(store.list("uploads/").unwrap().is_empty());
}
