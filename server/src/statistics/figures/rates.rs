//! Confirmation rate of the alerts over the visits made (their user's
//! accuracy, descriptively): confirmed / (confirmed + false_alarm) per
//! group, with a Wilson 95% interval. Inconclusive and disputed events are
//! counted apart and are in neither term.

use std::ops::AddAssign;

use serde::Serialize;

use super::FiguresError;
use super::facts::{EventFacts, GroupKey};
use super::groups::tally_by;
use crate::domain::EventStatus;
use crate::statistics::estimators::{ProportionEstimate, wilson};

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
    rate_rows(tally_by(events, key, RateCounts::of))
}

/// The rows of groups' counts (sorted by group), leaving out the groups
/// with no confirmed, false-alarm, inconclusive or disputed event.
pub(crate) fn rate_rows(
    groups: impl IntoIterator<Item = (String, RateCounts)>,
) -> Result<Vec<RateRow>, FiguresError> {
    groups
        .into_iter()
        .filter(|(_, c)| c.confirmed + c.false_alarm + c.inconclusive + c.disputed > 0)
        .map(|(group, c)| {
            Ok(RateRow {
                group,
                confirmed: c.confirmed,
                false_alarm: c.false_alarm,
                inconclusive: c.inconclusive,
                disputed: c.disputed,
                new_clearing: c.new_clearing,
                rate: wilson(c.confirmed, c.confirmed + c.false_alarm)?,
                basis: Basis::Descriptive,
            })
        })
        .collect()
}

/// The counts of a [`RateRow`].
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(crate) struct RateCounts {
    confirmed: u64,
    false_alarm: u64,
    inconclusive: u64,
    disputed: u64,
    new_clearing: u64,
}

impl RateCounts {
    /// (confirmed, confirmed + false alarm): the x and n of the rate.
    pub(crate) fn decided(&self) -> (u64, u64) {
        (self.confirmed, self.confirmed + self.false_alarm)
    }

    /// The counts of one event (unvisited and not reached ones count
    /// nowhere).
    pub(crate) fn of(e: &EventFacts) -> Self {
        let mut c = RateCounts::default();
        match e.status {
            EventStatus::Confirmed => {
                c.confirmed = 1;
                c.new_clearing = u64::from(e.new_clearing);
            }
            EventStatus::FalseAlarm => c.false_alarm = 1,
            EventStatus::Inconclusive => c.inconclusive = 1,
            EventStatus::Disputed => c.disputed = 1,
            EventStatus::Unvisited | EventStatus::NotReached => {}
        }
        c
    }
}

impl AddAssign for RateCounts {
    fn add_assign(&mut self, other: Self) {
        self.confirmed += other.confirmed;
        self.false_alarm += other.false_alarm;
        self.inconclusive += other.inconclusive;
        self.disputed += other.disputed;
        self.new_clearing += other.new_clearing;
    }
}
