//! Prints what the generator makes for a seed: alerts per source, the share
//! confirmed, the date range, and how long `clumped_points` takes for 1M points.
//!
//! `cargo run --release -p mock-patrols --example summary -- [seed]`

use std::time::Instant;

fn main() {
    let seed = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(42);
    let s = mock_patrols::scenario();
    println!(
        "{}: {} zones, {} sources, {} teams, seed {seed}",
        s.reserve_name,
        s.zones.len(),
        s.sources.len(),
        s.teams.len()
    );
    for z in &s.zones {
        println!(
            "zone {:26} priority {:5} {} vertices, first {:?}",
            z.name,
            z.priority,
            z.ring.len() - 1,
            z.ring[0]
        );
    }
    println!(
        "station {:?}, {} .. {}",
        s.station, s.start_date, s.end_date
    );
    let t = Instant::now();
    let all = mock_patrols::generate_alerts(&s, seed);
    let gen_time = t.elapsed();
    for (name, rows) in &all {
        let confirmed = rows.iter().filter(|r| r.confidence == "confirmed").count();
        let first = rows.first().map_or("-", |r| r.date.as_str());
        let last = rows.last().map_or("-", |r| r.date.as_str());
        let csv = mock_patrols::alerts_csv(rows).len();
        println!(
            "{name:12} {:5} alerts, {confirmed:5} confirmed, {first} .. {last}, CSV {csv} bytes",
            rows.len()
        );
    }
    println!("generate_alerts: {gen_time:?}");
    for n in [100_000, 1_000_000] {
        let t = Instant::now();
        let pts = mock_patrols::clumped_points(1, n, 0.00009);
        println!(
            "clumped_points({n}): {} points in {:?}",
            pts.len(),
            t.elapsed()
        );
    }
}
