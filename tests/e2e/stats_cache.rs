//! The server keeps the statistics between requests while the facts stay
//! the same. After every kind of write (alerts imported, a trip issued,
//! returns taken in, a dispute settled, zones replaced), every selection
//! the API serves must be exactly what a fresh computation from storage
//! gives: the figures never lag the facts.

use groundproof::domain::Day;
use groundproof::statistics::figures::FigureOptions;
use groundproof::statistics::kept::{StatsFilter, figures};
use groundproof_e2e::{
    TestServer, disputed_trip_returns, get, issue_from_station, load_scenario, post_bytes,
    post_json,
};
use serde_json::json;

/// The report date of every request here (`as_of`), end of that day.
const AS_OF: &str = "2026-12-01";

/// Selections asked of the API: none, a zone, a team, a source, a period.
fn selections() -> Vec<(&'static str, StatsFilter)> {
    vec![
        ("", StatsFilter::default()),
        (
            "&zone=Core",
            StatsFilter {
                zone: Some("Core".into()),
                ..Default::default()
            },
        ),
        (
            "&team=Team%20Amber",
            StatsFilter {
                team: Some("Team Amber".into()),
                ..Default::default()
            },
        ),
        (
            "&source=radar-10m",
            StatsFilter {
                source: Some("radar-10m".into()),
                ..Default::default()
            },
        ),
        (
            "&from=2026-01-01&to=2026-12-31",
            StatsFilter {
                from: Day::parse("2026-01-01").ok(),
                to: Day::parse("2026-12-31").ok(),
                ..Default::default()
            },
        ),
    ]
}

/// Every selection served equals a fresh computation, byte for byte.
fn served_equals_fresh(s: &TestServer, step: &str) {
    let as_of = Day::parse(AS_OF)
        .expect("a day")
        .date()
        .and_hms_opt(23, 59, 59)
        .expect("a time")
        .and_utc();
    for (query, filter) in selections() {
        let served = get(&s.url(&format!("/api/v1/stats?as_of={AS_OF}{query}")));
        assert_eq!(served.status, 200, "{step} {query}: {}", served.body);
        let fresh = figures(&s.db, &filter, &FigureOptions::new(as_of)).expect("fresh figures");
        let fresh = serde_json::to_string(&fresh).expect("serialised");
        assert!(
            served.body == fresh,
            "{step}, selection '{query}': the served figures differ from a fresh computation"
        );
    }
}

/// Visited events in the unfiltered coverage table.
fn visited(s: &TestServer) -> u64 {
    let c = get(&s.url("/api/v1/stats/coverage")).json();
    c["coverage"]
        .as_array()
        .and_then(|g| g.iter().find(|g| g["key"] == "all"))
        .and_then(|g| g["rows"][0]["visited"].as_u64())
        .expect("an overall coverage row")
}

#[test]
fn kept_statistics_follow_every_kind_of_write() {
    let s = TestServer::start();
    served_equals_fresh(&s, "empty");
    load_scenario(&s);
    served_equals_fresh(&s, "after the alerts");
    // Asked twice on the same facts: the same answer.
    served_equals_fresh(&s, "asked again");

    let (_, bytes) =
        issue_from_station(&s, json!({"team": "Team Amber", "zone": "Core", "max": 8}));
    served_equals_fresh(&s, "after a trip was issued");

    let work = tempfile::tempdir().expect("temp dir");
    let before = visited(&s);
    for (i, zip) in disputed_trip_returns(&bytes, work.path())
        .iter()
        .enumerate()
    {
        let r = post_bytes(&s.url("/api/v1/returns"), "application/zip", zip);
        assert!(r.status == 200 || r.status == 201, "{}", r.body);
        served_equals_fresh(&s, &format!("after return {}", i + 1));
    }
    assert!(
        visited(&s) > before,
        "the returns show as visits at once, not on some later request"
    );

    let disputes = get(&s.url("/api/v1/disputes")).json();
    let event = disputes[0]["event_id"]
        .as_i64()
        .expect("the two devices disagree on one event");
    let r = post_json(
        &s.url(&format!("/api/v1/events/{event}/adjudications")),
        &json!({"outcome": "confirmed", "reason": "the photos show fresh stumps", "by": "Manager Test"}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    served_equals_fresh(&s, "after an adjudication");
    let disputes = get(&s.url("/api/v1/disputes")).json();
    assert!(
        disputes
            .as_array()
            .is_some_and(|d| d.iter().all(|d| d["event_id"] != event)),
        "the settled event is no longer listed as disputed"
    );

    // A second batch of alerts grows and merges events.
    let scenario = mock_patrols::scenario();
    for (source, rows) in mock_patrols::generate_alerts(&scenario, 43) {
        if source == "radar-10m" {
            continue;
        }
        let r = post_bytes(
            &s.url(&format!("/api/v1/alerts?source={source}")),
            "text/plain",
            mock_patrols::alerts_csv(&rows).as_bytes(),
        );
        assert_eq!(r.status, 200, "{}", r.body);
    }
    served_equals_fresh(&s, "after more alerts");

    let z = post_bytes(
        &s.url("/api/v1/zones"),
        "application/geo+json",
        mock_patrols::zones_geojson(&scenario).as_bytes(),
    );
    assert_eq!(z.status, 200, "{}", z.body);
    served_equals_fresh(&s, "after the zones were loaded again");
}
