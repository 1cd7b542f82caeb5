//! A small fixture worked by hand (arithmetic in the comments), reference
//! values of statistics.md for the sample estimates, a cross-check with
//! `crate::statistics::estimators::olofsson`, and a property test that the order and
//! duplication of reports change no figure.

use std::collections::BTreeMap;

use chrono::{DateTime, NaiveDate, TimeZone, Utc};
use proptest::prelude::*;
use uuid::Uuid;

use super::*;
use crate::domain::EventStatus;
use crate::reconcile::{Outcome, ReportFact, event_statuses};
use crate::statistics::estimators::{olofsson, wilson};

fn at(m: u32, d: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2025, m, d, 0, 0, 0)
        .single()
        .expect("valid time")
}

fn date(m: u32, d: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(2025, m, d).expect("valid date")
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

fn event(id: i64, detected: NaiveDate, status: EventStatus) -> EventFacts {
    EventFacts {
        event_id: id,
        zone_names: vec![],
        sources: vec![],
        highest_confidence: "high".into(),
        corroborated: false,
        area_ha: 1.0,
        first_detected: detected,
        issued_at: None,
        status,
        new_clearing: false,
        first_visit: None,
        first_received: None,
        cause: None,
        teams: vec![],
        sampled: None,
        found_on_ground: false,
    }
}

/// Six events, detection → issue → visit → received in whole days:
///
/// | id | detected | issued | status       | visit | received | zone | source      | area | cause  |
/// |----|----------|--------|--------------|-------|----------|------|-------------|------|--------|
/// | 1  | 03-01    | 03-03  | confirmed    | 03-05 | 03-06    | A    | optical-10m | 2.0  | mining |
/// | 2  | 03-01    | 03-02  | false_alarm  | 03-11 | 03-13    | A    | radar-10m   | 1.0  |        |
/// | 3  | 03-11    | 03-12  | not_reached  |       |          | B    | optical-10m | 3.0  |        |
/// | 4  | 03-21    |        | unvisited    |       |          | B    | optical-30m | 0.5  |        |
/// | 5  | 02-20    | 02-24  | confirmed    | 03-08 | 03-12    | A    | optical-10m | 4.0  | fire   |
/// | 6  | 03-01    | 03-02  | inconclusive | 03-03 | 03-04    | B    | radar-10m   | 1.5  |        |
fn fixture() -> Vec<EventFacts> {
    type Row<'a> = (
        i64,
        (u32, u32),
        Option<(u32, u32)>,
        EventStatus,
        Option<((u32, u32), (u32, u32))>,
        &'a str,
        &'a str,
        f64,
        Option<&'a str>,
    );
    let rows: [Row; 6] = [
        (
            1,
            (3, 1),
            Some((3, 3)),
            EventStatus::Confirmed,
            Some(((3, 5), (3, 6))),
            "A",
            "optical-10m",
            2.0,
            Some("mining"),
        ),
        (
            2,
            (3, 1),
            Some((3, 2)),
            EventStatus::FalseAlarm,
            Some(((3, 11), (3, 13))),
            "A",
            "radar-10m",
            1.0,
            None,
        ),
        (
            3,
            (3, 11),
            Some((3, 12)),
            EventStatus::NotReached,
            None,
            "B",
            "optical-10m",
            3.0,
            None,
        ),
        (
            4,
            (3, 21),
            None,
            EventStatus::Unvisited,
            None,
            "B",
            "optical-30m",
            0.5,
            None,
        ),
        (
            5,
            (2, 20),
            Some((2, 24)),
            EventStatus::Confirmed,
            Some(((3, 8), (3, 12))),
            "A",
            "optical-10m",
            4.0,
            Some("fire"),
        ),
        (
            6,
            (3, 1),
            Some((3, 2)),
            EventStatus::Inconclusive,
            Some(((3, 3), (3, 4))),
            "B",
            "radar-10m",
            1.5,
            None,
        ),
    ];
    rows.into_iter()
        .map(
            |(id, det, issued, status, visit, zone, source, area, cause)| {
                let mut e = event(id, date(det.0, det.1), status);
                e.issued_at = issued.map(|(m, d)| at(m, d));
                e.first_visit = visit.map(|((m, d), _)| at(m, d));
                e.first_received = visit.map(|(_, (m, d))| at(m, d));
                e.zone_names = vec![zone.into()];
                e.sources = vec![source.into()];
                e.area_ha = area;
                e.cause = cause.map(Into::into);
                e
            },
        )
        .collect()
}

