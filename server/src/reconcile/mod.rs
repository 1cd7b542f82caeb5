//! Reconciliation: from the immutable report facts and the adjudications of
//! one event to the event's status. Pure functions, no SQL: the storage layer
//! loads the facts, this module decides, nothing is stored that could drift.
//!
//! # Rules (in the order they are applied)
//!
//! 1. **Duplicates count once.** Reports are keyed by `report_id`. When the
//!    same id arrives more than once, one copy is kept: the one received
//!    first (smallest `received_at`; a full comparison of the fields breaks
//!    a tie), so the result never depends on arrival order.
//! 2. **Superseded reports do not count.** A report that another report
//!    names in `supersedes` is replaced by it; along a chain A ← B ← C only C
//!    counts. A report that names an id that is not among the facts (an
//!    unknown or foreign report) still counts itself, and a report naming
//!    itself is treated as naming nothing. A supersession cycle (which an
//!    honest device cannot make, since a report can only name an existing
//!    one) is broken deterministically: if no report outside the cycle names
//!    a member, the member that sorts last by (`observed_at`, `report_id`)
//!    counts.
//! 3. **Order.** The counted reports are sorted by (`observed_at`,
//!    `report_id`) before anything is decided, so the input order never
//!    matters.
//! 4. **Visits.** A counted report *reached* the event when its outcome is
//!    `confirmed`, `false_alarm` or `inconclusive`. `first_visit` is the
//!    earliest `observed_at` of a reaching report; `first_received` the
//!    earliest `received_at` of a reaching report.
//!    - no counted report: `unvisited`;
//!    - counted reports, none reached: `not_reached`;
//!    - reached, but no `confirmed` or `false_alarm`: `inconclusive`.
//! 5. **Episodes.** The decisive reports (`confirmed`, `false_alarm`) are
//!    split into episodes: a new episode starts when a report is more than
//!    `window_days` (default [`DEFAULT_WINDOW_DAYS`] = 30) after the previous
//!    decisive report. Two disagreeing reports within the window of each
//!    other are therefore always in the same episode. An episode where
//!    every report agrees resolves to that outcome. An episode with both
//!    outcomes is **disputed**, unless exactly one side has a report whose
//!    evidence passes the checks (`evidence_ok`): then that side wins.
//! 6. **Event status from episodes.**
//!    - If some episode resolves to `confirmed`, the event is `confirmed`;
//!      `new_clearing` is true when an earlier episode resolved to
//!      `false_alarm` (a confirmed visit more than the window after a false
//!      alarm: the clearing happened after that visit). A later
//!      `false_alarm` episode does not undo a confirmed clearing (it is
//!      mentioned in the note).
//!    - Otherwise, if some episode is disputed: `disputed`.
//!    - Otherwise: `false_alarm`.
//! 7. **Adjudication.** The latest adjudication (largest `at`; ties broken
//!    by a full comparison of the fields) settles a dispute and overrides
//!    every other outcome: the status becomes its outcome. `new_clearing`
//!    stays true only if the adjudicated outcome is `confirmed` and the
//!    reports had made it a new clearing.
//! 8. **Cause.** For a `confirmed` status, the cause of the last counted
//!    confirmed report (in the order of rule 3) that names one.
//!
//! [`event_status`] treats every fact it is given as belonging to one event
//! (the caller resolves merged event ids). [`event_statuses`] takes the
//! facts of many events, resolves duplicates and supersession over all of
//! them first (an amendment may move a report to another event), then
//! groups by `event_id`.

mod counted;
mod facts;
mod status;

pub use counted::{CountedIndex, counted_reports, distinct_reports};
pub use facts::{Adjudication, Outcome, ReportFact};
pub use status::{
    DEFAULT_WINDOW_DAYS, StatusOutcome, event_status, event_statuses, event_statuses_counted,
    status_from_counted,
};

#[cfg(test)]
mod tests;
