//! The status of an event from its report facts and adjudications, by the
//! rules in the module docs of [`crate::reconcile`].

use std::collections::{BTreeMap, BTreeSet};

use chrono::{DateTime, Duration, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::facts::{Adjudication, Outcome, ReportFact};

/// Reports of disagreeing outcomes within this many days are one episode.
pub const DEFAULT_WINDOW_DAYS: u32 = 30;

/// Reconciled status of an event.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    Unvisited,
    NotReached,
    Confirmed,
    FalseAlarm,
    Inconclusive,
    Disputed,
}

impl Status {
    /// The wire name (`unvisited`, `not_reached`, ...).
    pub fn as_str(self) -> &'static str {
        match self {
            Status::Unvisited => "unvisited",
            Status::NotReached => "not_reached",
            Status::Confirmed => "confirmed",
            Status::FalseAlarm => "false_alarm",
            Status::Inconclusive => "inconclusive",
            Status::Disputed => "disputed",
        }
    }

    fn of_outcome(outcome: Outcome) -> Status {
        match outcome {
            Outcome::Confirmed => Status::Confirmed,
            Outcome::FalseAlarm => Status::FalseAlarm,
            Outcome::Inconclusive => Status::Inconclusive,
            Outcome::NotReached => Status::NotReached,
        }
    }
}

/// What [`event_status`] decided, and from what.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct StatusOutcome {
    pub status: Status,
    /// Confirmed more than the window after a false alarm.
    pub new_clearing: bool,
    /// Earliest `observed_at` of a counted report that reached the event.
    pub first_visit: Option<DateTime<Utc>>,
    /// Earliest `received_at` of a counted report that reached the event.
    pub first_received: Option<DateTime<Utc>>,
    /// Cause of the last counted confirmed report naming one (confirmed only).
    pub cause: Option<String>,
    /// Distinct teams of the counted reports, sorted.
    pub teams: Vec<String>,
    /// The reports that count, sorted by (`observed_at`, `report_id`).
    pub counted_reports: Vec<Uuid>,
    /// An adjudication decided the status.
    pub adjudicated: bool,
    /// A sentence saying which rule decided.
    pub note: String,
}

/// Rule 1: one copy per `report_id` (the first received), sorted by
/// (`observed_at`, `report_id`).
pub fn distinct_reports(reports: &[ReportFact]) -> Vec<ReportFact> {
    let mut by_id: BTreeMap<Uuid, &ReportFact> = BTreeMap::new();
    for r in reports {
        by_id
            .entry(r.report_id)
            .and_modify(|kept| {
                if (r.received_at, r) < (kept.received_at, *kept) {
                    *kept = r;
                }
            })
            .or_insert(r);
    }
    let mut out: Vec<ReportFact> = by_id.into_values().cloned().collect();
    out.sort_by_key(|r| (r.observed_at, r.report_id));
    out
}

/// Rules 1–3: the reports that count, sorted by (`observed_at`, `report_id`).
pub fn counted_reports(reports: &[ReportFact]) -> Vec<ReportFact> {
    let distinct = distinct_reports(reports);
    let index: BTreeMap<Uuid, usize> = distinct
        .iter()
        .enumerate()
        .map(|(i, r)| (r.report_id, i))
        .collect();
    // The report each one supersedes, when that one is known and not itself.
    let target: Vec<Option<usize>> = distinct
        .iter()
        .map(|r| {
            r.supersedes
                .filter(|id| *id != r.report_id)
                .and_then(|id| index.get(&id).copied())
        })
        .collect();
    let mut named = vec![false; distinct.len()];
    for t in target.iter().flatten() {
        named[*t] = true;
    }
    let mut counts: Vec<bool> = named.iter().map(|n| !n).collect();
    // Cycles: every member is named; keep the last member unless an outside
    // report names one of them.
    let mut seen = vec![false; distinct.len()];
    for start in 0..distinct.len() {
        if seen[start] {
            continue;
        }
        let mut path = Vec::new();
        let mut on_path = BTreeSet::new();
        let mut at = Some(start);
        while let Some(i) = at {
            if seen[i] || !on_path.insert(i) {
                break;
            }
            path.push(i);
            at = target[i];
        }
        if let Some(i) = at
            && on_path.contains(&i)
        {
            let cycle: BTreeSet<usize> = path.iter().copied().skip_while(|&p| p != i).collect();
            let named_from_outside = target
                .iter()
                .enumerate()
                .any(|(s, t)| !cycle.contains(&s) && t.is_some_and(|t| cycle.contains(&t)));
            if !named_from_outside && let Some(&last) = cycle.iter().max() {
                // `distinct` is sorted by (observed_at, report_id): the largest
                // index sorts last.
                counts[last] = true;
            }
        }
        for i in path {
            seen[i] = true;
        }
    }
    distinct
        .into_iter()
        .zip(counts)
        .filter_map(|(r, c)| c.then_some(r))
        .collect()
}