#[test]
fn coverage_by_all_and_zone() {
    let all = coverage(&fixture(), GroupKey::All);
    // Issued: 1,2,3,5,6 = 5; visited: 1,2,5,6 = 4; not reached: 3; unvisited: 4.
    assert_eq!(
        all,
        vec![CoverageRow {
            group: "all".into(),
            events: 6,
            issued: 5,
            visited: 4,
            not_reached: 1,
            unvisited: 1,
            issued_and_visited: 4,
        }]
    );
    let zones = coverage(&fixture(), GroupKey::Zone);
    // A = {1,2,5}: all issued and visited. B = {3,4,6}: issued 3,6; visited 6.
    assert_eq!(zones.len(), 2);
    assert_eq!(
        (
            zones[0].group.as_str(),
            zones[0].events,
            zones[0].issued,
            zones[0].visited
        ),
        ("A", 3, 3, 3)
    );
    let b = &zones[1];
    assert_eq!(
        (
            b.group.as_str(),
            b.events,
            b.issued,
            b.visited,
            b.not_reached,
            b.unvisited
        ),
        ("B", 3, 2, 1, 1, 1)
    );
    // Month of detection: 2025-02 = {5}, 2025-03 = the other five.
    let months = coverage(&fixture(), GroupKey::DetectionMonth);
    assert_eq!(
        months
            .iter()
            .map(|r| (r.group.as_str(), r.events))
            .collect::<Vec<_>>(),
        vec![("2025-02", 1), ("2025-03", 5)]
    );
}

#[test]
fn confirmation_rate_with_wilson() {
    let rows = confirmation_rates(&fixture(), GroupKey::All).expect("valid");
    let r = &rows[0];
    // Confirmed {1,5} = 2, false alarm {2} = 1, inconclusive {6} apart: 2/3.
    assert_eq!((r.confirmed, r.false_alarm, r.inconclusive), (2, 1, 1));
    let rate = r.rate.as_ref().expect("rate");
    assert_eq!(Some(rate), wilson(2, 3).expect("valid").as_ref());
    // Wilson 2/3 by the formula of statistics.md §1.1 (Python 3.11 math):
    // centre (2 + z²/2)/(3 + z²), half z·√(2·1/3 + z²/4)/(3 + z²) → 0.207660, 0.938508.
    assert!(close(rate.ci95.lower, 0.207_660, 1e-6));
    assert!(close(rate.ci95.upper, 0.938_508, 1e-6));
    assert_eq!(r.basis, Basis::Descriptive);
    assert_eq!(
        serde_json::to_value(r.basis).expect("json"),
        "descriptive (response visits)"
    );
    // By source: optical-10m {1 C, 3 NR, 5 C} = 2/2; radar-10m {2 FA, 6 inc} = 0/1;
    // optical-30m {4 unvisited} has no row.
    let by_source = confirmation_rates(&fixture(), GroupKey::Source).expect("valid");
    let summary: Vec<_> = by_source
        .iter()
        .map(|r| (r.group.as_str(), r.confirmed, r.false_alarm, r.inconclusive))
        .collect();
    assert_eq!(
        summary,
        vec![("optical-10m", 2, 0, 0), ("radar-10m", 0, 1, 1)]
    );
}

#[test]
fn response_time_medians_and_p90() {
    let t = response_times(&fixture()).expect("valid");
    // Type 7: h = (n − 1)·p, Q = x_⌊h⌋ + (h − ⌊h⌋)(x_⌈h⌉ − x_⌊h⌋).
    // detection → issue: 2,1,1,4,1 → [1,1,1,2,4]; median 1; p90 h = 3.6 → 2 + 0.6·2 = 3.2.
    let d = t.detection_to_issue.expect("some");
    assert_eq!(d.count, 5);
    assert!(close(d.median, 1.0, 1e-12) && close(d.p90, 3.2, 1e-12));
    // issue → visit: 2,9,12,1 → [1,2,9,12]; median 5.5; p90 h = 2.7 → 9 + 0.7·3 = 11.1.
    let i = t.issue_to_visit.expect("some");
    assert!(close(i.median, 5.5, 1e-12) && close(i.p90, 11.1, 1e-12));
    // detection → visit: 4,10,16 (02-20 → 03-08 in 2025),2 → [2,4,10,16]; median 7; p90 10 + 0.7·6 = 14.2.
    let v = t.detection_to_visit.expect("some");
    assert!(close(v.median, 7.0, 1e-12) && close(v.p90, 14.2, 1e-12));
    // visit → received: 1,2,4,1 → [1,1,2,4]; median 1.5; p90 2 + 0.7·2 = 3.4.
    let r = t.visit_to_received.expect("some");
    assert!(close(r.median, 1.5, 1e-12) && close(r.p90, 3.4, 1e-12));
}

