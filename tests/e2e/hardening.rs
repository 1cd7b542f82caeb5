//! Issue 12 ("Hardening") items 1 to 10, over HTTP against the real
//! server: upload ownership, budgets and DELETE; return results scoped to
//! the team by an unguessable receipt; one out-of-range number spoils only
//! its report; refused packages kept within a budget; a photo whose data
//! falls short of its header; JSON 413 and return wording; who may fetch a
//! bundle file and its record.

use crate::intake::{
    fast_push, issue_bundle, open_workspace, pack, post_zip, record_events, rfc, signed_zip,
};
use groundproof::platform::auth::{Role, issue_api_token, issue_team_token, now_unix};
use groundproof_e2e::{TestServer, bearer, get, get_as, load_scenario, post_json_as, request};
use groundproof_sync::field::push;
use serde_json::{Value, json};
use std::io::Read;
use std::path::Path;

/// Status, content type and body of one request with `token`.
fn call(
    method: &str,
    url: &str,
    token: &str,
    headers: &[(&str, &str)],
    body: &[u8],
) -> (u16, String, String) {
    let auth = bearer(token);
    let mut all = vec![("Authorization", auth.as_str())];
    all.extend_from_slice(headers);
    let a = request(method, url, &all, body);
    let ct = a.header("content-type").unwrap_or("").to_string();
    (a.status, ct, a.text())
}

fn create(s: &TestServer, token: &str, bundle: &str, size: u64, seed: u8) -> (u16, Value) {
    let sha = format!("{seed:02x}").repeat(32);
    let r = post_json_as(
        &s.url("/api/v1/uploads"),
        Some(token),
        &json!({"bundle_id": bundle, "size": size, "sha256": sha}),
    );
    let v = serde_json::from_str(&r.body).unwrap_or(Value::Null);
    (r.status, v)
}

fn stops(s: &TestServer, bundle: &str) -> usize {
    get(&s.url(&format!("/api/v1/bundles/{bundle}"))).json()["items"]
        .as_array()
        .map_or(0, Vec::len)
}

// Issue 12 item 1. Failed before the fix: another team's token created,
// asked, appended to and completed uploads of Team Basalt's bundle; there
// was no DELETE (405); a declared size was bounded only by 1 GiB; and Team
// Amber's eight 1 GiB uploads filled the server's 8 GiB so that Team
// Basalt heard 429.
#[test]
fn uploads_belong_to_their_team_have_budgets_and_can_be_ended() {
    let s = TestServer::start();
    load_scenario(&s);
    let base = s.url("");
    let (amber1, _) = issue_bundle(&base, "Team Amber");
    let (amber2, _) = issue_bundle(&base, "Team Amber");
    let (basalt, _) = issue_bundle(&base, "Team Basalt");
    let ta = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let tb = issue_team_token(&s.db, "Team Basalt", now_unix())
        .unwrap()
        .1;

    // Another team's bundle: refused at creation.
    assert_eq!(create(&s, &ta, &basalt, 1000, 1).0, 403);
    // Basalt's upload is invisible to Amber.
    let (st, v) = create(&s, &tb, &basalt, 1000, 2);
    assert_eq!(st, 201, "{v}");
    let url = s.url(&format!(
        "/api/v1/uploads/{}",
        v["upload_id"].as_str().unwrap()
    ));
    let patch = [
        ("Upload-Offset", "0"),
        ("Content-Type", "application/partial-upload"),
    ];
    assert_eq!(call("HEAD", &url, &ta, &[], b"").0, 404);
    assert_eq!(call("PATCH", &url, &ta, &patch, b"abc").0, 404);
    assert_eq!(
        call("POST", &format!("{url}/complete"), &ta, &[], b"").0,
        404
    );
    assert_eq!(call("DELETE", &url, &ta, &[], b"").0, 404);
    assert_eq!(call("HEAD", &url, &tb, &[], b"").0, 204);
    assert_eq!(call("PATCH", &url, &tb, &patch, b"abc").0, 204);
    // Its own team ends it: the upload and its data are gone.
    assert_eq!(call("DELETE", &url, &tb, &[], b"").0, 204);
    assert_eq!(call("HEAD", &url, &tb, &[], b"").0, 404);
    let parts = std::fs::read_dir(s.data_dir().join("uploads"))
        .unwrap()
        .count();
    assert_eq!(parts, 0);

    // A declared size beyond what the bundle could return (256 MiB + 128
    // MiB per stop): refused at creation.
    let n = stops(&s, &basalt);
    let plausible = (256u64 << 20) + n as u64 * (128 << 20);
    if plausible < 1 << 30 {
        assert_eq!(create(&s, &tb, &basalt, plausible + 1, 3).0, 413);
    }
    let (st, v) = create(&s, &tb, &basalt, plausible.min(1 << 30), 4);
    assert_eq!(st, 201, "{v}");
    // Made again (same bundle and SHA-256): the same upload; then ended.
    let (st, again) = create(&s, &tb, &basalt, plausible.min(1 << 30), 4);
    assert_eq!((st, &again["upload_id"]), (200, &v["upload_id"]));
    let url = s.url(&format!(
        "/api/v1/uploads/{}",
        v["upload_id"].as_str().unwrap()
    ));
    assert_eq!(call("DELETE", &url, &tb, &[], b"").0, 204);
    // Ending it again: it is gone.
    assert_eq!(call("DELETE", &url, &tb, &[], b"").0, 404);

    // Amber tries to hold 8 GiB: it gets its own 2 GiB, Basalt still sends.
    assert!(
        stops(&s, &amber1) >= 6 && stops(&s, &amber2) >= 6,
        "bundles of 6+ stops"
    );
    let mut granted = 0;
    for i in 0..8u8 {
        let b = if i % 2 == 0 { &amber1 } else { &amber2 };
        match create(&s, &ta, b, 1 << 30, 10 + i) {
            (201, _) => granted += 1,
            (429, v) => assert!(v["error"].as_str().unwrap().contains("open uploads"), "{v}"),
            (st, v) => panic!("{st} {v}"),
        }
    }
    assert_eq!(granted, 2);
    let (st, v) = create(&s, &tb, &basalt, 1 << 30, 30);
    assert!(st == 201 || (plausible < 1 << 30 && st == 413), "{st} {v}");
    assert_eq!(create(&s, &tb, &basalt, 1000, 31).0, 201);
}

