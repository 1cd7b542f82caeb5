//! The push client against a tiny fake server on 127.0.0.1:0 (std TcpListener
//! and a thread) that speaks the resumable upload protocol of RETURN-SPEC and
//! drops the connection in the middle of a chunk twice. The upload must end
//! byte-identical, and the outbox must record the server's results.

mod common;

use std::collections::HashMap;
use std::io::{BufRead, BufReader, Cursor, Read, Write};
use std::net::{TcpListener, TcpStream};
use std::path::Path;
use std::sync::{Arc, Mutex};
use std::time::Duration;

use chrono::Utc;
use groundproof_sync::bundle::{BundleHeader, Checklist, sha256_hex, write_bundle};
use groundproof_sync::client::PushOptions;
use groundproof_sync::field::push;
use groundproof_sync::outbox::{Outbox, PushState};
use groundproof_sync::returns::{ReturnLimits, open_return};

#[derive(Default)]
struct Server {
    size: u64,
    data: Vec<u8>,
    patches: u32,
    drops: u32,
    heads: u32,
    completed: Option<Vec<u8>>,
    tokens: Vec<String>,
    /// Answer every PATCH with 413 (the bytes refused).
    refuse_patches: bool,
    ended: u32,
}

/// PATCH requests (1-based) on which the server reads half the body and hangs up.
const DROP_ON: [u32; 2] = [2, 4];

fn respond(s: &mut TcpStream, status: &str, headers: &[(&str, String)], body: &str) {
    let mut out = format!(
        "HTTP/1.1 {status}\r\nConnection: close\r\nContent-Length: {}\r\n",
        body.len()
    );
    for (k, v) in headers {
        out.push_str(&format!("{k}: {v}\r\n"));
    }
    out.push_str("\r\n");
    out.push_str(body);
    let _ = s.write_all(out.as_bytes());
}

