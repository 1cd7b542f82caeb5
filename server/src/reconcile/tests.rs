//! Hand-worked cases, one or more per rule of the module docs, and property
//! tests for order and duplication. Expected values follow from the rules as
//! written (common practice: the rules are the project's own definitions).

use chrono::{DateTime, Duration, TimeZone, Utc};
use proptest::prelude::*;
use uuid::Uuid;

use super::*;
use crate::domain::EventStatus;

fn day(d: i64) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2025, 3, 1, 9, 0, 0)
        .single()
        .expect("valid time")
        + Duration::days(d)
}

fn id(n: u128) -> Uuid {
    Uuid::from_u128(n)
}

fn report(n: u128, outcome: Outcome, observed_day: i64) -> ReportFact {
    ReportFact {
        report_id: id(n),
        event_id: 7,
        supersedes: None,
        outcome,
        reason: None,
        cause: None,
        observed_at: day(observed_day),
        received_at: day(observed_day + 2),
        evidence_ok: false,
        team: format!("team-{}", n % 2),
        bundle_id: id(1000 + n % 3),
    }
}

fn with(mut r: ReportFact, f: impl FnOnce(&mut ReportFact)) -> ReportFact {
    f(&mut r);
    r
}

fn status(reports: &[ReportFact]) -> StatusOutcome {
    event_status(reports, &[], DEFAULT_WINDOW_DAYS)
}

#[test]
fn no_reports_is_unvisited() {
    let s = status(&[]);
    assert_eq!(s.status, EventStatus::Unvisited);
    assert_eq!(s.first_visit, None);
    assert!(s.counted_reports.is_empty());
}

#[test]
fn only_not_reached_is_not_reached() {
    let s = status(&[
        report(1, Outcome::NotReached, 0),
        report(2, Outcome::NotReached, 40),
    ]);
    assert_eq!(s.status, EventStatus::NotReached);
    assert_eq!(s.first_visit, None, "not_reached is no visit");
    assert_eq!(s.counted_reports, vec![id(1), id(2)]);
}

#[test]
fn reached_only_inconclusive_is_inconclusive() {
    let s = status(&[
        report(1, Outcome::NotReached, 0),
        report(2, Outcome::Inconclusive, 5),
    ]);
    assert_eq!(s.status, EventStatus::Inconclusive);
    assert_eq!(s.first_visit, Some(day(5)));
    assert_eq!(s.first_received, Some(day(7)));
}

#[test]
fn one_visit_reaching_beats_not_reached() {
    let s = status(&[
        report(1, Outcome::NotReached, 0),
        report(2, Outcome::Confirmed, 3),
    ]);
    assert_eq!(s.status, EventStatus::Confirmed);
    assert!(!s.new_clearing);
}

#[test]
fn duplicates_count_once_and_keep_first_received() {
    let a = report(1, Outcome::Confirmed, 0);
    let late_copy = with(a.clone(), |r| r.received_at = day(9));
    let s = status(&[late_copy, a.clone(), a]);
    assert_eq!(s.counted_reports, vec![id(1)]);
    assert_eq!(s.first_received, Some(day(2)));
}

#[test]
fn superseded_report_does_not_count_along_a_chain() {
    // 1 (false alarm) <- 2 (confirmed) <- 3 (confirmed, with cause): only 3 counts.
    let r1 = report(1, Outcome::FalseAlarm, 0);
    let r2 = with(report(2, Outcome::Confirmed, 0), |r| {
        r.supersedes = Some(id(1))
    });
    let r3 = with(report(3, Outcome::Confirmed, 0), |r| {
        r.supersedes = Some(id(2));
        r.cause = Some("mining".into());
    });
    let s = status(&[r3, r1, r2]);
    assert_eq!(s.counted_reports, vec![id(3)]);
    assert_eq!(s.status, EventStatus::Confirmed);
    assert_eq!(s.cause.as_deref(), Some("mining"));
}

#[test]
fn superseding_an_unknown_or_itself_still_counts() {
    let r1 = with(report(1, Outcome::Confirmed, 0), |r| {
        r.supersedes = Some(id(99))
    });
    let r2 = with(report(2, Outcome::Confirmed, 1), |r| {
        r.supersedes = Some(id(2))
    });
    let s = status(&[r1, r2]);
    assert_eq!(s.counted_reports, vec![id(1), id(2)]);
}

#[test]
fn supersession_cycle_keeps_the_last_member() {
    // 1 -> 2 -> 1: both named; the one sorting last by (observed_at, id) is 2.
    let r1 = with(report(1, Outcome::FalseAlarm, 0), |r| {
        r.supersedes = Some(id(2))
    });
    let r2 = with(report(2, Outcome::Confirmed, 0), |r| {
        r.supersedes = Some(id(1))
    });
    assert_eq!(
        status(&[r1.clone(), r2.clone()]).counted_reports,
        vec![id(2)]
    );
    // An outside report 3 naming 1 replaces the whole cycle.
    let r3 = with(report(3, Outcome::Inconclusive, 0), |r| {
        r.supersedes = Some(id(1))
    });
    assert_eq!(status(&[r1, r2, r3]).counted_reports, vec![id(3)]);
}