// Issue 12 item 2. Failed before the fix: any team token read any return's
// results by its sequential number (Team Amber read Team Basalt's return).
#[test]
fn return_results_are_for_their_team_under_an_unguessable_receipt() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_bundle(&s.url(""), "Team Basalt");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 1, 7);
    let ta = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let tb = issue_team_token(&s.db, "Team Basalt", now_unix())
        .unwrap()
        .1;
    let summary = push(&ws, &s.url(""), Some(&tb), &fast_push()).expect("push");
    let by_number = s.url(&format!("/api/v1/returns/{}", summary.return_id));
    assert_eq!(get_as(&by_number, Some(&ta)).status, 404);
    assert_eq!(get_as(&by_number, Some(&tb)).status, 404);
    assert_eq!(get(&by_number).status, 200, "coordinators and admins may");
    let receipt =
        s.db.read(|r| r.return_receipt(summary.return_id))
            .unwrap()
            .expect("a receipt");
    assert_eq!(receipt.len(), 32);
    let by_receipt = s.url(&format!("/api/v1/returns/{receipt}"));
    let mine = get_as(&by_receipt, Some(&tb));
    assert_eq!(mine.status, 200, "{}", mine.body);
    assert_eq!(mine.json()["receipt"], receipt.as_str());
    assert_eq!(mine.json()["results"].as_array().unwrap().len(), 1);
    assert_eq!(get_as(&by_receipt, Some(&ta)).status, 404);
}

/// The entries of a packed return other than its manifest and signature.
fn entries_of(zip: &[u8]) -> Vec<(String, Vec<u8>)> {
    let mut z = zip::ZipArchive::new(std::io::Cursor::new(zip)).unwrap();
    let mut out = Vec::new();
    for i in 0..z.len() {
        let mut f = z.by_index(i).unwrap();
        let name = f.name().unwrap().to_string();
        if name == "return-manifest.json" || name == "signature.json" {
            continue;
        }
        let mut b = Vec::new();
        f.read_to_end(&mut b).unwrap();
        out.push((name, b));
    }
    out
}

/// The workspace's return packed again, signed, with `area_ha` of the
/// reports at `bad` written as 1e400 (a JSON number out of range of f64).
fn with_out_of_range_numbers(ws: &Path, packed: &[u8], bad: &[usize]) -> Vec<u8> {
    let mut entries = entries_of(packed);
    let photos = entries
        .iter()
        .filter(|e| e.0.starts_with("photos/"))
        .count();
    let reports = entries.iter_mut().find(|e| e.0 == "reports.json").unwrap();
    let mut items: Vec<Value> = serde_json::from_slice(&reports.1).unwrap();
    for &i in bad {
        items[i]["area_ha"] = json!(12345.5);
    }
    let n = items.len();
    reports.1 = serde_json::to_string(&items)
        .unwrap()
        .replace("12345.5", "1e400")
        .into_bytes();
    let list: Vec<(&str, Vec<u8>, bool)> = entries
        .iter()
        .map(|(n, b)| (n.as_str(), b.clone(), false))
        .collect();
    signed_zip(ws, &list, n as u32, photos as u32)
}

