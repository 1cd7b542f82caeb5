//! Entry at the station from the paper sheet and the camera (issue 13):
//! photos with EXIF positions near two different stops and one without
//! EXIF, the server's proposal, a photo moved by hand, a reload mid-entry,
//! saving (twice: stored once), the provenance on the event page, and bad
//! input that stores nothing.

use crate::intake::{issue_bundle, open_workspace, rfc};
use groundproof::platform::storage::Db;
use groundproof_e2e::{Reply, TestServer, get, load_scenario, post_bytes};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::field::Snapshot;
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use std::io::Cursor;

const BOUNDARY: &str = "station-entry-boundary";

pub(crate) fn multipart(files: &[(&str, &[u8])]) -> Vec<u8> {
    let mut b = Vec::new();
    for (file_name, bytes) in files {
        b.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"photos\"; filename=\"{file_name}\"\r\nContent-Type: image/jpeg\r\n\r\n"
            )
            .as_bytes(),
        );
        b.extend_from_slice(bytes);
        b.extend_from_slice(b"\r\n");
    }
    b.extend_from_slice(format!("--{BOUNDARY}--\r\n").as_bytes());
    b
}

fn upload(s: &TestServer, trip: &str, files: &[(&str, &[u8])]) -> Reply {
    post_bytes(
        &s.url(&format!("/station/trips/{trip}/photos")),
        &format!("multipart/form-data; boundary={BOUNDARY}"),
        &multipart(files),
    )
}

fn form(s: &TestServer, trip: &str, fields: &[(String, String)]) -> Reply {
    post_bytes(
        &s.url(&format!("/station/trips/{trip}")),
        "application/x-www-form-urlencoded",
        groundproof_e2e::form_body(fields).as_bytes(),
    )
}

pub(crate) fn kv(k: &str, v: &str) -> (String, String) {
    (k.to_string(), v.to_string())
}

/// A camera photo with EXIF time and GPS position (mock-patrols' generator).
pub(crate) fn camera_photo(
    seed: u64,
    lat: f64,
    lon: f64,
    when: chrono::DateTime<chrono::Utc>,
) -> Vec<u8> {
    make_photo(
        seed,
        320,
        240,
        &PhotoMetaIn {
            taken_at_rfc3339: rfc(when),
            lat,
            lon,
            direction_deg: 45.0,
        },
    )
}

/// A JPEG without any EXIF (a camera without GPS whose clock was never set
/// and that writes no EXIF at all).
fn plain_jpeg() -> Vec<u8> {
    let img = image::RgbImage::from_fn(200, 150, |x, y| {
        image::Rgb([(x % 200) as u8, 120, (y % 150) as u8])
    });
    let mut out = Cursor::new(Vec::new());
    image::DynamicImage::ImageRgb8(img)
        .write_to(&mut out, image::ImageFormat::Jpeg)
        .expect("encode");
    out.into_inner()
}

pub(crate) fn sha(b: &[u8]) -> String {
    groundproof_sync::bundle::sha256_hex(b)
}

/// The text of the element matching `css` (all of it, joined).
pub(crate) fn text_of(html: &str, css: &str) -> String {
    let doc = scraper::Html::parse_document(html);
    let sel = scraper::Selector::parse(css).unwrap();
    doc.select(&sel)
        .map(|e| e.text().collect::<String>())
        .collect::<Vec<_>>()
        .join(" ")
}

/// Photo SHA-256s shown in the fieldset of stop `code` (or `#unplaced`).
pub(crate) fn photos_in(html: &str, css: &str) -> Vec<String> {
    let doc = scraper::Html::parse_document(html);
    let sel = scraper::Selector::parse(&format!("{css} figure.draft-photo")).unwrap();
    let mut v: Vec<String> = doc
        .select(&sel)
        .filter_map(|e| e.value().attr("data-sha").map(str::to_string))
        .collect();
    v.sort();
    v
}

fn count(db: &Db, table: &str) -> i64 {
    let [returns, reports, photos, entries] = db.read(|r| r.intake_counts()).unwrap();
    match table {
        "returns" => returns,
        "reports" => reports,
        "report_photos" => photos,
        _ => entries,
    }
}