#[test]
fn time_to_visit_curves() {
    let t = time_to_visit(&fixture(), at(4, 1), DEFAULT_WITHIN_DAYS).expect("valid");
    assert_eq!(t.curves[0].label, "all events");
    assert_eq!(t.curves[1].label, "issued events");
    // Issued events: visits at 4 (1), 10 (2), 16 (5), 2 (6) days; event 3 censored
    // at 03-11 → 04-01 = 21 days. n = 5, one censored:
    // S(2) = 4/5 = 0.8, S(4) = 0.8·3/4 = 0.6, S(10) = 0.6·2/3 = 0.4, S(16) = 0.4·1/2 = 0.2.
    let issued = t.curves[1].curve.as_ref().expect("curve");
    assert_eq!((issued.subjects, issued.events, issued.censored), (5, 4, 1));
    let s: Vec<(f64, f64)> = issued.steps.iter().map(|s| (s.time, s.survival)).collect();
    let want = [
        (2.0, 0.8),
        (4.0, 0.6),
        (10.0, 0.4),
        (16.0, 0.2),
        (21.0, 0.2),
    ];
    for ((t1, s1), (t2, s2)) in s.iter().zip(want) {
        assert!(close(*t1, t2, 1e-9) && close(*s1, s2, 1e-12), "{t1} {s1}");
    }
    assert_eq!(issued.median, Some(10.0), "first S ≤ 0.5");
    // Greenwood at 10: 0.4·√(1/(5·4) + 1/(4·3) + 1/(3·2)) = 0.4·√0.3 = 0.219089.
    assert!(close(issued.steps[2].se.expect("se"), 0.219_089, 1e-6));
    // Within 14 days: 1 − S(14) = 1 − 0.4 = 0.6.
    let within = t.curves[1].visited_within.expect("share");
    assert!(close(within.share, 0.6, 1e-12));
    // All events adds event 4, censored at 03-21 → 04-01 = 11 days:
    // S(2) = 5/6, S(4) = 4/6, S(10) = 3/6 = 0.5 (median 10), S(16) = 0.5·1/2 = 0.25.
    let all = t.curves[0].curve.as_ref().expect("curve");
    assert_eq!((all.subjects, all.censored), (6, 2));
    assert_eq!(all.median, Some(10.0));
    assert!(close(
        all.survival_at(16.0).expect("ok").survival,
        0.25,
        1e-12
    ));
    assert!(close(
        t.curves[0].visited_within.expect("share").share,
        0.5,
        1e-12
    ));
}

#[test]
fn visits_after_as_of_are_censored() {
    // With as_of 03-09 event 2 (visit 03-11) is not yet visited: censored at 8 days.
    let t = time_to_visit(&fixture(), at(3, 9), 14.0).expect("valid");
    let c = &t.curves[0];
    // Event 3 (03-11) and 4 (03-21) were detected after 03-09.
    assert_eq!(c.detected_after_as_of, 2);
    let km = c.curve.as_ref().expect("curve");
    assert_eq!((km.subjects, km.events), (4, 3));
}

#[test]
fn cause_table() {
    let c = causes(&fixture());
    // Confirmed: 1 (mining, 2.0 ha, March), 5 (fire, 4.0 ha, February).
    let rows: Vec<_> = c
        .by_cause_and_month
        .iter()
        .map(|r| (r.cause.as_str(), r.month.as_deref(), r.events, r.area_ha))
        .collect();
    assert_eq!(
        rows,
        vec![
            ("fire", Some("2025-02"), 1, 4.0),
            ("mining", Some("2025-03"), 1, 2.0)
        ]
    );
    assert_eq!(c.by_cause.len(), 2);
}

