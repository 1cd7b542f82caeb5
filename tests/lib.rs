//! Helpers shared by the end-to-end tests: the real server, started
//! through the production `web::run` on 127.0.0.1 port 0 with a fresh data
//! directory, and a small HTTP client that never treats a status as an
//! error (tests assert on statuses).

use groundproof::platform::settings::Settings;
use groundproof::platform::storage::Db;
use groundproof::web::{self, AppState};
use std::net::{SocketAddr, TcpListener};
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// The engine the end-to-end tests run on: PostgreSQL when
/// `GROUNDPROOF_TEST_ENGINE=postgres` (its server's URL in
/// `GROUNDPROOF_TEST_POSTGRES`; each test server gets a new database of its
/// own there), else the SQLite file in each test's data directory.
pub fn test_database() -> Option<String> {
    let engine = std::env::var("GROUNDPROOF_TEST_ENGINE").unwrap_or_default();
    if engine.trim() != "postgres" {
        return None;
    }
    let url = std::env::var("GROUNDPROOF_TEST_POSTGRES").unwrap_or_default();
    assert!(
        !url.trim().is_empty(),
        "GROUNDPROOF_TEST_ENGINE=postgres needs GROUNDPROOF_TEST_POSTGRES=postgres://… (see .ci/run)"
    );
    Some(
        groundproof::platform::storage::scratch_postgres(url.trim())
            .expect("a new PostgreSQL database"),
    )
}

/// A running server and its data directory (removed on drop).
pub struct TestServer {
    pub addr: SocketAddr,
    pub db: Arc<Db>,
    /// The PostgreSQL database's URL when the tests run on PostgreSQL.
    pub database: Option<String>,
    /// The bearer tokens the server keeps between requests.
    pub tokens: Arc<groundproof::platform::auth::VerifiedTokens>,
    handle: actix_web::dev::ServerHandle,
    thread: Option<std::thread::JoinHandle<()>>,
    dir: tempfile::TempDir,
}

impl TestServer {
    /// Start on a random loopback port with an empty data directory.
    pub fn start() -> TestServer {
        let dir = tempfile::tempdir().expect("temp dir");
        let database = test_database();
        let db = Arc::new(Db::open_with(dir.path(), database.as_deref()).expect("database opens"));
        let listener = TcpListener::bind("127.0.0.1:0").expect("bind loopback");
        let addr = listener.local_addr().expect("address");
        let state = AppState::new(db.clone(), dir.path().to_path_buf(), Settings::default());
        let kept = state.tokens.clone();
        let (tx, rx) = std::sync::mpsc::channel();
        let thread = std::thread::spawn(move || {
            actix_web::rt::System::new().block_on(async move {
                let server = web::run(listener, state).expect("server builds");
                tx.send(server.handle()).expect("handle sent");
                let _ = server.await;
            });
        });
        let handle = rx.recv().expect("server started");
        let (_, token) = groundproof::platform::auth::issue_api_token(
            &db,
            groundproof::platform::auth::Role::Admin,
            "end-to-end tests",
            groundproof::platform::auth::now_unix(),
        )
        .expect("admin token");
        tokens()
            .lock()
            .unwrap_or_else(|p| p.into_inner())
            .insert(addr.to_string(), token);
        TestServer {
            addr,
            db,
            database,
            tokens: kept,
            handle,
            thread: Some(thread),
            dir,
        }
    }

    pub fn url(&self, path: &str) -> String {
        format!("http://{}{}", self.addr, path)
    }

    /// Stop the server as a crash would leave it for its clients
    /// (connections refused); the data directory stays.
    pub fn stop(&mut self) {
        let h = self.handle.clone();
        let stopper = std::thread::spawn(move || {
            actix_web::rt::System::new().block_on(h.stop(false));
        });
        let _ = stopper.join();
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }

    /// Start again on the same port and data directory (after [`stop`]),
    /// as a station restarting its server does; start-up clean-up runs
    /// again, and the admin token still works.
    ///
    /// [`stop`]: TestServer::stop
    pub fn restart(&mut self) {
        self.stop();
        let db = Arc::new(self.open_db().expect("database opens again"));
        let listener = TcpListener::bind(self.addr).expect("bind the same port");
        let state = AppState::new(
            db.clone(),
            self.dir.path().to_path_buf(),
            Settings::default(),
        );
        self.tokens = state.tokens.clone();
        let (tx, rx) = std::sync::mpsc::channel();
        self.thread = Some(std::thread::spawn(move || {
            actix_web::rt::System::new().block_on(async move {
                let server = web::run(listener, state).expect("server builds");
                tx.send(server.handle()).expect("handle sent");
                let _ = server.await;
            });
        }));
        self.handle = rx.recv().expect("server started again");
        self.db = db;
    }