struct Setup {
    s: TestServer,
    trip: String,
    snap: Snapshot,
    _tmp: tempfile::TempDir,
}

fn setup() -> Setup {
    let s = TestServer::start();
    load_scenario(&s);
    let (trip, bundle) = issue_bundle(&s.url(""), "Team Amber");
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    let snap = Snapshot::load(&ws).unwrap();
    assert!(
        snap.events.len() >= 2,
        "the scenario issues at least two events"
    );
    Setup {
        s,
        trip,
        snap,
        _tmp: tmp,
    }
}

#[test]
fn a_paper_trip_with_camera_photos_is_proposed_moved_saved_once_and_shows_its_provenance() {
    let Setup {
        s,
        trip,
        snap,
        _tmp,
    } = setup();
    let (e1, e2) = (&snap.events[0], &snap.events[1]);
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let min = |m| when + chrono::Duration::minutes(m);
    let a1 = camera_photo(1, e1.lat, e1.lon, when);
    let a2 = camera_photo(2, e1.lat, e1.lon, min(1));
    let b1 = camera_photo(3, e2.lat, e2.lon, min(30));
    let b2 = camera_photo(4, e2.lat, e2.lon, min(31));
    let none = plain_jpeg();

    let station = get(&s.url("/station"));
    assert!(
        station.body.contains(&format!("/station/trips/{trip}")),
        "{}",
        station.body
    );

    let r = upload(
        &s,
        &trip,
        &[
            ("A1.JPG", &a1),
            ("A2.JPG", &a2),
            ("B1.JPG", &b1),
            ("B2.JPG", &b2),
            ("N1.JPG", &none),
        ],
    );
    assert_eq!(r.status, 200, "{}", r.body);
    assert!(r.body.contains("5 photos added"), "{}", r.body);
    // The proposal: by position to the two stops; the photo without EXIF is listed apart.
    let mut at1 = vec![sha(&a1), sha(&a2)];
    at1.sort();
    let mut at2 = vec![sha(&b1), sha(&b2)];
    at2.sort();
    assert_eq!(photos_in(&r.body, &format!("#stop-{}", e1.code)), at1);
    assert_eq!(photos_in(&r.body, &format!("#stop-{}", e2.code)), at2);
    assert_eq!(photos_in(&r.body, "#unplaced"), vec![sha(&none)]);
    assert!(text_of(&r.body, "#unplaced").contains("no position and no time"));

    // Nothing is a fact yet.
    let db = s.open_db().unwrap();
    assert_eq!(count(&db, "reports"), 0);

    // The operator copies the sheet, moves the unplaced photo to the second stop, keeps.
    let cl = Checklist::default_v1();
    let fields = vec![
        kv("sheet", &groundproof::domain::sheet::sheet_id(&trip)),
        kv("local_offset", "+00:00"),
        kv(&format!("outcome.{}", e1.code), "confirmed"),
        kv(&format!("detail.{}", e1.code), &cl.causes[0]),
        kv(
            &format!("notes.{}", e1.code),
            "photos 12 to 13; stumps still fresh",
        ),
        kv(&format!("observer.{}", e1.code), "first of the team"),
        kv(&format!("outcome.{}", e2.code), "false_alarm"),
        kv(&format!("detail.{}", e2.code), &cl.false_alarm_reasons[0]),
        kv(&format!("move.{}", sha(&none)), &e2.code),
        kv("action", "keep"),
    ];
    // (The agent follows the 303 back to the entry page.)
    let kept = form(&s, &trip, &fields);
    assert_eq!(kept.status, 200, "{}", kept.body);
    assert!(
        text_of(&kept.body, "[role=alert]").is_empty(),
        "{}",
        kept.body
    );

    // A reload finds the entry as left.
    let page = get(&s.url(&format!("/station/trips/{trip}")));
    assert_eq!(page.status, 200);
    let mut moved = at2.clone();
    moved.push(sha(&none));
    moved.sort();
    assert_eq!(photos_in(&page.body, &format!("#stop-{}", e2.code)), moved);
    assert!(photos_in(&page.body, "#unplaced").is_empty());
    assert!(page.body.contains("photos 12 to 13; stumps still fresh"));
    assert_eq!(count(&db, "reports"), 0);

    // Save: two reports, through intake.
    let mut save = fields.clone();
    save.pop();
    save.push(kv("action", "save"));
    let saved = form(&s, &trip, &save);
    assert_eq!(saved.status, 200, "{}", saved.body);
    let results = text_of(&saved.body, "table.station-results");
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
    assert_eq!(count(&db, "reports"), 2);
    assert_eq!(count(&db, "station_entries"), 2);
    assert_eq!(count(&db, "report_photos"), 5);

    // Saving twice stores once.
    let again = form(&s, &trip, &save);
    assert_eq!(again.status, 200, "{}", again.body);
    assert_eq!(count(&db, "reports"), 2);
    assert_eq!(count(&db, "returns"), 1);

    // The event page says how the report came in.
    let ev = get(&s.url(&format!("/events/{}", e1.event_id)));
    assert!(
        ev.body
            .contains("Observer: first of the team. photos 12 to 13; stumps still fresh"),
        "the notes carry the observer"
    );
    let came = text_of(&ev.body, ".provenance");
    assert!(came.contains("entered at the station"), "{came}");
    assert!(
        came.contains(&groundproof::domain::sheet::sheet_id(&trip)),
        "{came}"
    );

    // The team figures count the reports entered at the station.
    let dash = get(&s.url("/dashboard"));
    assert_eq!(dash.status, 200);
    assert_eq!(
        text_of(&dash.body, "td.station-count"),
        "2",
        "{}",
        dash.body
    );
}

