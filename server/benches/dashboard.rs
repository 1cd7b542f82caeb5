//! The data behind the manager's dashboard (`/dashboard`, `/api/v1/stats`)
//! on a large data directory.
//!
//! ```text
//! cargo bench -p groundproof-server --bench dashboard -- [EVENTS] [REPORTS] [RUNS]
//!     [--engine sqlite|postgres|both]
//! ```
//! With `--engine both` the same data is generated on SQLite and on
//! PostgreSQL (from `GROUNDPROOF_BENCH_POSTGRES` or
//! `GROUNDPROOF_TEST_POSTGRES`; `source .ci/postgres.sh` starts a throwaway
//! cluster) and every measurement alternates between them run by run; the
//! load average is printed beside each engine's figures.
//! Fills a temp data directory, through the storage module's own insert
//! functions in one transaction, with EVENTS (default 200,000) seeded
//! invented events in four zones and REPORTS (default 1,000,000) reports,
//! plus the bundles (response trips of 100 events, and assessment trips with
//! sampled events and control points), returns, merges and adjudications
//! those reports need. Then it measures, RUNS (default 20) times each:
//! 1. what the server answers from the statistics it keeps for the current
//!    facts (`StatsCache`: fact stamp, the report-date curves, JSON), plus
//!    the first request on these facts, a new filter, and the first request
//!    after a new return is written;
//! 2. the same over HTTP, on the real server on a loopback port;
//! 3. the full recompute from storage (after 2 warm-up runs), split into
//!    loading with reconciliation and figures, with a fingerprint of every
//!    figure (a speed-up must not change it).
//!
//! It prints medians, 95th percentiles and the peak memory (VmHWM) of the
//! process. Target: p95 under 200 ms for what the server answers.

mod common;
use chrono::{DateTime, Duration, TimeZone, Utc};
use common::{Engine, engines, is_engine_arg, load_average, peak_rss_mb, reset_peak_rss};
use groundproof::domain::{Confidence, Day, Outcome, Reason, TargetKind};
use groundproof::platform::storage::{
    BundleItem, Db, EventWrite, NewBundle, ReportRow, ReturnRecord, Tx,
};
use groundproof::statistics::figures::{FigureOptions, Figures};
use groundproof::statistics::kept::{
    DISPUTE_WINDOW_DAYS, StatsCache, StatsFilter, figures_of, load,
};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::collections::BTreeMap;
use std::time::Instant;

/// One of the bench's fixed words (outcomes, causes), typed.
fn word<W: std::str::FromStr>(s: &str) -> W
where
    W::Err: std::fmt::Debug,
{
    s.parse().expect("a known word")
}

const TARGET_P95_MS: f64 = 200.0;
const SEED: u64 = 2026;
/// Events per response trip.
const TRIP_EVENTS: usize = 100;
/// Assessment trips, each with sampled events and control points.
const ASSESSMENT_TRIPS: usize = 20;
const SAMPLED_PER_TRIP: usize = 25;
const CONTROLS_PER_TRIP: usize = 10;
const SOURCES: [(&str, f64, i64); 3] = [
    ("optical-10m", 10.0, 5),
    ("radar-10m", 10.0, 12),
    ("optical-30m", 30.0, 8),
];
/// Invented zones: (name, west, south, east, north) in a 1° box.
const ZONES: [(&str, f64, f64, f64, f64); 4] = [
    ("Lowland Block", -60.0, -10.0, -59.5, -9.5),
    ("Ridge Block", -59.5, -10.0, -59.0, -9.5),
    ("River Block", -60.0, -9.5, -59.5, -9.0),
    ("Plateau Block", -59.5, -9.5, -59.0, -9.0),
];
const CAUSES: [&str; 5] = [
    "smallholder_clearing",
    "plantation_or_pasture_conversion",
    "logging_road",
    "mining",
    "fire",
];

/// The value at quantile `q` of sorted `v` (nearest rank).
fn quantile(v: &[f64], q: f64) -> f64 {
    let rank = ((q * v.len() as f64).ceil() as usize).clamp(1, v.len());
    v[rank - 1]
}

fn uuid(rng: &mut ChaCha8Rng) -> String {
    uuid::Builder::from_random_bytes(rng.random())
        .into_uuid()
        .to_string()
}

