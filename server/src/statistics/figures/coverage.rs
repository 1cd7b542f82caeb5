//! Coverage: how many events were issued, visited, not reached, or are still
//! unvisited, per group.

use std::collections::BTreeMap;
use std::ops::AddAssign;

use serde::Serialize;

use super::facts::{EventFacts, GroupKey};
use super::groups::tally_by;
use crate::domain::EventStatus;

/// Counts for one group. `visited + not_reached + unvisited = events`;
/// `issued` counts separately (an event can be visited without a bundle,
/// found on the way, or issued and never visited).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct CoverageRow {
    pub group: String,
    pub events: u64,
    /// Events with an issue time (in at least one bundle).
    pub issued: u64,
    /// Events with a first visit (a counted report reached them).
    pub visited: u64,
    /// No visit, and the status is `not_reached`.
    pub not_reached: u64,
    /// Neither visited nor not reached.
    pub unvisited: u64,
    /// Issued events that were visited.
    pub issued_and_visited: u64,
}

/// Coverage per group of `key`, groups sorted by name.
pub fn coverage(events: &[EventFacts], key: GroupKey) -> Vec<CoverageRow> {
    tally_by(events, key, CoverageCounts::of)
        .into_iter()
        .map(|(group, counts)| counts.row(group))
        .collect()
}

/// Coverage per group of any key function (an event counts once in each
/// group it returns).
pub fn coverage_by(
    events: &[EventFacts],
    key: impl Fn(&EventFacts) -> Vec<String>,
) -> Vec<CoverageRow> {
    let mut rows: BTreeMap<String, CoverageCounts> = BTreeMap::new();
    for e in events {
        for group in key(e) {
            *rows.entry(group).or_default() += CoverageCounts::of(e);
        }
    }
    rows.into_iter()
        .map(|(group, counts)| counts.row(group))
        .collect()
}

/// The counts of a [`CoverageRow`].
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(crate) struct CoverageCounts {
    events: u64,
    issued: u64,
    visited: u64,
    not_reached: u64,
    unvisited: u64,
    issued_and_visited: u64,
}

impl CoverageCounts {
    /// The counts of one event.
    pub(crate) fn of(e: &EventFacts) -> Self {
        let issued = u64::from(e.issued_at.is_some());
        let visited = e.first_visit.is_some();
        let not_reached = !visited && e.status == EventStatus::NotReached;
        CoverageCounts {
            events: 1,
            issued,
            visited: u64::from(visited),
            not_reached: u64::from(not_reached),
            unvisited: u64::from(!visited && !not_reached),
            issued_and_visited: issued * u64::from(visited),
        }
    }

    /// The row of `group`.
    pub(crate) fn row(self, group: String) -> CoverageRow {
        CoverageRow {
            group,
            events: self.events,
            issued: self.issued,
            visited: self.visited,
            not_reached: self.not_reached,
            unvisited: self.unvisited,
            issued_and_visited: self.issued_and_visited,
        }
    }
}

impl AddAssign for CoverageCounts {
    fn add_assign(&mut self, other: Self) {
        self.events += other.events;
        self.issued += other.issued;
        self.visited += other.visited;
        self.not_reached += other.not_reached;
        self.unvisited += other.unvisited;
        self.issued_and_visited += other.issued_and_visited;
    }
}