fn fact(
    n: u128,
    event: i64,
    outcome: Outcome,
    observed: DateTime<Utc>,
    ok: bool,
    team: &str,
    bundle: u128,
) -> ReportFact {
    ReportFact {
        report_id: Uuid::from_u128(n),
        event_id: event,
        supersedes: None,
        outcome,
        reason: None,
        cause: None,
        observed_at: observed,
        received_at: observed,
        evidence_ok: ok,
        team: team.into(),
        bundle_id: Uuid::from_u128(bundle),
    }
}

fn bundles() -> BTreeMap<Uuid, DateTime<Utc>> {
    [(101, at(3, 3)), (102, at(3, 20)), (103, at(2, 24))]
        .into_iter()
        .map(|(b, t)| (Uuid::from_u128(b), t))
        .collect()
}

fn team_reports() -> Vec<ReportFact> {
    let r1 = fact(1, 1, Outcome::Confirmed, at(3, 5), true, "t1", 101);
    let r2 = fact(2, 2, Outcome::FalseAlarm, at(3, 11), false, "t1", 101);
    let mut r2b = fact(3, 2, Outcome::FalseAlarm, at(3, 11), true, "t1", 101);
    r2b.supersedes = Some(r2.report_id);
    let r3 = fact(4, 1, Outcome::Confirmed, at(3, 25), false, "t1", 102);
    let r4 = fact(5, 5, Outcome::Confirmed, at(3, 8), true, "t2", 103);
    let r5 = fact(6, 3, Outcome::NotReached, at(3, 12), false, "t2", 103);
    vec![r1.clone(), r2, r2b, r3, r4, r5, r1]
}

#[test]
fn team_table_by_hand() {
    let rows = team_table(&team_reports(), &bundles()).expect("valid");
    // t1: distinct reports 1,2,3,4 in bundles {101, 102} → 2 trips; report 2 is
    // superseded by 3, report 1 sent twice → counted 1,3,4 = 3 reports, evidence
    // ok 1 and 3 → 2/3; events reached {1, 2}; issue → visit: event 1 first by
    // report 1, 03-05 − 03-03 = 2; event 2 by report 3, 03-11 − 03-03 = 8; median 5.
    let t1 = &rows[0];
    assert_eq!(t1.team, "t1");
    assert_eq!(
        (t1.trips, t1.reports, t1.evidence_ok, t1.events_visited),
        (2, 3, 2, 2)
    );
    assert!(close(
        t1.evidence_ok_share.expect("share"),
        2.0 / 3.0,
        1e-12
    ));
    assert_eq!(t1.median_issue_to_visit_days, Some(5.0));
    // t2: bundle 103 → 1 trip; reports 5, 6 (evidence ok: 5) → 1/2; reached
    // only event 5 (6 is not reached): 03-08 − 02-24 = 12 days.
    let t2 = &rows[1];
    assert_eq!(
        (t2.trips, t2.reports, t2.evidence_ok, t2.events_visited),
        (1, 2, 1, 1)
    );
    assert_eq!(t2.evidence_ok_share, Some(0.5));
    assert_eq!(t2.median_issue_to_visit_days, Some(12.0));
}

fn sampled(id: i64, stratum: &str, population: u64, pi: f64, status: EventStatus) -> EventFacts {
    let mut e = event(id, date(3, 1), status);
    e.sampled = Some(SampleInfo {
        stratum: stratum.into(),
        inclusion_probability: pi,
        stratum_population: population,
    });
    e
}