// Issue 12 items 10 and 3. Failed before the fix: the whole package was
// refused (422) and the good report lost; a package whose every report was
// rejected stayed in returns/incoming/ for ever.
#[test]
fn one_out_of_range_number_refuses_only_its_report() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    record_events(&ws, 2, 3);
    let packed = pack(&ws, &tmp.path().join("r.zip"), true);
    let order: Vec<Value> = serde_json::from_slice(
        &entries_of(&packed)
            .into_iter()
            .find(|e| e.0 == "reports.json")
            .unwrap()
            .1,
    )
    .unwrap();
    let bad_id = order[0]["report_id"].as_str().unwrap().to_string();

    let r = post_zip(&s, &with_out_of_range_numbers(&ws, &packed, &[0]));
    assert_eq!(r.status, 200, "{}", r.body);
    let doc = r.json();
    let results = doc["results"].as_array().unwrap();
    assert_eq!(results.len(), 2, "{doc}");
    for res in results {
        if res["report_id"] == bad_id.as_str() {
            assert_eq!(res["status"], "rejected");
            assert!(
                res["reason"]
                    .as_str()
                    .unwrap()
                    .contains("number out of range"),
                "{res}"
            );
        } else {
            assert_eq!(res["status"], "accepted", "{res}");
        }
    }

    // Every report out of range: nothing kept, the package goes to
    // returns/rejected/; its results still say why.
    let all_bad =
        with_out_of_range_numbers(&ws, &pack(&ws, &tmp.path().join("r2.zip"), true), &[0, 1]);
    let r = post_zip(&s, &all_bad);
    assert_eq!(r.status, 200, "{}", r.body);
    let doc = r.json();
    let sha = doc["sha256"].as_str().unwrap().to_string();
    assert!(
        doc["results"]
            .as_array()
            .unwrap()
            .iter()
            .all(|x| x["status"] != "accepted")
    );
    assert!(
        !s.data_dir()
            .join(format!("returns/incoming/{sha}.zip"))
            .exists()
    );
    assert!(
        s.data_dir()
            .join(format!("returns/rejected/{sha}.zip"))
            .exists()
    );
    let again = post_zip(&s, &all_bad);
    assert_eq!(again.json()["results"], doc["results"]);
}

