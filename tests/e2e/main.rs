//! End-to-end tests: the real server on a random loopback port.

mod access;
mod admin;
mod alerts_api;
mod backup;
mod bundles;
mod control_outcomes;
mod demo_story;
mod footprints;
mod hardening;
mod intake;
mod languages;
mod languages_figures;
mod languages_station;
mod languages_trips;
mod languages_words;
mod pages;
mod pairing;
mod photo_times;
mod robust_http;
mod serving;
mod station_entry;
mod stats_api;
mod stats_cache;
mod tls;
mod tls_push;
mod trips;