fn square(lon: f64, lat: f64, half: f64) -> String {
    let (w, s, e, n) = (lon - half, lat - half, lon + half, lat + half);
    format!(
        "{{\"type\":\"Polygon\",\"coordinates\":[[[{w},{s}],[{e},{s}],[{e},{n}],[{w},{n}],[{w},{s}]]]}}"
    )
}

/// What the generator made.
#[derive(Default)]
struct Made {
    events: usize,
    merged: usize,
    bundles: usize,
    reports: usize,
    adjudications: usize,
}

/// The `k`-th stop (from 0) of a response trip: event `event_id` at
/// `(lon, lat)`.
fn response_item(k: usize, event_id: i64, (lon, lat): (f64, f64)) -> BundleItem {
    BundleItem {
        visit_order: k as u32,
        code: format!("E{:03}", k + 1),
        kind: TargetKind::Event,
        event_id: Some(event_id),
        lon,
        lat,
        stratum: None,
        stratum_population: None,
        inclusion_probability: None,
    }
}

/// One generated trip: its bundle, return and reports, written through `tx`.
struct Trip<'a> {
    team_id: i64,
    team: &'a str,
    mode: &'a str,
    issued: DateTime<Utc>,
    items: Vec<BundleItem>,
}

impl Trip<'_> {
    fn write(
        self,
        tx: &Tx<'_>,
        rng: &mut ChaCha8Rng,
        reports: &[usize],
    ) -> groundproof::Result<usize> {
        let id = uuid(rng);
        let issued = self.issued.to_rfc3339();
        tx.insert_bundle(&NewBundle {
            id: &id,
            team_id: self.team_id,
            mode: self.mode,
            issued_at: &issued,
            due_at: &(self.issued + Duration::days(14)).to_rfc3339(),
            expires_at: &(self.issued + Duration::days(60)).to_rfc3339(),
            seed: None,
            margin: None,
            selection: "{\"zone\":\"Lowland Block\"}",
            start: (-59.5, -9.5),
            route_m: 25_000.0,
            upload_key_id: &uuid(rng),
            upload_key: &rng.random(),
            file_name: &format!("bundle-{id}.zip"),
            file_sha256: &"0".repeat(64),
            file_size: 1_000_000,
            items: &self.items,
        })?;
        let received = self.issued
            + Duration::days(rng.random_range(15..25))
            + Duration::nanoseconds(rng.random_range(0..86_400_000_000_000));
        let return_id = tx.insert_return(&ReturnRecord {
            id: 0,
            bundle_id: id.clone(),
            sha256: format!("{:064x}", rng.random::<u128>()),
            size: 50_000,
            team: self.team.into(),
            received_at: received.to_rfc3339(),
            path: format!("returns/{id}.zip"),
        })?;
        let mut written = 0;
        for (item, &n) in self.items.iter().zip(reports) {
            let mut previous: Option<String> = None;
            for _ in 0..n {
                let report_id = uuid(rng);
                let outcome = match rng.random_range(0..100) {
                    0..50 => "confirmed",
                    50..75 => "false_alarm",
                    75..85 => "inconclusive",
                    _ => "not_reached",
                };
                let observed = self.issued
                    + Duration::days(rng.random_range(1..14))
                    + Duration::seconds(rng.random_range(0..86_400));
                // A few corrections name the report they replace.
                let supersedes = previous.take().filter(|_| rng.random_bool(0.03));
                tx.insert_report(
                    &ReportRow {
                        report_id: report_id.clone(),
                        bundle_id: id.clone(),
                        event_id: item.event_id,
                        control_code: (item.kind == TargetKind::Control).then(|| item.code.clone()),
                        kind: item.kind,
                        supersedes,
                        outcome: word(outcome),
                        reason: match outcome {
                            "false_alarm" => Some(Reason::NoChange),
                            "not_reached" => Some(Reason::Access),
                            _ => None,
                        },
                        cause: (outcome == "confirmed")
                            .then(|| word(CAUSES[rng.random_range(0..CAUSES.len())])),
                        lat: Some(item.lat),
                        lon: Some(item.lon),
                        accuracy_m: Some(8.0),
                        position_source: Some("gnss".into()),
                        distance_m: Some(rng.random_range(0.0..40.0)),
                        observed_at: observed.into(),
                        recorded_at: observed.into(),
                        received_at: received.into(),
                        area_ha: None,
                        notes: String::new(),
                        team: self.team.into(),
                        evidence_ok: rng.random_bool(0.85),
                        flags: Vec::new(),
                        return_id,
                    },
                    "0",
                )?;
                previous = Some(report_id);
                written += 1;
            }
        }
        Ok(written)
    }
}