fn handle(stream: TcpStream, state: &Mutex<Server>, bundle_id: uuid::Uuid) {
    let mut reader = BufReader::new(stream.try_clone().expect("clone"));
    let mut line = String::new();
    if reader.read_line(&mut line).unwrap_or(0) == 0 {
        return;
    }
    let mut parts = line.split_whitespace();
    let method = parts.next().unwrap_or_default().to_owned();
    let path = parts.next().unwrap_or_default().to_owned();
    let mut headers = HashMap::new();
    loop {
        let mut h = String::new();
        if reader.read_line(&mut h).unwrap_or(0) == 0 || h == "\r\n" {
            break;
        }
        if let Some((k, v)) = h.split_once(':') {
            headers.insert(k.trim().to_ascii_lowercase(), v.trim().to_owned());
        }
    }
    let len: usize = headers
        .get("content-length")
        .and_then(|v| v.parse().ok())
        .unwrap_or(0);
    let mut st = state.lock().expect("lock");
    if let Some(a) = headers.get("authorization") {
        st.tokens.push(a.clone());
    }
    let mut s = stream;
    match (method.as_str(), path.as_str()) {
        ("POST", "/api/v1/uploads") => {
            let mut body = vec![0; len];
            reader.read_exact(&mut body).expect("body");
            let v: serde_json::Value = serde_json::from_slice(&body).expect("json");
            assert_eq!(v["bundle_id"], bundle_id.to_string());
            st.size = v["size"].as_u64().expect("size");
            respond(
                &mut s,
                "201 Created",
                &[
                    ("Location", "/api/v1/uploads/up-1".into()),
                    ("Upload-Offset", "0".into()),
                ],
                r#"{"upload_id":"up-1","offset":0}"#,
            );
        }
        ("HEAD", "/api/v1/uploads/up-1") => {
            st.heads += 1;
            let off = st.data.len().to_string();
            let size = st.size.to_string();
            respond(
                &mut s,
                "204 No Content",
                &[
                    ("Upload-Offset", off),
                    ("Upload-Length", size),
                    ("Cache-Control", "no-store".into()),
                ],
                "",
            );
        }
        ("PATCH", "/api/v1/uploads/up-1") if st.refuse_patches => {
            st.patches += 1;
            let mut body = vec![0; len];
            reader.read_exact(&mut body).expect("chunk");
            respond(
                &mut s,
                "413 Payload Too Large",
                &[("Content-Type", "application/json".into())],
                r#"{"error":"an append is at most 16 bytes"}"#,
            );
        }
        ("DELETE", "/api/v1/uploads/up-1") => {
            st.ended += 1;
            respond(&mut s, "204 No Content", &[], "");
        }
        ("PATCH", "/api/v1/uploads/up-1") => {
            st.patches += 1;
            let offset: usize = headers["upload-offset"].parse().expect("offset");
            if offset != st.data.len() {
                let off = st.data.len().to_string();
                respond(
                    &mut s,
                    "409 Conflict",
                    &[("Upload-Offset", off)],
                    r#"{"error":"offset"}"#,
                );
                return;
            }
            if DROP_ON.contains(&st.patches) {
                // Keep what arrived (the draft: keep as much as possible), then hang up.
                let mut half = vec![0; len / 2];
                reader.read_exact(&mut half).expect("half");
                st.data.extend(half);
                st.drops += 1;
                let _ = s.shutdown(std::net::Shutdown::Both);
                return;
            }
            let mut body = vec![0; len];
            reader.read_exact(&mut body).expect("chunk");
            st.data.extend(body);
            let off = st.data.len().to_string();
            respond(&mut s, "204 No Content", &[("Upload-Offset", off)], "");
        }
        ("POST", "/api/v1/uploads/up-1/complete") => {
            let dir = tempfile::tempdir().expect("dir");
            let path = dir.path().join("in.zip");
            std::fs::write(&path, &st.data).expect("write");
            let opened = open_return(
                &path,
                |b, k| (*b == bundle_id && k == "uk-0001").then_some(common::KEY),
                &ReturnLimits::default(),
            )
            .expect("the server opens the upload");
            let results: Vec<serde_json::Value> = opened
                .reports
                .iter()
                .map(|r| {
                    if r.outcome == "inconclusive" {
                        serde_json::json!({"report_id": r.report_id, "status": "rejected",
                            "reason": "test server refuses inconclusive", "flags": []})
                    } else {
                        serde_json::json!({"report_id": r.report_id, "status": "accepted",
                            "reason": null, "flags": []})
                    }
                })
                .collect();
            st.completed = Some(st.data.clone());
            let body =
                serde_json::json!({"return_id": 7, "bundle_id": bundle_id, "results": results});
            respond(&mut s, "200 OK", &[], &body.to_string());
        }
        _ => respond(&mut s, "404 Not Found", &[], r#"{"error":"not found"}"#),
    }
}

fn spawn_server(bundle_id: uuid::Uuid) -> (String, Arc<Mutex<Server>>) {
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind");
    let addr = listener.local_addr().expect("addr");
    let state = Arc::new(Mutex::new(Server::default()));
    let st = Arc::clone(&state);
    std::thread::spawn(move || {
        for stream in listener.incoming().flatten() {
            handle(stream, &st, bundle_id);
        }
    });
    (format!("http://{addr}"), state)
}

fn noisy_jpeg(seed: u32) -> Vec<u8> {
    // Pseudo-random pixels (an LCG) so the JPEG is tens of KB and needs several chunks.
    let mut x = seed;
    let img = image::RgbImage::from_fn(160, 120, |_, _| {
        x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
        image::Rgb([(x >> 16) as u8, (x >> 8) as u8, (x >> 24) as u8])
    });
    let mut out = Cursor::new(Vec::new());
    image::DynamicImage::ImageRgb8(img)
        .write_to(&mut out, image::ImageFormat::Jpeg)
        .expect("jpeg");
    out.into_inner()
}

fn run(ws: &Path, args: &[&str]) {
    let mut all = vec!["groundproof-field", "--workspace", ws.to_str().expect("p")];
    all.extend(args);
    let code = groundproof_sync::field::run(all).expect("command");
    assert_eq!(code, std::process::ExitCode::SUCCESS, "{args:?}");
}

/// A workspace with the bundle opened and two reports recorded; the
/// bundle's header.
fn workspace_with_reports(dir: &Path) -> (std::path::PathBuf, BundleHeader) {
    let ws = dir.join("ws");
    let now = Utc::now();
    let header = BundleHeader {
        issued_at: now - chrono::Duration::days(1),
        due_at: now + chrono::Duration::days(7),
        expires_at: now + chrono::Duration::days(30),
        ..common::header()
    };
    let mut out = Cursor::new(Vec::new());
    write_bundle(
        &mut out,
        &header,
        &common::events(),
        &common::controls(),
        &common::start(),
        &common::route(),
        &Checklist::default_v1(),
        &common::KEY,
        vec![],
    )
    .expect("bundle");
    let bundle = dir.join("b.zip");
    std::fs::write(&bundle, out.into_inner()).expect("write");
    let photos: Vec<String> = (1..=2)
        .map(|i| {
            let p = dir.join(format!("n{i}.jpg"));
            std::fs::write(&p, noisy_jpeg(i)).expect("photo");
            p.to_str().expect("p").to_owned()
        })
        .collect();
    run(&ws, &["open", bundle.to_str().expect("p")]);
    run(
        &ws,
        &[
            "report",
            "K0411",
            "--outcome",
            "confirmed",
            "--photo",
            &photos[0],
            &photos[1],
            "--at",
            "-1.228,23.412",
        ],
    );
    run(
        &ws,
        &[
            "report",
            "C0001",
            "--outcome",
            "inconclusive",
            "--at",
            "-1.24,23.42",
        ],
    );
    (ws, header)
}

// Issue 12 item 1: a push whose bytes the server refuses ends its upload
// (DELETE) instead of leaving it to hold the team's budget. Failed before
// the client learned DELETE (no DELETE was sent).
#[test]
fn a_push_whose_bytes_are_refused_ends_its_upload() {
    let dir = tempfile::tempdir().expect("dir");
    let (ws, header) = workspace_with_reports(dir.path());
    let (url, state) = spawn_server(header.bundle_id);
    state.lock().expect("lock").refuse_patches = true;
    let options = PushOptions {
        chunk_bytes: 16 << 10,
        initial_backoff: Duration::from_millis(10),
        max_backoff: Duration::from_millis(50),
        call_timeout: Duration::from_secs(20),
        progress: false,
        ..PushOptions::default()
    };
    let err = push(&ws, &url, Some("team-token-1"), &options).expect_err("refused");
    assert!(err.to_string().contains("413"), "{err}");
    let st = state.lock().expect("lock");
    assert_eq!((st.patches, st.ended), (1, 1));
    assert!(st.completed.is_none());
}

#[test]
fn push_resumes_after_dropped_connections() {
    let dir = tempfile::tempdir().expect("dir");
    let (ws, header) = workspace_with_reports(dir.path());
    let (url, state) = spawn_server(header.bundle_id);
    let options = PushOptions {
        chunk_bytes: 16 << 10,
        initial_backoff: Duration::from_millis(10),
        max_backoff: Duration::from_millis(50),
        call_timeout: Duration::from_secs(20),
        progress: false,
        ..PushOptions::default()
    };
    let summary = push(&ws, &url, Some("team-token-1"), &options).expect("push");

    let st = state.lock().expect("lock");
    assert_eq!(st.drops, 2, "the server hung up twice");
    assert!(
        st.heads >= 2,
        "the client asked for the offset after each failure"
    );
    let received = st.completed.clone().expect("completed");
    assert_eq!(received.len() as u64, summary.bytes);
    assert_eq!(
        sha256_hex(&received),
        summary.sha256,
        "byte-identical upload"
    );
    assert!(
        summary.bytes > 3 * (16 << 10),
        "several chunks: {}",
        summary.bytes
    );
    assert_eq!(summary.retries, 2);
    assert_eq!(st.ended, 0, "an upload that went through is not ended");
    assert_eq!(summary.return_id, 7);
    assert_eq!(summary.accepted, 1);
    assert_eq!(summary.rejected.len(), 1);
    assert!(st.tokens.iter().all(|t| t == "Bearer team-token-1") && !st.tokens.is_empty());
    drop(st);

    let outbox = Outbox::open(&ws).expect("outbox");
    let reports = outbox.reports().expect("reports");
    let states: Vec<&PushState> = reports.iter().map(|r| &r.state).collect();
    assert_eq!(
        states,
        vec![
            &PushState::Acknowledged,
            &PushState::Rejected("test server refuses inconclusive".into())
        ]
    );
    assert!(outbox.last_push().expect("last").is_some());
    // Nothing left to send.
    let err = push(&ws, &url, None, &options).expect_err("nothing to push");
    assert!(err.to_string().contains("nothing to pack"), "{err}");
}