#[test]
fn stratified_users_accuracy_matches_reference() {
    // statistics.md §2.4 (constructed; [C] samplics 0.6.0 TaylorEstimator):
    // N = 400/1000/600, respondents 40/50/30, confirmed 34/30/9
    // → p̂_st = 0.56, SE with fpc 0.0435901, CI 0.4745650–0.6454350.
    let mut events = Vec::new();
    let mut id = 0;
    for (stratum, population, n, x) in [
        ("corroborated", 400, 40, 34),
        ("confirmed", 1000, 50, 30),
        ("tentative", 600, 30, 9),
    ] {
        for k in 0..n {
            id += 1;
            let status = if k < x {
                EventStatus::Confirmed
            } else {
                EventStatus::FalseAlarm
            };
            events.push(sampled(
                id,
                stratum,
                population,
                (n + 2) as f64 / population as f64,
                status,
            ));
        }
        // Two non-respondents per stratum: one not reached, one inconclusive.
        for status in [EventStatus::NotReached, EventStatus::Inconclusive] {
            id += 1;
            events.push(sampled(
                id,
                stratum,
                population,
                (n + 2) as f64 / population as f64,
                status,
            ));
        }
    }
    let a = assessment(&events, &[]).expect("valid").expect("some");
    assert_eq!(a.basis, Basis::SampleEstimate);
    assert!(a.area.is_none());
    let ua = a.users_accuracy_of_alerts.expect("estimate").proportion;
    assert!(close(ua.estimate, 0.56, 1e-12));
    assert!(close(ua.se.expect("se"), 0.043_590_1, 1e-7));
    let ci = ua.ci95.expect("ci");
    assert!(close(ci.lower, 0.474_565_0, 1e-7) && close(ci.upper, 0.645_435_0, 1e-7));
    // Non-response is reported per stratum, not dropped.
    for s in &a.alert_strata {
        assert_eq!(s.non_response.not_reached, 1);
        assert_eq!(s.non_response.inconclusive, 1);
        assert_eq!(s.non_response.total(), 2);
    }
    // Per stratum, corroborated: 34/40 = 0.85, SE = √((1 − 40/400)·0.85·0.15/39)
    // = √(0.9·0.1275/39) = 0.0542430 (hand formula of statistics.md §1.2a).
    let c = a
        .alert_strata
        .iter()
        .find(|s| s.stratum == "corroborated")
        .expect("stratum");
    let u = c.users_accuracy.expect("ua");
    assert!(close(u.estimate, 0.85, 1e-12));
    assert!(close(u.se.expect("se"), 0.054_243_0, 1e-7));
}

#[test]
fn error_matrix_agrees_with_olofsson() {
    // One alert stratum: 10 events of 1 ha, π = 0.1 → A = 100 ha; 8 confirmed, 2 false.
    // One control stratum: 20 points of 1 ha, π = 0.002 → A = 10 000 ha; 1 clearing.
    let mut events: Vec<EventFacts> = (0..10)
        .map(|i| {
            sampled(
                i,
                "alert",
                100,
                0.1,
                if i < 8 {
                    EventStatus::Confirmed
                } else {
                    EventStatus::FalseAlarm
                },
            )
        })
        .collect();
    events.push(sampled(10, "alert", 100, 0.1, EventStatus::NotReached));
    let controls: Vec<ControlFacts> = (0..21)
        .map(|i| ControlFacts {
            stratum: "control".into(),
            finding: match i {
                0 => ControlFinding::Clearing { area_ha: None },
                20 => ControlFinding::NotReached,
                _ => ControlFinding::NoClearing,
            },
            area_ha: 1.0,
            inclusion_probability: 0.002,
        })
        .collect();
    let a = assessment(&events, &controls)
        .expect("valid")
        .expect("some");
    assert_eq!(a.control_strata[0].not_reached, 1);
    let area = a.area.expect("area");
    // Areas include the non-respondents of the selection: 11/0.1 = 110, 21/0.002 = 10 500.
    assert!(close(area.total_area_ha, 10_610.0, 1e-9));
    // The same matrix through crate::statistics::estimators::olofsson (classes: clearing, no clearing).
    let reference = olofsson(&[vec![8, 2], vec![1, 19]], &[110.0, 10_500.0])
        .expect("valid")
        .expect("some");
    let same = |a: &crate::statistics::estimators::Estimate,
                b: &crate::statistics::estimators::Estimate| {
        close(a.estimate, b.estimate, 1e-12) && close(a.se.expect("se"), b.se.expect("se"), 1e-12)
    };
    assert!(same(&area.overall_accuracy, &reference.overall));
    assert!(same(
        &area.users_accuracy_alert.expect("ua"),
        &reference.classes[0].users.expect("ua")
    ));
    assert!(same(
        &area.users_accuracy_no_alert.expect("ua"),
        &reference.classes[1].users.expect("ua")
    ));
    assert!(same(
        &area.producers_accuracy_clearing.expect("pa"),
        &reference.classes[0].producers.expect("pa")
    ));
    assert!(same(&area.clearing_area_ha, &reference.classes[0].area));
    // By hand: area of clearing = 110·0.8 + 10 500·(1/20) = 88 + 525 = 613 ha;
    // producer's accuracy = 88/613 = 0.143556.
    assert!(close(area.clearing_area_ha.estimate, 613.0, 1e-9));
    assert!(close(
        area.producers_accuracy_clearing.expect("pa").estimate,
        88.0 / 613.0,
        1e-12
    ));
}

