use super::place::offset;
use super::roles::{ControlVisit, EventVisit, outcome_mix};
use super::*;
use chrono::{Duration, NaiveDate, NaiveTime, TimeZone};
use geo::{MultiPolygon, Point, polygon};
use geographiclib_rs::{Geodesic, InverseGeodesic};
use groundproof_sync::bundle::{
    BundleEvent, BundleHeader, ControlPoint, StartPoint, open_bundle, write_bundle,
};
use groundproof_sync::photo::read_photo_meta;
use groundproof_sync::returns::{ReturnLimits, open_return, validate_report};
use std::collections::BTreeSet;

const KEY: [u8; 32] = [0x3c; 32];

/// Geodesic distance on WGS 84 (Karney's algorithm, geographiclib-rs 0.2.7).
fn geodesic_m(a: (f64, f64), b: (f64, f64)) -> f64 {
    Geodesic::wgs84().inverse(a.0, a.1, b.0, b.1)
}

/// An invented trip of 10 events and 3 control points around (-3.5, -60.8),
/// valid around now (coordinates arbitrary, common practice).
fn write_test_bundle(path: &Path) {
    let now = Utc::now();
    let header = BundleHeader {
        bundle_id: Uuid::from_u128(0x7e57_0000_0000_4000_8000_0000_0000_0001),
        team: "Team Amber".into(),
        mode: "response".into(),
        issued_at: now - Duration::hours(2),
        due_at: now + Duration::days(7),
        expires_at: now + Duration::days(30),
        upload_key_id: "uk-test-1".into(),
        seed: None,
        camera_zone: None,
    };
    let events: Vec<BundleEvent> = (0..10)
        .map(|i| {
            let x = -60.9 + 0.02 * f64::from(i);
            let y = -3.5 - 0.01 * f64::from(i % 3);
            BundleEvent {
                code: format!("K{:04}", 100 + i),
                event_id: 500 + i64::from(i),
                footprint: MultiPolygon::new(vec![polygon![
                    (x: x, y: y), (x: x + 0.002, y: y), (x: x + 0.002, y: y + 0.002), (x: x, y: y + 0.002)
                ]]),
                centroid: Point::new(x + 0.001, y + 0.001),
                area_ha: 4.0 + f64::from(i),
                first_detected: format!("2025-0{}-1{}", 1 + i % 9, i % 10),
                last_detected: "2025-12-20".into(),
                sources: vec!["optical-10m".into()],
                confidence: "confirmed".into(),
                corroborated: false,
                priority: 10.0 - f64::from(i),
                visit_order: 2 * (i as u32) + 1,
                inclusion_probability: None,
                stratum: None,
            }
        })
        .collect();
    let controls: Vec<ControlPoint> = (0..3)
        .map(|i| ControlPoint {
            code: format!("C{:04}", i + 1),
            point: Point::new(-60.89 + 0.06 * f64::from(i), -3.53),
            visit_order: 4 + 6 * i as u32,
            inclusion_probability: None,
        })
        .collect();
    let mut route: Vec<(u32, String)> = events
        .iter()
        .map(|e| (e.visit_order, e.code.clone()))
        .chain(controls.iter().map(|c| (c.visit_order, c.code.clone())))
        .collect();
    route.sort();
    let route: Vec<String> = route.into_iter().map(|(_, c)| c).collect();
    let start = StartPoint {
        name: "field station".into(),
        point: Point::new(-60.92, -3.49),
    };
    let mut out = std::io::Cursor::new(Vec::new());
    write_bundle(
        &mut out,
        &header,
        &events,
        &controls,
        &start,
        &route,
        &Checklist::default_v1(),
        &KEY,
        Vec::new(),
    )
    .expect("test bundle is valid");
    std::fs::write(path, out.into_inner()).expect("write bundle");
}

fn small_plan() -> TripPlan {
    TripPlan {
        photo_width: 160,
        photo_height: 120,
        ..TripPlan::default()
    }
}

fn open(zip: &Path) -> groundproof_sync::returns::OpenedReturn {
    let mut r = open_return(zip, |_, _| Some(KEY), &ReturnLimits::default()).expect("opens");
    r.apply_checklist(&Checklist::default_v1());
    r
}

