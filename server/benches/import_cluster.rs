//! Import and clustering of generated alerts.
//!
//! ```text
//! cargo bench -p groundproof-server --bench import_cluster -- [N] [--sklearn]
//!     [--engine sqlite|postgres|both] [--rounds R]
//! ```
//! Generates N (default 1,000,000) clumped 10 m alert pixels with
//! `mock_patrols::clumped_points`, then measures (1) clustering alone
//! (single linkage, eps 15 m, no time window; median of 3 runs), (2) the
//! same with the default 90-day window, and (3) the whole import of a CSV
//! file of those alerts into a fresh database (parse, validate, cluster,
//! footprints, events, batched inserts, indexes built after the load).
//! Peak memory is the process's VmHWM (set back before each import).
//! With `--engine both` the import runs R times (default 1) on each
//! engine, alternating (SQLite, PostgreSQL, SQLite, …), each time into a
//! fresh database, with the load average beside each run; PostgreSQL from
//! `GROUNDPROOF_BENCH_POSTGRES` or `GROUNDPROOF_TEST_POSTGRES`
//! (`source .ci/postgres.sh` starts a throwaway cluster). With `--sklearn`
//! it also runs scikit-learn's DBSCAN on the same points
//! (tests/reference/dbscan/bench_sklearn.py; needs `pip install
//! scikit-learn`), checks that the partitions are identical, and prints
//! the ratio.

mod common;
use common::{Engine, engines, load_average, peak_rss_mb, reset_peak_rss};
use groundproof::alerts::cluster::link::link;
use groundproof::alerts::cluster::{LinkPoint, LinkRule};
use groundproof::alerts::events::{ClusterSettings, ImportOutcome, ImportRequest, import_alerts};
use groundproof::alerts::import::{Format, ReadOptions};
use groundproof::domain::SourceName;
use std::io::Write;
use std::time::Instant;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// The value after flag `name` among `args`.
fn flag_value<'a>(args: &'a [String], name: &str) -> Option<&'a str> {
    let i = args.iter().position(|a| a == name)?;
    args.get(i + 1).map(String::as_str)
}

/// One import of `csv` into a fresh database on `engine`: seconds, what
/// it did, and the peak resident size during it (MB).
fn import_once(engine: &Engine, csv: &str) -> (f64, ImportOutcome, f64) {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = engine.open(dir.path());
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .expect("source");
    let source = SourceName::parse("optical-10m").expect("name");
    reset_peak_rss();
    let t = Instant::now();
    let out = import_alerts(
        &db,
        &ImportRequest {
            source: &source,
            file_name: "bench.csv",
            bytes: csv.as_bytes(),
            format: Format::Csv,
            read: ReadOptions::default(),
            skip_invalid: false,
        },
        &ClusterSettings::default(),
    )
    .expect("import");
    (t.elapsed().as_secs_f64(), out, peak_rss_mb())
}

fn main() {
    tracing_subscriber::fmt()
        .with_writer(std::io::stderr)
        .init();
    let args: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| a != "--bench")
        .collect();
    let n: usize = args
        .iter()
        .enumerate()
        .filter(|&(i, _)| i == 0 || args[i - 1] != "--rounds")
        .find_map(|(_, a)| a.parse().ok())
        .unwrap_or(1_000_000);
    let with_sklearn = args.iter().any(|a| a == "--sklearn");
    let engines = engines(&args);
    let rounds: usize = flag_value(&args, "--rounds")
        .and_then(|r| r.parse().ok())
        .unwrap_or(1)
        .max(1);

    let pts = mock_patrols::clumped_points(2026, n, 0.00009);
    let points: Vec<LinkPoint> = pts
        .iter()
        .map(|&(lon, lat, day)| LinkPoint {
            lon,
            lat,
            day,
            pixel_m: 10.0,
        })
        .collect();

    let no_window = LinkRule {
        factor: 1.5,
        window_days: None,
    };
    let mut times = Vec::new();
    let mut labels = Vec::new();
    for _ in 0..3 {
        let t = Instant::now();
        labels = link(&points, &no_window).labels();
        times.push(t.elapsed().as_secs_f64());
    }
    let cluster_s = median(times);
    let clusters = labels.iter().max().map_or(0, |m| m + 1);
    let t = Instant::now();
    let windowed = link(&points, &LinkRule::default()).labels();
    let window_s = t.elapsed().as_secs_f64();
    let windowed_clusters = windowed.iter().max().map_or(0, |m| m + 1);

    let mut csv = String::with_capacity(n * 48);
    csv.push_str("longitude,latitude,detected_on,confidence\n");
    for &(lon, lat, day) in &pts {
        let d = groundproof::domain::Day::from_days(day);
        csv.push_str(&format!("{lon:.6},{lat:.6},{d},tentative\n"));
    }
    println!(
        "{{\"points\":{n},\"clusters\":{clusters},\"cluster_seconds\":{cluster_s:.3},\"clusters_90d\":{windowed_clusters},\"cluster_90d_seconds\":{window_s:.3}}}"
    );
    let mut seconds: Vec<Vec<f64>> = vec![Vec::new(); engines.len()];
    for round in 1..=rounds {
        for (k, engine) in engines.iter().enumerate() {
            let load = load_average();
            let (s, out, peak) = import_once(engine, &csv);
            seconds[k].push(s);
            println!(
                "{{\"engine\":\"{}\",\"round\":{round},\"points\":{n},\"import_seconds\":{s:.3},\"events_created\":{},\"imported\":{},\"peak_rss_mb\":{peak:.0},\"load_average_before\":\"{load}\",\"load_average_after\":\"{}\"}}",
                engine.name(),
                out.events_created,
                out.imported,
                load_average()
            );
        }
    }
    drop(csv);
    if engines.len() > 1 {
        let m: Vec<f64> = seconds.iter().map(|v| median(v.clone())).collect();
        println!(
            "import of {n} alerts, median of {rounds} alternated rounds: {} {:.2} s, {} {:.2} s ({:.2}x)",
            engines[0].name(),
            m[0],
            engines[1].name(),
            m[1],
            m[1] / m[0]
        );
    }

    if with_sklearn {
        let dir = tempfile::tempdir().expect("temp dir");
        let bin = dir.path().join("points.bin");
        let lab = dir.path().join("labels.bin");
        let mut f = std::io::BufWriter::new(std::fs::File::create(&bin).expect("points file"));
        for &(lon, lat, day) in &pts {
            f.write_all(&lon.to_le_bytes())
                .and_then(|_| f.write_all(&lat.to_le_bytes()))
                .and_then(|_| f.write_all(&day.to_le_bytes()))
                .expect("write");
        }
        drop(f);
        let script = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../tests/reference/dbscan/bench_sklearn.py"
        );
        let o = std::process::Command::new("python3")
            .arg(script)
            .arg(&bin)
            .arg(&lab)
            .output()
            .expect("python3 runs");
        let text = String::from_utf8_lossy(&o.stdout);
        println!("scikit-learn: {}", text.trim());
        let theirs: Vec<u32> = std::fs::read(&lab)
            .unwrap_or_default()
            .chunks_exact(4)
            .map(|c| i32::from_le_bytes([c[0], c[1], c[2], c[3]]) as u32)
            .collect();
        println!("identical partition: {}", theirs == labels);
        if let Some(s) = text
            .split("\"seconds\":")
            .nth(1)
            .and_then(|r| r.split([',', '}']).next())
            .and_then(|v| v.trim().parse::<f64>().ok())
        {
            println!(
                "ratio scikit-learn / groundproof clustering: {:.0}x",
                s / cluster_s
            );
        }
    }
}
