//! Many readers on one instance: requests per second and p99 latency of
//! `GET /api/v1/stats` and `GET /api/v1/events?limit=100` on the demo data,
//! beside actix-web's own ceiling (a handler that answers a fixed small
//! JSON, on a second server in the same process, same run).
//!
//! ```text
//! cargo bench -p groundproof-server --bench serving -- [SECONDS] [THREADS] [CLIENTS]
//!     [--engine sqlite|postgres|both]
//! ```
//! The statistics are driven twice: without `Accept-Encoding` and with
//! `Accept-Encoding: gzip` (the kept compressed copy). With `--engine
//! both` the demo is loaded on SQLite and on PostgreSQL (from
//! `GROUNDPROOF_BENCH_POSTGRES` or `GROUNDPROOF_TEST_POSTGRES`), and each
//! target is driven on one after the other; the load average is printed
//! beside each row. `--variants nodelay,buffer-128k,…` starts one more
//! server per named set-up ([`HttpTuning`]) on the same data (first engine)
//! and drives them in turn with the default one; `--rounds R` repeats the
//! whole sequence R times (each round with its own ceiling).
//! Defaults: 5 seconds per target, 2 client threads, 16 connections (the
//! setup of issue 15, which used wrk). The server runs 2 workers, as
//! `groundproof serve` does; client and server share the machine's cores,
//! as they did with wrk. The load generator is a small HTTP/1.1 client on
//! tokio (keep-alive, one request in flight per connection, bounded by
//! time and by [`MAX_REQUESTS`]); every answer is read whole and must be a
//! 200. A manager's API token goes with every request. It prints one JSON
//! line per target and the targets of the issue.

mod common;
use groundproof::platform::auth::{Role, issue_api_token, now_unix};
use groundproof::platform::settings::Settings;
use groundproof::web::{self, AppState, HttpTuning};
use std::net::{SocketAddr, TcpListener};
use std::sync::Arc;
use std::time::{Duration, Instant};
use tokio::io::{AsyncReadExt, AsyncWriteExt};

/// Upper bound of requests per target and run, whatever the time.
const MAX_REQUESTS: usize = 5_000_000;
/// Largest response the client reads (bytes).
const MAX_RESPONSE: usize = 64 * 1024 * 1024;
/// Targets of issue 15: (path, whether the client takes gzip, least
/// requests/s, largest p99 in ms). The statistics are measured both ways:
/// without `Accept-Encoding` (as wrk sends) and with `gzip`.
const TARGETS: [(&str, bool, f64, Option<f64>); 3] = [
    ("/api/v1/stats", false, 20_000.0, None),
    ("/api/v1/stats", true, 20_000.0, None),
    ("/api/v1/events?limit=100", false, 2_000.0, Some(20.0)),
];

struct Load {
    seconds: f64,
    threads: usize,
    clients: usize,
}

/// What one target gave.
struct Outcome {
    requests: usize,
    errors: usize,
    elapsed: f64,
    bytes: usize,
    /// Latencies in microseconds, sorted.
    micros: Vec<u32>,
}

impl Outcome {
    fn rate(&self) -> f64 {
        self.requests as f64 / self.elapsed
    }
    /// Nearest-rank quantile, ms.
    fn quantile_ms(&self, q: f64) -> f64 {
        if self.micros.is_empty() {
            return f64::NAN;
        }
        let rank = ((q * self.micros.len() as f64).ceil() as usize).clamp(1, self.micros.len());
        f64::from(self.micros[rank - 1]) / 1000.0
    }
}

/// Start `state` on a loopback port in its own thread.
fn start(state: AppState, tuning: HttpTuning) -> SocketAddr {
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
    let addr = listener.local_addr().expect("address");
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = web::run_tuned(listener, state, tuning).expect("server builds");
            tx.send(()).expect("started");
            let _ = server.await;
        });
    });
    rx.recv().expect("server started");
    addr
}