    /// Open this server's database once more (as another process would).
    pub fn open_db(&self) -> groundproof::Result<Db> {
        Db::open_with(self.dir.path(), self.database.as_deref())
    }

    pub fn data_dir(&self) -> &Path {
        self.dir.path()
    }

    /// The arguments that give the `groundproof` binary this server's
    /// database: `--database URL` on PostgreSQL, none for the SQLite file
    /// in the data directory.
    pub fn database_args(&self) -> Vec<String> {
        match &self.database {
            Some(url) => vec!["--database".into(), url.clone()],
            None => Vec::new(),
        }
    }

    /// Freeze a copy of the stored state into `to` (the SQLite files, or a
    /// new PostgreSQL database made from this one), from which
    /// [`DbSnapshot::open_copy`] opens separate stores. On PostgreSQL the
    /// server is stopped for the copy (a database is copied only while no
    /// one is connected to it) and started again.
    pub fn snapshot_db(&mut self, to: &Path) -> DbSnapshot {
        let Some(url) = self.database.clone() else {
            copy_sqlite(self.dir.path(), to);
            return DbSnapshot {
                dir: to.to_path_buf(),
                database: None,
            };
        };
        self.stop();
        // The server's state went with it; this handle goes too (an empty
        // SQLite store stands in until the restart opens the database again).
        let stand_in = tempfile::tempdir().expect("temp dir");
        self.db = Arc::new(Db::open(stand_in.path()).expect("a stand-in store"));
        self.tokens = Arc::default();
        let copy = groundproof::platform::storage::copy_postgres(&url)
            .expect("a copy of the PostgreSQL database");
        self.restart();
        DbSnapshot {
            dir: to.to_path_buf(),
            database: Some(copy),
        }
    }

    pub fn data_path(&self) -> PathBuf {
        self.dir.path().to_path_buf()
    }
}

impl Drop for TestServer {
    fn drop(&mut self) {
        let h = self.handle.clone();
        let stopper = std::thread::spawn(move || {
            actix_web::rt::System::new().block_on(h.stop(false));
        });
        let _ = stopper.join();
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// A frozen copy of a test server's database ([`TestServer::snapshot_db`]).
pub struct DbSnapshot {
    dir: PathBuf,
    database: Option<String>,
}

impl DbSnapshot {
    /// A new store with the snapshot's data: its database files copied into
    /// `dir` (SQLite), or a new PostgreSQL database copied from it.
    pub fn open_copy(&self, dir: &Path) -> Db {
        match &self.database {
            None => {
                copy_sqlite(&self.dir, dir);
                Db::open(dir).expect("the copy opens")
            }
            Some(url) => {
                std::fs::create_dir_all(dir).expect("data dir");
                let copy = groundproof::platform::storage::copy_postgres(url)
                    .expect("a copy of the PostgreSQL database");
                Db::open_postgres(&copy).expect("the copy opens")
            }
        }
    }
}

/// The SQLite database files of data directory `from`, copied into `to`.
pub fn copy_sqlite(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("data dir");
    for name in ["groundproof.sqlite3", "groundproof.sqlite3-wal"] {
        let src = from.join(name);
        if src.exists() {
            std::fs::copy(&src, to.join(name)).expect("database file copied");
        }
    }
}

/// Whether `needle` is stored anywhere in the server's database: in the
/// bytes of the SQLite files (free pages and the write-ahead log too), and
/// in any value of any table (either engine).
pub fn stored_anywhere(s: &TestServer, needle: &str) -> bool {
    let in_files = ["groundproof.sqlite3", "groundproof.sqlite3-wal"]
        .iter()
        .filter_map(|f| std::fs::read(s.data_dir().join(f)).ok())
        .any(|b| b.windows(needle.len()).any(|w| w == needle.as_bytes()));
    in_files
        || s.db
            .read(|r| r.holds_text(needle))
            .expect("tables searched")
}

/// A response: status and body text.
pub struct Reply {
    pub status: u16,
    pub body: String,
}

impl Reply {
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(&self.body).unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.body))
    }
}

/// Admin API tokens of the running test servers, by "host:port": the
/// request helpers below send it, so tests act as an admin unless they
/// use [`anonymous`] or pass their own token.
fn tokens() -> &'static std::sync::Mutex<std::collections::HashMap<String, String>> {
    static T: std::sync::OnceLock<std::sync::Mutex<std::collections::HashMap<String, String>>> =
        std::sync::OnceLock::new();
    T.get_or_init(Default::default)
}

