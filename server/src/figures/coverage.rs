//! Coverage: how many events were issued, visited, not reached, or are still
//! unvisited, per group.

use std::collections::BTreeMap;

use serde::Serialize;

use super::facts::{EventFacts, GroupKey};
use crate::reconcile::Status;

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
    let mut rows: BTreeMap<String, CoverageRow> = BTreeMap::new();
    for e in events {
        key.each_group(e, |group| {
            // Look up before inserting: a key is allocated once per group.
            let row = match rows.get_mut(group) {
                Some(row) => row,
                None => rows
                    .entry(group.to_string())
                    .or_insert_with(|| empty(group)),
            };
            count(row, e);
        });
    }
    rows.into_values().collect()
}

/// Coverage per group of any key function (an event counts once in each
/// group it returns).
pub fn coverage_by(
    events: &[EventFacts],
    key: impl Fn(&EventFacts) -> Vec<String>,
) -> Vec<CoverageRow> {
    let mut rows: BTreeMap<String, CoverageRow> = BTreeMap::new();
    for e in events {
        for group in key(e) {
            let row = rows.entry(group.clone()).or_insert_with(|| empty(&group));
            count(row, e);
        }
    }
    rows.into_values().collect()
}

fn empty(group: &str) -> CoverageRow {
    CoverageRow {
        group: group.to_string(),
        events: 0,
        issued: 0,
        visited: 0,
        not_reached: 0,
        unvisited: 0,
        issued_and_visited: 0,
    }
}

/// Adds one event to its group's row.
fn count(row: &mut CoverageRow, e: &EventFacts) {
    row.events += 1;
    let issued = e.issued_at.is_some();
    row.issued += u64::from(issued);
    if e.first_visit.is_some() {
        row.visited += 1;
        row.issued_and_visited += u64::from(issued);
    } else if e.status == Status::NotReached {
        row.not_reached += 1;
    } else {
        row.unvisited += 1;
    }
}
