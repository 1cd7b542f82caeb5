//! The status of an event from its report facts and adjudications, by the
//! rules in the module docs of [`crate::reconcile`].

use std::collections::{BTreeMap, HashMap};

use chrono::{DateTime, Duration, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::counted::{CountedIndex, counted_refs};
use super::facts::{Adjudication, Outcome, ReportFact};
use crate::domain::EventStatus;

/// Reports of disagreeing outcomes within this many days are one episode.
pub const DEFAULT_WINDOW_DAYS: u32 = 30;

/// What [`event_status`] decided, and from what.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct StatusOutcome {
    pub status: EventStatus,
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

/// The two sides of one episode: whether each has a report, and whether
/// one of those reports has passing evidence.
#[derive(Debug, Clone, Copy, Default)]
struct Sides {
    confirmed: bool,
    confirmed_ok: bool,
    false_alarm: bool,
    false_alarm_ok: bool,
}

impl Sides {
    /// Adds a decisive report.
    fn add(&mut self, r: &Counted<'_>) {
        if r.outcome == Outcome::Confirmed {
            self.confirmed = true;
            self.confirmed_ok |= r.evidence_ok;
        } else {
            self.false_alarm = true;
            self.false_alarm_ok |= r.evidence_ok;
        }
    }

    /// How the episode resolved (rule 5).
    fn resolve(self) -> Episode {
        match (self.confirmed, self.false_alarm) {
            (true, false) => Episode::Confirmed,
            (false, _) => Episode::FalseAlarm,
            (true, true) => match (self.confirmed_ok, self.false_alarm_ok) {
                (true, false) => Episode::Settled(Outcome::Confirmed),
                (false, true) => Episode::Settled(Outcome::FalseAlarm),
                _ => Episode::Disputed,
            },
        }
    }
}

/// What rule 6 reads from the resolved episodes, taken in order.
#[derive(Debug, Clone, Copy, Default)]
struct Episodes {
    /// Some episode resolved to `confirmed`.
    confirmed: bool,
    /// A `false_alarm` episode came before the first `confirmed` one.
    false_alarm_before: bool,
    /// A `false_alarm` episode came after the first `confirmed` one.
    false_alarm_after: bool,
    disputed: bool,
    /// Episodes settled by passing evidence.
    settled: usize,
}

impl Episodes {
    /// Splits the decisive reports (in (`observed_at`, `report_id`) order)
    /// into episodes and resolves each (rule 5).
    fn of<'a, 'r: 'a>(decisive: impl Iterator<Item = &'a Counted<'r>>, window_days: u32) -> Self {
        let window = Duration::days(i64::from(window_days));
        let mut out = Episodes::default();
        let mut current: Option<(Sides, DateTime<Utc>)> = None;
        for r in decisive {
            let (mut sides, previous) = current.unwrap_or((Sides::default(), r.observed_at));
            if r.observed_at - previous > window {
                out.add(sides.resolve());
                sides = Sides::default();
            }
            sides.add(r);
            current = Some((sides, r.observed_at));
        }
        if let Some((sides, _)) = current {
            out.add(sides.resolve());
        }
        out
    }

    fn add(&mut self, episode: Episode) {
        self.settled += usize::from(matches!(episode, Episode::Settled(_)));
        match episode.outcome() {
            Some(Outcome::Confirmed) => self.confirmed = true,
            Some(_) if self.confirmed => self.false_alarm_after = true,
            Some(_) => self.false_alarm_before = true,
            None => self.disputed = true,
        }
    }
}