fn token_for(url: &str) -> Option<String> {
    let host = url.strip_prefix("http://")?.split('/').next()?;
    tokens()
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .get(host)
        .cloned()
}

/// Let the request helpers send `token` to the server at `addr` (a server
/// process a test started itself, as `TestServer::start` does for its own).
pub fn remember_token(addr: SocketAddr, token: &str) {
    tokens()
        .lock()
        .unwrap_or_else(|p| p.into_inner())
        .insert(addr.to_string(), token.to_string());
}

/// The admin token the helpers send to this server.
pub fn admin_token(s: &TestServer) -> String {
    token_for(&s.url("/")).unwrap_or_default()
}

fn with_auth(
    r: ureq::RequestBuilder<ureq::typestate::WithoutBody>,
    url: &str,
) -> ureq::RequestBuilder<ureq::typestate::WithoutBody> {
    match token_for(url) {
        Some(t) => r.header("Authorization", format!("Bearer {t}")),
        None => r,
    }
}

fn with_auth_body(
    r: ureq::RequestBuilder<ureq::typestate::WithBody>,
    url: &str,
) -> ureq::RequestBuilder<ureq::typestate::WithBody> {
    match token_for(url) {
        Some(t) => r.header("Authorization", format!("Bearer {t}")),
        None => r,
    }
}

/// A request with no credentials at all.
pub fn anonymous_get(url: &str) -> Reply {
    reply(agent().get(url).call())
}

/// A request with the given bearer token (or none).
pub fn get_as(url: &str, token: Option<&str>) -> Reply {
    let r = agent().get(url);
    reply(match token {
        Some(t) => r.header("Authorization", format!("Bearer {t}")).call(),
        None => r.call(),
    })
}

/// A JSON POST with the given bearer token (or none).
pub fn post_json_as(url: &str, token: Option<&str>, body: &serde_json::Value) -> Reply {
    let r = agent().post(url);
    reply(match token {
        Some(t) => r
            .header("Authorization", format!("Bearer {t}"))
            .send_json(body),
        None => r.send_json(body),
    })
}

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(std::time::Duration::from_secs(30)))
        .build()
        .into()
}

fn reply(r: Result<ureq::http::Response<ureq::Body>, ureq::Error>) -> Reply {
    let mut r = r.expect("request reaches the server");
    Reply {
        status: r.status().as_u16(),
        body: r.body_mut().read_to_string().unwrap_or_default(),
    }
}

pub fn get(url: &str) -> Reply {
    reply(with_auth(agent().get(url), url).call())
}

pub fn post_bytes(url: &str, content_type: &str, body: &[u8]) -> Reply {
    reply(
        with_auth_body(agent().post(url), url)
            .header("Content-Type", content_type)
            .send(body),
    )
}

pub fn post_json(url: &str, body: &serde_json::Value) -> Reply {
    reply(with_auth_body(agent().post(url), url).send_json(body))
}

/// Register the demo scenario's sources, zones, teams and alerts over HTTP.
pub fn load_scenario(s: &TestServer) {
    load_scenario_at(&s.url(""));
}

/// Makes the request helpers send `token` to the server at `base`
/// (`http://host:port`): [`remember_token`] by the base address.
pub fn use_token(base: &str, token: &str) {
    let host = base.trim_start_matches("http://").trim_end_matches('/');
    let addr: SocketAddr = host
        .parse()
        .unwrap_or_else(|e| panic!("{host} is not a socket address: {e}"));
    remember_token(addr, token);
}

/// [`load_scenario`] through the server at `base` (`http://host:port`).
pub fn load_scenario_at(base: &str) {
    use serde_json::json;
    let url = |path: &str| format!("{}{path}", base.trim_end_matches('/'));
    let scenario = mock_patrols::scenario();
    for src in &scenario.sources {
        let r = post_json(
            &url("/api/v1/sources"),
            &json!({"name": src.name, "pixel_size_m": src.pixel_size_m, "revisit_days": src.revisit_days}),
        );
        assert_eq!(r.status, 201, "{}", r.body);
    }
    let z = post_bytes(
        &url("/api/v1/zones"),
        "application/geo+json",
        mock_patrols::zones_geojson(&scenario).as_bytes(),
    );
    assert_eq!(z.status, 200, "{}", z.body);
    for t in &scenario.teams {
        let r = post_json(&url("/api/v1/teams"), &json!({"name": t}));
        assert_eq!(r.status, 201, "{}", r.body);
    }
    for (source, rows) in mock_patrols::generate_alerts(&scenario, 42) {
        let body = if source == "radar-10m" {
            mock_patrols::alerts_geojson(&rows)
        } else {
            mock_patrols::alerts_csv(&rows)
        };
        let r = post_bytes(
            &url(&format!("/api/v1/alerts?source={source}")),
            "text/plain",
            body.as_bytes(),
        );
        assert_eq!(r.status, 200, "{}", r.body);
    }
}

