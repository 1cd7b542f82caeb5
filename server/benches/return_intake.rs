//! Memory and time of taking in one large return package.
//!
//! ```text
//! cargo bench -p groundproof-server --bench return_intake -- [EVENTS]
//! ```
//! Loads the demo scenario into a fresh data directory, issues a response
//! bundle of EVENTS events (default 100), lets the field kit record the
//! visits with 4000 x 3000 phone-like photos (mock-patrols, seeded) and pack
//! the return, then takes that package in with the server's intake (the
//! function behind both the station upload and the resumable push:
//! signature, safe ZIP reading, every photo decoded for its thumbnail,
//! hashed and stored, evidence checks, one transaction). It prints the
//! package's photos and bytes, the intake's seconds, and the memory intake
//! added: the peak resident size (VmHWM) during intake minus the resident
//! size before it, with the peak mark reset first (Linux proc(5),
//! `clear_refs` value 5) so the generator's buffers are not counted.
//! The target (issue 4): a 200-photo return of about 800 MB under 200 MB.

mod common;
use common::{peak_rss_mb, status_mb};
use groundproof::domain::LonLat;
use groundproof::intake::{IntakeOptions, take_in};
use groundproof::planning::{TripRequest, issue_bundle};
use groundproof::platform::settings::Settings;
use groundproof::platform::storage::Db;
use sha2::{Digest, Sha256};
use std::time::Instant;

fn main() {
    let events: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(100);
    let dir = tempfile::tempdir().expect("temp dir");
    let db = Db::open(dir.path()).expect("db");
    let settings = Settings::default();
    groundproof::demo::load(&db, dir.path(), &settings).expect("scenario");
    let scenario = mock_patrols::scenario();
    let start = LonLat::new(scenario.station.0, scenario.station.1).expect("station");
    let issued = issue_bundle(
        &db,
        dir.path(),
        &settings,
        &TripRequest {
            issued_at: Some(chrono::Utc::now() - chrono::Duration::days(80)),
            expires_days: 120,
            due_days: 60,
            max: Some(events),
            ..TripRequest::response(&scenario.teams[2 % scenario.teams.len()], start)
        },
    )
    .expect("bundle");
    let plan = mock_patrols::field::TripPlan {
        photo_width: 4000,
        photo_height: 3000,
        ..Default::default()
    };
    let t = Instant::now();
    let trip =
        mock_patrols::field::make_trip_return(&issued.path, &dir.path().join("field"), &plan, 2026)
            .expect("field return");
    let make_s = t.elapsed().as_secs_f64();
    let ret = &trip.returns[0];
    let bytes = std::fs::read(&ret.zip).expect("package");
    let size = bytes.len() as u64;
    let sha = hex::encode(Sha256::digest(&bytes));
    drop(bytes);
    let photos = ret
        .reports
        .iter()
        .flat_map(|r| r.photo_sha256.iter())
        .collect::<std::collections::BTreeSet<_>>()
        .len();

    let reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();
    let before = status_mb("VmRSS:");
    let t = Instant::now();
    let doc = take_in(
        &db,
        dir.path(),
        &IntakeOptions::default(),
        &ret.zip,
        &sha,
        size,
        None,
    )
    .expect("intake");
    let intake_s = t.elapsed().as_secs_f64();
    let peak = peak_rss_mb();
    let accepted = doc
        .results
        .iter()
        .filter(|r| r.status == "accepted")
        .count();
    println!(
        "{{\"bench\":\"return_intake\",\"reports\":{},\"accepted\":{accepted},\"photos\":{photos},\"package_mb\":{:.0},\"generate_seconds\":{make_s:.1},\"intake_seconds\":{intake_s:.2},\"photos_per_second\":{:.1},\"rss_before_mb\":{before:.0},\"peak_mb\":{peak:.0},\"added_mb\":{:.0},\"peak_reset\":{reset},\"target_added_mb\":200}}",
        ret.reports.len(),
        size as f64 / 1e6,
        photos as f64 / intake_s,
        peak - before,
    );
}