/// Fill the database with `n_events` events and `n_reports` reports.
fn generate(db: &Db, n_events: usize, n_reports: usize) -> groundproof::Result<Made> {
    let mut rng = ChaCha8Rng::seed_from_u64(SEED);
    let start = Utc
        .with_ymd_and_hms(2025, 11, 1, 0, 0, 0)
        .single()
        .unwrap_or_default();
    let first_day = Day::from_date(start.date_naive()).days();
    db.write(|tx| {
        let mut made = Made::default();
        for (name, px, revisit) in SOURCES {
            tx.add_source(name, px, revisit)?;
        }
        let teams: Vec<_> = (1..=12)
            .map(|i| tx.add_team(&format!("Team {i:02}")))
            .collect::<groundproof::Result<_>>()?;
        let zone_ids: Vec<i64> = ZONES
            .iter()
            .map(|&(name, w, s, e, n)| {
                let ring = format!(
                    "{{\"type\":\"Polygon\",\"coordinates\":[[[{w},{s}],[{e},{s}],[{e},{n}],[{w},{n}],[{w},{s}]]]}}"
                );
                tx.upsert_zone(name, name.starts_with('R'), &ring, (w, s, e, n))
            })
            .collect::<groundproof::Result<_>>()?;

        // Events, each with the days and the position its bundle items need.
        let mut days = Vec::with_capacity(n_events);
        let mut ids = Vec::with_capacity(n_events);
        let mut positions = Vec::with_capacity(n_events);
        for _ in 0..n_events {
            let (lon, lat) = (rng.random_range(-60.0..-59.0), rng.random_range(-10.0..-9.0));
            let first = first_day + rng.random_range(0..330);
            let mut per_source = BTreeMap::new();
            for (name, _, _) in SOURCES {
                if rng.random_bool(0.45) {
                    per_source.insert(name.to_string(), rng.random_range(1..20u32));
                }
            }
            if per_source.is_empty() {
                per_source.insert(SOURCES[0].0.to_string(), 1);
            }
            let id = tx.insert_event(&EventWrite {
                footprint: square(lon, lat, 0.0005),
                area_ha: rng.random_range(0.05..20.0),
                centroid: (lon, lat),
                bbox: (lon - 0.0005, lat - 0.0005, lon + 0.0005, lat + 0.0005),
                first: Day::from_days(first),
                last: Day::from_days(first + rng.random_range(0..30)),
                alert_count: per_source.values().sum(),
                highest_confidence: if rng.random_bool(0.6) {
                    Confidence::Confirmed
                } else {
                    Confidence::Tentative
                },
                corroborated: per_source.len() >= 2,
                per_source,
            })?;
            let zone = ZONES
                .iter()
                .position(|&(_, w, s, e, n)| lon >= w && lon < e && lat >= s && lat < n);
            if let Some(z) = zone.filter(|_| rng.random_bool(0.8)) {
                tx.set_event_zones(id, &[zone_ids[z]])?;
            }
            days.push(first);
            ids.push(id);
            positions.push((lon, lat));
        }
        made.events = n_events;

        // Response trips: events in id order, 100 a trip, each event with 2
        // to 10 reports, until the reports run out (the rest stay unvisited).
        let mut next = 0;
        let mut trip_no = 0usize;
        let control_reports = ASSESSMENT_TRIPS * CONTROLS_PER_TRIP;
        let sampled_reports = ASSESSMENT_TRIPS * SAMPLED_PER_TRIP;
        let response_reports = n_reports.saturating_sub(control_reports + sampled_reports);
        while next < ids.len() && made.reports < response_reports {
            let chunk = next..(next + TRIP_EVENTS).min(ids.len());
            next = chunk.end;
            let team = &teams[trip_no % teams.len()];
            let latest = chunk.clone().map(|i| days[i]).max().unwrap_or(first_day);
            let issued = Day::from_days(latest + 3).date().and_hms_opt(8, 0, 0).unwrap_or_default().and_utc();
            let mut counts = Vec::new();
            let mut left = response_reports - made.reports;
            let items: Vec<BundleItem> = chunk
                .enumerate()
                .map(|(k, i)| {
                    let n = rng.random_range(2..=10usize).min(left);
                    left -= n;
                    counts.push(n);
                    response_item(k, ids[i], positions[i])
                })
                .collect();
            let trip = Trip { team_id: team.id, team: &team.name, mode: "response", issued, items };
            made.reports += trip.write(tx, &mut rng, &counts)?;
            made.bundles += 1;
            trip_no += 1;
        }

        // Assessment trips: sampled events with their weights, and control
        // points, one report each.
        let strata = ["optical-10m x confirmed", "radar-10m x tentative", "control"];
        for a in 0..ASSESSMENT_TRIPS {
            let team = &teams[a % teams.len()];
            let mut items: Vec<BundleItem> = (0..SAMPLED_PER_TRIP)
                .map(|k| {
                    let i = rng.random_range(0..ids.len());
                    BundleItem {
                        visit_order: k as u32,
                        code: format!("S{:03}", k + 1),
                        kind: TargetKind::Event,
                        event_id: Some(ids[i]),
                        lon: positions[i].0,
                        lat: positions[i].1,
                        stratum: Some(strata[k % 2].into()),
                        stratum_population: Some(40_000),
                        inclusion_probability: Some(SAMPLED_PER_TRIP as f64 / 80_000.0),
                    }
                })
                .collect();
            items.extend((0..CONTROLS_PER_TRIP).map(|k| BundleItem {
                visit_order: (SAMPLED_PER_TRIP + k) as u32,
                code: format!("C{:03}", k + 1),
                kind: TargetKind::Control,
                event_id: None,
                lon: rng.random_range(-60.0..-59.5),
                lat: rng.random_range(-10.0..-9.5),
                stratum: Some(strata[2].into()),
                stratum_population: None,
                inclusion_probability: None,
            }));
            let issued = Utc.with_ymd_and_hms(2026, 10, 1, 8, 0, 0).single().unwrap_or_default()
                + Duration::days(a as i64);
            let counts = vec![1; items.len()];
            let trip = Trip { team_id: team.id, team: &team.name, mode: "assessment", issued, items };
            made.reports += trip.write(tx, &mut rng, &counts)?;
            made.bundles += 1;
        }

        // One event in a hundred was later merged into its predecessor:
        // reports naming it must resolve to the live one.
        for k in (100..ids.len()).step_by(100) {
            tx.mark_merged(&[ids[k]], ids[k - 1])?;
            made.merged += 1;
        }
        // A manager settled a few hundred events by hand.
        for _ in 0..500.min(ids.len()) {
            let id = ids[rng.random_range(0..ids.len())];
            tx.add_adjudication(id, Outcome::Confirmed, "seen on a later image", "Manager Bench")?;
            made.adjudications += 1;
        }
        Ok(made)
    })
}

