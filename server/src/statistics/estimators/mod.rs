//! Pure statistics for Groundproof: no storage, no HTTP, only numbers in and
//! numbers out, each result a `Serialize` struct for the pages and the API.
//!
//! - [`proportion`]: Wilson score (and Clopper–Pearson) 95% intervals for a
//!   rate x/n, such as the confirmation rate over convenience visits.
//! - [`stratified`]: stratified proportion with finite-population correction,
//!   for a stratified random sample of alerts; the stratified mean of a value
//!   in [0, 1] per unit (the cleared share of a control plot).
//! - [`olofsson`]: user's, producer's and overall accuracy and area per class
//!   from an error matrix whose strata are the map classes (Olofsson et al. 2014).
//! - [`survival`]: Kaplan–Meier time-to-visit curve with Greenwood SE, log-log
//!   95% band, median, and the share visited within T days.
//! - [`quantiles`]: median and 90th percentile of durations (Hyndman–Fan type 7).
//!
//! "No data" is `Ok(None)`; input that no estimator can accept is a
//! [`StatsError`]. Nothing here panics on bad input. Formulas and check values
//! are in `/work/shared/references/statistics.md`; fixtures from reference
//! libraries are in `tests/reference/stats/`, made by `make_reference.py`.

mod error;
mod interval;
pub mod olofsson;
pub mod proportion;
pub mod quantiles;
mod special;
pub mod stratified;
pub mod survival;

pub use error::StatsError;
pub use interval::{Estimate, Interval, Z95};
pub use olofsson::{AccuracyAssessment, ClassAccuracy, olofsson};
pub use proportion::{ProportionEstimate, ProportionMethod, clopper_pearson, wilson};
pub use quantiles::{DurationSummary, duration_summary, median, percentile_90, quantile};
pub use stratified::{
    Fpc, StratifiedProportion, StratumCount, StratumResult, StratumStatus, StratumValues,
    stratified_mean, stratified_proportion,
};
pub(crate) use survival::kaplan_meier_sorted;
pub use survival::{CurveStep, EventShare, KaplanMeier, SurvivalPoint, TimeBounds, kaplan_meier};