/// actix-web's ceiling: a second server, 2 workers, one fixed small JSON.
fn start_ceiling() -> SocketAddr {
    use actix_web::{App, HttpResponse, HttpServer};
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
    let addr = listener.local_addr().expect("address");
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = HttpServer::new(|| {
                App::new().route(
                    "/json",
                    actix_web::web::get().to(|| async {
                        HttpResponse::Ok().json(serde_json::json!({"message": "Hello, World!"}))
                    }),
                )
            })
            .workers(2)
            .listen(listener)
            .expect("ceiling listens")
            .run();
            tx.send(()).expect("started");
            let _ = server.await;
        });
    });
    rx.recv().expect("ceiling started");
    addr
}

/// Position of the end of the header block in `buf`.
fn header_end(buf: &[u8]) -> Option<usize> {
    buf.windows(4).position(|w| w == b"\r\n\r\n").map(|p| p + 4)
}

/// (status, content length) from a header block.
fn status_and_length(head: &[u8]) -> Result<(u16, usize), String> {
    let text = std::str::from_utf8(head).map_err(|e| format!("header not UTF-8: {e}"))?;
    let status = text
        .split(' ')
        .nth(1)
        .and_then(|s| s.parse().ok())
        .ok_or_else(|| format!("no status in {text:?}"))?;
    let length = text
        .lines()
        .find_map(|l| {
            let (k, v) = l.split_once(':')?;
            k.eq_ignore_ascii_case("content-length")
                .then(|| v.trim().parse::<usize>().ok())?
        })
        .ok_or_else(|| format!("no Content-Length (chunked answers are not read): {text:?}"))?;
    Ok((status, length))
}

/// One connection: requests `request` again and again until `deadline`
/// or `budget` runs out; pushes each latency.
async fn connection(
    addr: SocketAddr,
    request: Arc<Vec<u8>>,
    deadline: Instant,
    budget: Arc<std::sync::atomic::AtomicUsize>,
) -> Result<(usize, usize, Vec<u32>), String> {
    use std::sync::atomic::Ordering;
    let mut s = tokio::net::TcpStream::connect(addr)
        .await
        .map_err(|e| e.to_string())?;
    s.set_nodelay(true).map_err(|e| e.to_string())?;
    let (mut errors, mut bytes, mut micros) = (0, 0, Vec::new());
    let mut buf = vec![0u8; 64 * 1024];
    while Instant::now() < deadline && budget.fetch_sub(1, Ordering::Relaxed) > 0 {
        let t = Instant::now();
        s.write_all(&request).await.map_err(|e| e.to_string())?;
        let mut have = 0;
        let (head, status, length) = loop {
            if let Some(h) = header_end(&buf[..have]) {
                let (status, length) = status_and_length(&buf[..h])?;
                break (h, status, length);
            }
            if have == buf.len() {
                return Err("header larger than 64 KiB".into());
            }
            let n = s.read(&mut buf[have..]).await.map_err(|e| e.to_string())?;
            if n == 0 {
                return Err("server closed the connection".into());
            }
            have += n;
        };
        if head + length > MAX_RESPONSE {
            return Err(format!("answer of {length} bytes is too large"));
        }
        if buf.len() < head + length {
            buf.resize(head + length, 0);
        }
        while have < head + length {
            let n = s.read(&mut buf[have..]).await.map_err(|e| e.to_string())?;
            if n == 0 {
                return Err("server closed the connection mid-answer".into());
            }
            have += n;
        }
        micros.push(t.elapsed().as_micros().min(u128::from(u32::MAX)) as u32);
        bytes += length;
        errors += usize::from(status != 200);
    }
    Ok((errors, bytes, micros))
}

