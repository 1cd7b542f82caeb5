//! The demo tells a programme maturing: over its year of trips, the time
//! from detection to the team's visit, from issue to visit and from the
//! visit to the return at the station all shrink; the trips spread over the
//! year; the same seed issues the same trips.

use groundproof::demo::{DEMO_TRIPS, load, run_trips};
use groundproof::domain::TargetKind;
use groundproof::platform::settings::Settings;
use groundproof_e2e::TestServer;
use std::collections::BTreeMap;

fn median(mut v: Vec<f64>) -> f64 {
    assert!(!v.is_empty());
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

/// Per bundle, in issue order: (detection → visit, issue → visit, visit → received) in days,
/// one value per event report.
type Steps = Vec<(Vec<f64>, Vec<f64>, Vec<f64>)>;

fn steps_by_trip(s: &TestServer) -> Steps {
    let bundles = s.db.read(|r| r.bundles()).unwrap();
    let issued: BTreeMap<String, chrono::DateTime<chrono::Utc>> = bundles
        .iter()
        .map(|b| {
            let t = chrono::DateTime::parse_from_rfc3339(&b.issued_at).unwrap();
            (b.id.clone(), t.with_timezone(&chrono::Utc))
        })
        .collect();
    let mut order: Vec<(&chrono::DateTime<chrono::Utc>, &String)> =
        issued.iter().map(|(id, t)| (t, id)).collect();
    order.sort();
    let mut out: Steps = vec![Default::default(); order.len()];
    let days = |a: chrono::DateTime<chrono::Utc>, b: chrono::DateTime<chrono::Utc>| {
        (b - a).num_seconds() as f64 / 86_400.0
    };
    for r in s.db.read(|x| x.report_facts()).unwrap() {
        if r.kind != TargetKind::Event || !r.outcome.reached() {
            continue;
        }
        let i = order
            .iter()
            .position(|(_, id)| **id == r.bundle_id)
            .unwrap();
        let ev =
            s.db.read(|x| x.event_resolved(r.event_id.unwrap()))
                .unwrap()
                .unwrap();
        let detected = ev
            .attrs
            .first
            .date()
            .and_hms_opt(0, 0, 0)
            .unwrap()
            .and_utc();
        let seen = r.observed_at.utc();
        out[i].0.push(days(detected, seen));
        out[i].1.push(days(issued[&r.bundle_id], seen));
        out[i].2.push(days(seen, r.received_at.utc()));
    }
    out
}

#[test]
fn the_demo_year_shows_response_times_improving() {
    let s = TestServer::start();
    let work = tempfile::tempdir().unwrap();
    let summary = load(&s.db, s.data_dir(), &Settings::default()).unwrap();
    assert_eq!(summary.bundles.len(), DEMO_TRIPS.len());
    // Trips spread over the year, more often as it goes on.
    let gaps: Vec<i64> = summary
        .issued_at
        .windows(2)
        .map(|w| (w[1] - w[0]).num_days())
        .collect();
    assert!(gaps.iter().all(|g| *g > 0), "{gaps:?}");
    assert!(
        gaps.first().unwrap() > gaps.last().unwrap(),
        "trips come more often: {gaps:?}"
    );
    let span = (*summary.issued_at.last().unwrap() - summary.issued_at[0]).num_days();
    assert!(span > 270, "the trips span the year: {span} days");

    // The same seed issues the same trips (a second load in a new store).
    let again = TestServer::start();
    let other = load(&again.db, again.data_dir(), &Settings::default()).unwrap();
    let shape = |x: &groundproof::demo::DemoSummary| -> Vec<(String, String, i64, i64)> {
        x.bundles
            .iter()
            .map(|(t, m, e, c, _)| (t.clone(), m.clone(), *e, *c))
            .collect()
    };
    assert_eq!(shape(&summary), shape(&other));
    assert_eq!(summary.alerts, other.alerts);

    let lines = run_trips(&s.db, &summary, work.path(), &s.url("")).unwrap();
    assert!(
        lines.iter().all(|l| l.ends_with(" 0 rejected")),
        "{lines:#?}"
    );
    let steps = steps_by_trip(&s);
    let first: Vec<_> = steps[..3].to_vec();
    let last: Vec<_> = steps[steps.len() - 3..].to_vec();
    let med = |part: &[(Vec<f64>, Vec<f64>, Vec<f64>)], k: usize| {
        median(
            part.iter()
                .flat_map(|t| match k {
                    0 => t.0.clone(),
                    1 => t.1.clone(),
                    _ => t.2.clone(),
                })
                .collect(),
        )
    };
    for (k, what) in [
        (0, "detection to visit"),
        (1, "issue to visit"),
        (2, "visit to received"),
    ] {
        let (early, late) = (med(&first, k), med(&last, k));
        eprintln!("{what}: first three trips {early:.1} d, last three {late:.1} d");
        assert!(late < early, "{what}: {late} should be below {early}");
        assert!(late >= 0.0, "{what}: {late}");
    }
}