/// One more response trip (events 1 to 100, five reports each) with its
/// return, as a team's return would add it.
fn add_one_return(db: &Db) -> groundproof::Result<usize> {
    let mut rng = ChaCha8Rng::seed_from_u64(SEED + 1);
    db.write(|tx| {
        let teams = tx.reader().teams()?;
        let team = teams.first().expect("the bench made teams");
        let items: Vec<BundleItem> = (1..=TRIP_EVENTS as i64)
            .map(|id| response_item(id as usize - 1, id, (-59.5, -9.5)))
            .collect();
        let issued = Utc
            .with_ymd_and_hms(2026, 11, 1, 8, 0, 0)
            .single()
            .unwrap_or_default();
        let trip = Trip {
            team_id: team.id,
            team: &team.name,
            mode: "response",
            issued,
            items,
        };
        trip.write(tx, &mut rng, &[5; TRIP_EVENTS])
    })
}

/// Start the real server on `db` and time `runs` GETs of the statistics API
/// and of the dashboard page each, as a manager with an API token.
fn over_http(
    db: &std::sync::Arc<Db>,
    data_dir: &std::path::Path,
    runs: usize,
) -> Vec<(&'static str, Vec<f64>, usize)> {
    use groundproof::platform::auth::{Role, issue_api_token, now_unix};
    use groundproof::web::{AppState, run};
    let (_, token) = issue_api_token(db, Role::Manager, "bench", now_unix()).expect("token");
    let listener = std::net::TcpListener::bind("127.0.0.1:0").expect("loopback");
    let addr = listener.local_addr().expect("address");
    let state = AppState::new(
        db.clone(),
        data_dir.to_path_buf(),
        groundproof::platform::settings::Settings::default(),
    );
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = run(listener, state).expect("server");
            tx.send(server.handle()).expect("handle");
            let _ = server.await;
        })
    });
    let handle = rx.recv().expect("server started");
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(std::time::Duration::from_secs(120)))
        .build()
        .into();
    let get = |path: &str| -> (f64, usize) {
        let t = Instant::now();
        let mut r = agent
            .get(&format!("http://{addr}{path}"))
            .header("Authorization", format!("Bearer {token}"))
            .call()
            .expect("request");
        assert_eq!(r.status(), 200, "GET {path}");
        let body = r
            .body_mut()
            .with_config()
            .limit(1 << 30)
            .read_to_vec()
            .expect("body");
        (t.elapsed().as_secs_f64() * 1000.0, body.len())
    };
    let mut out = Vec::new();
    for (what, path) in [
        ("GET /api/v1/stats", "/api/v1/stats?as_of=2026-11-30"),
        ("GET /dashboard", "/dashboard"),
    ] {
        get(path);
        let mut times = Vec::new();
        let mut bytes = 0;
        for _ in 0..runs {
            let (ms, n) = get(path);
            times.push(ms);
            bytes = n;
        }
        times.sort_by(f64::total_cmp);
        out.push((what, times, bytes));
    }
    actix_web::rt::System::new().block_on(handle.stop(true));
    out
}

