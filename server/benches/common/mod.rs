//! What the server's benches share: memory as the kernel reports it.

/// A `/proc/self/status` size field (such as `VmRSS:`), in MB; NaN where
/// `/proc` is not there.
pub fn status_mb(field: &str) -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with(field))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

/// Peak resident memory of this process so far (VmHWM), in MB.
pub fn peak_rss_mb() -> f64 {
    status_mb("VmHWM:")
}
