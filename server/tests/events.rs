//! Alert import and event identity through the real storage, in a temp
//! data directory.

use groundproof::Error;
use groundproof::alerts::events::{
    ClusterSettings, ImportOutcome, ImportRequest, import_alerts, import_zones,
};
use groundproof::alerts::import::{Format, ReadOptions};
use groundproof::domain::SourceName;
use groundproof::platform::storage::{Db, EventFilter};
use std::collections::BTreeSet;

const G: f64 = 0.00009; // the 10 m grid of the test source, in degrees

fn db() -> (tempfile::TempDir, Db) {
    let dir = tempfile::tempdir().unwrap();
    let db = Db::open(dir.path()).unwrap();
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .unwrap();
    db.write(|tx| tx.add_source("radar-10m", 10.0, 12)).unwrap();
    (dir, db)
}

fn csv(rows: &[(f64, f64, &str)]) -> String {
    let mut s = String::from("longitude,latitude,detected_on,confidence\n");
    for (lon, lat, d) in rows {
        s += &format!("{lon:.6},{lat:.6},{d},tentative\n");
    }
    s
}

fn import(db: &Db, source: &str, text: &str, skip: bool) -> groundproof::Result<ImportOutcome> {
    let name = SourceName::parse(source).unwrap();
    import_alerts(
        db,
        &ImportRequest {
            source: &name,
            file_name: "t.csv",
            bytes: text.as_bytes(),
            format: Format::Csv,
            read: ReadOptions::default(),
            skip_invalid: skip,
        },
        &ClusterSettings::default(),
    )
}

#[test]
fn events_grow_merge_and_keep_the_oldest_id() {
    let (_d, db) = db();
    let west = import(
        &db,
        "optical-10m",
        &csv(&[(-60.0, -3.0, "2026-01-01"), (-60.0 + G, -3.0, "2026-01-06")]),
        false,
    )
    .unwrap();
    assert_eq!((west.imported, west.events_created), (2, 1));
    let east = import(
        &db,
        "optical-10m",
        &csv(&[(-60.0 + 4.0 * G, -3.0, "2026-01-11")]),
        false,
    )
    .unwrap();
    assert_eq!(east.events_created, 1);
    let events = db.read(|r| r.events(&EventFilter::default())).unwrap();
    let (a, b) = (
        events.iter().map(|e| e.id).min().unwrap(),
        events.iter().map(|e| e.id).max().unwrap(),
    );

    // A radar pixel between them links both (10 m grid, 8-neighbours).
    let bridge = import(
        &db,
        "radar-10m",
        &csv(&[
            (-60.0 + 2.0 * G, -3.0, "2026-01-12"),
            (-60.0 + 3.0 * G, -3.0, "2026-01-12"),
        ]),
        false,
    )
    .unwrap();
    assert_eq!(
        (
            bridge.events_created,
            bridge.events_grown,
            bridge.events_merged
        ),
        (0, 0, 1)
    );
    let live = db.read(|r| r.events(&EventFilter::default())).unwrap();
    assert_eq!(live.len(), 1);
    let e = &live[0];
    assert_eq!(e.id, a, "the merge keeps the oldest id");
    assert_eq!(e.attrs.alert_count, 5);
    assert!(e.attrs.corroborated, "radar touches optical");
    assert_eq!(e.attrs.first.to_string(), "2026-01-01");
    assert!(
        (e.attrs.area_ha - 0.05).abs() < 0.0001,
        "{}",
        e.attrs.area_ha
    );
    // The absorbed id still resolves to the survivor.
    let resolved = db.read(|r| r.event_resolved(b)).unwrap().unwrap();
    assert_eq!(resolved.id, a);

    // A re-detection of a known pixel grows nothing new; the same row again is a duplicate.
    let again = import(
        &db,
        "optical-10m",
        &csv(&[(-60.0, -3.0, "2026-01-01"), (-60.0, -3.0, "2026-01-16")]),
        false,
    )
    .unwrap();
    assert_eq!(
        (again.duplicates, again.imported, again.events_grown),
        (1, 1, 1)
    );
}

