//! Kept answers over HTTP: the statistics and the events list carry an
//! entity tag, answer 304 when the client already holds them, come
//! gzip-compressed when asked, and change as soon as a fact does.

use groundproof_e2e::{TestServer, admin_token, get, load_scenario, post_json};
use serde_json::json;
use std::io::{Read, Write};

/// A raw answer: status, header lines (lower-case names), body bytes.
struct Raw {
    status: u16,
    headers: Vec<(String, String)>,
    body: Vec<u8>,
}

impl Raw {
    fn header(&self, name: &str) -> Option<&str> {
        self.headers
            .iter()
            .find(|(k, _)| k == name)
            .map(|(_, v)| v.as_str())
    }
}

/// GET `path` with the admin token and `extra` header lines, over a plain
/// socket, so that nothing between the test and the server decodes or
/// caches the answer.
fn raw_get(s: &TestServer, path: &str, extra: &[(&str, &str)]) -> Raw {
    let mut c = std::net::TcpStream::connect(s.addr).expect("connect");
    let mut req = format!(
        "GET {path} HTTP/1.1\r\nHost: {}\r\nConnection: close\r\nAuthorization: Bearer {}\r\n",
        s.addr,
        admin_token(s)
    );
    for (k, v) in extra {
        req.push_str(&format!("{k}: {v}\r\n"));
    }
    req.push_str("\r\n");
    c.write_all(req.as_bytes()).expect("send");
    let mut all = Vec::new();
    c.read_to_end(&mut all).expect("read");
    let end = all
        .windows(4)
        .position(|w| w == b"\r\n\r\n")
        .expect("header end")
        + 4;
    let head = String::from_utf8_lossy(&all[..end]).to_string();
    let mut lines = head.lines();
    let status = lines
        .next()
        .and_then(|l| l.split(' ').nth(1))
        .and_then(|s| s.parse().ok())
        .expect("status");
    let headers = lines
        .filter_map(|l| l.split_once(':'))
        .map(|(k, v)| (k.trim().to_ascii_lowercase(), v.trim().to_string()))
        .collect();
    Raw {
        status,
        headers,
        body: all[end..].to_vec(),
    }
}

fn gunzip(bytes: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    flate2::read::GzDecoder::new(bytes)
        .read_to_end(&mut out)
        .expect("a gzip stream");
    out
}

#[test]
fn statistics_carry_a_tag_answer_304_compress_and_follow_the_facts() {
    let s = TestServer::start();
    load_scenario(&s);
    let path = "/api/v1/stats?as_of=2026-11-30";
    let first = raw_get(&s, path, &[]);
    assert_eq!(first.status, 200);
    let etag = first.header("etag").expect("an entity tag").to_string();
    assert!(etag.starts_with("W/\""), "{etag}");
    assert_eq!(first.header("vary"), Some("Accept-Encoding"));
    assert_eq!(first.header("content-encoding"), None, "not asked for");
    // The bytes are the figures the JSON client reads.
    let figures: serde_json::Value = serde_json::from_slice(&first.body).expect("JSON");
    assert_eq!(figures, get(&s.url(path)).json());

    let again = raw_get(&s, path, &[("If-None-Match", &etag)]);
    assert_eq!(again.status, 304);
    assert!(again.body.is_empty());
    assert_eq!(again.header("etag"), Some(etag.as_str()));

    let zipped = raw_get(&s, path, &[("Accept-Encoding", "gzip, br")]);
    assert_eq!(zipped.status, 200);
    assert_eq!(zipped.header("content-encoding"), Some("gzip"));
    assert_eq!(zipped.header("etag"), Some(etag.as_str()));
    assert!(zipped.body.len() < first.body.len() / 3);
    assert_eq!(gunzip(&zipped.body), first.body);

    // A new fact: the held tag no longer matches, the figures moved.
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 4,
        "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let after = raw_get(&s, path, &[("If-None-Match", &etag)]);
    assert_eq!(after.status, 200, "a write must not be answered 304");
    assert_ne!(after.header("etag"), Some(etag.as_str()));
    let moved: serde_json::Value = serde_json::from_slice(&after.body).expect("JSON");
    assert_ne!(moved["coverage"], figures["coverage"]);
}

#[test]
fn the_events_list_is_one_ranking_cut_by_the_limit_and_tagged() {
    let s = TestServer::start();
    load_scenario(&s);
    let all = get(&s.url("/api/v1/events")).json();
    let first = raw_get(&s, "/api/v1/events?limit=5", &[]);
    assert_eq!(first.status, 200);
    assert_eq!(first.header("content-type"), Some("application/geo+json"));
    let five: serde_json::Value = serde_json::from_slice(&first.body).expect("JSON");
    let features = all["features"].as_array().expect("features");
    assert!(features.len() > 5);
    assert_eq!(five["features"].as_array().unwrap()[..], features[..5]);
    let etag = first.header("etag").expect("an entity tag").to_string();
    let again = raw_get(&s, "/api/v1/events?limit=5", &[("If-None-Match", &etag)]);
    assert_eq!(again.status, 304);
    let zone = raw_get(&s, "/api/v1/events?zone=Nowhere", &[]);
    assert_eq!(zone.status, 404, "an unknown zone is still refused");
    // A new event is a new fact: the held tag of the whole list stops
    // matching, and the list has one more event.
    let whole = raw_get(&s, "/api/v1/events", &[]);
    let whole_tag = whole.header("etag").expect("an entity tag").to_string();
    let csv = "longitude,latitude,detected_on,confidence\n0.5,0.5,2026-11-29,confirmed\n";
    let r = groundproof_e2e::post_bytes(
        &s.url("/api/v1/alerts?source=optical-10m"),
        "text/plain",
        csv.as_bytes(),
    );
    assert_eq!(r.status, 200, "{}", r.body);
    let after = raw_get(&s, "/api/v1/events", &[("If-None-Match", &whole_tag)]);
    assert_eq!(after.status, 200, "after a write the list is made again");
    let grown: serde_json::Value = serde_json::from_slice(&after.body).expect("JSON");
    assert_eq!(
        grown["features"].as_array().unwrap().len(),
        features.len() + 1
    );
}
