//! The status of an event from its report facts and adjudications, by the
//! rules in the module docs of [`crate::reconcile`].

use std::collections::{BTreeMap, BTreeSet};

use chrono::{DateTime, Duration, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::counted::{CountedIndex, counted_refs};
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
    let adjudications: Vec<&Adjudication> = adjudications.iter().collect();
    status_of_sorted(&counted_refs(reports), &adjudications, window_days)
}

/// Rules 4–8 on reports already reduced by [`counted_reports`] (they are
/// sorted again by (`observed_at`, `report_id`) here, so any order works).
pub fn status_from_counted(
    counted: &[ReportFact],
    adjudications: &[Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let mut sorted: Vec<&ReportFact> = counted.iter().collect();
    sorted.sort_by_key(|r| (r.observed_at, r.report_id));
    let adjudications: Vec<&Adjudication> = adjudications.iter().collect();
    status_of_sorted(&sorted, &adjudications, window_days)
}

/// Rules 4–8 on counted reports already sorted by (`observed_at`,
/// `report_id`).
fn status_of_sorted(
    counted: &[&ReportFact],
    adjudications: &[&Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let reached: Vec<&ReportFact> = counted
        .iter()
        .copied()
        .filter(|r| r.outcome.reached())
        .collect();
    let decisive: Vec<&ReportFact> = reached
        .iter()
        .copied()
        .filter(|r| r.outcome.decisive())
        .collect();
    let teams: BTreeSet<&str> = counted.iter().map(|r| r.team.as_str()).collect();
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
        .max_by(|a, b| (a.at, **a).cmp(&(b.at, **b)));
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
        teams: teams.into_iter().map(str::to_string).collect(),
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
    event_statuses_counted(
        reports,
        &CountedIndex::of(reports),
        adjudications,
        window_days,
    )
}

/// [`event_statuses`] with rules 1–3 already applied to `reports` by
/// [`CountedIndex::of`] (recomputed when `counted` does not fit `reports`).
pub fn event_statuses_counted(
    reports: &[ReportFact],
    counted: &CountedIndex,
    adjudications: &[Adjudication],
    window_days: u32,
) -> BTreeMap<i64, StatusOutcome> {
    let fresh;
    let index = if counted.fits(reports) {
        counted
    } else {
        fresh = CountedIndex::of(reports);
        &fresh
    };
    let distinct: Vec<(&ReportFact, bool)> = index.iter(reports).collect();
    // Counted reports grouped by event; within an event they keep the
    // (observed_at, report_id) order of `distinct` (the index breaks ties).
    let mut counted: Vec<(i64, usize)> = distinct
        .iter()
        .enumerate()
        .filter(|(_, (_, c))| *c)
        .map(|(i, (r, _))| (r.event_id, i))
        .collect();
    counted.sort_unstable();
    // Every event named by a report that does not count, or by a copy that
    // rule 1 dropped, still gets an entry.
    let mut events: Vec<i64> = distinct
        .iter()
        .filter(|(_, c)| !*c)
        .map(|(r, _)| r.event_id)
        .chain(adjudications.iter().map(|a| a.event_id))
        .collect();
    if index.had_copies() {
        events.extend(reports.iter().map(|r| r.event_id));
    }
    events.extend(counted.iter().map(|&(e, _)| e));
    events.sort_unstable();
    events.dedup();
    let mut adj: Vec<&Adjudication> = adjudications.iter().collect();
    adj.sort_by_key(|a| a.event_id);

    let mut out = Vec::with_capacity(events.len());
    let (mut ci, mut ai) = (0, 0);
    let mut group: Vec<&ReportFact> = Vec::new();
    for event in events {
        group.clear();
        while ci < counted.len() && counted[ci].0 == event {
            group.push(distinct[counted[ci].1].0);
            ci += 1;
        }
        let a0 = ai;
        while ai < adj.len() && adj[ai].event_id == event {
            ai += 1;
        }
        out.push((event, status_of_sorted(&group, &adj[a0..ai], window_days)));
    }
    // Sorted by event id: the map is built in one pass.
    out.into_iter().collect()
}
