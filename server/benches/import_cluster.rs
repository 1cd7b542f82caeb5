//! Import and clustering of generated alerts.
//!
//! ```text
//! cargo bench -p groundproof-server --bench import_cluster -- [N] [--sklearn]
//! ```
//! Generates N (default 1,000,000) clumped 10 m alert pixels with
//! `mock_patrols::clumped_points`, then measures (1) clustering alone
//! (single linkage, eps 15 m, no time window; median of 3 runs), (2) the
//! same with the default 90-day window, and (3) the whole import of a CSV
//! file of those alerts into a fresh database (parse, validate, cluster,
//! footprints, events, batched inserts, indexes built after the load).
//! Peak memory is the process's VmHWM. With `--sklearn` it also runs
//! scikit-learn's DBSCAN on the same points (tests/reference/dbscan/
//! bench_sklearn.py; needs `pip install scikit-learn`), checks that the
//! partitions are identical, and prints the ratio.

mod common;
use common::peak_rss_mb;
use groundproof::alerts::cluster::link::link;
use groundproof::alerts::cluster::{LinkPoint, LinkRule};
use groundproof::alerts::events::{ClusterSettings, ImportRequest, import_alerts};
use groundproof::alerts::import::{Format, ReadOptions};
use groundproof::domain::SourceName;
use groundproof::platform::storage::Db;
use std::io::Write;
use std::time::Instant;

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
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
        .find_map(|a| a.parse().ok())
        .unwrap_or(1_000_000);
    let with_sklearn = args.iter().any(|a| a == "--sklearn");

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

    let dir = tempfile::tempdir().expect("temp dir");
    let mut csv = String::with_capacity(n * 48);
    csv.push_str("longitude,latitude,detected_on,confidence\n");
    for &(lon, lat, day) in &pts {
        let d = groundproof::domain::Day::from_days(day);
        csv.push_str(&format!("{lon:.6},{lat:.6},{d},tentative\n"));
    }
    let db = Db::open(dir.path()).expect("db");
    db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
        .expect("source");
    let source = SourceName::parse("optical-10m").expect("name");
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
    let import_s = t.elapsed().as_secs_f64();
    drop(csv);

    println!(
        "{{\"points\":{n},\"clusters\":{clusters},\"cluster_seconds\":{cluster_s:.3},\"clusters_90d\":{windowed_clusters},\"cluster_90d_seconds\":{window_s:.3},\"import_seconds\":{import_s:.3},\"events_created\":{},\"imported\":{},\"peak_rss_mb\":{:.0}}}",
        out.events_created,
        out.imported,
        peak_rss_mb()
    );

    if with_sklearn {
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
