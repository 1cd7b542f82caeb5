use super::*;
use crate::platform::storage::BundleRecord;

fn trip() -> Trip {
    let bundle = BundleRecord {
        id: "1a2b3c4d-5e6f-4a7b-8c9d-0e1f2a3b4c5d".into(),
        team: "Team Amber".into(),
        mode: "response".into(),
        issued_at: "2026-09-01T00:00:00Z".into(),
        due_at: "2026-09-10T00:00:00Z".into(),
        expires_at: "2026-09-30T00:00:00Z".into(),
        seed: None,
        margin: None,
        selection: "{}".into(),
        start_lon: -60.0,
        start_lat: -3.0,
        route_m: 0.0,
        upload_key_id: "k1".into(),
        file_name: "b.zip".into(),
        file_sha256: String::new(),
        file_size: 0,
        cancelled_at: None,
        events: 0,
        controls: 2,
    };
    let stop = |order, code: &str, lat| Stop {
        order,
        code: code.into(),
        kind: TargetKind::Control,
        event_id: None,
        place: Footprint::Point(-60.0, lat),
    };
    Trip {
        sheet: crate::domain::sheet::sheet_id(&bundle.id),
        bundle,
        stops: vec![stop(1, "C0001", -3.02), stop(2, "C0002", -3.04)],
    }
}

fn photo(sha: &str, min: i64, pos: Option<(f64, f64)>) -> DraftPhoto {
    DraftPhoto {
        sha256: sha.repeat(64 / sha.len()),
        original_name: format!("{sha}.jpg"),
        bytes: 10,
        exif_time: DateTime::<Utc>::from_timestamp(1_788_000_000 + min * 60, 0),
        camera_local: false,
        lat: pos.map(|p| p.0),
        lon: pos.map(|p| p.1),
        direction_deg: None,
        moved_to: None,
    }
}

fn draft() -> Draft {
    let mut d = Draft::new(&trip().bundle.id, "ana", Utc::now());
    d.photos = vec![
        photo("a", 0, Some((-3.02, -60.0))),
        photo("b", 2, None),
        photo("c", 4, Some((-3.0201, -60.0))),
        photo("d", 30, Some((-3.04, -60.0))),
        photo("e", 90, None),
    ];
    d
}

fn form(stops: &[(&str, &str, &str)]) -> EntryForm {
    EntryForm {
        sheet: "FS-1A2B3C4D".into(),
        local_offset: "-04:00".into(),
        stops: stops
            .iter()
            .map(|(c, o, det)| {
                let e = StopEntry {
                    outcome: (*o).into(),
                    detail: (*det).into(),
                    ..StopEntry::default()
                };
                ((*c).to_string(), e)
            })
            .collect(),
        moves: Vec::new(),
    }
}

#[test]
fn photos_are_proposed_and_moved() {
    let (t, mut d) = (trip(), draft());
    let now: Vec<Option<usize>> = placements(&t, &d, 100.0).iter().map(|x| x.1).collect();
    assert_eq!(now, vec![Some(0), Some(0), Some(0), Some(1), None]);
    let mut f = form(&[]);
    f.moves = vec![
        ("e".repeat(64), "C0002".into()),
        ("a".repeat(64), String::new()),
    ];
    apply_form(&t, &mut d, f).unwrap();
    let now: Vec<Option<usize>> = placements(&t, &d, 100.0).iter().map(|x| x.1).collect();
    assert_eq!(now, vec![None, Some(0), Some(0), Some(1), Some(1)]);
    let mut f = form(&[]);
    f.moves = vec![("a".repeat(64), "proposed".into())];
    apply_form(&t, &mut d, f).unwrap();
    assert_eq!(placements(&t, &d, 100.0)[0].1, Some(0));
}

