//! Control points answered with their own outcomes (checklist 2) through the
//! real field kit and intake into the assessment estimate; a return made with
//! a checklist 1 bundle, whose control points took the event words, is still
//! taken in and read honestly; checklist 2 refuses the old words at a control
//! point.

use crate::intake::{fast_push, open_workspace, post_zip, rfc};
use groundproof::domain::Outcome;
use groundproof_e2e::{TestServer, get, issue_from_station, load_scenario};
use groundproof_sync::bundle::UploadKey;
use groundproof_sync::field::{Snapshot, push};
use groundproof_sync::returns::{
    Position, PositionSource, Report, ReportPhoto, ReturnHeader, Target, pack_return, sha256_file,
};
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use serde_json::{Value, json};
use std::path::{Path, PathBuf};

fn control_photo(dir: &Path, seed: u64, lat: f64, lon: f64) -> PathBuf {
    let when = chrono::Utc::now() + chrono::Duration::minutes(1);
    let meta = PhotoMetaIn {
        taken_at_rfc3339: rfc(when),
        lat,
        lon,
        direction_deg: 180.0,
    };
    let p = dir.join(format!("control-{seed}.jpg"));
    std::fs::write(&p, make_photo(seed, 480, 360, &meta)).unwrap();
    p
}

fn field(args: &[&str]) -> Result<std::process::ExitCode, groundproof_sync::SyncError> {
    let mut all = vec!["groundproof-field"];
    all.extend_from_slice(args);
    groundproof_sync::field::run(all)
}

fn control_stratum(s: &TestServer) -> Value {
    let a = get(&s.url("/api/v1/stats/assessment")).json();
    let strata = a["assessment"]["control_strata"]
        .as_array()
        .unwrap()
        .clone();
    assert_eq!(strata.len(), 1, "{a}");
    strata[0].clone()
}

/// The area estimate after the field kit's return: of the control stratum's
/// two respondents, one found a 0.8 ha clearing (0.8 of its 1 ha plot) and
/// one none, and no sampled event has been visited, so the cleared area is
/// A_control · (0.8 + 0)/2 (by hand; the whole plot would give 0.5 · A).
/// The dashboard shows that figure, the recorded area and each kind of
/// non-response; the CSV export has them in columns.
fn cleared_area_uses_the_recorded_area(s: &TestServer, st: &Value) {
    let a = get(&s.url("/api/v1/stats/assessment")).json();
    let area = &a["assessment"]["area"];
    let mapped = st["mapped_area_ha"].as_f64().unwrap();
    assert!((area["area_covered_ha"].as_f64().unwrap() - mapped).abs() < 1e-6 * mapped);
    let cleared = area["clearing_area_ha"]["estimate"].as_f64().unwrap();
    assert!(
        (cleared - 0.4 * mapped).abs() < 1e-9 * mapped,
        "{cleared} of {mapped}: {area}"
    );
    let page = get(&s.url("/dashboard")).body;
    let shown = format!("{cleared:.1} (SE");
    assert!(page.contains(&shown), "{shown} not on the dashboard");
    let doc = scraper::Html::parse_document(&page);
    let row = scraper::Selector::parse("#control-points + table tbody tr td").unwrap();
    let cells: Vec<String> = doc.select(&row).map(|c| c.text().collect()).collect();
    assert_eq!(cells, ["control", "4", "1", "1", "1", "1", "0", "0.80"]);
    assert!(page.contains("Inconclusive visits, points not reached and points not yet visited"));
    let csv = get(&s.url("/api/v1/stats/control-points?format=csv")).body;
    let mut lines = csv.lines();
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("stratum,selected,clearing_found,no_clearing_found,inconclusive,not_reached,unvisited,clearing_area_recorded_ha"),
        "{csv}"
    );
    assert!(
        lines
            .next()
            .unwrap()
            .starts_with("control,4,1,1,1,1,0,0.800000,"),
        "{csv}"
    );
}

