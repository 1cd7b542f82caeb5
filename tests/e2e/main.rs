//! End-to-end tests: the real server on a random loopback port.

mod alerts_api;
mod bundles;
mod stats_api;