#[test]
fn trip_return_follows_the_plan() {
    let dir = tempfile::tempdir().expect("tmp");
    let bundle_path = dir.path().join("bundle.zip");
    write_test_bundle(&bundle_path);
    let bundle = open_bundle(&bundle_path, Utc::now()).expect("bundle opens");
    let out =
        make_trip_return(&bundle_path, &dir.path().join("work"), &small_plan(), 7).expect("trip");
    assert_eq!(out.returns.len(), 2);
    let first = open(&out.returns[0].zip);
    assert!(first.rejected.is_empty(), "{:?}", first.rejected);
    assert_eq!(first.reports.len(), out.returns[0].reports.len());
    let checklist = Checklist::default_v1();
    for r in &first.reports {
        assert_eq!(validate_report(r, &checklist), Ok(()));
        // Observed inside the bundle's window.
        assert!(
            r.observed_at > bundle.manifest.issued_at && r.observed_at < bundle.manifest.expires_at
        );
    }
    let centroid = |code: &str| {
        let e = bundle
            .events
            .iter()
            .find(|e| e.code == code)
            .expect("event");
        (e.centroid.y(), e.centroid.x())
    };
    let flags: Vec<&ExpectedFlag> = out.reports().flat_map(|r| r.flags.iter()).collect();
    // The far photo: > 500 m from its event by its own EXIF (brief's threshold).
    let far = out
        .reports()
        .find(|r| r.flags.iter().any(|f| f.name() == "photo_far_from_target"))
        .expect("a far photo");
    let Some(ExpectedFlag::PhotoFar { sha256, .. }) = far.flags.first() else {
        panic!("far flag first");
    };
    let meta = read_photo_meta(&first.photo_bytes(sha256).expect("photo")).expect("jpeg");
    let d = geodesic_m(
        centroid(far.target.code().expect("code")),
        (meta.lat.expect("lat"), meta.lon.expect("lon")),
    );
    assert!(d > 500.0, "far photo only {d} m away");
    // Every other photo of an event report lies within 30 m (+1 m for the spherical
    // offset against the WGS 84 geodesic) of its centroid.
    for r in first.reports.iter() {
        if let Target::Event { code, .. } = &r.target {
            for p in &r.photos {
                if &p.sha256 == sha256 {
                    continue;
                }
                let d = geodesic_m(centroid(code), (p.lat.expect("lat"), p.lon.expect("lon")));
                assert!(d < NEAR_PHOTO_MAX_M + 1.0, "{code}: photo {d} m away");
            }
        }
    }
    // The early photo: EXIF time before the first detection (00:00 UTC of that day).
    let early = flags
        .iter()
        .find_map(|f| match f {
            ExpectedFlag::PhotoBeforeDetection { sha256, .. } => Some(sha256.clone()),
            _ => None,
        })
        .expect("an early photo");
    let (r, p) = first
        .reports
        .iter()
        .find_map(|r| r.photos.iter().find(|p| p.sha256 == early).map(|p| (r, p)))
        .expect("early photo in the return");
    let code = r.target.code().expect("code");
    let e = bundle
        .events
        .iter()
        .find(|e| e.code == code)
        .expect("event");
    let detected = NaiveDate::parse_from_str(&e.first_detected, "%Y-%m-%d")
        .expect("date")
        .and_hms_opt(0, 0, 0)
        .expect("midnight")
        .and_utc();
    assert!(p.taken_at.expect("EXIF time") < detected);
    // Not reached: reason access or safety, no photos.
    let nr: Vec<_> = first
        .reports
        .iter()
        .filter(|r| r.outcome == "not_reached")
        .collect();
    assert_eq!(nr.len(), 1);
    assert!(nr[0].photos.is_empty());
    assert!(matches!(nr[0].reason.as_deref(), Some("access" | "safety")));
    // The new clearing, with its area and position.
    let nc: Vec<_> = first
        .reports
        .iter()
        .filter(|r| r.target == Target::NewClearing)
        .collect();
    assert_eq!(nc.len(), 1);
    assert!(nc[0].area_ha.is_some() && nc[0].position.is_some());
    // The amendment supersedes another report of the return, on the same target.
    let amended: Vec<_> = first
        .reports
        .iter()
        .filter(|r| r.supersedes.is_some())
        .collect();
    assert_eq!(amended.len(), 1);
    let base = first
        .reports
        .iter()
        .find(|r| Some(r.report_id) == amended[0].supersedes)
        .expect("superseded report in the return");
    assert_eq!(base.target, amended[0].target);
    assert_eq!(base.outcome, amended[0].outcome);
    assert!(base.cause != amended[0].cause || base.reason != amended[0].reason);
    // Controls: all visited; confirmed = clearing found, else false_alarm/no_change.
    let controls: Vec<_> = first
        .reports
        .iter()
        .filter(|r| matches!(r.target, Target::Control { .. }))
        .collect();
    assert_eq!(controls.len(), 3);
    assert!(controls.iter().any(|r| r.outcome == "confirmed"));
    assert!(controls.iter().all(|r| r.outcome == "confirmed"
        || (r.outcome == "false_alarm" && r.reason.as_deref() == Some("no_change"))));
    // The mix: every outcome present; one event with no report at all.
    let outcomes: BTreeSet<&str> = first.reports.iter().map(|r| r.outcome.as_str()).collect();
    assert_eq!(outcomes.len(), 4, "{outcomes:?}");
    assert_eq!(out.unvisited.len(), 1);
    assert!(
        !first
            .reports
            .iter()
            .any(|r| r.target.code() == Some(out.unvisited[0].as_str()))
    );
    // The dispute: the second device disagrees with the first's counted report
    // (the one no amendment supersedes) within a few days.
    let code = out.disputed.clone().expect("disputed event");
    let second = open(&out.returns[1].zip);
    assert!(second.rejected.is_empty(), "{:?}", second.rejected);
    assert_eq!(second.reports.len(), 1);
    let theirs = &second.reports[0];
    let superseded: BTreeSet<_> = first.reports.iter().filter_map(|r| r.supersedes).collect();
    let ours = first
        .reports
        .iter()
        .find(|r| r.target.code() == Some(code.as_str()) && !superseded.contains(&r.report_id))
        .expect("first device's report");
    let pair: BTreeSet<&str> = [ours.outcome.as_str(), theirs.outcome.as_str()].into();
    assert_eq!(pair, BTreeSet::from(["confirmed", "false_alarm"]));
    let gap = theirs.observed_at - ours.observed_at;
    assert!(gap > Duration::zero() && gap <= Duration::days(7));
    assert_eq!(validate_report(theirs, &checklist), Ok(()));
}