/// Drive `path` on `addr` with `load`, with `Accept-Encoding: gzip` when
/// `gzip`.
fn drive(addr: SocketAddr, path: &str, gzip: bool, token: Option<&str>, load: &Load) -> Outcome {
    let auth = token.map_or(String::new(), |t| format!("Authorization: Bearer {t}\r\n"));
    let accept = if gzip {
        "Accept-Encoding: gzip\r\n"
    } else {
        ""
    };
    let request =
        Arc::new(format!("GET {path} HTTP/1.1\r\nHost: {addr}\r\n{auth}{accept}\r\n").into_bytes());
    let budget = Arc::new(std::sync::atomic::AtomicUsize::new(MAX_REQUESTS));
    let start = Instant::now();
    let deadline = start + Duration::from_secs_f64(load.seconds);
    let threads: Vec<_> = (0..load.threads)
        .map(|i| {
            let per = load.clients / load.threads + usize::from(i < load.clients % load.threads);
            let (request, budget) = (Arc::clone(&request), Arc::clone(&budget));
            std::thread::spawn(move || {
                let rt = tokio::runtime::Builder::new_current_thread()
                    .enable_all()
                    .build()
                    .expect("client runtime");
                rt.block_on(async move {
                    let tasks: Vec<_> = (0..per)
                        .map(|_| {
                            let c = connection(
                                addr,
                                Arc::clone(&request),
                                deadline,
                                Arc::clone(&budget),
                            );
                            tokio::spawn(c)
                        })
                        .collect();
                    let mut out = Vec::new();
                    for t in tasks {
                        out.push(t.await.expect("client task").expect("client connection"));
                    }
                    out
                })
            })
        })
        .collect();
    let mut o = Outcome {
        requests: 0,
        errors: 0,
        elapsed: 0.0,
        bytes: 0,
        micros: Vec::new(),
    };
    for t in threads {
        for (errors, bytes, micros) in t.join().expect("client thread") {
            o.requests += micros.len();
            o.errors += errors;
            o.bytes += bytes;
            o.micros.extend(micros);
        }
    }
    o.elapsed = start.elapsed().as_secs_f64();
    o.micros.sort_unstable();
    o
}

/// The demo's data in a fresh data directory on `engine`, with the teams'
/// returns pushed through the real upload; the server's state, its
/// address (set up as `groundproof serve` is) and a manager's token.
fn demo_server(engine: &common::Engine, dir: &std::path::Path) -> (AppState, SocketAddr, String) {
    let settings = Settings::default();
    let db = Arc::new(engine.open(dir));
    let summary = groundproof::demo::load(&db, dir, &settings).expect("demo data");
    let state = AppState::new(db.clone(), dir.to_path_buf(), settings);
    let addr = start(state.clone(), HttpTuning::default());
    let work = tempfile::tempdir().expect("work dir");
    groundproof::demo::run_trips(&db, &summary, work.path(), &format!("http://{addr}"))
        .expect("demo returns");
    let (_, token) =
        issue_api_token(&db, Role::Manager, "serving bench", now_unix()).expect("manager token");
    (state, addr, token)
}

/// Server set-ups the bench can compare (`--variants a,b,…`), each a
/// second server on the same state: (name, set-up).
fn variant(name: &str) -> Option<HttpTuning> {
    let d = HttpTuning::default();
    Some(match name {
        "default" => d,
        "nodelay" => HttpTuning {
            tcp_nodelay: Some(true),
            ..d
        },
        "buffer-128k" => HttpTuning {
            h1_write_buffer: Some(128 * 1024),
            ..d
        },
        "buffer-8k" => HttpTuning {
            h1_write_buffer: Some(8 * 1024),
            ..d
        },
        "workers-1" => HttpTuning { workers: 1, ..d },
        "workers-4" => HttpTuning { workers: 4, ..d },
        _ => return None,
    })
}

/// Flags that take a value (the value is not a positional number).
const VALUE_FLAGS: [&str; 3] = ["--engine", "--variants", "--rounds"];

/// The value after flag `name` among `words`.
fn flag_value<'a>(words: &'a [String], name: &str) -> Option<&'a str> {
    let i = words.iter().position(|a| a == name)?;
    words.get(i + 1).map(String::as_str)
}

/// One server to drive: its engine, set-up, address and token.
struct Served {
    engine: &'static str,
    variant: String,
    addr: SocketAddr,
    token: String,
}

/// One row of the printed results.
struct Row {
    engine: &'static str,
    variant: String,
    target: String,
    gzip: bool,
    round: usize,
    outcome: Outcome,
    load_average: String,
}