/// How one episode of decisive reports resolved.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Episode {
    Confirmed,
    FalseAlarm,
    Disputed,
    /// Both sides, one with passing evidence: that side won.
    Settled(Outcome),
}

impl Episode {
    fn outcome(self) -> Option<Outcome> {
        match self {
            Episode::Confirmed => Some(Outcome::Confirmed),
            Episode::FalseAlarm => Some(Outcome::FalseAlarm),
            Episode::Settled(o) => Some(o),
            Episode::Disputed => None,
        }
    }
}

fn resolve_episode(reports: &[&ReportFact]) -> Episode {
    let side = |o: Outcome| {
        let members: Vec<_> = reports.iter().filter(|r| r.outcome == o).collect();
        (!members.is_empty(), members.iter().any(|r| r.evidence_ok))
    };
    let (has_c, c_ok) = side(Outcome::Confirmed);
    let (has_f, f_ok) = side(Outcome::FalseAlarm);
    match (has_c, has_f) {
        (true, false) => Episode::Confirmed,
        (false, _) => Episode::FalseAlarm,
        (true, true) => match (c_ok, f_ok) {
            (true, false) => Episode::Settled(Outcome::Confirmed),
            (false, true) => Episode::Settled(Outcome::FalseAlarm),
            _ => Episode::Disputed,
        },
    }
}

fn episodes<'a>(decisive: &[&'a ReportFact], window_days: u32) -> Vec<Vec<&'a ReportFact>> {
    let window = Duration::days(i64::from(window_days));
    let mut out: Vec<Vec<&ReportFact>> = Vec::new();
    let mut previous: Option<DateTime<Utc>> = None;
    for r in decisive {
        let gap_too_long = previous.is_some_and(|p| r.observed_at - p > window);
        match out.last_mut() {
            Some(current) if !gap_too_long => current.push(r),
            _ => out.push(vec![r]),
        }
        previous = Some(r.observed_at);
    }
    out
}

/// The status of one event, by the rules in the module docs. Every report
/// and adjudication given is taken to belong to that event.
pub fn event_status(
    reports: &[ReportFact],
    adjudications: &[Adjudication],
    window_days: u32,
) -> StatusOutcome {
    status_from_counted(&counted_reports(reports), adjudications, window_days)
}