/// Arrival order changes nothing: the same alerts in one file or in three
/// files in another order give the same partition.
#[test]
fn partition_does_not_depend_on_arrival_order() {
    let scenario = mock_patrols::scenario();
    let alerts = mock_patrols::generate_alerts(&scenario, 7);
    let (_, rows) = &alerts[0];
    let rows: Vec<_> = rows.iter().take(1500).collect();
    let as_csv = |part: &[&mock_patrols::AlertRow]| {
        let mut s = String::from("longitude,latitude,detected_on,confidence\n");
        for r in part {
            s += &format!("{},{},{},{}\n", r.lon, r.lat, r.date, r.confidence);
        }
        s
    };
    let partition = |db: &Db| -> BTreeSet<Vec<(i64, i64)>> {
        let events = db.read(|r| r.events(&EventFilter::default())).unwrap();
        events
            .iter()
            .map(|e| {
                let mut v: Vec<(i64, i64)> = db
                    .read(|r| r.alerts_of_events(&[e.id]))
                    .unwrap()
                    .iter()
                    .map(|a| {
                        (
                            (a.lon * 1e6).round() as i64,
                            (a.lat * 1e6).round() as i64 * 100_000 + i64::from(a.day.days()),
                        )
                    })
                    .collect();
                v.sort();
                v
            })
            .collect()
    };
    let (_d1, one) = db();
    import(&one, "optical-10m", &as_csv(&rows), false).unwrap();
    let (_d2, three) = db();
    let n = rows.len();
    for part in [&rows[2 * n / 3..], &rows[..n / 3], &rows[n / 3..2 * n / 3]] {
        import(&three, "optical-10m", &as_csv(part), false).unwrap();
    }
    assert_eq!(partition(&one), partition(&three));
}

#[test]
fn a_bad_file_imports_nothing_unless_told_to_skip() {
    let (_d, db) = db();
    import(
        &db,
        "optical-10m",
        &csv(&[(-60.0, -3.0, "2026-01-01")]),
        false,
    )
    .unwrap();
    let before = db
        .read(|r| Ok((r.alert_count()?, r.event_counts()?)))
        .unwrap();
    let bad = "longitude,latitude,detected_on,confidence\n-60.1,-3.1,2026-02-01,confirmed\n-60.2,-93,2026-02-01,confirmed\n-60.3,-3.3,2026-02-31,confirmed\n";
    match import(&db, "optical-10m", bad, false) {
        Err(Error::ImportRejected(f)) => {
            assert_eq!(f.error_count, 2);
            assert_eq!(
                (f.errors[0].line, f.errors[0].field.as_str()),
                (3, "latitude")
            );
            assert_eq!(
                (f.errors[1].line, f.errors[1].field.as_str()),
                (4, "detected_on")
            );
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    assert_eq!(
        db.read(|r| Ok((r.alert_count()?, r.event_counts()?)))
            .unwrap(),
        before
    );
    let skipped = import(&db, "optical-10m", bad, true).unwrap();
    assert_eq!(
        (
            skipped.imported,
            skipped.skipped,
            skipped.skipped_rows.len()
        ),
        (1, 2, 2)
    );
    // An unknown source is refused before anything is written.
    assert!(matches!(
        import(&db, "nosuch", bad, true),
        Err(Error::NotFound(_))
    ));
}

#[test]
fn zones_link_events_and_filter_them() {
    let (_d, db) = db();
    import(
        &db,
        "optical-10m",
        &csv(&[(-60.0, -3.0, "2026-01-01"), (-59.0, -3.0, "2026-01-01")]),
        false,
    )
    .unwrap();
    let zones = r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"Core","priority":true},
      "geometry":{"type":"Polygon","coordinates":[[[-60.1,-3.1],[-59.9,-3.1],[-59.9,-2.9],[-60.1,-2.9],[-60.1,-3.1]]]}}]}"#;
    import_zones(&db, "z.geojson", zones.as_bytes()).unwrap();
    let core = db
        .read(|r| {
            r.events(&EventFilter {
                zone: Some("Core".into()),
                ..Default::default()
            })
        })
        .unwrap();
    assert_eq!(core.len(), 1);
    assert!(core[0].in_priority_zone);
    assert_eq!(core[0].zones, vec!["Core".to_string()]);
    // Events created after the zones are linked at once.
    import(
        &db,
        "optical-10m",
        &csv(&[(-60.05, -3.05, "2026-03-01")]),
        false,
    )
    .unwrap();
    let core = db
        .read(|r| {
            r.events(&EventFilter {
                zone: Some("Core".into()),
                ..Default::default()
            })
        })
        .unwrap();
    assert_eq!(core.len(), 2);
}

