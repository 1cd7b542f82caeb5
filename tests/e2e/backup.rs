//! `groundproof backup` and `restore`: a backup of a running server with
//! returns, restored into a new data directory, serves the same reports and
//! byte-identical photos; a damaged or partial backup is refused and the
//! target is left as it was.

use groundproof::platform::backup::{MANIFEST, backup, restore};
use groundproof::platform::settings::Settings;
use groundproof::platform::storage::Db;
use groundproof::web::{self, AppState};
use groundproof_e2e::TestServer;
use std::net::TcpListener;
use std::path::Path;
use std::sync::Arc;

/// GET `url` with `token`: status and body bytes.
fn fetch(url: &str, token: &str) -> (u16, Vec<u8>) {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let mut r = agent
        .get(url)
        .header("Authorization", format!("Bearer {token}"))
        .call()
        .expect("request reaches the server");
    let status = r.status().as_u16();
    let body = r
        .body_mut()
        .with_config()
        .limit(1 << 30)
        .read_to_vec()
        .expect("body");
    (status, body)
}

/// A server on `data` (already restored), with an admin token; stopped
/// when the handle is dropped at the end of the test process.
fn serve(data: &Path) -> (String, String, Arc<Db>) {
    let db = Arc::new(Db::open(data).expect("the restored database opens"));
    groundproof::intake::cleanup(&db, data).expect("start-up clean-up");
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind");
    let addr = listener.local_addr().expect("address");
    let state = AppState::new(db.clone(), data.to_path_buf(), Settings::default());
    std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let _ = web::run(listener, state).expect("server builds").await;
        })
    });
    let (_, token) = groundproof::platform::auth::issue_api_token(
        &db,
        groundproof::platform::auth::Role::Admin,
        "restored",
        groundproof::platform::auth::now_unix(),
    )
    .expect("token");
    (format!("http://{addr}"), token, db)
}

fn reports(db: &Db) -> Vec<String> {
    db.read(|r| r.report_facts())
        .expect("reports")
        .iter()
        .map(|r| format!("{r:?}"))
        .collect()
}

#[test]
fn a_backup_of_a_running_server_restores_the_same_reports_and_photos() {
    let s = TestServer::start();
    let summary = groundproof::demo::load(&s.db, s.data_dir(), &Settings::default()).unwrap();
    let work = tempfile::tempdir().unwrap();
    groundproof::demo::run_trips(&s.db, &summary, work.path(), &s.url("")).unwrap();
    let before = reports(&s.db);
    let shas = s.db.read(|r| r.photo_shas()).unwrap();
    assert!(
        !before.is_empty() && !shas.is_empty(),
        "the demo trips brought returns"
    );

    let place = tempfile::tempdir().unwrap();
    let out = place.path().join("backup");
    let made = backup(&s.db, s.data_dir(), &out).expect("backup while serving");
    assert!(made.files > shas.len(), "{made:?}");
    let data = place.path().join("restored");
    restore(&out, &data).expect("restore");

    let (url, token, db) = serve(&data);
    assert_eq!(reports(&db), before, "the same reports");
    let original = |sha: &str, kind: &str| {
        let (status, body) = fetch(&format!("{url}/api/v1/photos/{sha}/{kind}"), &token);
        assert_eq!(status, 200, "{sha} {kind}");
        body
    };
    for sha in &shas {
        let photo = groundproof::intake::layout::photo_path(s.data_dir(), sha);
        let thumb = groundproof::intake::layout::thumb_path(s.data_dir(), sha);
        assert_eq!(original(sha, "original"), std::fs::read(photo).unwrap());
        assert_eq!(original(sha, "thumbnail"), std::fs::read(thumb).unwrap());
    }
    let (status, bundles) = fetch(&format!("{url}/api/v1/bundles"), &token);
    assert_eq!(status, 200);
    assert!(String::from_utf8_lossy(&bundles).contains("Core") || !bundles.is_empty());
}

/// Names in `dir` (sorted).
fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Copy a backup folder so that each case damages its own.
fn copy_tree(from: &Path, to: &Path) {
    for e in walk(from) {
        let rel = e.strip_prefix(from).unwrap();
        std::fs::create_dir_all(to.join(rel).parent().unwrap()).unwrap();
        std::fs::copy(&e, to.join(rel)).unwrap();
    }
}

fn walk(dir: &Path) -> Vec<std::path::PathBuf> {
    let mut out = Vec::new();
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            out.extend(walk(&p));
        } else {
            out.push(p);
        }
    }
    out
}

#[test]
fn a_damaged_or_partial_backup_is_refused_and_nothing_is_placed() {
    let src = tempfile::tempdir().unwrap();
    let db = Db::open(src.path()).unwrap();
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .unwrap();
    let photo = groundproof::intake::layout::photo_path(src.path(), &"ab".repeat(32));
    std::fs::create_dir_all(photo.parent().unwrap()).unwrap();
    std::fs::write(&photo, b"photo bytes stand-in").unwrap();
    let place = tempfile::tempdir().unwrap();
    let good = place.path().join("good");
    backup(&db, src.path(), &good).unwrap();
    assert!(
        backup(&db, src.path(), &good).is_err(),
        "never into a used folder"
    );

    type Damage = fn(&Path);
    let cases: [(&str, Damage, &str); 5] = [
        (
            "no manifest",
            |b| std::fs::remove_file(b.join(MANIFEST)).unwrap(),
            "not a complete backup",
        ),
        (
            "a photo changed",
            |b| {
                let p = walk(&b.join("evidence"))[0].clone();
                std::fs::write(p, b"photo bytes stand-im").unwrap();
            },
            "damaged",
        ),
        (
            "a photo missing",
            |b| std::fs::remove_file(walk(&b.join("evidence"))[0].clone()).unwrap(),
            "partial",
        ),
        (
            "the database cut",
            |b| {
                let p = b.join("groundproof.sqlite3");
                let bytes = std::fs::read(&p).unwrap();
                std::fs::write(&p, &bytes[..bytes.len() / 2]).unwrap();
            },
            "damaged",
        ),
        (
            "a path out of the folder",
            |b| {
                let m = std::fs::read_to_string(b.join(MANIFEST)).unwrap();
                let line = format!("{}  1  ../elsewhere\n", "0".repeat(64));
                std::fs::write(b.join(MANIFEST), m + &line).unwrap();
            },
            "not a path a backup holds",
        ),
    ];
    for (name, damage, says) in cases {
        let b = place.path().join(format!("case {name}"));
        copy_tree(&good, &b);
        damage(&b);
        let target = place.path().join(format!("target {name}"));
        let err = restore(&b, &target).expect_err(name).to_string();
        assert!(err.contains(says), "{name}: {err}");
        assert!(!target.exists(), "{name}: nothing placed");
    }
    // A live data directory is never written into.
    let before = names(src.path());
    let err = restore(&good, src.path())
        .expect_err("not into a used folder")
        .to_string();
    assert!(err.contains("not empty"), "{err}");
    assert_eq!(names(src.path()), before);
    // No staging folder is left behind by the refusals.
    assert!(
        names(place.path())
            .iter()
            .all(|n| !n.starts_with(".groundproof-restore")),
        "{:?}",
        names(place.path())
    );
    // And the intact backup restores.
    restore(&good, &place.path().join("fine")).expect("an intact backup restores");
}
