//! Photo intake benchmark: `inspect_jpeg` on 12-megapixel photos.
//!
//! Generates N (default 20) 4000 x 3000 photos with mock-patrols'
//! `make_photo`, or loads every `*.jpg` from `--dir DIR` when that folder
//! already holds some (when it holds none, the generated photos are written
//! there, so `tests/reference/photo/bench_pillow.py DIR` can time Pillow on
//! the same files). Then it measures, after one warm-up pass:
//! - milliseconds per photo, one photo at a time (median and p90 over
//!   `--rounds` passes, default 5);
//! - photos per second with 1 and with 2 worker threads sharing a queue;
//! - peak resident memory during intake (VmHWM from /proc/self/status, reset
//!   through /proc/self/clear_refs after the photos are in memory, so the
//!   generator's buffers are not counted), next to the resident size before.
//!
//! Then the worst layout the limits admit (issue 12 item 4): a progressive
//! 4:4:4 photo, whose decoder keeps every DCT coefficient, at the largest
//! 4:3 size within `PhotoLimits::default().max_alloc_bytes`; its time and
//! the peak resident memory while it is inspected (`worst_*`), and a check
//! that the 12000 x 8333 progressive 4:2:0 photo of the issue is refused
//! before decoding.
//!
//! Prints one JSON line. Usage:
//! `cargo bench -p groundproof-sync --bench photo_intake -- [--n N] [--dir DIR] [--rounds R]`

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

use groundproof_sync::photo::{
    JpegHeader, JpegProcess, PhotoError, PhotoLimits, check_limits, inspect_jpeg,
};
use mock_patrols::photos::{PhotoMetaIn, make_photo};

struct Args {
    n: usize,
    dir: Option<PathBuf>,
    rounds: usize,
}

fn parse_args() -> Args {
    let mut a = Args {
        n: 20,
        dir: None,
        rounds: 5,
    };
    let mut it = std::env::args().skip(1);
    while let Some(k) = it.next() {
        match k.as_str() {
            "--n" => a.n = it.next().and_then(|v| v.parse().ok()).unwrap_or(a.n),
            "--rounds" => {
                a.rounds = it
                    .next()
                    .and_then(|v| v.parse().ok())
                    .unwrap_or(a.rounds)
                    .max(1)
            }
            "--dir" => a.dir = it.next().map(PathBuf::from),
            // cargo bench passes --bench; ignore anything else.
            _ => {}
        }
    }
    a
}

fn jpgs_in(dir: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .map(|rd| rd.filter_map(|e| e.ok().map(|e| e.path())).collect())
        .unwrap_or_default();
    v.retain(|p| p.extension().is_some_and(|e| e == "jpg"));
    v.sort();
    v
}

fn generate(n: usize) -> Vec<Vec<u8>> {
    (0..n)
        .map(|i| {
            let meta = PhotoMetaIn {
                taken_at_rfc3339: format!("2026-03-{:02}T09:{:02}:00-04:00", 1 + i % 28, i % 60),
                lat: -3.0 - i as f64 * 0.001,
                lon: -60.0 + i as f64 * 0.002,
                direction_deg: (i as f64 * 37.0) % 360.0,
            };
            make_photo(1000 + i as u64, 4000, 3000, &meta)
        })
        .collect()
}

fn status_kb(key: &str) -> u64 {
    let s = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    s.lines()
        .find_map(|l| l.strip_prefix(key))
        .and_then(|r| r.trim().trim_end_matches("kB").trim().parse().ok())
        .unwrap_or(0)
}

fn percentile(sorted: &[f64], q: f64) -> f64 {
    let i = ((sorted.len() - 1) as f64 * q).round() as usize;
    sorted[i]
}

fn throughput(photos: &[Vec<u8>], threads: usize, limits: &PhotoLimits) -> f64 {
    // Each thread takes photos from a shared counter; two passes over the set.
    let total = photos.len() * 2;
    let next = AtomicUsize::new(0);
    let start = Instant::now();
    std::thread::scope(|s| {
        for _ in 0..threads {
            s.spawn(|| {
                loop {
                    let i = next.fetch_add(1, Ordering::Relaxed);
                    if i >= total {
                        break;
                    }
                    let r = inspect_jpeg(&photos[i % photos.len()], limits);
                    assert!(r.is_ok(), "{r:?}");
                }
            });
        }
    });
    total as f64 / start.elapsed().as_secs_f64()
}

/// A progressive JPEG header of `w` x `h` with one sampling for luma and
/// 1x1 chroma.
fn progressive(w: u32, h: u32, luma: (u8, u8)) -> JpegHeader {
    JpegHeader {
        width: w,
        height: h,
        precision: 8,
        process: JpegProcess::Progressive,
        sampling: vec![luma, (1, 1), (1, 1)],
    }
}

