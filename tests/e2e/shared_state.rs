//! Several instances behind one address behave as one service (issue 15):
//! two real server processes on one PostgreSQL scratch database, each with
//! a data directory of its own. A settings change saved through one is in
//! force on the other within seconds (and the first start takes an older
//! data directory's `settings.toml` in); a station entry started through
//! one continues and is saved through the other, its photos in one S3
//! prefix. PostgreSQL is `GROUNDPROOF_TEST_POSTGRES` (`.ci/postgres.sh`),
//! the S3 test server `GROUNDPROOF_TEST_S3` (`.ci/run`); under `CI=true`
//! the tests fail when either is missing.

use crate::intake::{issue_bundle, open_workspace, spawn_server_with};
use crate::station_entry::{camera_photo, kv, multipart, photos_in, sha, text_of};
use groundproof::platform::auth::{Role, issue_api_token, now_unix};
use groundproof::platform::evidence::Evidence;
use groundproof::platform::storage::{Db, scratch_postgres};
use groundproof_e2e::{Reply, get, load_scenario_at, missing, post_bytes, use_token};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::field::Snapshot;
use std::path::Path;
use std::process::Child;
use std::time::{Duration, Instant};

/// A new database on the test PostgreSQL server; `None` (after `missing`,
/// which fails under CI) when there is none.
fn database() -> Option<String> {
    match std::env::var("GROUNDPROOF_TEST_POSTGRES") {
        Ok(url) if !url.trim().is_empty() => {
            Some(scratch_postgres(url.trim()).expect("a new PostgreSQL database"))
        }
        _ => {
            missing(
                "GROUNDPROOF_TEST_POSTGRES is not set (a PostgreSQL server; .ci/postgres.sh starts one)",
            );
            None
        }
    }
}