/// The status of one event, by the rules in the module docs. Every report
/// and adjudication given is taken to belong to that event.
pub fn event_status(
    reports: &[ReportFact],
    adjudications: &[Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let adjudications: Vec<&Adjudication> = adjudications.iter().collect();
    status_of_refs(&counted_refs(reports), &adjudications, window_days)
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
    status_of_refs(&sorted, &adjudications, window_days)
}

/// Rules 4–8 on counted reports sorted by (`observed_at`, `report_id`).
fn status_of_refs(
    counted: &[&ReportFact],
    adjudications: &[&Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let mut teams = TeamIds::default();
    let counted: Vec<Counted<'_>> = counted
        .iter()
        .map(|r| Counted::of(r, teams.id(&r.team)))
        .collect();
    status_of_sorted(&counted, &teams.ranked(), adjudications, window_days)
}

/// What rules 4–8 read of one counted report. The statuses of many events
/// copy these out of the facts in memory order, so that each event's are
/// then read side by side instead of chasing each report.
#[derive(Debug, Clone, Copy)]
struct Counted<'a> {
    observed_at: DateTime<Utc>,
    received_at: DateTime<Utc>,
    report_id: Uuid,
    outcome: Outcome,
    evidence_ok: bool,
    /// The team's id in [`TeamIds`].
    team: u32,
    cause: Option<&'a str>,
}

impl<'a> Counted<'a> {
    fn of(r: &'a ReportFact, team: u32) -> Self {
        Counted {
            observed_at: r.observed_at,
            received_at: r.received_at,
            report_id: r.report_id,
            outcome: r.outcome,
            evidence_ok: r.evidence_ok,
            team,
            cause: r.cause.as_deref(),
        }
    }
}

/// Team names as small ids, in order of first appearance.
#[derive(Debug, Default)]
struct TeamIds<'a> {
    ids: HashMap<&'a str, u32, rustc_hash::FxBuildHasher>,
    names: Vec<&'a str>,
}

impl<'a> TeamIds<'a> {
    fn id(&mut self, name: &'a str) -> u32 {
        if let Some(&id) = self.ids.get(name) {
            return id;
        }
        let id = self.names.len() as u32;
        self.names.push(name);
        self.ids.insert(name, id);
        id
    }

    /// The names with each id's rank in name order.
    fn ranked(self) -> TeamNames<'a> {
        let mut by_name: Vec<u32> = (0..self.names.len() as u32).collect();
        by_name.sort_unstable_by_key(|&id| self.names[id as usize]);
        let mut rank = vec![0; by_name.len()];
        for (r, &id) in by_name.iter().enumerate() {
            rank[id as usize] = r as u32;
        }
        TeamNames {
            sorted: by_name.iter().map(|&id| self.names[id as usize]).collect(),
            rank,
        }
    }
}

/// Team names in name order, and each [`TeamIds`] id's place among them.
#[derive(Debug)]
struct TeamNames<'a> {
    sorted: Vec<&'a str>,
    rank: Vec<u32>,
}

impl TeamNames<'_> {
    /// The distinct names of `teams` (ids), sorted.
    fn of(&self, teams: impl Iterator<Item = u32>) -> Vec<String> {
        let mut ranks: Vec<u32> = teams.map(|t| self.rank[t as usize]).collect();
        ranks.sort_unstable();
        ranks.dedup();
        ranks
            .into_iter()
            .map(|r| self.sorted[r as usize].to_string())
            .collect()
    }
}