/// Bytes of a response (for downloads).
pub fn get_bytes(url: &str) -> (u16, Vec<u8>) {
    let mut r = with_auth(agent().get(url), url)
        .call()
        .expect("request reaches the server");
    let status = r.status().as_u16();
    let bytes = r
        .body_mut()
        .with_config()
        .limit(1 << 30)
        .read_to_vec()
        .unwrap_or_default();
    (status, bytes)
}

/// Run an outside tool; `None` when it is not installed (see [`missing`]).
pub fn tool(program: &str, args: &[&str]) -> Option<std::process::Output> {
    match std::process::Command::new(program).args(args).output() {
        Ok(o) => Some(o),
        Err(_) => {
            missing(&format!(
                "{program} is not installed (CI installs it; see .ci/run)"
            ));
            None
        }
    }
}

/// True when the tests run on CI (`CI` set to anything but empty, `0` or
/// `false`), where every outside tool must be present.
pub fn on_ci() -> bool {
    std::env::var("CI").is_ok_and(|v| !matches!(v.trim(), "" | "0" | "false"))
}

/// An outside tool the test needs is missing: on CI the test fails (a CI
/// machine that failed to install a tool must not stay green without
/// checking anything); on a contributor's machine it says SKIP on stderr
/// and the caller returns.
pub fn missing(what: &str) {
    assert!(!on_ci(), "CI is set and {what}: the check cannot run");
    eprintln!("SKIP: {what}");
}

/// The GPX 1.1 schema, kept in the repository so the check runs anywhere.
pub fn gpx_schema() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("reference/bundle/gpx-1.1.xsd")
}

/// `bundle` as a server wrote it before `confidence_level` existed (issue
/// 14): the property taken out of every event in `events.geojson`, whose
/// SHA-256 and size the manifest then lists again. Every other entry is
/// copied as it is, in the same order.
pub fn without_confidence_level(bundle: &[u8]) -> Vec<u8> {
    use std::io::{Read, Write};
    let mut src = zip::ZipArchive::new(std::io::Cursor::new(bundle)).expect("bundle zip");
    let mut entries: Vec<(String, Vec<u8>)> = Vec::new();
    for i in 0..src.len() {
        let mut e = src.by_index(i).expect("entry");
        let name = e.name().expect("entry name").to_string();
        let mut bytes = Vec::new();
        e.read_to_end(&mut bytes).expect("entry bytes");
        entries.push((name, bytes));
    }
    let events = entries
        .iter_mut()
        .find(|(n, _)| n == "events.geojson")
        .expect("events.geojson");
    let mut fc: serde_json::Value = serde_json::from_slice(&events.1).expect("GeoJSON");
    for f in fc["features"].as_array_mut().expect("features") {
        f["properties"]
            .as_object_mut()
            .expect("properties")
            .remove("confidence_level")
            .expect("a bundle of this release has confidence_level");
    }
    events.1 = serde_json::to_vec(&fc).expect("JSON");
    let (sha, size) = (
        groundproof_sync::bundle::sha256_hex(&events.1),
        events.1.len(),
    );
    let manifest = entries
        .iter_mut()
        .find(|(n, _)| n == "manifest.json")
        .expect("manifest.json");
    let mut m: serde_json::Value = serde_json::from_slice(&manifest.1).expect("manifest");
    for e in m["entries"].as_array_mut().expect("entries") {
        if e["name"] == "events.geojson" {
            e["sha256"] = sha.clone().into();
            e["size"] = size.into();
        }
    }
    manifest.1 = serde_json::to_vec_pretty(&m).expect("JSON");
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    for (name, bytes) in entries {
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .expect("start");
        out.write_all(&bytes).expect("write");
    }
    out.finish().expect("finish").into_inner()
}

/// A whole answer to [`request`]: status, headers and body bytes.
pub struct Answer {
    pub status: u16,
    pub headers: ureq::http::HeaderMap,
    pub body: Vec<u8>,
}

impl Answer {
    /// A header's value, when it is there and is text.
    pub fn header(&self, name: &str) -> Option<&str> {
        self.headers.get(name).and_then(|v| v.to_str().ok())
    }

    /// The body as text (lossy).
    pub fn text(&self) -> String {
        String::from_utf8_lossy(&self.body).into_owned()
    }
}

