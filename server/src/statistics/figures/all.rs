//! Every figure of the manager pages in one value, from the event rows, the
//! report facts and the control points.

use std::borrow::Cow;
use std::collections::{BTreeMap, BTreeSet};
use std::ops::AddAssign;

use chrono::{DateTime, Utc};
use serde::Serialize;
use uuid::Uuid;

use super::FiguresError;
use super::assessment::{AlertStrata, Assessment, assessment_of};
use super::causes::{CauseSums, CauseTable};
use super::coverage::{CoverageCounts, CoverageRow};
use super::facts::{ControlFacts, EventFacts, GroupKey};
use super::groups::Tallies;
use super::rates::{RateCounts, RateRow, rate_rows};
use super::target::{GroundFinds, TargetShare, TargetTally};
use super::teams::{TeamRow, team_table_counted};
use super::times::{DEFAULT_WITHIN_DAYS, ResponseSteps, ResponseTimes, TimeToVisit, VisitTimes};
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
    /// Share of issued events visited within the target, from detection
    /// and from issue.
    pub target: Vec<TargetShare>,
    /// Clearings found on the ground that no alert flagged.
    pub found_on_ground: GroundFinds,
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
/// `reports` (what [`crate::statistics::kept::load`] keeps in `Loaded::counted`), so
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
    // The team table reads the reports, every other figure the events: on
    // two threads, a request waits for the longer of the two only. Errors
    // come in the order of the fields, as when computed one after another.
    let (teams, from_events) = std::thread::scope(|scope| {
        let teams = scope.spawn(|| team_table_counted(reports, counted, bundle_issued_at));
        let from_events = EventFigures::of(events, options);
        let teams = teams
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        (teams, from_events)
    });
    let from_events = from_events?;
    Ok(Figures {
        as_of: options.as_of,
        coverage: from_events.coverage,
        confirmation: from_events.confirmation,
        response_times: from_events.response_times,
        time_to_visit: from_events.time_to_visit,
        target: from_events.target,
        found_on_ground: from_events.found_on_ground,
        causes: from_events.causes,
        teams: teams?,
        assessment: assessment_of(from_events.strata, controls)?,
    })
}

/// The figures made from the events, and the alert strata of the
/// assessment (whose errors come after the team table's).
struct EventFigures<'a> {
    coverage: Vec<Grouped<CoverageRow>>,
    confirmation: Vec<Grouped<RateRow>>,
    response_times: ResponseTimes,
    time_to_visit: TimeToVisit,
    target: Vec<TargetShare>,
    found_on_ground: GroundFinds,
    causes: CauseTable,
    strata: AlertStrata<'a>,
}

impl<'a> EventFigures<'a> {
    /// From events in `event_id` order (sums are taken in that order).
    fn of(events: &'a [EventFacts], options: &FigureOptions) -> Result<Self, FiguresError> {
        // One pass over the events feeds every figure made from them: the
        // rows are large, and memory, not arithmetic, is what costs.
        let keys: Vec<GroupKey> = COVERAGE_KEYS
            .iter()
            .chain(&RATE_KEYS)
            .copied()
            .collect::<BTreeSet<_>>()
            .into_iter()
            .collect();
        let mut tallies = Tallies::new(&keys);
        let mut steps = ResponseSteps::default();
        let mut visits = VisitTimes::new(options.as_of);
        let mut cause_sums = CauseSums::default();
        let mut strata = AlertStrata::default();
        let mut target = TargetTally::new(options.as_of, options.within_days);
        let mut found_on_ground = GroundFinds::default();
        for e in events {
            cause_sums.add(e);
            if e.found_on_ground {
                found_on_ground.add(e);
                continue;
            }
            target.add(e);
            tallies.add(e, GroupCounts::of(e));
            steps.add(e);
            visits.add(e);
            strata.add(e);
        }
        let tallies: BTreeMap<GroupKey, Vec<(String, GroupCounts)>> =
            keys.into_iter().zip(tallies.finish()).collect();
        let table = |key: &GroupKey| tallies[key].iter();
        Ok(EventFigures {
            coverage: COVERAGE_KEYS
                .iter()
                .map(|key| Grouped {
                    key: *key,
                    rows: table(key)
                        .map(|(group, c)| c.coverage.row(group.clone()))
                        .collect(),
                })
                .collect(),
            confirmation: RATE_KEYS
                .iter()
                .map(|key| {
                    Ok(Grouped {
                        key: *key,
                        rows: rate_rows(table(key).map(|(group, c)| (group.clone(), c.rates)))?,
                    })
                })
                .collect::<Result<_, FiguresError>>()?,
            response_times: steps.finish()?,
            time_to_visit: visits.finish(options.within_days)?,
            target: target.finish()?,
            found_on_ground,
            causes: cause_sums.finish(),
            strata,
        })
    }
}

/// What the coverage and confirmation-rate tables count of one group.
#[derive(Debug, Clone, Copy, Default)]
struct GroupCounts {
    coverage: CoverageCounts,
    rates: RateCounts,
}

impl GroupCounts {
    fn of(e: &EventFacts) -> Self {
        GroupCounts {
            coverage: CoverageCounts::of(e),
            rates: RateCounts::of(e),
        }
    }
}

impl AddAssign for GroupCounts {
    fn add_assign(&mut self, other: Self) {
        self.coverage += other.coverage;
        self.rates += other.rates;
    }
}