#[test]
fn disagreement_within_window_is_disputed() {
    // Day 0 false alarm, day 30 confirmed: 30 days is within the window (not more).
    let s = status(&[
        report(1, Outcome::FalseAlarm, 0),
        report(2, Outcome::Confirmed, 30),
    ]);
    assert_eq!(s.status, EventStatus::Disputed);
    assert!(!s.new_clearing);
}

#[test]
fn disputed_when_both_sides_have_evidence() {
    let s = status(&[
        with(report(1, Outcome::FalseAlarm, 0), |r| r.evidence_ok = true),
        with(report(2, Outcome::Confirmed, 3), |r| r.evidence_ok = true),
    ]);
    assert_eq!(s.status, EventStatus::Disputed);
}

#[test]
fn side_with_only_passing_evidence_wins() {
    let c = status(&[
        report(1, Outcome::FalseAlarm, 0),
        with(report(2, Outcome::Confirmed, 3), |r| r.evidence_ok = true),
    ]);
    assert_eq!(c.status, EventStatus::Confirmed);
    assert!(!c.new_clearing);
    let f = status(&[
        with(report(1, Outcome::FalseAlarm, 0), |r| r.evidence_ok = true),
        report(2, Outcome::Confirmed, 3),
        report(3, Outcome::Confirmed, 4),
    ]);
    assert_eq!(f.status, EventStatus::FalseAlarm);
}

#[test]
fn confirmed_more_than_window_after_false_alarm_is_new_clearing() {
    // Day 0 false alarm, day 31 confirmed: 31 > 30 days, separate episodes.
    let s = status(&[
        report(1, Outcome::FalseAlarm, 0),
        with(report(2, Outcome::Confirmed, 31), |r| {
            r.cause = Some("fire".into())
        }),
    ]);
    assert_eq!(s.status, EventStatus::Confirmed);
    assert!(s.new_clearing);
    assert_eq!(s.cause.as_deref(), Some("fire"));
    // With a window of 40 days the same two reports disagree within it.
    let w = event_status(
        &[
            report(1, Outcome::FalseAlarm, 0),
            report(2, Outcome::Confirmed, 31),
        ],
        &[],
        40,
    );
    assert_eq!(w.status, EventStatus::Disputed);
}

#[test]
fn episodes_chain_through_close_reports() {
    // FA day 0, FA day 25, C day 50: each gap 25 <= 30, one episode, disputed.
    let s = status(&[
        report(1, Outcome::FalseAlarm, 0),
        report(2, Outcome::FalseAlarm, 25),
        report(3, Outcome::Confirmed, 50),
    ]);
    assert_eq!(s.status, EventStatus::Disputed);
}

#[test]
fn later_false_alarm_does_not_undo_confirmed() {
    let s = status(&[
        report(1, Outcome::Confirmed, 0),
        report(2, Outcome::FalseAlarm, 90),
    ]);
    assert_eq!(s.status, EventStatus::Confirmed);
    assert!(!s.new_clearing);
    assert!(s.note.contains("later false alarm"));
}

#[test]
fn false_alarms_only() {
    let s = status(&[
        report(1, Outcome::FalseAlarm, 0),
        report(2, Outcome::Inconclusive, 1),
    ]);
    assert_eq!(s.status, EventStatus::FalseAlarm);
    assert_eq!(s.cause, None);
}

#[test]
fn latest_adjudication_settles_and_overrides() {
    let reports = [
        report(1, Outcome::FalseAlarm, 0),
        report(2, Outcome::Confirmed, 3),
    ];
    let adj = |outcome, at| Adjudication {
        event_id: 7,
        outcome,
        reason: "photos reviewed".into(),
        by: "coordinator-a".into(),
        at: day(at),
    };
    let s = event_status(
        &reports,
        &[adj(Outcome::Confirmed, 20), adj(Outcome::FalseAlarm, 10)],
        30,
    );
    assert_eq!(s.status, EventStatus::Confirmed, "the latest (day 20) wins");
    assert!(s.adjudicated);
    // Override of an undisputed outcome, and of an event with no reports.
    let o = event_status(&reports[..1], &[adj(Outcome::Confirmed, 5)], 30);
    assert_eq!(o.status, EventStatus::Confirmed);
    let n = event_status(&[], &[adj(Outcome::FalseAlarm, 5)], 30);
    assert_eq!(n.status, EventStatus::FalseAlarm);
    assert_eq!(n.first_visit, None);
}