/// The worst admitted layout: time (median of 3) and peak memory.
fn worst_layout(limits: &PhotoLimits) -> serde_json::Value {
    let refused = matches!(
        check_limits(&progressive(12_000, 8_333, (2, 2)), limits),
        Err(PhotoError::TooMuchMemory { .. })
    );
    assert!(
        refused,
        "the issue's 12000 x 8333 progressive photo must be refused"
    );
    // The largest 4:3 progressive 4:4:4 frame (steps of 16 px) admitted.
    let mut w = 16u32;
    while check_limits(&progressive(w + 16, (w + 16) * 3 / 4, (1, 1)), limits).is_ok() {
        w += 16;
    }
    let h = w * 3 / 4;
    let pixels: Vec<u8> = (0..w * h)
        .flat_map(|i| {
            let (x, y) = (i % w, i / w);
            [(x / 7) as u8, (y / 5) as u8, ((x + y) / 9) as u8]
        })
        .collect();
    let mut jpg = Vec::new();
    let mut enc = jpeg_encoder::Encoder::new(&mut jpg, 85);
    enc.set_progressive(true);
    enc.set_sampling_factor(jpeg_encoder::SamplingFactor::F_1_1);
    enc.encode(&pixels, w as u16, h as u16, jpeg_encoder::ColorType::Rgb)
        .expect("encode the worst layout");
    drop(pixels);
    let reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();
    let rss_before = status_kb("VmRSS:");
    let mut ms = Vec::new();
    for _ in 0..3 {
        let t = Instant::now();
        let c = inspect_jpeg(&jpg, limits).expect("the worst admitted layout is taken in");
        ms.push(t.elapsed().as_secs_f64() * 1e3);
        std::hint::black_box(c);
    }
    ms.sort_by(f64::total_cmp);
    serde_json::json!({
        "worst_layout": format!("progressive 4:4:4 {w} x {h}"),
        "worst_bytes": jpg.len(),
        "worst_ms_median": (ms[1] * 10.0).round() / 10.0,
        "worst_vmrss_kb_before": rss_before,
        "worst_vmhwm_kb": status_kb("VmHWM:"),
        "worst_vmhwm_reset": reset,
        "issue_photo_refused": refused,
    })
}

fn main() {
    let args = parse_args();
    let t0 = Instant::now();
    let (photos, source) = match &args.dir {
        Some(d) if !jpgs_in(d).is_empty() => {
            let files = jpgs_in(d);
            let v: Vec<Vec<u8>> = files
                .iter()
                .map(|f| std::fs::read(f).expect("read photo"))
                .collect();
            (v, format!("loaded from {}", d.display()))
        }
        Some(d) => {
            let v = generate(args.n);
            std::fs::create_dir_all(d).expect("create dir");
            for (i, p) in v.iter().enumerate() {
                std::fs::write(d.join(format!("bench-{i:03}.jpg")), p).expect("write photo");
            }
            (v, format!("generated, written to {}", d.display()))
        }
        None => (generate(args.n), "generated".to_string()),
    };
    let prep_s = t0.elapsed().as_secs_f64();
    let limits = PhotoLimits::default();
    let mean_bytes = photos.iter().map(Vec::len).sum::<usize>() / photos.len().max(1);

    // Warm-up, and a check that every photo passes.
    for p in &photos {
        let c = inspect_jpeg(p, &limits).expect("inspect");
        assert_eq!((c.width, c.height), (4000, 3000));
    }
    // Reset the peak-RSS mark (Linux proc(5), clear_refs value 5).
    let reset = std::fs::write("/proc/self/clear_refs", "5").is_ok();
    let rss_before = status_kb("VmRSS:");

    let mut ms = Vec::with_capacity(photos.len() * args.rounds);
    for _ in 0..args.rounds {
        for p in &photos {
            let t = Instant::now();
            let c = inspect_jpeg(p, &limits).expect("inspect");
            ms.push(t.elapsed().as_secs_f64() * 1e3);
            std::hint::black_box(c);
        }
    }
    ms.sort_by(f64::total_cmp);
    let one = throughput(&photos, 1, &limits);
    let two = throughput(&photos, 2, &limits);
    let hwm = status_kb("VmHWM:");
    let worst = worst_layout(&limits);
    let mut line = serde_json::json!({
        "bench": "photo_intake",
        "source": source,
        "prepare_s": (prep_s * 100.0).round() / 100.0,
        "photos": photos.len(),
        "mean_bytes": mean_bytes,
        "rounds": args.rounds,
        "ms_per_photo_median": (percentile(&ms, 0.5) * 100.0).round() / 100.0,
        "ms_per_photo_p90": (percentile(&ms, 0.9) * 100.0).round() / 100.0,
        "photos_per_s_1_thread": (one * 10.0).round() / 10.0,
        "photos_per_s_2_threads": (two * 10.0).round() / 10.0,
        "vmrss_kb_before_intake": rss_before,
        "vmhwm_kb_during_intake": hwm,
        "vmhwm_reset": reset,
    });
    if let (Some(l), Some(w)) = (line.as_object_mut(), worst.as_object()) {
        l.extend(w.clone());
    }
    println!("{line}");
}
