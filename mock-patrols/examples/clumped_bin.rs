//! Writes `clumped_points` as the packed little-endian binary that
//! `tests/reference/dbscan/bench_sklearn.py` reads: per point f64 lon,
//! f64 lat, i32 day (20 bytes).
//!
//! `cargo run --release -p mock-patrols --example clumped_bin -- N OUT.bin [seed]`

use std::io::Write;

fn main() -> std::io::Result<()> {
    let args: Vec<String> = std::env::args().collect();
    let (Some(n), Some(out)) = (
        args.get(1).and_then(|a| a.parse::<usize>().ok()),
        args.get(2),
    ) else {
        eprintln!("usage: clumped_bin N OUT.bin [seed]");
        std::process::exit(2);
    };
    let seed = args.get(3).and_then(|a| a.parse().ok()).unwrap_or(1);
    let pts = mock_patrols::clumped_points(seed, n, 0.00009);
    let mut buf = Vec::with_capacity(pts.len() * 20);
    for (lon, lat, day) in &pts {
        buf.extend_from_slice(&lon.to_le_bytes());
        buf.extend_from_slice(&lat.to_le_bytes());
        buf.extend_from_slice(&day.to_le_bytes());
    }
    std::fs::File::create(out)?.write_all(&buf)?;
    println!("{} points written to {out}", pts.len());
    Ok(())
}
