//! What the server's benches share: memory as the kernel reports it, the
//! load average, and the storage engine a bench runs on.
// Each bench uses some of these helpers, none uses all.
#![allow(dead_code)]

use groundproof::platform::storage::{Db, scratch_postgres};

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

/// Start a new peak: VmHWM is set back to the current resident size
/// (`/proc/self/clear_refs`, value 5, Linux 4.0 and later), so that the
/// next [`peak_rss_mb`] is the peak of what follows. Where that is not
/// possible the peak stays the process's.
pub fn reset_peak_rss() {
    let _ = std::fs::write("/proc/self/clear_refs", "5");
}

/// The 1, 5 and 15 minute load averages (`/proc/loadavg`), as written
/// there; "?" where `/proc` is not there.
pub fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .ok()
        .map(|s| s.split_whitespace().take(3).collect::<Vec<_>>().join(" "))
        .unwrap_or_else(|| "?".into())
}

/// A storage engine a bench runs on.
#[derive(Clone, Debug)]
pub enum Engine {
    /// The embedded SQLite file in a temp data directory.
    Sqlite,
    /// A new database on the PostgreSQL server at this URL.
    Postgres(String),
}

/// Where the PostgreSQL server for the benches is named.
pub const POSTGRES_VARS: [&str; 2] = ["GROUNDPROOF_BENCH_POSTGRES", "GROUNDPROOF_TEST_POSTGRES"];

impl Engine {
    pub fn name(&self) -> &'static str {
        match self {
            Engine::Sqlite => "sqlite",
            Engine::Postgres(_) => "postgres",
        }
    }

    /// A fresh, empty database on this engine (the SQLite file in
    /// `data_dir`, or a new database on the PostgreSQL server).
    pub fn open(&self, data_dir: &std::path::Path) -> Db {
        match self {
            Engine::Sqlite => Db::open(data_dir).expect("SQLite database"),
            Engine::Postgres(url) => {
                let url = scratch_postgres(url).expect("a new PostgreSQL database");
                Db::open_postgres(&url).expect("PostgreSQL database")
            }
        }
    }
}

/// The engines named by `--engine sqlite|postgres|both` (or
/// `--engine=…`) among `args`; SQLite alone when it is not given. The
/// PostgreSQL server comes from [`POSTGRES_VARS`] (`source .ci/postgres.sh`
/// starts a throwaway one); naming it without one set stops the bench with
/// a message that says so.
pub fn engines(args: &[String]) -> Vec<Engine> {
    let named = args.iter().enumerate().find_map(|(i, a)| {
        a.strip_prefix("--engine=")
            .map(str::to_string)
            .or_else(|| (a == "--engine").then(|| args.get(i + 1).cloned().unwrap_or_default()))
    });
    let postgres = || {
        let url = POSTGRES_VARS
            .iter()
            .find_map(|v| std::env::var(v).ok().filter(|u| !u.trim().is_empty()));
        match url {
            Some(u) => Engine::Postgres(u.trim().to_string()),
            None => {
                eprintln!(
                    "--engine postgres needs a PostgreSQL server URL in {} (`source .ci/postgres.sh` starts a throwaway one)",
                    POSTGRES_VARS.join(" or ")
                );
                std::process::exit(2)
            }
        }
    };
    match named.as_deref() {
        None | Some("sqlite") => vec![Engine::Sqlite],
        Some("postgres") => vec![postgres()],
        Some("both") => vec![Engine::Sqlite, postgres()],
        Some(other) => {
            eprintln!("--engine: '{other}' is not sqlite, postgres or both");
            std::process::exit(2)
        }
    }
}

/// Whether `a` is the `--engine` flag or its value (so numeric argument
/// parsers can skip them).
pub fn is_engine_arg(args: &[String], i: usize) -> bool {
    let a = &args[i];
    a == "--engine" || a.starts_with("--engine=") || (i > 0 && args[i - 1] == "--engine")
}