// Issue 12 items 3 and 8. Failed before the fix: a refused package stayed
// in returns/rejected/ however old; the refusal spoke of "the bundle"; a
// JSON body over its bound was answered 413 in text/plain.
#[test]
fn refused_packages_are_kept_within_a_budget_and_refusals_speak_of_the_return() {
    let s = TestServer::start();
    load_scenario(&s);
    let (bundle_id, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    // A signed package without reports.json.
    let no_reports = signed_zip(&ws, &[], 0, 0);
    let r = post_zip(&s, &no_reports);
    assert_eq!(r.status, 422);
    let msg = r.json()["error"].as_str().unwrap().to_string();
    assert!(msg.contains("missing from the return"), "{msg}");
    assert!(!msg.contains("bundle"), "{msg}");
    let rejected = s.data_dir().join("returns/rejected");
    let first: Vec<_> = std::fs::read_dir(&rejected)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    assert_eq!(first.len(), 1);
    // Thirty days later another refusal: the old package is gone.
    let f = std::fs::File::options()
        .write(true)
        .open(&first[0])
        .unwrap();
    f.set_modified(std::time::SystemTime::now() - std::time::Duration::from_secs(30 * 86_400))
        .unwrap();
    let other = signed_zip(&ws, &[("notes.txt", b"x".to_vec(), false)], 0, 0);
    assert_eq!(post_zip(&s, &other).status, 422);
    assert!(!first[0].exists());
    assert_eq!(std::fs::read_dir(&rejected).unwrap().count(), 1);

    // A JSON body over 256 KiB: 413 as the documented JSON error.
    let big = json!({"bundle_id": bundle_id, "size": 5, "sha256": "a".repeat(300_000)});
    let token = groundproof_e2e::admin_token(&s);
    let (st, ct, body) = call(
        "POST",
        &s.url("/api/v1/uploads"),
        &token,
        &[("Content-Type", "application/json")],
        &serde_json::to_vec(&big).unwrap(),
    );
    assert_eq!(st, 413, "{body}");
    assert!(ct.starts_with("application/json"), "{ct}: {body}");
    let v: Value = serde_json::from_str(&body).unwrap();
    assert!(v["error"].as_str().is_some_and(|e| !e.is_empty()), "{v}");
}

/// A real 320 x 240 JPEG with EXIF whose frame header says 12000 x 8000.
fn short_data_jpeg(dir: &Path, seed: u64, lat: f64, lon: f64) -> std::path::PathBuf {
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let mut b = mock_patrols::photos::make_photo(
        seed,
        320,
        240,
        &mock_patrols::photos::PhotoMetaIn {
            taken_at_rfc3339: rfc(when),
            lat,
            lon,
            direction_deg: 90.0,
        },
    );
    let i = b.windows(2).position(|w| w == [0xFF, 0xC0]).expect("SOF0");
    b[i + 5..i + 9].copy_from_slice(&[0x1F, 0x40, 0x2E, 0xE0]); // 8000, 12000
    let p = dir.join(format!("short-{seed}.jpg"));
    std::fs::write(&p, b).unwrap();
    p
}

// Issue 12 item 5. Failed before the fix: the photo was stored as
// 12000 x 8000 and the report carried no flag.
#[test]
fn a_photo_whose_data_falls_short_of_its_header_is_stored_as_decoded_and_flagged() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    let snap = groundproof_sync::field::Snapshot::load(&ws).unwrap();
    let e = &snap.events[0];
    let short = short_data_jpeg(&ws, 99, e.lat, e.lon);
    let other = short_data_jpeg(&ws, 100, e.lat, e.lon);
    let args = vec![
        "groundproof-field",
        "--workspace",
        ws.to_str().unwrap(),
        "report",
        &e.code,
        "--outcome",
        "confirmed",
        "--cause",
        "mining",
        "--photo",
        short.to_str().unwrap(),
        other.to_str().unwrap(),
    ];
    let code = groundproof_sync::field::run(args.clone()).expect("field command runs");
    assert_eq!(code, std::process::ExitCode::SUCCESS, "{args:?}");
    let r = post_zip(&s, &pack(&ws, &tmp.path().join("r.zip"), true));
    assert_eq!(r.status, 200, "{}", r.body);
    let res = &r.json()["results"][0];
    assert_eq!(res["status"], "accepted", "{res}");
    let sha = groundproof_sync::returns::sha256_file(&short).unwrap().0;
    let flag = format!("photo_header_mismatch:{sha}");
    assert!(
        res["flags"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f == flag.as_str()),
        "{res}"
    );
    let row = s.db.read(|r| r.photo(&sha)).unwrap().expect("photo row");
    assert!(!row.data_matches_header);
    assert!(
        u64::from(row.width) * u64::from(row.height) < 12_000 * 8_000 / 100,
        "{row:?}"
    );
}

// Issue 12 items 6 and 9. Failed before the fix: a manager downloaded the
// bundle file (and with it the team's upload key); the bundle's own team
// got 403 on the bundle's record.
#[test]
fn the_bundle_file_is_for_its_team_and_the_office_its_record_also_for_managers() {
    let s = TestServer::start();
    load_scenario(&s);
    let (id, _) = issue_bundle(&s.url(""), "Team Amber");
    let manager = issue_api_token(&s.db, Role::Manager, "m", now_unix())
        .unwrap()
        .1;
    let ta = issue_team_token(&s.db, "Team Amber", now_unix()).unwrap().1;
    let tb = issue_team_token(&s.db, "Team Basalt", now_unix())
        .unwrap()
        .1;
    let file = s.url(&format!("/api/v1/bundles/{id}/download"));
    let record = s.url(&format!("/api/v1/bundles/{id}"));
    assert_eq!(get_as(&file, Some(&manager)).status, 403);
    assert_eq!(get_as(&file, Some(&ta)).status, 200);
    assert_eq!(get(&file).status, 200);
    assert_eq!(get_as(&record, Some(&manager)).status, 200);
    let own = get_as(&record, Some(&ta));
    assert_eq!(own.status, 200, "{}", own.body);
    assert_eq!(own.json()["bundle"]["team"], "Team Amber");
    assert_eq!(get_as(&record, Some(&tb)).status, 404);
}
