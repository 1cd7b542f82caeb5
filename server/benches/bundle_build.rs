//! Building a bundle of 300 events with every entry (GeoJSON, GPX,
//! GeoPackage, previews, field sheet, manifest).
//!
//! ```text
//! cargo bench -p groundproof-server --bench bundle_build -- [EVENTS]
//! ```
//! Loads the demo scenario, then issues a response bundle of EVENTS
//! (default 300) events five times and reports the median seconds and the
//! peak memory (VmHWM) of the process.

mod common;
use common::peak_rss_mb;
use groundproof::domain::{Day, LonLat};
use groundproof::planning::{TripRequest, issue_bundle};
use groundproof::platform::settings::Settings;
use groundproof::platform::storage::Db;
use std::time::Instant;

fn main() {
    let n: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(300);
    let dir = tempfile::tempdir().expect("temp dir");
    let db = Db::open(dir.path()).expect("db");
    let settings = Settings::default();
    groundproof::demo::load(&db, dir.path(), &settings).expect("demo scenario");
    let scenario = mock_patrols::scenario();
    let start = LonLat::new(scenario.station.0, scenario.station.1).expect("station");
    let req = TripRequest {
        max: Some(n),
        as_of: Day::parse(&scenario.end_date).expect("date"),
        ..TripRequest::response(&scenario.teams[2], start)
    };
    let rss_before = peak_rss_mb();
    let mut times = Vec::new();
    let mut last = None;
    for _ in 0..5 {
        let t = Instant::now();
        last = Some(issue_bundle(&db, dir.path(), &settings, &req).expect("bundle"));
        times.push(t.elapsed().as_secs_f64());
    }
    times.sort_by(f64::total_cmp);
    let b = last.expect("one bundle");
    println!(
        "{{\"events\":{},\"bytes\":{},\"median_seconds\":{:.3},\"min_seconds\":{:.3},\"peak_rss_mb\":{:.0},\"rss_before_mb\":{:.0}}}",
        b.bundle.events,
        b.bundle.file_size,
        times[2],
        times[0],
        peak_rss_mb(),
        rss_before
    );
}
