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

/// One trip of the demo's year: when it is issued, to whom, and how the
/// team does. The schedule tells a programme maturing: trips come more
/// often (about every eight weeks at first, every two to three weeks at the
/// end), teams leave sooner after the issue and bring the return back
/// sooner, fewer events are left unvisited or not reached.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DemoTrip {
    /// Days before the last day of the alert year the trip is issued (08:00 UTC).
    pub issued_days_before_end: i64,
    /// Index into the scenario's teams.
    pub team: usize,
    /// `None`: the whole reserve.
    pub zone: Option<&'static str>,
    /// Assessment (a seeded sample with control points) instead of response.
    pub assessment: bool,
    /// Most events (response trips).
    pub max: usize,
    /// Whole days from the issue to the first field day.
    pub first_day_after_issue: u32,
    /// Days from the last visit to the return's arrival at the station.
    pub return_lag_days: i64,
    /// Events left unvisited and events not reached.
    pub unvisited: usize,
    pub not_reached: usize,
}

const fn trip(
    issued_days_before_end: i64,
    team: usize,
    first_day_after_issue: u32,
    return_lag_days: i64,
    unvisited: usize,
    not_reached: usize,
) -> DemoTrip {
    DemoTrip {
        issued_days_before_end,
        team,
        zone: Some("Core"),
        assessment: false,
        max: 7,
        first_day_after_issue,
        return_lag_days,
        unvisited,
        not_reached,
    }
}

/// The demo's trips, oldest first (the last one is pushed over HTTP).
pub const DEMO_TRIPS: &[DemoTrip] = &[
    trip(318, 0, 8, 9, 2, 2),
    trip(262, 1, 7, 8, 2, 1),
    DemoTrip {
        zone: None,
        ..trip(214, 0, 6, 6, 2, 1)
    },
    trip(172, 1, 5, 5, 1, 1),
    DemoTrip {
        zone: Some("Riverside Community Land"),
        assessment: true,
        ..trip(134, 2, 4, 4, 1, 1)
    },
    trip(100, 0, 3, 3, 1, 1),
    DemoTrip {
        zone: None,
        ..trip(70, 1, 2, 2, 1, 0)
    },
    trip(44, 2, 2, 2, 0, 1),
    trip(22, 0, 1, 1, 0, 0),
    trip(3, 1, 1, 0, 0, 0),
];

/// The scenario of the demo: the invented reserve with its year of alerts
/// ending the day before `today`, so the trips of [`DEMO_TRIPS`] fall in the
/// past and the last one has just come back. The alerts are the same for
/// every run (same seed), shifted with the date.
pub fn demo_scenario(today: chrono::NaiveDate) -> mock_patrols::Scenario {
    let end = today - chrono::Days::new(1);
    let start = end - chrono::Days::new(364);
    mock_patrols::Scenario {
        start_date: start.format("%Y-%m-%d").to_string(),
        end_date: end.format("%Y-%m-%d").to_string(),
        ..mock_patrols::scenario()
    }
}

/// What the demo loaded.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoSummary {
    pub reserve: String,
    pub zones: usize,
    pub alerts: Vec<(String, usize)>,
    pub live_events: i64,
    pub merged_events: i64,
    /// (team, mode, events, controls, file), in the order of [`DEMO_TRIPS`].
    pub bundles: Vec<(String, String, i64, i64, PathBuf)>,
    /// The data directory (the past trips' returns are taken in there).
    pub data_dir: PathBuf,
    /// When each bundle was issued.
    pub issued_at: Vec<chrono::DateTime<chrono::Utc>>,
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
        for ((team, mode, events, controls, path), at) in self.bundles.iter().zip(&self.issued_at) {
            write!(
                f,
                "\n  bundle for {team} ({mode}, issued {}): {events} events, {controls} control points: {}",
                at.format("%Y-%m-%d"),
                path.display()
            )?;
        }
        Ok(())
    }
}

