//! End-to-end tests: the real server on a random loopback port.

mod access;
mod alerts_api;
mod bundles;
mod intake;
mod pages;
mod pairing;
mod stats_api;
mod stats_cache;
mod tls;