/// The servers to drive: the demo on each engine (set up as `serve` is),
/// and on the first engine one more server per variant named.
fn servers(words: &[String]) -> (Vec<tempfile::TempDir>, Vec<Served>) {
    let engines = common::engines(words);
    let names: Vec<String> = flag_value(words, "--variants")
        .map(|v| v.split(',').map(str::to_string).collect())
        .unwrap_or_default();
    let mut dirs = Vec::new();
    let mut out = Vec::new();
    for (k, e) in engines.iter().enumerate() {
        let dir = tempfile::tempdir().expect("temp dir");
        let t = Instant::now();
        let (state, addr, token) = demo_server(e, dir.path());
        eprintln!(
            "demo loaded on {} in {:.1} s",
            e.name(),
            t.elapsed().as_secs_f64()
        );
        let first = Served {
            engine: e.name(),
            variant: "default".into(),
            addr,
            token: token.clone(),
        };
        out.push(first);
        for name in names.iter().filter(|n| k == 0 && *n != "default") {
            let Some(tuning) = variant(name) else {
                eprintln!(
                    "--variants: '{name}' is not one of default, nodelay, buffer-128k, buffer-8k, workers-1, workers-4"
                );
                std::process::exit(2)
            };
            out.push(Served {
                engine: e.name(),
                variant: name.clone(),
                addr: start(state.clone(), tuning),
                token: token.clone(),
            });
        }
        dirs.push(dir);
    }
    (dirs, out)
}

fn main() {
    let words: Vec<String> = std::env::args().skip(1).collect();
    let args: Vec<f64> = (0..words.len())
        .filter(|&i| i == 0 || !VALUE_FLAGS.contains(&words[i - 1].as_str()))
        .filter_map(|i| words[i].parse().ok())
        .collect();
    let load = Load {
        seconds: args.first().copied().unwrap_or(5.0).clamp(0.5, 120.0),
        threads: args.get(1).copied().unwrap_or(2.0).clamp(1.0, 64.0) as usize,
        clients: args.get(2).copied().unwrap_or(16.0).clamp(1.0, 1024.0) as usize,
    };
    let rounds: usize = flag_value(&words, "--rounds")
        .and_then(|r| r.parse().ok())
        .unwrap_or(1)
        .clamp(1, 20);
    let (_dirs, servers) = servers(&words);
    let ceiling = start_ceiling();
    let mut rows = Vec::new();
    for round in 1..=rounds {
        rows.push(Row {
            engine: "-",
            variant: "-".into(),
            target: "actix ceiling /json".into(),
            gzip: false,
            round,
            load_average: common::load_average(),
            outcome: drive(ceiling, "/json", false, None, &load),
        });
        // Target by target, the servers one after the other.
        for (path, gzip, _, _) in TARGETS {
            for s in &servers {
                // One request first: what the first reader after a change
                // pays is measured by the dashboard bench, not here.
                let warm = Load {
                    seconds: 0.5,
                    threads: 1,
                    clients: 1,
                };
                drive(s.addr, path, gzip, Some(&s.token), &warm);
                rows.push(Row {
                    engine: s.engine,
                    variant: s.variant.clone(),
                    target: path.to_string(),
                    gzip,
                    round,
                    load_average: common::load_average(),
                    outcome: drive(s.addr, path, gzip, Some(&s.token), &load),
                });
            }
        }
    }
    print_rows(&rows, &load);
}

/// One JSON line per row; shares are of the ceiling of the same round.
fn print_rows(rows: &[Row], load: &Load) {
    for r in rows {
        let ceiling_rate = rows
            .iter()
            .find(|c| c.engine == "-" && c.round == r.round)
            .map_or(f64::NAN, |c| c.outcome.rate());
        let o = &r.outcome;
        let target = TARGETS.iter().find(|t| t.0 == r.target && t.1 == r.gzip);
        println!(
            "{}",
            serde_json::json!({
                "target": r.target, "engine": r.engine, "variant": r.variant,
                "accept_gzip": r.gzip, "round": r.round,
                "seconds": load.seconds, "threads": load.threads, "clients": load.clients,
                "requests": o.requests, "errors": o.errors,
                "requests_per_s": o.rate().round(),
                "p50_ms": o.quantile_ms(0.5), "p99_ms": o.quantile_ms(0.99),
                "bytes_per_answer": o.bytes.checked_div(o.requests).unwrap_or(0),
                "share_of_ceiling": o.rate() / ceiling_rate,
                "goal_requests_per_s": target.map(|t| t.2),
                "goal_p99_ms": target.and_then(|t| t.3),
                "load_average": r.load_average,
                "peak_rss_mb": common::peak_rss_mb(),
            })
        );
    }
}
