//! Groundproof office server. The binary (`main.rs`, `cli.rs`) is a thin
//! command line over this library.
//!
//! The modules below follow the data flow, one way:
//!
//! ```text
//! alerts ─▶ planning ─▶ (bundle to the field) ─▶ intake ─▶ reconcile ─▶ statistics ─▶ web
//!                  all of them stand on: platform (storage, auth, settings, durable files)
//!                                        domain   (the typed vocabulary)
//! ```
//!
//! Which module may import which is written down in DEVELOPERS.md and
//! checked by `server/tests/layers.rs`.

// The typed vocabulary and the layer every step stands on.
pub mod domain;
pub mod error;
pub mod platform;

// The data flow, in order.
pub mod alerts;
pub mod intake;
pub mod planning;
pub mod reconcile;
pub mod statistics;
pub mod web;

// Entry points.
pub mod demo;

pub use error::{Error, Result};
