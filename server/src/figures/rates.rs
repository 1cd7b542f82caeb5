//! Confirmation rate of the alerts over the visits made (their user's
//! accuracy, descriptively): confirmed / (confirmed + false_alarm) per
//! group, with a Wilson 95% interval. Inconclusive and disputed events are
//! counted apart and are in neither term.

use std::collections::BTreeMap;

use serde::Serialize;

use super::FiguresError;
use super::facts::{EventFacts, GroupKey};
use crate::reconcile::Status;
use crate::stats::{ProportionEstimate, wilson};

/// What kind of visits a figure rests on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Basis {
    /// Whatever was visited in response work: describes those visits only.
    #[serde(rename = "descriptive (response visits)")]
    Descriptive,
    /// A stratified random sample with known inclusion probabilities.
    #[serde(rename = "sample estimate")]
    SampleEstimate,
}

impl Basis {
    pub fn label(self) -> &'static str {
        match self {
            Basis::Descriptive => "descriptive (response visits)",
            Basis::SampleEstimate => "sample estimate",
        }
    }
}

/// The confirmation rate of one group.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RateRow {
    pub group: String,
    pub confirmed: u64,
    pub false_alarm: u64,
    /// Shown apart: in neither term of the rate.
    pub inconclusive: u64,
    /// Shown apart: in neither term of the rate.
    pub disputed: u64,
    /// Of the confirmed, those confirmed as new clearing (more than the
    /// window after a false alarm). They count as confirmed.
    pub new_clearing: u64,
    /// confirmed / (confirmed + false_alarm) with Wilson 95%; `None` when
    /// both are 0.
    pub rate: Option<ProportionEstimate>,
    pub basis: Basis,
}

/// Confirmation rate per group of `key` over every event given (basis
/// [`Basis::Descriptive`]). Groups with no confirmed, false-alarm,
/// inconclusive or disputed event are left out.
pub fn confirmation_rates(
    events: &[EventFacts],
    key: GroupKey,
) -> Result<Vec<RateRow>, FiguresError> {
    let mut counts: BTreeMap<String, [u64; 5]> = BTreeMap::new();
    for e in events {
        let slot = match e.status {
            Status::Confirmed => 0,
            Status::FalseAlarm => 1,
            Status::Inconclusive => 2,
            Status::Disputed => 3,
            Status::Unvisited | Status::NotReached => continue,
        };
        key.each_group(e, |group| {
            // Look up before inserting: a key is allocated once per group.
            let c = match counts.get_mut(group) {
                Some(c) => c,
                None => counts.entry(group.to_string()).or_default(),
            };
            c[slot] += 1;
            c[4] += u64::from(slot == 0 && e.new_clearing);
        });
    }
    counts
        .into_iter()
        .map(
            |(group, [confirmed, false_alarm, inconclusive, disputed, new])| {
                Ok(RateRow {
                    group,
                    confirmed,
                    false_alarm,
                    inconclusive,
                    disputed,
                    new_clearing: new,
                    rate: wilson(confirmed, confirmed + false_alarm)?,
                    basis: Basis::Descriptive,
                })
            },
        )
        .collect()
}
