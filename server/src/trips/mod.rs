//! Trips: choosing events for a field team, ordering them into a route,
//! and issuing the offline bundle.
//!
//! - [`codes`]: short codes that are easy to read out over a radio.
//! - [`select`]: response mode (priority order) and assessment mode (a
//!   stratified random sample sized by Cochran's formula, plus control
//!   points), with each item's inclusion probability.
//! - [`issue`]: the bundle written durably, then recorded in one
//!   transaction.

pub mod codes;
pub mod issue;
pub mod select;

pub use issue::{IssuedBundle, cancel_bundle, issue_bundle};
pub use select::{Mode, TripRequest};