#[test]
fn bad_sample_input_is_an_error() {
    let e = [sampled(1, "s", 10, 0.0, EventStatus::Confirmed)];
    assert!(matches!(
        assessment(&e, &[]),
        Err(FiguresError::BadInclusionProbability { .. })
    ));
    let e = [
        sampled(1, "s", 10, 0.2, EventStatus::Confirmed),
        sampled(2, "s", 11, 0.2, EventStatus::Confirmed),
    ];
    assert!(matches!(
        assessment(&e, &[]),
        Err(FiguresError::InconsistentStratum { .. })
    ));
    assert_eq!(assessment(&[], &[]), Ok(None));
}

fn base_events() -> Vec<EventFacts> {
    (1..=4)
        .map(|i| {
            let mut e = sampled(
                i,
                if i % 2 == 0 { "even" } else { "odd" },
                20,
                0.1,
                EventStatus::Unvisited,
            );
            e.first_detected = date(2, 10 + i as u32);
            e.issued_at = Some(at(2, 20));
            e.zone_names = vec![format!("zone-{}", i % 3)];
            e.sources = vec!["optical-10m".into()];
            e.area_ha = 0.5 * i as f64;
            e
        })
        .collect()
}

fn figures_for(reports: &[ReportFact]) -> Figures {
    let statuses = event_statuses(reports, &[], 30);
    let mut events = base_events();
    for e in &mut events {
        if let Some(s) = statuses.get(&e.event_id) {
            e.apply_status(s);
        }
    }
    let controls = [ControlFacts {
        stratum: "control".into(),
        finding: ControlFinding::NoClearing,
        area_ha: 1.0,
        inclusion_probability: 0.01,
    }; 1];
    let controls = [
        controls[0].clone(),
        ControlFacts {
            finding: ControlFinding::Clearing { area_ha: None },
            ..controls[0].clone()
        },
        controls[0].clone(),
    ];
    all_figures(
        &events,
        reports,
        &bundles(),
        &controls,
        &FigureOptions::new(at(4, 1)),
    )
    .expect("valid input")
}

fn arb_reports() -> impl Strategy<Value = Vec<ReportFact>> {
    prop::collection::vec(
        (
            1..=4i64,
            0..4u8,
            0..60i64,
            any::<bool>(),
            prop::option::of(1..8u128),
            0..2u8,
            101..=103u128,
        ),
        0..8,
    )
    .prop_map(|rows| {
        rows.into_iter()
            .enumerate()
            .map(|(i, (event, o, d, ok, sup, team, bundle))| {
                let outcome = [
                    Outcome::Confirmed,
                    Outcome::FalseAlarm,
                    Outcome::Inconclusive,
                    Outcome::NotReached,
                ][usize::from(o)];
                let mut r = fact(
                    i as u128 + 1,
                    event,
                    outcome,
                    at(2, 20) + chrono::Duration::days(d),
                    ok,
                    &format!("t{team}"),
                    bundle,
                );
                r.supersedes = sup.map(Uuid::from_u128);
                r.cause = (outcome == Outcome::Confirmed).then(|| format!("cause-{}", d % 3));
                r
            })
            .collect()
    })
}

proptest! {
    #[test]
    fn figures_ignore_report_order_and_duplicates(
        reports in arb_reports(),
        dup in prop::collection::vec(0..8usize, 0..5),
        order in any::<u64>(),
    ) {
        let expected = figures_for(&reports);
        let mut input = reports.clone();
        input.extend(dup.iter().filter_map(|&i| reports.get(i).cloned()));
        let mut state = order;
        for k in (1..input.len()).rev() {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            input.swap(k, (state >> 33) as usize % (k + 1));
        }
        prop_assert_eq!(figures_for(&input), expected);
    }
}

