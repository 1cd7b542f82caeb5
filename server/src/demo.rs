//! The demo: the invented scenario of `mock-patrols` loaded through the
//! same import code a coordinator uses.

use crate::alerts::events::{ImportRequest, import_alerts, import_zones};
use crate::alerts::import::{Format, ReadOptions};
use crate::domain::BundleMode;
use crate::domain::{ConfidenceMap, SourceName};
use crate::domain::{Day, LonLat};
use crate::error::{Error, Result};
use crate::planning::{IssuedBundle, TripRequest, issue_bundle};
use crate::platform::settings::Settings;
use crate::platform::storage::Db;
use std::fmt;
use std::path::{Path, PathBuf};

/// Seed of the demo's alert files.
pub const DEMO_SEED: u64 = 42;

/// The demo's logins (invented; for the demo only, never for real data).
pub const DEMO_LOGINS: &[(&str, crate::platform::auth::Role, &str)] = &[
    (
        "admin",
        crate::platform::auth::Role::Admin,
        "demo-admin-password",
    ),
    (
        "coordinator",
        crate::platform::auth::Role::Coordinator,
        "demo-coordinator-password",
    ),
    (
        "manager",
        crate::platform::auth::Role::Manager,
        "demo-manager-password",
    ),
];

/// A new, empty folder for a demo under the system temp directory.
pub fn fresh_dir() -> Result<PathBuf> {
    let stamp = chrono::Utc::now().format("%Y%m%dT%H%M%S");
    let dir = std::env::temp_dir().join(format!("groundproof-demo-{stamp}-{}", std::process::id()));
    std::fs::create_dir_all(&dir)
        .map_err(|e| Error::io(format!("creating {}", dir.display()), e))?;
    Ok(dir)
}

/// What the demo loaded.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoSummary {
    pub reserve: String,
    pub zones: usize,
    pub alerts: Vec<(String, usize)>,
    pub live_events: i64,
    pub merged_events: i64,
    /// (team, mode, events, controls, file)
    pub bundles: Vec<(String, String, i64, i64, PathBuf)>,
}

impl fmt::Display for DemoSummary {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "Demo scenario: {} (invented)", self.reserve)?;
        writeln!(f, "  zones: {}", self.zones)?;
        for (s, n) in &self.alerts {
            writeln!(f, "  alerts from {s}: {n}")?;
        }
        write!(
            f,
            "  clearing events: {} ({} absorbed by merges)",
            self.live_events, self.merged_events
        )?;
        for (name, role, password) in DEMO_LOGINS {
            write!(f, "\n  demo login: {name} / {password} ({role})")?;
        }
        for (team, mode, events, controls, path) in &self.bundles {
            write!(
                f,
                "\n  bundle for {team} ({mode}): {events} events, {controls} control points: {}",
                path.display()
            )?;
        }
        Ok(())
    }
}

/// Load sources, zones, teams and a year of alerts, then issue trips.
pub fn load(db: &Db, data_dir: &Path, settings: &Settings) -> Result<DemoSummary> {
    let scenario = mock_patrols::scenario();
    add_sources_and_zones(db, &scenario)?;
    let alerts = import_demo_alerts(db, settings, &scenario)?;
    add_teams_and_logins(db, &scenario)?;
    let (live_events, merged_events) = db.read(|r| r.event_counts())?;
    let bundles = issue_demo_trips(db, data_dir, settings, &scenario)?;
    Ok(DemoSummary {
        reserve: scenario.reserve_name,
        zones: scenario.zones.len(),
        alerts,
        live_events,
        merged_events,
        bundles: bundles
            .iter()
            .map(|b| {
                (
                    b.bundle.team.clone(),
                    b.bundle.mode.clone(),
                    b.bundle.events,
                    b.bundle.controls,
                    b.path.clone(),
                )
            })
            .collect(),
    })
}

/// The scenario's alert sources, then its zones.
fn add_sources_and_zones(db: &Db, scenario: &mock_patrols::Scenario) -> Result<()> {
    for s in &scenario.sources {
        db.write(|tx| tx.add_source(s.name, s.pixel_size_m, i64::from(s.revisit_days)))?;
    }
    let zones = mock_patrols::zones_geojson(scenario);
    import_zones(db, "demo-zones.geojson", zones.as_bytes())?;
    Ok(())
}

