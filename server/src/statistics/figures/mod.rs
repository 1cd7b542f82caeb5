//! Figures for the manager pages, computed from stored facts on top of
//! [`crate::statistics::estimators`]: pure functions from plain rows ([`EventFacts`], the
//! report facts of [`crate::reconcile`], [`ControlFacts`]) to `Serialize`
//! tables. Nothing here is stored; every figure is recomputed.
//!
//! # Definitions
//!
//! - **Durations** are in days (fractional). "Detection" is midnight UTC of
//!   `first_detected`; "issue" is `issued_at` (first bundle holding the
//!   event); "visit" is `first_visit` (earliest counted report that reached
//!   the event); "received" is `first_received`.
//! - **Groups** ([`GroupKey`]): zone, team, month of detection ("YYYY-MM"),
//!   source, confidence, corroboration, cause, sample stratum. An event with
//!   several values counts once in each group; with none, in "(none)".
//! - **Coverage** ([`coverage`]): per group, events; issued (has an issue
//!   time); visited (has a first visit); not reached (no visit and status
//!   `not_reached`); unvisited (the rest). visited + not reached + unvisited
//!   = events.
//! - **Confirmation rate** ([`confirmation_rates`]): confirmed /
//!   (confirmed + false_alarm) by event status, Wilson 95% interval
//!   ([`crate::statistics::estimators::wilson`]); inconclusive and disputed events are
//!   counted apart, in neither term; new clearings count as confirmed and are
//!   also counted apart. Basis "descriptive (response visits)": it describes
//!   the events that happened to be visited, not all alerts. Grouping by
//!   cause is degenerate (only confirmed events have a cause); the cause
//!   table is the useful view.
//! - **Response times** ([`response_times`]): detection → issue, issue →
//!   visit, detection → visit, visit → received; count, min, median, p90,
//!   max (Hyndman–Fan type 7) over the events with both ends known.
//! - **Time to visit** ([`time_to_visit`]): Kaplan–Meier of detection →
//!   first visit ([`crate::statistics::estimators::kaplan_meier`]); an event not visited by
//!   `as_of` is censored at `as_of` − detection; events detected after
//!   `as_of` are left out. Two curves, "all events" and "issued events",
//!   each with the share visited within T days (default 14) = 1 − Ŝ(T).
//! - **Target** ([`target_shares`]): the share of issued events visited
//!   within T days of detection and of issue, over the events whose window
//!   is over, with a Wilson interval (see the `target` module for why not
//!   1 − Ŝ(T)).
//! - **Clearings found on the ground** ([`GroundFinds`]): events a team
//!   found that no alert flagged. They are not an alert source: left out of
//!   coverage, confirmation rates, response times, time to visit and the
//!   targets (in [`all_figures`]); counted apart with their area.
//! - **Causes** ([`causes`]): events with status `confirmed`, count and
//!   summed area, by cause and by cause × month of detection; no cause is
//!   "(not recorded)".
//! - **Teams** ([`team_table`]): from the report facts after dropping
//!   duplicates and superseded reports: trips = distinct bundles among the
//!   team's reports; events visited = distinct events the team reached;
//!   reports = counted reports; evidence share = counted reports whose
//!   evidence passes / counted reports; median issue → visit over the events
//!   the team reached (the team's first reaching visit − its bundle's issue
//!   time).
//! - **Assessment** ([`assessment()`]): see the [`mod@assessment`] module for
//!   user's accuracy per stratum with fpc, the Olofsson-style error matrix
//!   with control points, and how non-response is reported.

mod all;
pub mod assessment;
mod causes;
mod coverage;
mod facts;
mod groups;
mod rates;
mod target;
mod teams;
mod times;
mod trends;

use thiserror::Error;

use crate::statistics::estimators::StatsError;

pub use all::{
    COVERAGE_KEYS, FigureOptions, Figures, Grouped, RATE_KEYS, all_figures, all_figures_counted,
};
pub use assessment::{
    AlertStratum, AreaAssessment, Assessment, ControlStratum, ErrorMatrixRow, MapClass,
    NonResponse, assessment,
};
pub use causes::{CAUSE_NOT_RECORDED, CauseRow, CauseTable, causes};
pub use coverage::{CoverageRow, coverage, coverage_by};
pub use facts::{
    ControlFacts, ControlFinding, EventFacts, GroupKey, NO_VALUE, SampleInfo, days_between,
    month_of,
};
pub use rates::{Basis, RateRow, confirmation_rates};
pub use target::{GroundFinds, TargetFrom, TargetShare, target_shares};
pub use teams::{TeamRow, team_table, team_table_counted};
pub use times::{
    DEFAULT_WITHIN_DAYS, ResponseTimes, TimeToVisit, VisitCurve, response_times, time_to_visit,
};
pub use trends::{TrendPoint, monthly_trends, team_trends};

/// Input the figures cannot use.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum FiguresError {
    #[error(transparent)]
    Stats(#[from] StatsError),
    #[error("stratum {stratum}: inclusion probability {probability} is outside (0, 1]")]
    BadInclusionProbability { stratum: String, probability: f64 },
    #[error("stratum {stratum}: area {area} ha must be a finite number >= 0")]
    BadArea { stratum: String, area: f64 },
    #[error("stratum {stratum}: population given as {first} and as {other}")]
    InconsistentStratum {
        stratum: String,
        first: u64,
        other: u64,
    },
    #[error("stratum {0} is both an alert stratum and a control stratum")]
    StratumNameClash(String),
}

#[cfg(test)]
mod tests;