#[test]
fn bad_input_at_the_station_gets_a_clear_message_and_stores_nothing() {
    let Setup {
        s,
        trip,
        snap,
        _tmp,
    } = setup();
    let e1 = &snap.events[0];
    let db = s.open_db().unwrap();

    // A trip that does not exist.
    let r = get(&s.url("/station/trips/00000000-0000-4000-8000-000000000000"));
    assert_eq!(r.status, 404, "{}", r.body);
    assert!(r.body.contains("there is no trip"), "{}", r.body);

    // A file that is not a JPEG.
    let r = upload(&s, &trip, &[("map.png", b"\x89PNG\r\n\x1a\n not a photo")]);
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(
        text_of(&r.body, "[role=alert]").contains("photo \"map.png\" was not taken"),
        "{}",
        r.body
    );
    assert!(r.body.contains("0 photos added"));

    // An outcome missing its reason.
    let sheet = groundproof::domain::sheet::sheet_id(&trip);
    let bad = [
        kv("sheet", &sheet),
        kv("local_offset", "+00:00"),
        kv(&format!("outcome.{}", e1.code), "not_reached"),
        kv(
            &format!("time.{}", e1.code),
            &chrono::Utc::now().format("%Y-%m-%dT%H:%M").to_string(),
        ),
        kv("action", "save"),
    ];
    let r = form(&s, &trip, &bad);
    assert_eq!(r.status, 400, "{}", r.body);
    let alert = text_of(&r.body, "[role=alert]");
    assert!(
        alert.contains(&format!(
            "stop {}: outcome not_reached needs a reason",
            e1.code
        )),
        "{alert}"
    );

    // The wrong sheet for the trip.
    let mut wrong = bad.to_vec();
    wrong[0] = kv("sheet", "FS-00000000");
    wrong[3] = kv(&format!("detail.{}", e1.code), "terrain");
    let r = form(&s, &trip, &wrong);
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(
        text_of(&r.body, "[role=alert]").contains("is not this trip's"),
        "{}",
        r.body
    );

    // A stop that is not in the trip.
    let r = form(
        &s,
        &trip,
        &[
            kv("sheet", &sheet),
            kv("local_offset", "+00:00"),
            kv("outcome.Z999", "confirmed"),
        ],
    );
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(
        text_of(&r.body, "[role=alert]").contains("stop \"Z999\" is not in this trip"),
        "{}",
        r.body
    );

    assert_eq!(count(&db, "reports"), 0);
    assert_eq!(count(&db, "returns"), 0);
    assert_eq!(count(&db, "station_entries"), 0);
}

