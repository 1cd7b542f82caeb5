//! Many readers on one instance: requests per second and p99 latency of
//! `GET /api/v1/stats` and `GET /api/v1/events?limit=100` on the demo data,
//! beside actix-web's own ceiling (a handler that answers a fixed small
//! JSON, on a second server in the same process, same run).
//!
//! ```text
//! cargo bench -p groundproof-server --bench serving -- [SECONDS] [THREADS] [CLIENTS]
//! ```
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
use groundproof::platform::storage::Db;
use groundproof::web::{self, AppState};
use std::net::{SocketAddr, TcpListener};
use std::sync::Arc;
use std::time::{Duration, Instant};
use tokio::io::{AsyncReadExt, AsyncWriteExt};

/// Upper bound of requests per target and run, whatever the time.
const MAX_REQUESTS: usize = 5_000_000;
/// Largest response the client reads (bytes).
const MAX_RESPONSE: usize = 64 * 1024 * 1024;
/// Targets of issue 15: (path, least requests/s, largest p99 in ms).
const TARGETS: [(&str, f64, Option<f64>); 2] = [
    ("/api/v1/stats", 20_000.0, None),
    ("/api/v1/events?limit=100", 2_000.0, Some(20.0)),
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
fn start(state: AppState) -> SocketAddr {
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
    let addr = listener.local_addr().expect("address");
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = web::run(listener, state).expect("server builds");
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

/// Drive `path` on `addr` with `load`.
fn drive(addr: SocketAddr, path: &str, token: Option<&str>, load: &Load) -> Outcome {
    let auth = token.map_or(String::new(), |t| format!("Authorization: Bearer {t}\r\n"));
    let request =
        Arc::new(format!("GET {path} HTTP/1.1\r\nHost: {addr}\r\n{auth}\r\n").into_bytes());
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

/// The demo's data in a fresh data directory, with the teams' returns
/// pushed through the real upload; the address and a manager's token.
fn demo_server(dir: &std::path::Path) -> (SocketAddr, String) {
    let settings = Settings::default();
    let db = Arc::new(Db::open(dir).expect("database"));
    let summary = groundproof::demo::load(&db, dir, &settings).expect("demo data");
    let addr = start(AppState::new(db.clone(), dir.to_path_buf(), settings));
    let work = tempfile::tempdir().expect("work dir");
    groundproof::demo::run_trips(&db, &summary, work.path(), &format!("http://{addr}"))
        .expect("demo returns");
    let (_, token) =
        issue_api_token(&db, Role::Manager, "serving bench", now_unix()).expect("manager token");
    (addr, token)
}

fn main() {
    let args: Vec<f64> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let load = Load {
        seconds: args.first().copied().unwrap_or(5.0).clamp(0.5, 120.0),
        threads: args.get(1).copied().unwrap_or(2.0).clamp(1.0, 64.0) as usize,
        clients: args.get(2).copied().unwrap_or(16.0).clamp(1.0, 1024.0) as usize,
    };
    let dir = tempfile::tempdir().expect("temp dir");
    let t = Instant::now();
    let (addr, token) = demo_server(dir.path());
    eprintln!("demo loaded in {:.1} s", t.elapsed().as_secs_f64());
    let ceiling = start_ceiling();
    let mut rows = vec![(
        "actix ceiling /json".to_string(),
        drive(ceiling, "/json", None, &load),
    )];
    for (path, _, _) in TARGETS {
        // One request first: what the first reader after a change pays is
        // measured by the dashboard bench, not here.
        drive(
            addr,
            path,
            Some(&token),
            &Load {
                seconds: 0.5,
                threads: 1,
                clients: 1,
            },
        );
        rows.push((path.to_string(), drive(addr, path, Some(&token), &load)));
    }
    let ceiling_rate = rows[0].1.rate();
    for (name, o) in &rows {
        let target = TARGETS.iter().find(|t| t.0 == name);
        println!(
            "{}",
            serde_json::json!({
                "target": name,
                "seconds": load.seconds, "threads": load.threads, "clients": load.clients,
                "requests": o.requests, "errors": o.errors,
                "requests_per_s": o.rate().round(),
                "p50_ms": o.quantile_ms(0.5), "p99_ms": o.quantile_ms(0.99),
                "bytes_per_answer": o.bytes.checked_div(o.requests).unwrap_or(0),
                "share_of_ceiling": o.rate() / ceiling_rate,
                "goal_requests_per_s": target.map(|t| t.1),
                "goal_p99_ms": target.and_then(|t| t.2),
                "peak_rss_mb": common::peak_rss_mb(),
            })
        );
    }
}