/// A report on control point `code` as a checklist 1 field kit wrote it.
fn v1_report(snap: &Snapshot, code: &str, outcome: &str, photos: &[PathBuf]) -> Report {
    let c = snap.controls.iter().find(|c| c.code == code).unwrap();
    let now = chrono::Utc::now();
    Report {
        report_id: uuid::Uuid::new_v4(),
        bundle_id: snap.bundle_id,
        target: Target::Control { code: code.into() },
        supersedes: None,
        outcome: outcome.into(),
        reason: (outcome == "false_alarm").then(|| "not_forest".into()),
        cause: (outcome == "confirmed").then(|| "mining".into()),
        position: Some(Position {
            lat: c.lat,
            lon: c.lon,
            accuracy_m: Some(5.0),
            source: PositionSource::Manual,
        }),
        observed_at: now,
        recorded_at: now,
        area_ha: None,
        notes: String::new(),
        photos: photos
            .iter()
            .map(|p| ReportPhoto {
                sha256: sha256_file(p).unwrap().0,
                original_name: p.file_name().unwrap().to_string_lossy().into(),
                taken_at: None,
                lat: None,
                lon: None,
                direction_deg: None,
            })
            .collect(),
    }
}

fn packed(snap: &Snapshot, version: u32, reports: &[Report], photos: &[PathBuf]) -> Vec<u8> {
    let header = ReturnHeader {
        bundle_id: snap.bundle_id,
        team: snap.team.clone(),
        checklist_version: version,
        created_at: chrono::Utc::now(),
        camera_zone: None,
    };
    let key: UploadKey = snap.upload_key().unwrap();
    let mut out = std::io::Cursor::new(Vec::new());
    pack_return(&mut out, &header, &key, reports, photos).unwrap();
    out.into_inner()
}