/// Issue 14: the station's results after an upload name each report's
/// event code, outcome and team, and its flags name the photo by its file
/// name (not only ids and digests).
#[test]
fn the_station_upload_results_name_code_outcome_team_and_flags() {
    let Setup {
        s,
        trip: _,
        snap,
        _tmp,
    } = setup();
    let tmp = tempfile::tempdir().unwrap();
    let e = &snap.events[0];
    let download = format!("/api/v1/bundles/{}/download", snap.bundle_id);
    let bundle = groundproof_e2e::get_bytes(&s.url(&download)).1;
    let ws = open_workspace(tmp.path(), "ws2", &bundle);
    // A photo without EXIF: flagged photo_no_gps and photo_no_time.
    let p = tmp.path().join("NO_EXIF.JPG");
    std::fs::write(&p, plain_jpeg()).unwrap();
    let args = [
        "groundproof-field",
        "--workspace",
        ws.to_str().unwrap(),
        "report",
        &e.code,
        "--outcome",
        "false_alarm",
        "--reason",
        "no_change",
        "--at",
        &format!("{},{}", e.lat, e.lon),
        "--photo",
        p.to_str().unwrap(),
    ];
    groundproof_sync::field::run(args.to_vec()).expect("report recorded");
    let zip = crate::intake::pack(&ws, &tmp.path().join("r.zip"), true);
    let body = {
        let mut b = Vec::new();
        b.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"package\"; filename=\"r.zip\"\r\nContent-Type: application/zip\r\n\r\n"
            )
            .as_bytes(),
        );
        b.extend_from_slice(&zip);
        b.extend_from_slice(format!("\r\n--{BOUNDARY}--\r\n").as_bytes());
        b
    };
    let r = post_bytes(
        &s.url("/station"),
        &format!("multipart/form-data; boundary={BOUNDARY}"),
        &body,
    );
    assert_eq!(r.status, 200, "{}", r.body);
    assert_eq!(text_of(&r.body, "table.station-results td.code"), e.code);
    assert_eq!(
        text_of(&r.body, "table.station-results td.outcome"),
        "False alarm (No change on the ground)"
    );
    assert_eq!(
        text_of(&r.body, "table.station-results td.team"),
        "Team Amber"
    );
    let flags = text_of(&r.body, "table.station-results .flag");
    assert!(
        flags.contains("photo without a position (NO_EXIF.JPG)"),
        "{flags}"
    );
    assert!(!flags.contains(&sha(&plain_jpeg())[..12]), "{flags}");

    // The same package again, in Portuguese: the results in the words of
    // our catalogues (templates/i18n/pt/field.ftl and pages.ftl).
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let mut r = agent
        .post(&s.url("/station"))
        .header(
            "Authorization",
            format!("Bearer {}", groundproof_e2e::admin_token(&s)),
        )
        .header("Accept-Language", "pt")
        .header(
            "Content-Type",
            format!("multipart/form-data; boundary={BOUNDARY}"),
        )
        .send(&body[..])
        .expect("reaches the server");
    assert_eq!(r.status().as_u16(), 200);
    let pt = r.body_mut().read_to_string().unwrap();
    assert_eq!(
        text_of(&pt, "table.station-results td.outcome"),
        "Alarme falso (Nenhuma mudança no local)"
    );
    let flags = text_of(&pt, "table.station-results .flag");
    assert!(flags.contains("foto sem posição (NO_EXIF.JPG)"), "{flags}");
    let head = text_of(&pt, "table.station-results thead");
    assert!(
        head.contains("Resultado") && head.contains("Parada"),
        "{head}"
    );
    assert!(text_of(&pt, ".ok-box").contains("Retorno"), "{pt}");
}
