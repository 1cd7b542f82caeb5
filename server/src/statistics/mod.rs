//! The last step before the pages: from reconciled facts to figures.
//!
//! - [`estimators`]: pure estimators (Wilson and Clopper–Pearson intervals,
//!   stratified proportions, Olofsson 2014, Kaplan–Meier, quantiles).
//! - [`figures`]: pure figures (coverage, confirmation rates, response
//!   times, causes, teams, assessment) built on the estimators.
//! - [`kept`]: the service that reads the facts from storage, reconciles
//!   them, and keeps the figures while the facts stay the same.

pub mod estimators;
pub mod figures;
pub mod kept;