/// The team table as first written (ordered maps over the reports of
/// `crate::reconcile`'s public rules), to check the faster one against.
fn team_table_reference(
    reports: &[ReportFact],
    issued: &BTreeMap<Uuid, DateTime<Utc>>,
) -> Vec<TeamRow> {
    use std::collections::BTreeSet;
    let mut trips: BTreeMap<String, BTreeSet<Uuid>> = BTreeMap::new();
    for r in crate::reconcile::distinct_reports(reports) {
        trips.entry(r.team.clone()).or_default().insert(r.bundle_id);
    }
    let mut per_team: BTreeMap<String, (u64, u64, BTreeMap<i64, ReportFact>)> = BTreeMap::new();
    for r in crate::reconcile::counted_reports(reports) {
        let t = per_team.entry(r.team.clone()).or_default();
        t.0 += 1;
        t.1 += u64::from(r.evidence_ok);
        if r.outcome.reached() {
            t.2.entry(r.event_id).or_insert(r);
        }
    }
    trips
        .into_iter()
        .map(|(team, bundles)| {
            let (n, ok, visits) = per_team.remove(&team).unwrap_or_default();
            let waits: Vec<f64> = visits
                .values()
                .filter_map(|r| {
                    issued
                        .get(&r.bundle_id)
                        .map(|i| days_between(*i, r.observed_at))
                })
                .collect();
            TeamRow {
                team,
                trips: bundles.len() as u64,
                events_visited: visits.len() as u64,
                reports: n,
                evidence_ok: ok,
                evidence_ok_share: (n > 0).then(|| ok as f64 / n as f64),
                median_issue_to_visit_days: crate::statistics::estimators::median(&waits)
                    .expect("finite"),
            }
        })
        .collect()
}

proptest! {
    /// Copies (also with another team), supersession (also across teams and
    /// in cycles) and ties of time: the team table equals the reference.
    #[test]
    fn team_table_matches_the_reference(
        rows in prop::collection::vec(
            (0..30u128, 0..5i64, 0..4u8, 0..6u32, any::<bool>(), 0..3u8, 0..4u128, prop::option::of(0..30u128)),
            0..60,
        )
    ) {
        let outcomes = [Outcome::Confirmed, Outcome::FalseAlarm, Outcome::Inconclusive, Outcome::NotReached];
        let reports: Vec<ReportFact> = rows
            .iter()
            .map(|&(n, event, o, d, ok, team, bundle, sup)| {
                let mut r = fact(n, event, outcomes[o as usize], at(3, 1 + d), ok, &format!("t{team}"), 100 + bundle);
                r.supersedes = sup.map(Uuid::from_u128);
                r.received_at = at(4, 1 + (n as u32 + d) % 5);
                r
            })
            .collect();
        let issued: BTreeMap<Uuid, DateTime<Utc>> =
            [(100, at(2, 20)), (101, at(2, 25)), (102, at(3, 2))]
                .into_iter()
                .map(|(b, t)| (Uuid::from_u128(b), t))
                .collect();
        prop_assert_eq!(team_table(&reports, &issued).expect("valid"), team_table_reference(&reports, &issued));
    }
}

#[test]
fn clearings_found_on_the_ground_are_not_an_alert_source() {
    // Issue 14: "field" sat beside the alert sources at 100% confirmed.
    // Two clearings found on the ground (3.0 ha and 2.5 ha, confirmed,
    // visited on their detection day) join the six events of the fixture.
    let mut events = fixture();
    for (id, area) in [(7, 3.0), (8, 2.5)] {
        let mut e = event(id, date(3, 15), EventStatus::Confirmed);
        e.sources = vec![];
        e.area_ha = area;
        e.first_visit = Some(at(3, 15));
        e.found_on_ground = true;
        events.push(e);
    }
    let f = all_figures(
        &events,
        &[],
        &BTreeMap::new(),
        &[],
        &FigureOptions::new(at(4, 1)),
    )
    .expect("valid input");
    assert_eq!(f.found_on_ground.clearings, 2);
    assert!(close(f.found_on_ground.area_ha, 5.5, 1e-12));
    // The alert figures are those of the six alert events alone.
    let alone = all_figures(
        &fixture(),
        &[],
        &BTreeMap::new(),
        &[],
        &FigureOptions::new(at(4, 1)),
    )
    .expect("valid input");
    assert_eq!(f.coverage, alone.coverage);
    assert_eq!(f.confirmation, alone.confirmation);
    assert_eq!(f.time_to_visit, alone.time_to_visit);
    assert_eq!(f.target, alone.target);
    let sources = &f
        .confirmation
        .iter()
        .find(|g| g.key == GroupKey::Source)
        .expect("by source")
        .rows;
    assert!(
        sources
            .iter()
            .all(|r| r.group != "field" && r.group != NO_VALUE)
    );
    // The page's total and the curve's n agree: every event was detected by as_of.
    let total = f.coverage[0].rows[0].events;
    let n = f.time_to_visit.curves[0]
        .curve
        .as_ref()
        .map_or(0, |k| k.subjects) as u64;
    assert_eq!((total, n), (6, 6));
}