/// Generates a year of alerts per source and imports each source's CSV as a
/// coordinator would; returns how many alerts each source brought.
fn import_demo_alerts(
    db: &Db,
    settings: &Settings,
    scenario: &mock_patrols::Scenario,
) -> Result<Vec<(String, usize)>> {
    let mut alerts = Vec::new();
    for (source, rows) in mock_patrols::generate_alerts(scenario, DEMO_SEED) {
        let name = SourceName::parse(source).map_err(Error::Invalid)?;
        let csv = mock_patrols::alerts_csv(&rows);
        let file_name = format!("demo-{source}.csv");
        let req = ImportRequest {
            source: &name,
            file_name: &file_name,
            bytes: csv.as_bytes(),
            format: Format::Csv,
            read: ReadOptions {
                confidence: ConfidenceMap::default(),
                ..Default::default()
            },
            skip_invalid: false,
        };
        let out = import_alerts(db, &req, &settings.cluster)?;
        alerts.push((source.to_string(), out.imported));
    }
    Ok(alerts)
}

/// The scenario's teams and the demo's logins.
fn add_teams_and_logins(db: &Db, scenario: &mock_patrols::Scenario) -> Result<()> {
    for t in &scenario.teams {
        db.write(|tx| tx.add_team(t))?;
    }
    let now = crate::platform::auth::now_unix();
    for (name, role, password) in DEMO_LOGINS {
        crate::platform::auth::create_user(db, name, *role, password, now)?;
    }
    Ok(())
}

/// Issues the demo's two trips from the field station: a response trip in
/// the core zone for the first team, an assessment of the community land
/// with control points for the second.
fn issue_demo_trips(
    db: &Db,
    data_dir: &Path,
    settings: &Settings,
    scenario: &mock_patrols::Scenario,
) -> Result<Vec<IssuedBundle>> {
    let start = LonLat::new(scenario.station.0, scenario.station.1).map_err(Error::Invalid)?;
    let as_of = Day::parse(&scenario.end_date).map_err(Error::Invalid)?;
    let mut bundles = Vec::new();
    // The demo's trips were issued two weeks ago, so their visits are in
    // the past and the statistics have something to show.
    let issued_at = Some(chrono::Utc::now() - chrono::Duration::days(14));
    let response = TripRequest {
        issued_at,
        zone: Some("Core".into()),
        max: Some(8),
        start_name: "field station".into(),
        as_of,
        ..TripRequest::response(&scenario.teams[0], start)
    };
    bundles.push(issue_bundle(db, data_dir, settings, &response)?);
    let assessment = TripRequest {
        issued_at,
        mode: BundleMode::Assessment,
        zone: Some("Riverside Community Land".into()),
        margin: 0.3,
        controls: 3,
        seed: Some(DEMO_SEED),
        start_name: "field station".into(),
        as_of,
        ..TripRequest::response(&scenario.teams[1], start)
    };
    bundles.push(issue_bundle(db, data_dir, settings, &assessment)?);
    Ok(bundles)
}

/// Play the demo's field teams: for each demo bundle, the field kit
/// records the visits (with generated photos) and pushes the return to the
/// server at `server_url` through the real resumable upload. Returns one
/// line per pushed return.
pub fn run_trips(
    db: &Db,
    summary: &DemoSummary,
    work: &Path,
    server_url: &str,
) -> Result<Vec<String>> {
    let mut lines = Vec::new();
    for (i, (team, mode, _, _, bundle)) in summary.bundles.iter().enumerate() {
        let (_, token) =
            crate::platform::auth::issue_team_token(db, team, crate::platform::auth::now_unix())?;
        let plan = mock_patrols::field::TripPlan {
            disputed_pair: i == 0,
            ..Default::default()
        };
        let dir = work.join(format!("trip-{}", i + 1));
        let outcome =
            mock_patrols::field::make_trip_return(bundle, &dir, &plan, DEMO_SEED + i as u64)
                .map_err(|e| Error::Internal(format!("demo trip {}: {e}", i + 1)))?;
        for device in &outcome.returns {
            let pushed = groundproof_sync::field::push(
                &device.workspace,
                server_url,
                Some(&token),
                &groundproof_sync::client::PushOptions::default(),
            )
            .map_err(|e| Error::Internal(format!("demo push of trip {}: {e}", i + 1)))?;
            lines.push(format!(
                "  return from {team} ({mode}): {} accepted, {} duplicate, {} rejected",
                pushed.accepted,
                pushed.duplicate,
                pushed.rejected.len()
            ));
        }
    }
    Ok(lines)
}
