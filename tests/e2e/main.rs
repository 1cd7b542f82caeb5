//! End-to-end tests: the real server on a random loopback port.

mod access;
mod alerts_api;
mod bundles;
mod control_outcomes;
mod demo_story;
mod footprints;
mod hardening;
mod intake;
mod pages;
mod pairing;
mod photo_times;
mod robust_http;
mod stats_api;
mod stats_cache;
mod tls;