/// One engine's database and what was measured on it.
struct OnEngine {
    engine: Engine,
    dir: tempfile::TempDir,
    db: std::sync::Arc<Db>,
    made: Made,
    fill_s: f64,
    fill_peak_mb: f64,
    /// Full recompute: total, load + reconcile, figures (ms).
    totals: Vec<f64>,
    loads: Vec<f64>,
    figs: Vec<f64>,
    last: Option<Figures>,
    cache: StatsCache,
    kept_first: Option<Figures>,
    first_ms: f64,
    served: Vec<f64>,
    json_ms: Vec<f64>,
    json_bytes: usize,
    new_selection_ms: f64,
    written: usize,
    write_ms: f64,
    after_return_ms: f64,
    http: Vec<(&'static str, Vec<f64>, usize)>,
    loads_seen: Vec<String>,
}

impl OnEngine {
    /// A fresh database on `engine`, filled by [`generate`].
    fn fill(engine: Engine, n_events: usize, n_reports: usize) -> OnEngine {
        let dir = tempfile::tempdir().expect("temp dir");
        let db = std::sync::Arc::new(engine.open(dir.path()));
        let load = load_average();
        reset_peak_rss();
        let t = Instant::now();
        let made = generate(&db, n_events, n_reports).expect("generated data");
        let fill_s = t.elapsed().as_secs_f64();
        OnEngine {
            engine,
            dir,
            db,
            made,
            fill_s,
            fill_peak_mb: peak_rss_mb(),
            totals: Vec::new(),
            loads: Vec::new(),
            figs: Vec::new(),
            last: None,
            cache: StatsCache::new(),
            kept_first: None,
            first_ms: 0.0,
            served: Vec::new(),
            json_ms: Vec::new(),
            json_bytes: 0,
            new_selection_ms: 0.0,
            written: 0,
            write_ms: 0.0,
            after_return_ms: 0.0,
            http: Vec::new(),
            loads_seen: vec![load],
        }
    }

    /// One full recompute from storage (what the first request after a
    /// change pays when the background refresh has not run yet); kept
    /// unless it is a warm-up run.
    fn recompute(&mut self, options: &FigureOptions, keep: bool) {
        let filter = StatsFilter::default();
        let t0 = Instant::now();
        let l = load(&self.db, &filter, DISPUTE_WINDOW_DAYS).expect("load");
        let t1 = Instant::now();
        let f = figures_of(&l, options).expect("figures");
        let t2 = Instant::now();
        let ms = |a: Instant, b: Instant| (b - a).as_secs_f64() * 1000.0;
        if keep {
            self.totals.push(ms(t0, t2));
            self.loads.push(ms(t0, t1));
            self.figs.push(ms(t1, t2));
        }
        self.last = Some(f);
    }

    /// The first request on these facts through the kept statistics.
    fn first_kept(&mut self, options: &FigureOptions) {
        let t = Instant::now();
        let f = self
            .cache
            .figures(&self.db, &StatsFilter::default(), options)
            .expect("figures");
        self.first_ms = t.elapsed().as_secs_f64() * 1000.0;
        self.kept_first = Some(f);
    }