/// Rules 4–8 on counted reports already sorted by (`observed_at`,
/// `report_id`).
fn status_of_sorted(
    counted: &[Counted<'_>],
    teams: &TeamNames<'_>,
    adjudications: &[&Adjudication],
    window_days: u32,
) -> StatusOutcome {
    let reached = || counted.iter().filter(|r| r.outcome.reached());
    let reached_count = reached().count();
    let mut decisive = reached().filter(|r| r.outcome.decisive()).peekable();
    let (mut status, mut new_clearing, mut note) = if counted.is_empty() {
        (
            EventStatus::Unvisited,
            false,
            "no counted report".to_string(),
        )
    } else if reached_count == 0 {
        (
            EventStatus::NotReached,
            false,
            format!("{} report(s), none reached the event", counted.len()),
        )
    } else if decisive.peek().is_none() {
        (
            EventStatus::Inconclusive,
            false,
            format!("{reached_count} visit(s), all inconclusive"),
        )
    } else {
        from_episodes(Episodes::of(decisive, window_days), window_days)
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
        status = EventStatus::of_outcome(adj.outcome);
    }
    let cause = (status == EventStatus::Confirmed)
        .then(|| {
            counted
                .iter()
                .rev()
                .filter(|r| r.outcome == Outcome::Confirmed)
                .find_map(|r| r.cause.map(str::to_string))
        })
        .flatten();
    StatusOutcome {
        status,
        new_clearing,
        first_visit: reached().next().map(|r| r.observed_at),
        first_received: reached().map(|r| r.received_at).min(),
        cause,
        teams: teams.of(counted.iter().map(|r| r.team)),
        counted_reports: counted.iter().map(|r| r.report_id).collect(),
        adjudicated,
        note,
    }
}

/// Rule 6 from the resolved episodes: status, new clearing, note.
fn from_episodes(episodes: Episodes, window_days: u32) -> (EventStatus, bool, String) {
    let settled = episodes.settled;
    let evidence_note = if settled > 0 {
        format!("; {settled} disagreement(s) settled by passing evidence")
    } else {
        String::new()
    };
    if episodes.confirmed {
        let new_clearing = episodes.false_alarm_before;
        let mut note = if new_clearing {
            format!("confirmed more than {window_days} days after a false alarm: new clearing")
        } else {
            "confirmed".to_string()
        };
        if episodes.false_alarm_after {
            note.push_str("; a later false alarm does not undo the confirmed clearing");
        }
        note.push_str(&evidence_note);
        (EventStatus::Confirmed, new_clearing, note)
    } else if episodes.disputed {
        (
            EventStatus::Disputed,
            false,
            format!(
                "confirmed and false_alarm within {window_days} days, evidence does not settle it{evidence_note}"
            ),
        )
    } else {
        let mut note = "false alarm".to_string();
        note.push_str(&evidence_note);
        (EventStatus::FalseAlarm, false, note)
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
    let mut adj: Vec<&Adjudication> = adjudications.iter().collect();
    adj.sort_by_key(|a| a.event_id);
    let (counted, teams) = counted_by_place(reports, index);
    let events = index.events();
    let mut named = named_elsewhere(reports, index, adjudications)
        .into_iter()
        .peekable();
    let (mut at, mut adj) = (0, adj.as_slice());
    let mut out = Vec::new();
    let mut group: Vec<Counted<'_>> = Vec::new();
    loop {
        // The next event of either list (both are sorted).
        let event = match (events.get(at).copied(), named.peek().copied()) {
            (Some(a), Some(b)) => a.min(b),
            (Some(a), None) | (None, Some(a)) => a,
            (None, None) => break,
        };
        named.next_if_eq(&event);
        let end = at + events[at..].partition_point(|&e| e == event);
        group.clear();
        group.extend(counted[at..end].iter().flatten());
        at = end;
        let k = adj.partition_point(|a| a.event_id == event);
        let (of_event, rest) = adj.split_at(k);
        adj = rest;
        out.push((
            event,
            status_of_sorted(&group, &teams, of_event, window_days),
        ));
    }
    // Sorted by event id: the map is built in one pass.
    out.into_iter().collect()
}

/// The counted reports of `index`, read in memory order and put at their
/// places (grouped by event, each event's in (`observed_at`, `report_id`)
/// order), with the names of their teams.
fn counted_by_place<'a>(
    reports: &'a [ReportFact],
    index: &CountedIndex,
) -> (Vec<Option<Counted<'a>>>, TeamNames<'a>) {
    let mut teams = TeamIds::default();
    let mut counted = vec![None; index.events().len()];
    for (r, place) in reports.iter().zip(index.places()) {
        if let Some(place) = place.filter(|&p| index.counts_at(p)) {
            counted[place as usize] = Some(Counted::of(r, teams.id(&r.team)));
        }
    }
    (counted, teams.ranked())
}

/// Events that get an entry without a distinct report: named only by an
/// adjudication or by a copy that rule 1 dropped. Sorted, distinct.
fn named_elsewhere(
    reports: &[ReportFact],
    index: &CountedIndex,
    adjudications: &[Adjudication],
) -> Vec<i64> {
    let dropped = index
        .dropped()
        .iter()
        .map(|&i| reports[i as usize].event_id);
    let mut named: Vec<i64> = adjudications
        .iter()
        .map(|a| a.event_id)
        .chain(dropped)
        .collect();
    named.sort_unstable();
    named.dedup();
    named
}