#[test]
fn adjudication_keeps_new_clearing_only_when_confirmed() {
    let reports = [
        report(1, Outcome::FalseAlarm, 0),
        report(2, Outcome::Confirmed, 60),
    ];
    let adj = |outcome| Adjudication {
        event_id: 7,
        outcome,
        reason: "r".into(),
        by: "b".into(),
        at: day(70),
    };
    assert!(event_status(&reports, &[adj(Outcome::Confirmed)], 30).new_clearing);
    assert!(!event_status(&reports, &[adj(Outcome::FalseAlarm)], 30).new_clearing);
}

#[test]
fn event_statuses_resolve_supersession_across_events() {
    // Report 1 named event 7; its amendment 2 moves it to event 8.
    let r1 = report(1, Outcome::Confirmed, 0);
    let r2 = with(report(2, Outcome::Confirmed, 0), |r| {
        r.event_id = 8;
        r.supersedes = Some(id(1));
    });
    let all = event_statuses(&[r1, r2], &[], DEFAULT_WINDOW_DAYS);
    assert_eq!(all[&7].status, EventStatus::Unvisited);
    assert_eq!(all[&8].status, EventStatus::Confirmed);
}

fn arb_reports() -> impl Strategy<Value = Vec<ReportFact>> {
    prop::collection::vec(
        (
            0..4u8,
            0..120i64,
            any::<bool>(),
            prop::option::of(0..10u128),
            prop::option::of(0..3u8),
        ),
        0..9,
    )
    .prop_map(|rows| {
        rows.into_iter()
            .enumerate()
            .map(|(i, (o, d, ev, sup, cause))| {
                let outcome = [
                    Outcome::Confirmed,
                    Outcome::FalseAlarm,
                    Outcome::Inconclusive,
                    Outcome::NotReached,
                ][usize::from(o)];
                with(report(i as u128 + 1, outcome, d), |r| {
                    r.evidence_ok = ev;
                    r.supersedes = sup.map(id);
                    r.cause = cause.map(|c| format!("cause-{c}"));
                })
            })
            .collect()
    })
}

proptest! {
    #[test]
    fn order_and_duplication_do_not_matter(
        reports in arb_reports(),
        dup in prop::collection::vec((0..9usize, 0..5i64), 0..6),
        seed in any::<u64>(),
    ) {
        let expected = status(&reports);
        let mut input = reports.clone();
        for (i, later) in dup {
            if let Some(r) = reports.get(i) {
                // A re-sent copy arrives later; the first copy is kept.
                input.push(with(r.clone(), |c| c.received_at += Duration::days(later)));
            }
        }
        // A deterministic shuffle from the seed (Fisher–Yates on an LCG).
        let mut state = seed;
        for k in (1..input.len()).rev() {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            let j = (state >> 33) as usize % (k + 1);
            input.swap(k, j);
        }
        prop_assert_eq!(status(&input), expected.clone());
        let many = event_statuses(&input, &[], DEFAULT_WINDOW_DAYS);
        if !reports.is_empty() {
            prop_assert_eq!(&many[&7], &expected);
        }
    }

    #[test]
    fn counted_reports_are_distinct_and_sorted(reports in arb_reports()) {
        let counted = counted_reports(&reports);
        for pair in counted.windows(2) {
            prop_assert!((pair[0].observed_at, pair[0].report_id) < (pair[1].observed_at, pair[1].report_id));
        }
        // Every counted report is named by no other counted report.
        for r in &counted {
            prop_assert!(!counted.iter().any(|s| s.report_id != r.report_id && s.supersedes == Some(r.report_id)));
        }
        // A non-empty input always keeps at least one report (a chain has a head,
        // a cycle keeps a member).
        prop_assert_eq!(counted.is_empty(), reports.is_empty());
    }
}

#[test]
fn statuses_from_a_kept_index_match_and_a_stale_index_is_not_used() {
    // Copies, a chain and a second event: every rule 1–3 path.
    let reports = vec![
        report(1, Outcome::Confirmed, 0),
        with(report(1, Outcome::Confirmed, 0), |r| {
            r.received_at = day(9);
        }),
        with(report(2, Outcome::FalseAlarm, 3), |r| {
            r.supersedes = Some(id(1));
        }),
        with(report(3, Outcome::NotReached, 4), |r| r.event_id = 8),
    ];
    let direct = event_statuses(&reports, &[], DEFAULT_WINDOW_DAYS);
    let index = CountedIndex::of(&reports);
    assert!(index.fits(&reports));
    assert_eq!(
        event_statuses_counted(&reports, &index, &[], DEFAULT_WINDOW_DAYS),
        direct
    );
    // An index of another slice is recomputed, never trusted.
    let stale = CountedIndex::of(&reports[..1]);
    assert!(!stale.fits(&reports));
    assert_eq!(
        event_statuses_counted(&reports, &stale, &[], DEFAULT_WINDOW_DAYS),
        direct
    );
}