#[test]
fn every_stop_in_error_is_named_and_nothing_is_built() {
    let (t, mut d) = (trip(), draft());
    // C0001 has photos but (here) an outcome missing its reason; C0002 has
    // photos and no outcome.
    apply_form(&t, &mut d, form(&[("C0001", "not_reached", "")])).unwrap();
    let errs = build_reports(&t, &d, 100.0).unwrap_err();
    assert_eq!(errs.len(), 2, "{errs:?}");
    assert!(
        errs[0].starts_with("stop C0001: outcome not_reached needs a reason"),
        "{errs:?}"
    );
    assert!(
        errs[1].starts_with("stop C0002 has 1 photos but no outcome"),
        "{errs:?}"
    );
}

#[test]
fn reports_take_the_sheet_and_the_photos() {
    let (t, mut d) = (trip(), draft());
    let mut f = form(&[
        ("C0001", "not_reached", "access"),
        ("C0002", "not_reached", "terrain"),
    ]);
    f.stops.get_mut("C0002").unwrap().time = "2026-08-29T08:30".into();
    f.stops.get_mut("C0002").unwrap().position = "-3.05, -60.01".into();
    apply_form(&t, &mut d, f).unwrap();
    let ids: Vec<_> = d.stops.values().map(|s| s.report_id).collect();
    let (reports, files) = build_reports(&t, &d, 100.0).unwrap();
    assert_eq!(reports.len(), 2);
    assert_eq!(files.len(), 4);
    let r = &reports[0];
    assert_eq!(r.reason.as_deref(), Some("access"));
    assert_eq!(r.photos.len(), 3);
    // No time written: the earliest photo's time; no position written: the first photo's GPS.
    assert_eq!(r.observed_at, d.photos[0].exif_time.unwrap());
    assert_eq!(r.position.unwrap().source, PositionSource::PhotoGps);
    // 08:30 at UTC−04:00 is 12:30 UTC.
    assert_eq!(
        reports[1].observed_at.to_rfc3339(),
        "2026-08-29T12:30:00+00:00"
    );
    assert_eq!(reports[1].position.unwrap().source, PositionSource::Manual);
    // Saving the form again keeps the report ids (saving twice sends the same reports).
    apply_form(&t, &mut d, form(&[("C0001", "false_alarm", "no_change")])).unwrap();
    assert_eq!(d.stops["C0001"].report_id, ids[0]);
}

#[test]
fn bad_fields_change_nothing() {
    let (t, mut d) = (trip(), draft());
    let before = d.clone();
    let mut f = form(&[("K9999", "confirmed", "")]);
    assert!(
        apply_form(&t, &mut d, f.clone())
            .unwrap_err()
            .to_string()
            .contains("K9999")
    );
    f = form(&[]);
    f.local_offset = "+25:00".into();
    assert!(apply_form(&t, &mut d, f).is_err());
    assert_eq!(d, before);
}

#[test]
fn a_camera_local_time_takes_the_trip_offset() {
    let mut p = photo("a", 0, None);
    let t = p.exif_time.unwrap();
    let west = FixedOffset::west_opt(4 * 3600).unwrap();
    assert_eq!(photo_time(&p, west), Some(t));
    p.camera_local = true;
    assert_eq!(photo_time(&p, west), Some(t + chrono::Duration::hours(4)));
}

#[test]
fn a_photo_is_admitted_once_and_within_the_draft_bounds() {
    let mut d = draft();
    let p = photo("7", 40, None);
    assert!(admit_photo(&mut d, &p).unwrap());
    assert!(!admit_photo(&mut d, &p).unwrap(), "kept once");
    let big = DraftPhoto {
        bytes: draft::MAX_DRAFT_BYTES,
        ..photo("f", 41, None)
    };
    let e = admit_photo(&mut d, &big).unwrap_err().to_string();
    assert!(e.contains("MiB of photos"), "{e}");
    while d.photos.len() < draft::MAX_DRAFT_PHOTOS {
        let mut q = photo("0", 42, None);
        q.sha256 = format!("{:064x}", 1000 + d.photos.len());
        d.photos.push(q);
    }
    let e = admit_photo(&mut d, &photo("9", 43, None))
        .unwrap_err()
        .to_string();
    assert!(e.contains("at most 200 photos"), "{e}");
    assert_eq!(d.photos.len(), draft::MAX_DRAFT_PHOTOS);
}