    /// What the server answers from the kept statistics: the fact stamp,
    /// the report date applied, JSON (as `/api/v1/stats` does).
    fn served_once(&mut self, options: &FigureOptions) {
        let t = Instant::now();
        let f = self
            .cache
            .figures(&self.db, &StatsFilter::default(), options)
            .expect("figures");
        let tj = Instant::now();
        let body = serde_json::to_vec(&f).expect("json");
        self.json_bytes = body.len();
        std::hint::black_box(body);
        self.served.push(t.elapsed().as_secs_f64() * 1000.0);
        self.json_ms.push(tj.elapsed().as_secs_f64() * 1000.0);
    }

    /// A selection not asked before, then one new return and the next
    /// request.
    fn selection_and_return(&mut self, options: &FigureOptions) {
        let zone = StatsFilter {
            zone: Some(ZONES[0].0.into()),
            ..Default::default()
        };
        let t = Instant::now();
        self.cache
            .figures(&self.db, &zone, options)
            .expect("figures");
        self.new_selection_ms = t.elapsed().as_secs_f64() * 1000.0;
        let t = Instant::now();
        self.written = add_one_return(&self.db).expect("a return written");
        self.write_ms = t.elapsed().as_secs_f64() * 1000.0;
        let t = Instant::now();
        self.cache
            .figures(&self.db, &StatsFilter::default(), options)
            .expect("figures");
        self.after_return_ms = t.elapsed().as_secs_f64() * 1000.0;
    }