/// Load sources, zones, teams and a year of alerts, then issue the year's trips.
pub fn load(db: &Db, data_dir: &Path, settings: &Settings) -> Result<DemoSummary> {
    let scenario = demo_scenario(chrono::Utc::now().date_naive());
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
        data_dir: data_dir.to_path_buf(),
        issued_at: bundles
            .iter()
            .map(|b| {
                chrono::DateTime::parse_from_rfc3339(&b.bundle.issued_at)
                    .map(|t| t.with_timezone(&chrono::Utc))
                    .map_err(|e| Error::Internal(format!("demo issue time: {e}")))
            })
            .collect::<Result<_>>()?,
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

/// Issues the trips of [`DEMO_TRIPS`] from the field station, each as of its
/// issue day (events first detected since the previous trip, and by then).
fn issue_demo_trips(
    db: &Db,
    data_dir: &Path,
    settings: &Settings,
    scenario: &mock_patrols::Scenario,
) -> Result<Vec<IssuedBundle>> {
    let start = LonLat::new(scenario.station.0, scenario.station.1).map_err(Error::Invalid)?;
    let end = Day::parse(&scenario.end_date).map_err(Error::Invalid)?;
    let now = chrono::Utc::now();
    let mut bundles = Vec::new();
    let mut previous: Option<Day> = None;
    for t in DEMO_TRIPS {
        let day = Day::from_days(end.days() - t.issued_days_before_end as i32);
        let issued = day
            .date()
            .and_hms_opt(8, 0, 0)
            .map(|d| d.and_utc())
            .ok_or_else(|| Error::Internal("demo issue time".into()))?;
        let team = scenario
            .teams
            .get(t.team)
            .ok_or_else(|| Error::Internal(format!("demo team {}", t.team)))?;
        let base = TripRequest {
            issued_at: Some(issued),
            zone: t.zone.map(str::to_string),
            max: Some(t.max),
            from: previous,
            to: Some(day),
            start_name: "field station".into(),
            as_of: day,
            // The field kit opens a bundle only before it expires: a past
            // trip of the demo stays open until a month after the demo started.
            expires_days: ((now - issued).num_days() + 30).max(30),
            ..TripRequest::response(team, start)
        };
        let req = if t.assessment {
            TripRequest {
                mode: BundleMode::Assessment,
                max: None,
                from: None,
                margin: 0.3,
                controls: 3,
                seed: Some(DEMO_SEED),
                ..base
            }
        } else {
            base
        };
        bundles.push(issue_bundle(db, data_dir, settings, &req)?);
        previous = Some(day);
    }
    Ok(bundles)
}

/// The mock team's plan for trip `i` of [`DEMO_TRIPS`].
fn trip_plan(i: usize, t: &DemoTrip) -> mock_patrols::field::TripPlan {
    mock_patrols::field::TripPlan {
        unvisited: t.unvisited,
        not_reached: t.not_reached,
        first_day_after_issue: t.first_day_after_issue,
        // One dispute, one far photo, one early photo and a few new
        // clearings over the year, so that every page has something.
        disputed_pair: i == 3,
        far_photo: i == 2,
        early_photo: i == 5,
        new_clearing: i % 3 == 1,
        amend: i == 6,
        ..Default::default()
    }
}

/// Play the demo's field teams: for each trip of [`DEMO_TRIPS`], the field
/// kit records the visits (with generated photos) and packs the return.
/// Every trip but the last is taken in through intake as received the day
/// its team came back (`return_lag_days` after its last visit); the last
/// one is pushed to the server at `server_url` through the real resumable
/// upload. Returns one line per return.
pub fn run_trips(
    db: &Db,
    summary: &DemoSummary,
    work: &Path,
    server_url: &str,
) -> Result<Vec<String>> {
    let mut lines = Vec::new();
    let last = summary.bundles.len().saturating_sub(1);
    for (i, ((team, mode, _, _, bundle), t)) in summary.bundles.iter().zip(DEMO_TRIPS).enumerate() {
        let dir = work.join(format!("trip-{}", i + 1));
        let outcome = mock_patrols::field::make_trip_return(
            bundle,
            &dir,
            &trip_plan(i, t),
            DEMO_SEED + i as u64,
        )
        .map_err(|e| Error::Internal(format!("demo trip {}: {e}", i + 1)))?;
        for device in &outcome.returns {
            let (accepted, duplicate, rejected) = if i == last {
                push_return(db, team, &device.workspace, server_url)?
            } else {
                let back = device.reports.iter().map(|r| r.observed_at).max();
                let received = back.map(|b| {
                    b + chrono::Duration::days(t.return_lag_days) + chrono::Duration::hours(2)
                });
                take_in_return(db, &summary.data_dir, &device.zip, received)?
            };
            lines.push(format!(
                "  return from {team} ({mode}): {accepted} accepted, {duplicate} duplicate, {rejected} rejected"
            ));
        }
    }
    Ok(lines)
}

/// Pushes a workspace's return over HTTP with a fresh team token.
fn push_return(
    db: &Db,
    team: &str,
    workspace: &Path,
    server_url: &str,
) -> Result<(usize, usize, usize)> {
    let (_, token) =
        crate::platform::auth::issue_team_token(db, team, crate::platform::auth::now_unix())?;
    let pushed = groundproof_sync::field::push(
        workspace,
        server_url,
        Some(&token),
        &groundproof_sync::client::PushOptions::default(),
    )
    .map_err(|e| Error::Internal(format!("demo push: {e}")))?;
    Ok((pushed.accepted, pushed.duplicate, pushed.rejected.len()))
}

/// Takes a packed return in through intake, received at `received`.
fn take_in_return(
    db: &Db,
    data_dir: &Path,
    zip: &Path,
    received: Option<chrono::DateTime<chrono::Utc>>,
) -> Result<(usize, usize, usize)> {
    let options = crate::intake::IntakeOptions {
        received_at: received,
        ..crate::intake::IntakeOptions::default()
    };
    let bytes =
        std::fs::read(zip).map_err(|e| Error::io(format!("reading {}", zip.display()), e))?;
    let mut file = crate::intake::uploads::IncomingFile::new(data_dir, bytes.len() as u64)?;
    file.write(&bytes)?;
    let doc = crate::intake::uploads::take_in_whole(db, data_dir, &options, file)?;
    let count = |s: &str| doc.results.iter().filter(|r| r.status == s).count();
    Ok((count("accepted"), count("duplicate"), count("rejected")))
}
