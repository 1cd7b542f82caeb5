//! Issued bundles are evidence under content-addressed keys (issue 15):
//! `bundles/<sha256>.zip`, the row keeping that name; a bundle stored under
//! its id by an earlier release (`bundles/<bundle id>.zip`) is still served
//! and survives the start-up clean-up.

use groundproof::platform::storage::NewBundle;
use groundproof_e2e::{TestServer, admin_token, load_scenario, post_json};
use serde_json::json;
use sha2::{Digest, Sha256};

/// Downloads bundle `id`: status, bytes and the `Content-Disposition` header.
fn download(s: &TestServer, id: &str) -> (u16, Vec<u8>, String) {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let mut r = agent
        .get(&s.url(&format!("/api/v1/bundles/{id}/download")))
        .header("Authorization", format!("Bearer {}", admin_token(s)))
        .call()
        .expect("request reaches the server");
    let disposition = r
        .headers()
        .get("content-disposition")
        .and_then(|v| v.to_str().ok())
        .unwrap_or_default()
        .to_string();
    let bytes = r.body_mut().read_to_vec().unwrap_or_default();
    (r.status().as_u16(), bytes, disposition)
}

fn files_in(dir: &std::path::Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

// Failed before this change: the file and the row's name were
// `<bundle id>.zip`.
#[test]
fn a_bundle_is_stored_under_its_sha256_and_one_stored_under_its_id_is_still_served() {
    let mut s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 3,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let id = r.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string();
    let (status, bytes, disposition) = download(&s, &id);
    assert_eq!(status, 200);
    let sha = hex::encode(Sha256::digest(&bytes));
    let row = s.db.read(|r| r.bundle(&id)).unwrap().unwrap();
    assert_eq!(row.file_sha256, sha);
    assert_eq!(row.file_name, format!("{sha}.zip"), "the row keeps the key");
    let dir = s.data_dir().join("bundles");
    assert_eq!(files_in(&dir), [format!("{sha}.zip")]);
    // Saved by the browser under the bundle's id, as before.
    assert_eq!(disposition, format!("attachment; filename=\"{id}.zip\""));

    // A bundle an earlier release stored under its id.
    let old = uuid::Uuid::new_v4().to_string();
    let old_bytes = b"PK\x05\x06 a bundle of an earlier release".to_vec();
    std::fs::write(dir.join(format!("{old}.zip")), &old_bytes).unwrap();
    let team =
        s.db.read(|r| r.team_by_name("Team Amber"))
            .unwrap()
            .unwrap();
    let now = chrono::Utc::now();
    let (issued, due, expires) = (
        now.to_rfc3339(),
        (now + chrono::Duration::days(5)).to_rfc3339(),
        (now + chrono::Duration::days(30)).to_rfc3339(),
    );
    let file_name = format!("{old}.zip");
    let old_sha = hex::encode(Sha256::digest(&old_bytes));
    s.db.write(|tx| {
        tx.insert_bundle(&NewBundle {
            id: &old,
            team_id: team.id,
            mode: "response",
            issued_at: &issued,
            due_at: &due,
            expires_at: &expires,
            seed: None,
            margin: None,
            selection: "{}",
            start: (station.0, station.1),
            route_m: 0.0,
            upload_key_id: "k-earlier-release",
            upload_key: &[7u8; 32],
            file_name: &file_name,
            file_sha256: &old_sha,
            file_size: old_bytes.len() as u64,
            items: &[],
        })
    })
    .unwrap();
    // The start-up clean-up runs again and keeps both files.
    s.restart();
    assert_eq!(files_in(&dir), {
        let mut v = vec![format!("{sha}.zip"), file_name.clone()];
        v.sort();
        v
    });
    let (status, served, _) = download(&s, &old);
    assert_eq!((status, served), (200, old_bytes));
    let (status, served, _) = download(&s, &id);
    assert_eq!((status, served), (200, bytes));
}
