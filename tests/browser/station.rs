//! Browser test (issue 13): a coordinator enters a trip from its paper sheet
//! and the camera's photos in headless Chromium: photos with EXIF positions
//! near two different stops and one without EXIF are uploaded at once, the
//! server's proposal is shown, the operator fills the stops from the sheet,
//! moves the unplaced photo, reloads mid-entry (nothing typed is lost), and
//! saves; the results name each report's stop, outcome and team.

use super::webdriver::Browser;
use super::{Shots, assert_clean, log_in, password_of};
use groundproof::demo::load;
use groundproof::platform::settings::Settings;
use groundproof_e2e::{TestServer, get_bytes, post_json};
use groundproof_sync::bundle::{Checklist, sha256_hex};
use groundproof_sync::field::Snapshot;
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use std::io::Cursor;
use std::path::Path;

fn plain_jpeg(path: &Path) {
    let img = image::RgbImage::from_fn(200, 150, |x, y| {
        image::Rgb([(x % 200) as u8, 90, (y % 150) as u8])
    });
    let mut out = Cursor::new(Vec::new());
    image::DynamicImage::ImageRgb8(img)
        .write_to(&mut out, image::ImageFormat::Jpeg)
        .expect("encode");
    std::fs::write(path, out.into_inner()).expect("photo");
}

fn camera_photo(path: &Path, seed: u64, lat: f64, lon: f64, when: chrono::DateTime<chrono::Utc>) {
    let meta = PhotoMetaIn {
        taken_at_rfc3339: when.to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
        lat,
        lon,
        direction_deg: 10.0,
    };
    std::fs::write(path, make_photo(seed, 320, 240, &meta)).expect("photo");
}

