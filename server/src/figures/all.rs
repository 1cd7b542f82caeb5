//! Every figure of the manager pages in one value, from the event rows, the
//! report facts and the control points.

use std::borrow::Cow;
use std::collections::BTreeMap;

use chrono::{DateTime, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::FiguresError;
use super::assessment::{Assessment, assessment};
use super::causes::{CauseTable, causes};
use super::coverage::{CoverageRow, coverage};
use super::facts::{ControlFacts, EventFacts, GroupKey};
use super::rates::{RateRow, confirmation_rates};
use super::teams::{TeamRow, team_table_counted};
use super::times::{
    DEFAULT_WITHIN_DAYS, ResponseTimes, TimeToVisit, response_times, time_to_visit,
};
use crate::reconcile::{CountedIndex, ReportFact};

/// Keys of the coverage tables in [`Figures`].
pub const COVERAGE_KEYS: [GroupKey; 5] = [
    GroupKey::All,
    GroupKey::Zone,
    GroupKey::Team,
    GroupKey::DetectionMonth,
    GroupKey::Source,
];

/// Keys of the confirmation-rate tables in [`Figures`].
pub const RATE_KEYS: [GroupKey; 6] = [
    GroupKey::All,
    GroupKey::Source,
    GroupKey::Confidence,
    GroupKey::Corroborated,
    GroupKey::Zone,
    GroupKey::Cause,
];

#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FigureOptions {
    /// The report date: unvisited events are censored here.
    pub as_of: DateTime<Utc>,
    /// T of "share visited within T days".
    pub within_days: f64,
}

impl FigureOptions {
    /// `as_of` with T = [`DEFAULT_WITHIN_DAYS`] (14).
    pub fn new(as_of: DateTime<Utc>) -> Self {
        FigureOptions {
            as_of,
            within_days: DEFAULT_WITHIN_DAYS,
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Grouped<T> {
    pub key: GroupKey,
    pub rows: Vec<T>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Figures {
    pub as_of: DateTime<Utc>,
    pub coverage: Vec<Grouped<CoverageRow>>,
    pub confirmation: Vec<Grouped<RateRow>>,
    pub response_times: ResponseTimes,
    pub time_to_visit: TimeToVisit,
    pub causes: CauseTable,
    pub teams: Vec<TeamRow>,
    pub assessment: Option<Assessment>,
}

/// All figures. Events are taken in `event_id` order (so sums do not depend
/// on the order of the rows); `reports` only feed the team table.
pub fn all_figures(
    events: &[EventFacts],
    reports: &[ReportFact],
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
    controls: &[ControlFacts],
    options: &FigureOptions,
) -> Result<Figures, FiguresError> {
    all_figures_counted(
        events,
        reports,
        &CountedIndex::of(reports),
        bundle_issued_at,
        controls,
        options,
    )
}

/// [`all_figures`] with rules 1–3 of [`crate::reconcile`] already applied to
/// `reports` (what [`crate::dashboard::load`] keeps in `Loaded::counted`), so
/// that a request reconciles once.
pub fn all_figures_counted(
    events: &[EventFacts],
    reports: &[ReportFact],
    counted: &CountedIndex,
    bundle_issued_at: &BTreeMap<Uuid, DateTime<Utc>>,
    controls: &[ControlFacts],
    options: &FigureOptions,
) -> Result<Figures, FiguresError> {
    // Storage gives the events in id order: copy and sort only when not.
    let sorted: Cow<'_, [EventFacts]> = if events.is_sorted_by_key(|e| e.event_id) {
        Cow::Borrowed(events)
    } else {
        let mut v = events.to_vec();
        v.sort_by_key(|e| e.event_id);
        Cow::Owned(v)
    };
    let events = &*sorted;
    Ok(Figures {
        as_of: options.as_of,
        coverage: COVERAGE_KEYS
            .iter()
            .map(|&key| Grouped {
                key,
                rows: coverage(events, key),
            })
            .collect(),
        confirmation: RATE_KEYS
            .iter()
            .map(|&key| {
                Ok(Grouped {
                    key,
                    rows: confirmation_rates(events, key)?,
                })
            })
            .collect::<Result<_, FiguresError>>()?,
        response_times: response_times(events)?,
        time_to_visit: time_to_visit(events, options.as_of, options.within_days)?,
        causes: causes(events),
        teams: team_table_counted(reports, counted, bundle_issued_at)?,
        assessment: assessment(events, controls)?,
    })
}