/// An alert dated after the import day is refused with its file, line and field (no alert
/// system reports the future; such a date is a typing or export error). The day is counted
/// in the latest zone on Earth (UTC+14), so no real detection is refused anywhere.
#[test]
fn alert_dates_after_the_import_day_are_refused() {
    let (_d, db) = db();
    let later = (chrono::Utc::now() + chrono::Duration::days(3))
        .date_naive()
        .to_string();
    let text = csv(&[(-60.0, -3.0, "2026-01-01"), (-60.1, -3.1, later.as_str())]);
    match import(&db, "optical-10m", &text, false) {
        Err(Error::ImportRejected(f)) => {
            assert_eq!(f.error_count, 1, "{f}");
            let e = &f.errors[0];
            assert_eq!((e.file.as_str(), e.line), ("t.csv", 3), "{e}");
            assert_eq!(e.field, "detected_on", "{e}");
            assert!(e.message.contains("after the import day"), "{e}");
        }
        other => panic!("expected a refusal, got {other:?}"),
    }
    assert_eq!(db.read(|r| r.alert_count()).unwrap(), 0);
    // Told to skip invalid rows, the good row is kept and the future one listed.
    let kept = import(&db, "optical-10m", &text, true).unwrap();
    assert_eq!((kept.imported, kept.skipped), (1, 1));
    // Today itself is fine.
    let today = chrono::Utc::now().date_naive().to_string();
    let ok = import(&db, "optical-10m", &csv(&[(-61.0, -3.0, &today)]), false).unwrap();
    assert_eq!(ok.imported, 1);
}

/// A file whose every point lies outside every zone, but inside one once latitude and
/// longitude are exchanged, is imported with a warning that says so; a file in the zones, or
/// one that is outside them either way, gets none.
#[test]
fn a_file_with_latitude_and_longitude_swapped_gets_a_warning() {
    let (_d, db) = db();
    // The zone around (lon -60, lat -3); the swapped file says (lon -3, lat -60).
    let zones = r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"Core"},
      "geometry":{"type":"Polygon","coordinates":[[[-60.2,-3.2],[-59.8,-3.2],[-59.8,-2.8],[-60.2,-2.8],[-60.2,-3.2]]]}}]}"#;
    import_zones(&db, "z.geojson", zones.as_bytes()).unwrap();
    let swapped = csv(&[(-3.0, -60.0, "2026-01-01"), (-3.1, -60.1, "2026-01-02")]);
    let out = import(&db, "optical-10m", &swapped, false).unwrap();
    assert_eq!(out.imported, 2);
    assert_eq!(out.warnings.len(), 1, "{:?}", out.warnings);
    assert!(
        out.warnings[0].contains("latitude and longitude") && out.warnings[0].contains("t.csv"),
        "{:?}",
        out.warnings
    );
    let right = csv(&[(-60.0, -3.0, "2026-01-01")]);
    assert!(
        import(&db, "optical-10m", &right, false)
            .unwrap()
            .warnings
            .is_empty()
    );
    let elsewhere = csv(&[(10.0, 45.0, "2026-01-01")]);
    assert!(
        import(&db, "optical-10m", &elsewhere, false)
            .unwrap()
            .warnings
            .is_empty()
    );
}