/// Photo SHA-256s shown under `css`.
fn shas_in(b: &Browser, css: &str) -> Vec<String> {
    let v = b.script(&format!(
        "return Array.from(document.querySelectorAll('{css} figure.draft-photo')).map(f => f.dataset.sha).sort();"
    ));
    v.as_array()
        .map(|a| {
            a.iter()
                .filter_map(|x| x.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default()
}

/// Waits until the page's autosave has kept at least `n` changes and has
/// none in flight.
fn wait_kept(b: &Browser, n: u64) {
    for _ in 0..100 {
        let v = b.script(
            "const s = document.getElementById('autosave'); return [Number(s.dataset.saved), Number(s.dataset.pending)];",
        );
        let saved = v[0].as_u64().unwrap_or(0);
        let pending = v[1].as_u64().unwrap_or(1);
        if saved >= n && pending == 0 {
            return;
        }
        std::thread::sleep(std::time::Duration::from_millis(100));
    }
    panic!("the entry was not kept: {}", b.text("#autosave"));
}

#[test]
fn a_trip_is_entered_from_paper_with_photos_and_survives_a_reload() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    load(&s.db, s.data_dir(), &Settings::default()).expect("demo loads");
    let work = tempfile::tempdir().expect("work folder");

    // A trip, and its stops as the field kit reads them.
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &serde_json::json!({"team": "Team Amber", "zone": "Core", "max": 4,
                            "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let j = r.json();
    let trip = j["bundle"]["bundle"]["id"].as_str().unwrap().to_string();
    let (status, zip) = get_bytes(&s.url(j["download"].as_str().unwrap()));
    assert_eq!(status, 200);
    let zip_path = work.path().join("bundle.zip");
    std::fs::write(&zip_path, zip).unwrap();
    let ws = work.path().join("ws");
    let args = [
        "groundproof-field",
        "--workspace",
        ws.to_str().unwrap(),
        "open",
        zip_path.to_str().unwrap(),
    ];
    groundproof_sync::field::run(args.to_vec()).expect("the field kit opens the bundle");
    let snap = Snapshot::load(&ws).unwrap();
    let (e1, e2) = (&snap.events[0], &snap.events[1]);

    // The camera's card: two photos at each of two stops, one without EXIF.
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let dir = work.path().join("camera");
    std::fs::create_dir_all(&dir).unwrap();
    let files = [
        ("IMG_0001.JPG", Some((e1, 0))),
        ("IMG_0002.JPG", Some((e1, 1))),
        ("IMG_0003.JPG", Some((e2, 30))),
        ("IMG_0004.JPG", Some((e2, 31))),
        ("IMG_0005.JPG", None),
    ];
    let mut paths = Vec::new();
    for (i, (name, at)) in files.iter().enumerate() {
        let p = dir.join(name);
        match at {
            Some((e, m)) => camera_photo(
                &p,
                i as u64 + 1,
                e.lat,
                e.lon,
                when + chrono::Duration::minutes(*m),
            ),
            None => plain_jpeg(&p),
        }
        paths.push(std::fs::canonicalize(&p).unwrap().display().to_string());
    }
    let sha = |i: usize| sha256_hex(&std::fs::read(&paths[i]).unwrap());

    b.goto(&s.url("/station"));
    log_in(&b, "coordinator", password_of("coordinator"));
    b.goto(&s.url("/station"));
    b.click_to_navigate(&format!("a[href=\"/station/trips/{trip}\"]"));
    assert_clean(&b, "station entry");
    b.type_into("input#e-photos[type=file]", &paths.join("\n"));
    b.click_to_navigate(&format!(
        "form[action^=\"/station/trips/{trip}/photos\"] button[type=submit]"
    ));
    assert!(
        b.text("[role=status]").contains("5 photos added"),
        "{}",
        b.text("body")
    );
    assert_clean(&b, "photos uploaded");
    let mut at1 = vec![sha(0), sha(1)];
    at1.sort();
    let mut at2 = vec![sha(2), sha(3)];
    at2.sort();
    assert_eq!(shas_in(&b, &format!("#stop-{}", e1.code)), at1);
    assert_eq!(shas_in(&b, &format!("#stop-{}", e2.code)), at2);
    assert_eq!(shas_in(&b, "#unplaced"), vec![sha(4)]);

    // The operator copies the sheet; each change is kept as it is made.
    let cl = Checklist::default_v1();
    b.choose(&format!("#o-{}", e1.code), "confirmed");
    b.choose(&format!("#d-{}", e1.code), &cl.causes[0]);
    b.choose(&format!("#o-{}", e2.code), "false_alarm");
    b.choose(&format!("#d-{}", e2.code), &cl.false_alarm_reasons[0]);
    b.choose(&format!("select[name=\"move.{}\"]", sha(4)), &e2.code);
    wait_kept(&b, 5);

    // A reload mid-entry loses nothing.
    b.goto(&s.url(&format!("/station/trips/{trip}")));
    let value = |css: String| b.script(&format!("return document.querySelector('{css}').value;"));
    assert_eq!(value(format!("#o-{}", e1.code)), "confirmed");
    assert_eq!(
        value(format!("#d-{}", e2.code)),
        cl.false_alarm_reasons[0].as_str()
    );
    let mut moved = at2.clone();
    moved.push(sha(4));
    moved.sort();
    assert_eq!(shas_in(&b, &format!("#stop-{}", e2.code)), moved);
    assert!(shas_in(&b, "#unplaced").is_empty());
    Shots::new().take(&b, "station-entry");
    assert_eq!(
        s.db.read(|r| r.intake_counts()).unwrap(),
        [0, 0, 0, 0],
        "nothing stored yet"
    );

    // Save: the results name each report's stop, outcome and team.
    b.click_to_navigate("button[name=action][value=save]");
    let results = b.text("table.station-results");
    for word in [
        e1.code.as_str(),
        e2.code.as_str(),
        "Clearing is there",
        "False alarm",
        "Team Amber",
        "Accepted",
    ] {
        assert!(results.contains(word), "{word} in {results}");
    }
    assert_clean(&b, "station entry saved");
    assert_eq!(s.db.read(|r| r.intake_counts()).unwrap(), [1, 2, 5, 2]);
}
