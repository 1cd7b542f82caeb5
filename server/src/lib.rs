//! Groundproof office server: alert import, clearing events, and the HTTP
//! API. The binary (`main.rs`) is a thin command line over this library.
//!
//! Data flows one way: `import` parses files into validated alerts,
//! `events` keeps clearing events in step with them using the pure
//! `cluster` functions, `storage` is the only module that speaks SQL, and
//! `web` is the only module that knows HTTP.

pub mod auth;
pub mod charts;
pub mod cluster;
pub mod coords;
pub mod dashboard;
pub mod demo;
pub mod domain;
pub mod error;
pub mod events;
pub mod figures;
pub mod files;
pub mod geodesy;
pub mod import;
pub mod intake;
pub mod plan;
pub mod reconcile;
pub mod settings;
pub mod sheet;
pub mod stats;
pub mod storage;
pub mod trips;
pub mod web;

pub use error::{Error, Result};