/// What must not change between runs with the same seed.
fn shape(o: &TripOutcome) -> Vec<String> {
    o.reports()
        .map(|r| {
            let flags: Vec<_> = r.flags.iter().map(ExpectedFlag::name).collect();
            format!(
                "{:?} {} {:?} {:?} {} {:?} {} {flags:?}",
                r.target,
                r.outcome,
                r.reason,
                r.cause,
                r.observed_at,
                r.photo_sha256,
                r.supersedes.is_some()
            )
        })
        .collect()
}

#[test]
fn same_seed_same_reports() {
    let dir = tempfile::tempdir().expect("tmp");
    let bundle_path = dir.path().join("bundle.zip");
    write_test_bundle(&bundle_path);
    let plan = TripPlan {
        disputed_pair: false,
        ..small_plan()
    };
    let a = make_trip_return(&bundle_path, &dir.path().join("a"), &plan, 3).expect("a");
    let b = make_trip_return(&bundle_path, &dir.path().join("b"), &plan, 3).expect("b");
    let c = make_trip_return(&bundle_path, &dir.path().join("c"), &plan, 4).expect("c");
    assert_eq!(shape(&a), shape(&b));
    assert_eq!(a.unvisited, b.unvisited);
    let shas = |o: &TripOutcome| -> BTreeSet<String> {
        o.reports().flat_map(|r| r.photo_sha256.clone()).collect()
    };
    // Different pixel seeds give different photo bytes.
    assert!(shas(&a).is_disjoint(&shas(&c)));
    // A used work folder is refused rather than mixed.
    assert!(make_trip_return(&bundle_path, &dir.path().join("a"), &plan, 3).is_err());
}

#[test]
fn outcome_mix_counts() {
    // Hand-computed largest-remainder counts (6 x 0.6/0.3/0.1 = 3.6/1.8/0.6).
    assert_eq!(outcome_mix(6, 0.6, 0.3), [3, 2, 1]);
    // 8 x 0.6/0.3/0.1 = 4.8/2.4/0.8 -> floors 4/2/0, remainders to confirmed and inconclusive.
    assert_eq!(outcome_mix(8, 0.6, 0.3), [5, 2, 1]);
    assert_eq!(outcome_mix(2, 0.6, 0.3), [1, 1, 0]);
    assert_eq!(outcome_mix(0, 0.6, 0.3), [0, 0, 0]);
    assert_eq!(outcome_mix(5, 1.0, 0.0), [5, 0, 0]);
    for m in 0..40 {
        assert_eq!(outcome_mix(m, 0.6, 0.3).iter().sum::<usize>(), m);
    }
}