fn statuses(reply: &Value) -> Vec<(String, String)> {
    reply["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            (
                r["status"].as_str().unwrap().to_string(),
                r["reason"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect()
}

#[test]
fn control_outcomes_go_through_a_return_into_the_assessment() {
    let s = TestServer::start();
    load_scenario(&s);
    let (_, bundle) = issue_from_station(
        &s,
        json!({"team": "Team Basalt", "mode": "assessment", "zone": "Riverside Community Land",
            "margin": 0.3, "controls": 4, "seed": 7}),
    );
    let tmp = tempfile::tempdir().unwrap();
    let ws = open_workspace(tmp.path(), "ws", &bundle);
    let snap = Snapshot::load(&ws).unwrap();
    assert_eq!(snap.checklist.version, 2, "the office issues checklist 2");
    assert_eq!(snap.controls.len(), 4);
    let codes: Vec<String> = snap.controls.iter().map(|c| c.code.clone()).collect();
    let w = ws.to_str().unwrap();

    // Checklist 2 through the field kit: a clearing found (cause, area,
    // photos) and no clearing found; the old words are refused on the spot.
    let c0 = &snap.controls[0];
    let a = control_photo(tmp.path(), 1, c0.lat, c0.lon);
    let b = control_photo(tmp.path(), 2, c0.lat, c0.lon);
    let at0 = format!("{},{}", c0.lat, c0.lon);
    let found = [
        "--workspace",
        w,
        "report",
        &codes[0],
        "--outcome",
        "clearing_found",
        "--cause",
        "smallholder_clearing",
        "--area-ha",
        "0.8",
        "--at",
        &at0,
        "--photo",
        a.to_str().unwrap(),
        b.to_str().unwrap(),
    ];
    let without_area: Vec<&str> = found
        .iter()
        .copied()
        .filter(|x| *x != "--area-ha" && *x != "0.8")
        .collect();
    let err = field(&without_area).expect_err("clearing_found without area");
    assert!(err.to_string().contains("area_ha"), "{err}");
    field(&found).unwrap();
    let c1 = &snap.controls[1];
    let at1 = format!("{},{}", c1.lat, c1.lon);
    let none = [
        "--workspace",
        w,
        "report",
        &codes[1],
        "--outcome",
        "no_clearing_found",
        "--at",
        &at1,
    ];
    field(&none).unwrap();
    // Visited without a finding, and not reached: two kinds, counted apart.
    let unsure = [
        "--workspace",
        w,
        "report",
        &codes[2],
        "--outcome",
        "inconclusive",
        "--at",
        &at1,
    ];
    field(&unsure).unwrap();
    let away = [
        "--workspace",
        w,
        "report",
        &codes[3],
        "--outcome",
        "not_reached",
        "--reason",
        "terrain",
        "--at",
        &at1,
    ];
    field(&away).unwrap();
    let old = [
        "--workspace",
        w,
        "report",
        &codes[2],
        "--outcome",
        "false_alarm",
        "--reason",
        "no_change",
        "--at",
        &at1,
    ];
    let err = field(&old).expect_err("checklist 2 refuses the old words at a control point");
    assert!(err.to_string().contains("control point's outcome"), "{err}");

    let token = groundproof_e2e::admin_token(&s);
    let summary = push(&ws, &s.url(""), Some(&token), &fast_push()).unwrap();
    assert_eq!((summary.accepted, summary.rejected.len()), (4, 0));
    let st = control_stratum(&s);
    assert_eq!(
        (
            &st["selected"],
            &st["clearing"],
            &st["no_clearing"],
            &st["inconclusive"],
            &st["not_reached"],
            &st["unvisited"]
        ),
        (
            &json!(4),
            &json!(1),
            &json!(1),
            &json!(1),
            &json!(1),
            &json!(0)
        ),
        "{st}"
    );
    assert_eq!(st["clearing_area_recorded_ha"], json!(0.8), "{st}");
    cleared_area_uses_the_recorded_area(&s, &st);
    let rows = s.db.read(|r| r.report_facts()).unwrap();
    let found_row = rows
        .iter()
        .find(|r| r.outcome == Outcome::ClearingFound)
        .unwrap();
    assert_eq!(found_row.area_ha, Some(0.8));
    assert_eq!(
        found_row.cause.map(|c| c.as_str()),
        Some("smallholder_clearing")
    );

    // A checklist 2 return with the old words at a control point: refused
    // with a reason the team can read, the rest of the package kept.
    let c2 = &snap.controls[2];
    let bad = v1_report(&snap, &c2.code, "false_alarm", &[]);
    let reply = post_zip(&s, &packed(&snap, 2, &[bad], &[]));
    assert_eq!(reply.status, 200, "{}", reply.body);
    let st2 = statuses(&reply.json());
    assert_eq!(st2.len(), 1);
    assert_eq!(st2[0].0, "rejected");
    assert!(st2[0].1.contains("control point's outcome"), "{st2:?}");

    // A return made with a checklist 1 bundle: the control points took the
    // event words. Taken in, stored as the team wrote them, read as no
    // clearing found (false_alarm, whatever its reason) and clearing found
    // (confirmed).
    let c3 = &snap.controls[3];
    let p = [
        control_photo(tmp.path(), 3, c3.lat, c3.lon),
        control_photo(tmp.path(), 4, c3.lat, c3.lon),
    ];
    let v1 = [
        v1_report(&snap, &c2.code, "false_alarm", &[]),
        v1_report(&snap, &c3.code, "confirmed", &p),
    ];
    let reply = post_zip(&s, &packed(&snap, 1, &v1, &p));
    assert_eq!(reply.status, 200, "{}", reply.body);
    let st1 = statuses(&reply.json());
    assert!(st1.iter().all(|(s, _)| s == "accepted"), "{st1:?}");
    let st = control_stratum(&s);
    assert_eq!(
        (
            &st["clearing"],
            &st["no_clearing"],
            &st["inconclusive"],
            &st["not_reached"]
        ),
        (&json!(2), &json!(2), &json!(0), &json!(0)),
        "{st}"
    );
    // The checklist 1 clearing has no area: it counts as its whole plot.
    assert_eq!(st["clearing_without_area"], json!(1), "{st}");
    assert!(
        (st["cleared_plots"].as_f64().unwrap() - 1.8).abs() < 1e-12,
        "{st}"
    );
    let rows = s.db.read(|r| r.report_facts()).unwrap();
    let mut words: Vec<&str> = rows.iter().map(|r| r.outcome.as_str()).collect();
    words.sort();
    assert_eq!(
        words,
        [
            "clearing_found",
            "confirmed",
            "false_alarm",
            "inconclusive",
            "no_clearing_found",
            "not_reached"
        ]
    );
    // Every control point answered: the error matrix has its no-alert row.
    let a = get(&s.url("/api/v1/stats/assessment")).json();
    let rows = a["assessment"]["area"]["rows"]
        .as_array()
        .cloned()
        .unwrap_or_default();
    assert!(
        rows.iter()
            .any(|r| r["map_class"] == "no_alert" && r["clearing"] == 2 && r["no_clearing"] == 2),
        "{a}"
    );
}