/// One request with exactly the headers given (no credentials unless one of
/// them is), its body read whole (up to 1 GiB); redirects are not followed.
pub fn request(method: &str, url: &str, headers: &[(&str, &str)], body: &[u8]) -> Answer {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .timeout_global(Some(std::time::Duration::from_secs(30)))
        .build()
        .into();
    let req = ureq::http::Request::builder().method(method).uri(url);
    let req = headers.iter().fold(req, |r, (k, v)| r.header(*k, *v));
    let mut resp = agent
        .run(req.body(body.to_vec()).expect("a request"))
        .expect("request reaches the server");
    let bytes = resp
        .body_mut()
        .with_config()
        .limit(1 << 30)
        .read_to_vec()
        .unwrap_or_default();
    Answer {
        status: resp.status().as_u16(),
        headers: resp.headers().clone(),
        body: bytes,
    }
}

/// `Bearer TOKEN`, for an `Authorization` header.
pub fn bearer(token: &str) -> String {
    format!("Bearer {token}")
}

/// A page of `s` as its admin token, in `lang` (`None`: no
/// `Accept-Language`): status and body text.
pub fn page_in(s: &TestServer, path: &str, lang: Option<&str>) -> Reply {
    let auth = bearer(&admin_token(s));
    let mut headers = vec![("Authorization", auth.as_str())];
    if let Some(l) = lang {
        headers.push(("Accept-Language", l));
    }
    let a = request("GET", &s.url(path), &headers, b"");
    Reply {
        status: a.status,
        body: a.text(),
    }
}

/// An `application/x-www-form-urlencoded` body of these fields (given
/// unencoded; RFC 3986 unreserved characters stay as they are).
pub fn form_body<K: AsRef<str>, V: AsRef<str>>(fields: &[(K, V)]) -> String {
    let enc = |s: &str| -> String {
        s.bytes()
            .map(|b| match b {
                b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'.' | b'_' | b'~' => {
                    (b as char).to_string()
                }
                _ => format!("%{b:02X}"),
            })
            .collect()
    };
    fields
        .iter()
        .map(|(k, v)| format!("{}={}", enc(k.as_ref()), enc(v.as_ref())))
        .collect::<Vec<_>>()
        .join("&")
}

/// A trip issued through `POST /api/v1/bundles` as the admin, starting at
/// the scenario's station: `fields` are the request's other fields (team,
/// zone, max, mode, …). The bundle's id and the ZIP as downloaded.
pub fn issue_from_station(s: &TestServer, fields: serde_json::Value) -> (String, Vec<u8>) {
    let station = mock_patrols::scenario().station;
    let mut body = fields;
    body["start"] = serde_json::json!({"lat": station.1, "lon": station.0});
    let r = post_json(&s.url("/api/v1/bundles"), &body);
    assert_eq!(r.status, 201, "{}", r.body);
    let j = r.json();
    let id = j["bundle"]["bundle"]["id"]
        .as_str()
        .expect("a bundle id")
        .to_string();
    let (status, zip) = get_bytes(&s.url(j["download"].as_str().expect("a download link")));
    assert_eq!(status, 200);
    (id, zip)
}

/// `zip` saved at `path` and opened as the field kit opens it.
pub fn open_bundle_at(path: &Path, zip: &[u8]) -> groundproof_sync::bundle::OpenedBundle {
    std::fs::write(path, zip).expect("bundle saved");
    groundproof_sync::bundle::open_bundle(path, chrono::Utc::now()).expect("the bundle opens")
}

/// Run a `groundproof-field` command (the words after the program name);
/// it must succeed.
pub fn field_kit(args: &[&str]) {
    let mut all = vec!["groundproof-field"];
    all.extend_from_slice(args);
    let code = groundproof_sync::field::run(all.clone()).expect("field command runs");
    assert_eq!(code, std::process::ExitCode::SUCCESS, "{all:?}");
}

/// The field kit plays the trip of bundle `zip` in `dir` (seed 11), two of
/// whose reports disagree on one event (a dispute): the returns' ZIPs, in
/// the order they are sent.
pub fn disputed_trip_returns(zip: &[u8], dir: &Path) -> Vec<Vec<u8>> {
    let bundle = dir.join("bundle.zip");
    std::fs::write(&bundle, zip).expect("bundle written");
    let plan = mock_patrols::field::TripPlan {
        disputed_pair: true,
        ..Default::default()
    };
    let trip = mock_patrols::field::make_trip_return(&bundle, &dir.join("field"), &plan, 11)
        .expect("the field kit records the trip");
    trip.returns
        .iter()
        .map(|r| std::fs::read(&r.zip).expect("return read"))
        .collect()
}