/// Rules 4–8 on reports already reduced by [`counted_reports`] (they are
/// sorted again by (`observed_at`, `report_id`) here, so any order works).
pub fn status_from_counted(
    counted: &[ReportFact],
    adjudications: &[Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let mut sorted = counted.to_vec();
    sorted.sort_by_key(|r| (r.observed_at, r.report_id));
    let counted = sorted.as_slice();
    let reached: Vec<&ReportFact> = counted.iter().filter(|r| r.outcome.reached()).collect();
    let decisive: Vec<&ReportFact> = reached
        .iter()
        .copied()
        .filter(|r| r.outcome.decisive())
        .collect();
    let teams: BTreeSet<String> = counted.iter().map(|r| r.team.clone()).collect();
    let (mut status, mut new_clearing, mut note) = if counted.is_empty() {
        (Status::Unvisited, false, "no counted report".to_string())
    } else if reached.is_empty() {
        (
            Status::NotReached,
            false,
            format!("{} report(s), none reached the event", counted.len()),
        )
    } else if decisive.is_empty() {
        (
            Status::Inconclusive,
            false,
            format!("{} visit(s), all inconclusive", reached.len()),
        )
    } else {
        from_episodes(&episodes(&decisive, window_days), window_days)
    };
    let mut adjudicated = false;
    let latest = adjudications
        .iter()
        .max_by(|a, b| (a.at, *a).cmp(&(b.at, *b)));
    if let Some(adj) = latest {
        adjudicated = true;
        note = format!(
            "adjudicated {} by {} at {}: {} (reports gave {}: {})",
            adj.outcome.as_str(),
            adj.by,
            adj.at.to_rfc3339(),
            adj.reason,
            status.as_str(),
            note
        );
        new_clearing = new_clearing && adj.outcome == Outcome::Confirmed;
        status = Status::of_outcome(adj.outcome);
    }
    let cause = (status == Status::Confirmed)
        .then(|| {
            counted
                .iter()
                .rev()
                .filter(|r| r.outcome == Outcome::Confirmed)
                .find_map(|r| r.cause.clone())
        })
        .flatten();
    StatusOutcome {
        status,
        new_clearing,
        first_visit: reached.first().map(|r| r.observed_at),
        first_received: reached.iter().map(|r| r.received_at).min(),
        cause,
        teams: teams.into_iter().collect(),
        counted_reports: counted.iter().map(|r| r.report_id).collect(),
        adjudicated,
        note,
    }
}

fn from_episodes(groups: &[Vec<&ReportFact>], window_days: u32) -> (Status, bool, String) {
    let resolved: Vec<Episode> = groups.iter().map(|g| resolve_episode(g)).collect();
    let settled = resolved
        .iter()
        .filter(|e| matches!(e, Episode::Settled(_)))
        .count();
    let evidence_note = if settled > 0 {
        format!("; {settled} disagreement(s) settled by passing evidence")
    } else {
        String::new()
    };
    if let Some(first_confirmed) = resolved
        .iter()
        .position(|e| e.outcome() == Some(Outcome::Confirmed))
    {
        let new_clearing = resolved[..first_confirmed]
            .iter()
            .any(|e| e.outcome() == Some(Outcome::FalseAlarm));
        let later_false = resolved[first_confirmed + 1..]
            .iter()
            .any(|e| e.outcome() == Some(Outcome::FalseAlarm));
        let mut note = if new_clearing {
            format!("confirmed more than {window_days} days after a false alarm: new clearing")
        } else {
            "confirmed".to_string()
        };
        if later_false {
            note.push_str("; a later false alarm does not undo the confirmed clearing");
        }
        note.push_str(&evidence_note);
        (Status::Confirmed, new_clearing, note)
    } else if resolved.contains(&Episode::Disputed) {
        (
            Status::Disputed,
            false,
            format!(
                "confirmed and false_alarm within {window_days} days, evidence does not settle it{evidence_note}"
            ),
        )
    } else {
        (
            Status::FalseAlarm,
            false,
            format!("false alarm{evidence_note}"),
        )
    }
}

/// Statuses of many events: duplicates and supersession are resolved over
/// all `reports` first, then reports and adjudications are grouped by
/// `event_id`. Every event with a report (counted or not) or an
/// adjudication gets an entry.
pub fn event_statuses(
    reports: &[ReportFact],
    adjudications: &[Adjudication],
    window_days: u32,
) -> BTreeMap<i64, StatusOutcome> {
    let mut counted: BTreeMap<i64, Vec<ReportFact>> = BTreeMap::new();
    for r in reports {
        counted.entry(r.event_id).or_default();
    }
    for r in counted_reports(reports) {
        counted.entry(r.event_id).or_default().push(r);
    }
    let mut adj: BTreeMap<i64, Vec<Adjudication>> = BTreeMap::new();
    for a in adjudications {
        adj.entry(a.event_id).or_default().push(a.clone());
        counted.entry(a.event_id).or_default();
    }
    counted
        .into_iter()
        .map(|(event, rs)| {
            let a = adj.get(&event).map(Vec::as_slice).unwrap_or(&[]);
            (event, status_from_counted(&rs, a, window_days))
        })
        .collect()
}