/// The S3 test server under a new prefix: `--evidence`, the environment a
/// server needs (the store's default grace for orphans: two instances), and
/// the store as this test reads it.
struct SharedStore {
    location: String,
    envs: Vec<(&'static str, String)>,
    store: Evidence,
}

fn s3() -> Option<SharedStore> {
    let s3 = crate::s3::S3::from_env()?;
    Some(SharedStore {
        location: s3.location(),
        envs: s3.store_envs(),
        store: s3.store(),
    })
}

/// A server process, killed when dropped.
struct Instance {
    child: Child,
    base: String,
}

impl Drop for Instance {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start(data: &Path, database: &str, evidence: &str, envs: &[(&str, String)]) -> Instance {
    let args = ["--database", database, "--evidence", evidence];
    let (child, addr) = spawn_server_with(data, &args, envs);
    Instance {
        child,
        base: format!("http://{addr}"),
    }
}

/// An admin API token in the shared database, sent by the helpers to both.
fn admin_token_for(database: &str, instances: &[&Instance]) {
    let db = Db::open_postgres(database).expect("the shared database opens");
    let (_, token) =
        issue_api_token(&db, Role::Admin, "shared-state test", now_unix()).expect("token");
    for i in instances {
        use_token(&i.base, &token);
    }
}

fn post_form(url: &str, fields: &[(String, String)]) -> Reply {
    post_bytes(
        url,
        "application/x-www-form-urlencoded",
        groundproof_e2e::form_body(fields).as_bytes(),
    )
}

/// The settings form with `tolerance` and `time_zone`, the rest as defaults.
fn settings_form(tolerance: &str, time_zone: &str) -> Vec<(String, String)> {
    [
        ("area", "0.3"),
        ("recency", "0.25"),
        ("corroboration", "0.2"),
        ("confidence", "0.1"),
        ("zone", "0.15"),
        ("area_ref_ha", "10"),
        ("recency_days", "30"),
        ("tolerance_m", tolerance),
        ("time_zone", time_zone),
        ("default_language", "en"),
    ]
    .iter()
    .map(|(k, v)| kv(k, v))
    .collect()
}

/// Waits up to `limit` for the settings page of `i` to show tolerance
/// `metres`; how long it took.
fn until_tolerance(i: &Instance, metres: &str, limit: Duration) -> Option<Duration> {
    let t0 = Instant::now();
    while t0.elapsed() < limit {
        let page = get(&format!("{}/admin/settings", i.base));
        if page.body.contains(&format!("value=\"{metres}\"")) {
            return Some(t0.elapsed());
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    None
}

#[test]
fn a_settings_change_on_one_instance_is_in_force_on_the_other_within_seconds() {
    let Some(database) = database() else { return };
    let tmp = tempfile::tempdir().unwrap();
    let (data_a, data_b) = (tmp.path().join("a"), tmp.path().join("b"));
    // A data directory from before the settings were stored: its file is taken in.
    std::fs::create_dir_all(&data_a).unwrap();
    std::fs::write(
        data_a.join("settings.toml"),
        "[evidence]\ntolerance_m = 120.0\n",
    )
    .unwrap();
    let a = start(&data_a, &database, "local", &[]);
    let b = start(&data_b, &database, "local", &[]);
    admin_token_for(&database, &[&a, &b]);
    let took = until_tolerance(&b, "120", Duration::from_secs(10));
    assert!(
        took.is_some(),
        "B uses the settings A took in from its file"
    );
    let copy = std::fs::read_to_string(data_a.join("settings.toml")).unwrap();
    assert!(
        copy.starts_with("# Groundproof settings, version 1"),
        "{copy}"
    );

    // Saved through A, in force on B within a few seconds.
    let saved = post_form(
        &format!("{}/admin/settings", a.base),
        &settings_form("250", "Etc/GMT+4"),
    );
    // (The agent follows the 303 without the token: the login page.)
    assert_eq!(saved.status, 200, "{}", saved.body);
    let page = get(&format!("{}/admin/settings", a.base));
    assert!(
        page.body.contains("evidence.tolerance_m 120.0 → 250.0"),
        "{}",
        page.body
    );
    let took = until_tolerance(&b, "250", Duration::from_secs(5))
        .expect("B uses the change saved through A within 5 s");
    eprintln!("settings change on A in force on B after {took:?}");
    // Its pages show times in the new zone, and its copy of the settings follows.
    let page = get(&format!("{}/admin/settings", b.base));
    assert!(page.body.contains("(UTC-04:00)"), "{}", page.body);
    let copy_b = std::fs::read_to_string(data_b.join("settings.toml")).unwrap();
    assert!(copy_b.contains("tolerance_m = 250.0"), "{copy_b}");

    // A value refused on B changes nothing anywhere.
    let refused = post_form(
        &format!("{}/admin/settings", b.base),
        &settings_form("-1", "Etc/GMT+4"),
    );
    assert_eq!(refused.status, 400, "{}", refused.body);
    assert!(
        refused
            .body
            .contains("evidence.tolerance_m must be in (0, 100000] metres"),
        "{}",
        refused.body
    );
    std::thread::sleep(Duration::from_secs(1));
    assert!(until_tolerance(&a, "250", Duration::from_secs(1)).is_some());
    let db = Db::open_postgres(&database).unwrap();
    assert_eq!(db.read(|r| r.settings_version()).unwrap(), 2);
}

#[test]
fn a_station_entry_started_on_one_instance_continues_and_is_saved_on_the_other() {
    let Some(database) = database() else { return };
    let Some(SharedStore {
        location: evidence,
        envs,
        store,
    }) = s3()
    else {
        return;
    };
    let tmp = tempfile::tempdir().unwrap();
    let a = start(&tmp.path().join("a"), &database, &evidence, &envs);
    let b = start(&tmp.path().join("b"), &database, &evidence, &envs);
    admin_token_for(&database, &[&a, &b]);
    load_scenario_at(&a.base);
    let (trip, bundle) = issue_bundle(&a.base, "Team Amber");
    let snap = Snapshot::load(&open_workspace(tmp.path(), "ws", &bundle)).unwrap();
    let e1 = &snap.events[0];
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let p1 = camera_photo(11, e1.lat, e1.lon, when);
    let p2 = camera_photo(12, e1.lat, e1.lon, when + chrono::Duration::minutes(1));

    // Through A: the photos and the first stop.
    let up = post_bytes(
        &format!("{}/station/trips/{trip}/photos", a.base),
        "multipart/form-data; boundary=station-entry-boundary",
        &multipart(&[("P1.JPG", &p1), ("P2.JPG", &p2)]),
    );
    assert_eq!(up.status, 200, "{}", up.body);
    assert!(up.body.contains("2 photos added"), "{}", up.body);
    let cl = Checklist::default_v1();
    let mut fields = vec![
        kv("sheet", &groundproof::domain::sheet::sheet_id(&trip)),
        kv("local_offset", "+00:00"),
        kv(&format!("outcome.{}", e1.code), "confirmed"),
        kv(&format!("detail.{}", e1.code), &cl.causes[0]),
        kv(
            &format!("notes.{}", e1.code),
            "entered through the first server",
        ),
        kv("action", "keep"),
    ];
    let kept = post_form(&format!("{}/station/trips/{trip}", a.base), &fields);
    assert_eq!(kept.status, 200, "{}", kept.body);
    assert!(
        text_of(&kept.body, "[role=alert]").is_empty(),
        "{}",
        kept.body
    );
    // The photos are in the shared store, under drafts/.
    let objects = store.list("drafts/").unwrap();
    assert_eq!(
        objects.len(),
        4,
        "two photos and two thumbnails: {objects:?}"
    );

    // Through B: the same entry, its photos at the stop, their thumbnails.
    let page = get(&format!("{}/station/trips/{trip}", b.base));
    assert_eq!(page.status, 200, "{}", page.body);
    let mut both = vec![sha(&p1), sha(&p2)];
    both.sort();
    assert_eq!(photos_in(&page.body, &format!("#stop-{}", e1.code)), both);
    assert!(page.body.contains("entered through the first server"));
    let thumb = groundproof_e2e::get_bytes(&format!(
        "{}/station/trips/{trip}/thumbs/{}",
        b.base,
        sha(&p1)
    ));
    assert_eq!(thumb.0, 200);
    assert!(thumb.1.starts_with(&[0xFF, 0xD8]), "a JPEG thumbnail");

    // Saved through B: one report with both photos.
    fields.pop();
    fields.push(kv("action", "save"));
    let saved = post_form(&format!("{}/station/trips/{trip}", b.base), &fields);
    assert_eq!(saved.status, 200, "{}", saved.body);
    let results = text_of(&saved.body, "table.station-results");
    assert!(results.contains("Accepted"), "{results}");
    let db = Db::open_postgres(&database).unwrap();
    let [returns, reports, photos, entries] = db.read(|r| r.intake_counts()).unwrap();
    assert_eq!((returns, reports, photos, entries), (1, 1, 2, 1));

    // Discarded through A: the draft and its photos are gone for both.
    let gone = post_bytes(
        &format!("{}/station/trips/{trip}/discard", a.base),
        "application/x-www-form-urlencoded",
        b"",
    );
    assert_eq!(gone.status, 200, "{}", gone.body);
    assert!(store.list("drafts/").unwrap().is_empty());
    let page = get(&format!("{}/station/trips/{trip}", b.base));
    assert!(photos_in(&page.body, &format!("#stop-{}", e1.code)).is_empty());
}