#[test]
fn roles_cover_every_stop() {
    let events: Vec<String> = (0..8).map(|i| format!("K{i:04}")).collect();
    let controls: Vec<String> = (0..3).map(|i| format!("C{i:04}")).collect();
    let c = Checklist::default_v1();
    let mut rng = ChaCha8Rng::seed_from_u64(1);
    let roles = assign_roles(&events, &controls, &c, &TripPlan::default(), &mut rng);
    assert_eq!(roles.events.len(), 8);
    assert_eq!(roles.unvisited().len(), 1);
    let count = |f: &dyn Fn(&EventVisit) -> bool| {
        roles
            .events
            .iter()
            .filter(|(_, v)| v.as_ref().is_some_and(f))
            .count()
    };
    assert_eq!(count(&|v| matches!(v, EventVisit::NotReached { .. })), 1);
    // 6 visited: 3/2/1 as in outcome_mix_counts.
    assert_eq!(count(&|v| matches!(v, EventVisit::Confirmed { .. })), 3);
    assert_eq!(count(&|v| matches!(v, EventVisit::FalseAlarm { .. })), 2);
    assert_eq!(
        count(&|v| matches!(v, EventVisit::Confirmed { far: true, .. })),
        1
    );
    assert_eq!(
        count(&|v| matches!(v, EventVisit::Confirmed { early: true, .. })),
        1
    );
    let dispute = roles.dispute.clone().expect("dispute");
    assert!(matches!(
        roles.event(&dispute),
        Some(EventVisit::Confirmed {
            far: false,
            early: false,
            ..
        })
    ));
    // The three confirmed events carry the far photo, the early photo and the
    // dispute, so the amendment goes to a false alarm.
    let amend = roles.amend.clone().expect("amend");
    assert_ne!(amend, dispute);
    assert!(matches!(
        roles.event(&amend),
        Some(EventVisit::FalseAlarm { .. })
    ));
    let found = roles
        .controls
        .iter()
        .filter(|(_, v)| matches!(v, ControlVisit::Clearing { .. }))
        .count();
    assert_eq!(found, 1); // round(3 / 3)
    assert!(roles.new_clearing_after.is_some_and(|i| i < 11));
}

#[test]
fn spherical_offset_matches_the_geodesic() {
    // The spherical destination against Karney's WGS 84 inverse (geographiclib-rs
    // 0.2.7). Over short distances the ellipsoid's radius of curvature lies between
    // the meridian radius at the equator, a(1 - e^2) = 6,335,439 m, and the radius at
    // the poles, a / sqrt(1 - e^2) = 6,399,594 m (WGS 84 a = 6,378,137 m,
    // f = 1/298.257223563), i.e. -0.56% to +0.45% of the 6,371,008.8 m sphere;
    // hence a 0.6% bound.
    for (d, b) in [(30.0, 0.0), (800.0, 37.0), (2500.0, 250.0), (700.0, 90.0)] {
        let (lat, lon) = offset(-3.5, -60.8, d, b);
        let g = geodesic_m((-3.5, -60.8), (lat, lon));
        assert!((g - d).abs() < 0.006 * d, "{d} m at {b}: geodesic {g}");
    }
}

#[test]
fn clock_keeps_to_field_days() {
    let tz = zone_of(-60.8);
    assert_eq!(tz.local_minus_utc(), -4 * 3600); // -60.8 / 15 = -4.05 -> -4 h
    let issued = Utc
        .with_ymd_and_hms(2026, 3, 2, 15, 0, 0)
        .single()
        .expect("t");
    let mut clock = Clock::new(issued, issued + Duration::days(30), 1, tz);
    let first = clock.visit(100).expect("visit");
    // 07:30 at -04:00 on 2026-03-03 is 11:30 UTC.
    assert_eq!(
        first,
        Utc.with_ymd_and_hms(2026, 3, 3, 11, 30, 0)
            .single()
            .expect("t")
    );
    let end = NaiveTime::from_hms_opt(17, 0, 0).expect("t");
    for _ in 0..20 {
        let t = clock.visit(100).expect("visit").with_timezone(&tz).time();
        assert!(t >= NaiveTime::from_hms_opt(7, 30, 0).expect("t") && t <= end);
    }
    let mut short = Clock::new(issued, issued + Duration::hours(20), 1, tz);
    assert!(short.visit(100).is_err());
}
