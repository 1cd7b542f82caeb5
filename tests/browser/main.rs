//! Browser test: headless Chromium renders each main page of a server
//! loaded with the demo scenario; the rendered DOM must hold the page's key
//! elements (`--dump-dom`), and a screenshot of each page is saved under
//! `CARGO_TARGET_TMPDIR/browser-screenshots/` for a person to look at.
//! Skips with a printed SKIP line when Chromium is not installed
//! (`apt-get install -y chromium`).
//!
//! Chromium's command line cannot log in, so it talks to the server through
//! a small loopback relay that adds the test's admin bearer token to each
//! request (and asks for one request per connection, so every request
//! passes the relay's rewrite).

use groundproof_e2e::{TestServer, admin_token, get, load_scenario, post_json};
use serde_json::json;
use std::io::{Read, Write};
use std::net::{Shutdown, SocketAddr, TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Largest request head the relay reads.
const MAX_HEAD_BYTES: usize = 64 * 1024;

/// Relay one connection: rewrite the request head (bearer token added,
/// `Connection: close`), then copy bytes both ways.
fn relay(mut client: TcpStream, target: SocketAddr, token: &str) -> std::io::Result<()> {
    client.set_read_timeout(Some(Duration::from_secs(30)))?;
    let mut head = Vec::new();
    let mut buf = [0u8; 4096];
    let end = loop {
        let n = client.read(&mut buf)?;
        if n == 0 {
            return Ok(());
        }
        head.extend_from_slice(&buf[..n]);
        if let Some(i) = head.windows(4).position(|w| w == b"\r\n\r\n") {
            break i + 4;
        }
        if head.len() > MAX_HEAD_BYTES {
            return Ok(());
        }
    };
    let text = String::from_utf8_lossy(&head[..end]).into_owned();
    let mut out = String::new();
    for (i, line) in text.split("\r\n").filter(|l| !l.is_empty()).enumerate() {
        let lower = line.to_ascii_lowercase();
        let dropped = ["connection:", "keep-alive:", "authorization:"];
        if i > 0 && dropped.iter().any(|d| lower.starts_with(d)) {
            continue;
        }
        out.push_str(line);
        out.push_str("\r\n");
    }
    out.push_str(&format!(
        "Authorization: Bearer {token}\r\nConnection: close\r\n\r\n"
    ));
    let mut server = TcpStream::connect(target)?;
    server.write_all(out.as_bytes())?;
    server.write_all(&head[end..])?;
    let (mut c2, mut s2) = (client.try_clone()?, server.try_clone()?);
    std::thread::spawn(move || {
        let _ = std::io::copy(&mut c2, &mut s2);
    });
    std::io::copy(&mut server, &mut client)?;
    let _ = client.shutdown(Shutdown::Both);
    Ok(())
}

/// Start the relay on a loopback port; its address.
fn start_relay(target: SocketAddr, token: String) -> SocketAddr {
    let listener = TcpListener::bind("127.0.0.1:0").expect("relay binds");
    let addr = listener.local_addr().expect("relay address");
    std::thread::spawn(move || {
        for conn in listener.incoming().flatten() {
            let token = token.clone();
            std::thread::spawn(move || {
                let _ = relay(conn, target, &token);
            });
        }
    });
    addr
}

/// Longest a single Chromium run may take before it is stopped.
const CHROMIUM_TIMEOUT: Duration = Duration::from_secs(90);

fn chromium() -> Option<PathBuf> {
    ["/usr/bin/chromium", "/usr/bin/chromium-browser"]
        .iter()
        .map(PathBuf::from)
        .find(|p| p.exists())
}

/// Run Chromium headless with `extra` arguments on `url`; stdout as text.
fn run_chromium(bin: &Path, profile: &Path, extra: &[String], url: &str) -> String {
    let mut cmd = Command::new(bin);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--hide-scrollbars",
    ])
    .arg(format!("--user-data-dir={}", profile.display()))
    .args(extra)
    .arg(url)
    .stdout(Stdio::piped())
    .stderr(Stdio::null());
    let mut child = cmd.spawn().expect("chromium starts");
    // Read stdout while Chromium runs: a large DOM would fill the pipe.
    let mut stdout = child.stdout.take().expect("piped stdout");
    let reader = std::thread::spawn(move || {
        let mut out = Vec::new();
        let _ = stdout.read_to_end(&mut out);
        out
    });
    let start = Instant::now();
    loop {
        match child.try_wait().expect("chromium runs") {
            Some(_) => break,
            None if start.elapsed() > CHROMIUM_TIMEOUT => {
                let _ = child.kill();
                let _ = child.wait();
                panic!("chromium took longer than {CHROMIUM_TIMEOUT:?} on {url}");
            }
            None => std::thread::sleep(Duration::from_millis(100)),
        }
    }
    let out = reader.join().unwrap_or_default();
    String::from_utf8_lossy(&out).into_owned()
}

#[test]
fn main_pages_render_in_headless_chromium() {
    let Some(bin) = chromium() else {
        println!("SKIP: chromium is not installed (apt-get install -y chromium)");
        return;
    };
    let s = TestServer::start();
    load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 6, "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let id = get(&s.url("/api/v1/events?limit=1")).json()["features"][0]["id"]
        .as_i64()
        .expect("an event");

    let out_dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("browser-screenshots");
    std::fs::create_dir_all(&out_dir).expect("screenshot folder");
    let profile = tempfile::tempdir().expect("profile dir");
    let event_path = format!("/events/{id}");
    // (path, file stem, what the rendered DOM must contain)
    let pages: Vec<(&str, &str, Vec<&str>)> = vec![
        (
            "/events",
            "events",
            vec!["<svg", "Events in priority order", "Safety first"],
        ),
        (&event_path, "event", vec!["Attributes", "Alerts ("]),
        (
            "/import",
            "import",
            vec!["Alert file", "Zone file", "optical-10m"],
        ),
        (
            "/trips",
            "trips",
            vec!["Issue a bundle", "st-issued", "Download"],
        ),
        ("/station", "station", vec!["Upload a return package"]),
        (
            "/dashboard",
            "dashboard",
            vec!["<svg", "Kaplan", "descriptive (response visits)"],
        ),
        ("/disputes", "disputes", vec!["Disputes"]),
    ];
    let relay = start_relay(s.addr, admin_token(&s));
    for (path, stem, needles) in &pages {
        let url = format!("http://{relay}{path}");
        let dom = run_chromium(&bin, profile.path(), &["--dump-dom".to_string()], &url);
        for n in needles {
            assert!(dom.contains(n), "{path}: the rendered DOM lacks {n:?}");
        }
        assert!(
            dom.contains("/static/app.css"),
            "{path}: the style sheet is linked"
        );
        let shot = out_dir.join(format!("{stem}.png"));
        let _ = std::fs::remove_file(&shot);
        run_chromium(
            &bin,
            profile.path(),
            &[
                format!("--screenshot={}", shot.display()),
                "--window-size=1280,1800".to_string(),
            ],
            &url,
        );
        let bytes = std::fs::read(&shot).unwrap_or_else(|e| panic!("{path}: no screenshot ({e})"));
        // PNG signature (PNG specification, 3rd ed., §5.2).
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{path}: a PNG");
        assert!(
            bytes.len() > 10_000,
            "{path}: the screenshot is not blank ({} bytes)",
            bytes.len()
        );
        println!("screenshot: {}", shot.display());
    }
}