    /// A fingerprint of every figure of the last full recompute, to check
    /// that a speed-up (or another engine) changed no result.
    fn digest(&self) -> String {
        use sha2::Digest;
        let json = serde_json::to_string(&self.last).unwrap_or_default();
        hex::encode(&sha2::Sha256::digest(json.as_bytes())[..8])
    }
}

/// Print what was measured on one engine.
fn report(b: &mut OnEngine, runs: usize) {
    for v in [
        &mut b.totals,
        &mut b.loads,
        &mut b.figs,
        &mut b.served,
        &mut b.json_ms,
    ] {
        v.sort_by(f64::total_cmp);
    }
    let f = b.last.as_ref().expect("one run");
    assert_eq!(
        serde_json::to_string(&b.kept_first).ok(),
        serde_json::to_string(&Some(f)).ok(),
        "the kept statistics equal a full recompute"
    );
    let visited = f
        .coverage
        .first()
        .and_then(|g| g.rows.first())
        .map_or(0, |r| r.visited);
    let name = b.engine.name();
    let m = &b.made;
    println!(
        "[{name}] data: {} events ({} merged), {} reports, {} bundles, {} adjudications; filled in {:.1} s (peak {:.0} MB); load averages seen {}",
        m.events,
        m.merged,
        m.reports,
        m.bundles,
        m.adjudications,
        b.fill_s,
        b.fill_peak_mb,
        b.loads_seen.join(" | ")
    );
    let served_p95 = quantile(&b.served, 0.95);
    println!(
        "[{name}] requests answered from the kept statistics, {runs} runs (fact stamp, report date, JSON):"
    );
    println!(
        "  served  median {:.1} ms  p95 {served_p95:.1} ms  max {:.1} ms  (target p95 < {TARGET_P95_MS:.0} ms: {})",
        quantile(&b.served, 0.5),
        quantile(&b.served, 1.0),
        if served_p95 < TARGET_P95_MS {
            "met"
        } else {
            "MISSED"
        }
    );
    println!(
        "  of which JSON median {:.1} ms ({} kB)",
        quantile(&b.json_ms, 0.5),
        b.json_bytes / 1000
    );
    println!(
        "  first request on these facts {:.0} ms; a new selection (zone) {:.0} ms",
        b.first_ms, b.new_selection_ms
    );
    println!(
        "  after a new return ({} reports written in {:.0} ms) the next request took {:.0} ms (the server's background refresh usually pays this first)",
        b.written, b.write_ms, b.after_return_ms
    );
    for (what, times, bytes) in &b.http {
        println!(
            "  over HTTP {what}: median {:.1} ms  p95 {:.1} ms  ({} kB)",
            quantile(times, 0.5),
            quantile(times, 0.95),
            bytes / 1000
        );
    }
    let p95 = quantile(&b.totals, 0.95);
    println!("[{name}] full recompute from storage over {runs} runs (after 2 warm-up runs):");
    println!(
        "  total  median {:.0} ms  p95 {p95:.0} ms  max {:.0} ms",
        quantile(&b.totals, 0.5),
        quantile(&b.totals, 1.0),
    );
    println!(
        "  load + reconcile  median {:.0} ms  p95 {:.0} ms",
        quantile(&b.loads, 0.5),
        quantile(&b.loads, 0.95)
    );
    println!(
        "  figures           median {:.0} ms  p95 {:.0} ms",
        quantile(&b.figs, 0.5),
        quantile(&b.figs, 0.95)
    );
    println!(
        "  peak memory (VmHWM) of the process {:.0} MB; events visited {visited}; figures digest {}",
        peak_rss_mb(),
        b.digest()
    );
    let http_p95 = |i: usize| b.http.get(i).map_or(f64::NAN, |h| quantile(&h.1, 0.95));
    println!(
        "{{\"engine\":\"{name}\",\"events\":{},\"reports\":{},\"runs\":{runs},\"fill_seconds\":{:.1},\"served_median_ms\":{:.2},\"served_p95_ms\":{served_p95:.2},\"target_p95_ms\":{TARGET_P95_MS:.0},\"http_stats_p95_ms\":{:.1},\"http_dashboard_p95_ms\":{:.1},\"first_request_ms\":{:.0},\"new_selection_ms\":{:.0},\"after_return_ms\":{:.0},\"recompute_median_ms\":{:.0},\"recompute_p95_ms\":{p95:.0},\"load_median_ms\":{:.0},\"peak_rss_mb\":{:.0}}}",
        m.events,
        m.reports,
        b.fill_s,
        quantile(&b.served, 0.5),
        http_p95(0),
        http_p95(1),
        b.first_ms,
        b.new_selection_ms,
        b.after_return_ms,
        quantile(&b.totals, 0.5),
        quantile(&b.loads, 0.5),
        peak_rss_mb()
    );
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let numbers: Vec<usize> = (0..args.len())
        .filter(|&i| !is_engine_arg(&args, i))
        .filter_map(|i| args[i].parse().ok())
        .collect();
    let n_events = numbers.first().copied().unwrap_or(200_000);
    let n_reports = numbers.get(1).copied().unwrap_or(1_000_000);
    let runs = numbers.get(2).copied().unwrap_or(20).max(1);
    let mut benches: Vec<OnEngine> = engines(&args)
        .into_iter()
        .map(|e| OnEngine::fill(e, n_events, n_reports))
        .collect();

    let as_of = Utc
        .with_ymd_and_hms(2026, 11, 30, 0, 0, 0)
        .single()
        .unwrap_or_default();
    let options = FigureOptions::new(as_of);
    // Each phase alternates between the engines, run by run, so that a
    // change of the machine's load falls on both.
    // 1. The full recompute, after 2 warm-up runs.
    for i in 0..runs + 2 {
        for b in &mut benches {
            b.recompute(&options, i >= 2);
        }
    }
    // 2. What the server answers: the statistics kept for the current
    //    facts (`StatsCache`), as JSON, the way `/api/v1/stats` does.
    for b in &mut benches {
        b.first_kept(&options);
        b.loads_seen.push(load_average());
    }
    for i in 0..runs {
        let o = FigureOptions::new(as_of + Duration::minutes(i as i64));
        for b in &mut benches {
            b.served_once(&o);
        }
    }
    for b in &mut benches {
        b.selection_and_return(&options);
    }
    // 3. Over HTTP: the real server on a loopback port, a manager's token.
    for b in &mut benches {
        b.http = over_http(&b.db, b.dir.path(), runs);
        b.loads_seen.push(load_average());
    }
    for b in &mut benches {
        report(b, runs);
    }
    if let [a, b] = &benches[..] {
        let (ra, rb) = (quantile(&a.totals, 0.5), quantile(&b.totals, 0.5));
        println!(
            "{} / {}: fill {:.2}x, full recompute (median) {:.2}x, served (median) {:.2}x; same figures on both engines: {}",
            b.engine.name(),
            a.engine.name(),
            b.fill_s / a.fill_s,
            rb / ra,
            quantile(&b.served, 0.5) / quantile(&a.served, 0.5),
            if a.digest() == b.digest() {
                "yes"
            } else {
                "NO"
            }
        );
    }
}
