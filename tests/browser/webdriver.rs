//! A small W3C WebDriver client for the browser test, over the HTTP client
//! the end-to-end tests already use (ureq). It starts Debian's
//! `chromedriver` on a free loopback port, opens one headless Chromium
//! session with its browser log switched on, and offers the handful of
//! commands the test needs: go to a page, find elements by CSS selector,
//! type, click, read text, run a script, take a screenshot, and read the
//! console log (ChromeDriver's `se/log` endpoint).
//!
//! Why not a WebDriver crate: the ones on crates.io are async and bring
//! their own HTTP stack (tokio and hyper) into a test crate that needs
//! about a dozen plain JSON requests.
//!
//! Commands: W3C WebDriver (<https://www.w3.org/TR/webdriver2/>), section
//! numbers beside each.

use base64::Engine;
use serde_json::{Value, json};
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// The key under which an element reference travels (WebDriver §12.1).
const ELEMENT_KEY: &str = "element-6066-11e4-a52e-4f735466cecf";

/// How long `find` waits for an element to appear (the session's implicit
/// wait), and how long a page may take to load.
const IMPLICIT_WAIT_MS: u64 = 5_000;
const PAGE_LOAD_MS: u64 = 60_000;

/// A reference to an element of the current page.
#[derive(Debug, Clone)]
pub struct Element(String);

/// One entry of the browser's console log.
#[derive(Debug, Clone)]
pub struct LogEntry {
    pub level: String,
    /// Where it came from: `network` (a failed or refused request),
    /// `console-api` (a script), `javascript` (an uncaught exception), ...
    pub source: String,
    pub message: String,
}

/// A running chromedriver with one Chromium session; both end on drop.
pub struct Browser {
    base: String,
    session: String,
    driver: Child,
    agent: ureq::Agent,
    profile: tempfile::TempDir,
}

fn find_binary(candidates: &[&str]) -> Option<PathBuf> {
    candidates.iter().map(PathBuf::from).find(|p| p.exists())
}

fn free_port() -> std::io::Result<u16> {
    Ok(TcpListener::bind("127.0.0.1:0")?.local_addr()?.port())
}

impl Browser {
    /// [`Browser::start`] for a test: `None` when Chromium or ChromeDriver
    /// is missing, after `groundproof_e2e::missing` (which fails on CI and
    /// says SKIP elsewhere); the test then returns.
    pub fn start_or_skip() -> Option<Browser> {
        Browser::start()
            .map_err(|e| groundproof_e2e::missing(&e))
            .ok()
    }

    /// Start chromedriver and a headless Chromium session. `Err` says what
    /// is missing (the caller prints a SKIP line) or what failed.
    pub fn start() -> Result<Browser, String> {
        let chromium = find_binary(&["/usr/bin/chromium", "/usr/bin/chromium-browser"])
            .ok_or("chromium is not installed (apt-get install -y chromium)")?;
        let driver_bin = find_binary(&["/usr/bin/chromedriver"])
            .ok_or("chromedriver is not installed (apt-get install -y chromium-driver)")?;
        let port = free_port().map_err(|e| format!("no free port: {e}"))?;
        let driver = Command::new(driver_bin)
            .arg(format!("--port={port}"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .map_err(|e| format!("chromedriver does not start: {e}"))?;
        let agent: ureq::Agent = ureq::Agent::config_builder()
            .http_status_as_error(false)
            .timeout_global(Some(Duration::from_secs(90)))
            .build()
            .into();
        let profile = tempfile::tempdir().map_err(|e| format!("profile folder: {e}"))?;
        let mut b = Browser {
            base: format!("http://127.0.0.1:{port}"),
            session: String::new(),
            driver,
            agent,
            profile,
        };
        b.wait_ready()?;
        // The flags the machine's notes list for headless Chromium as root on
        // a closed network (no sandbox, no background connections).
        let args = [
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-dev-shm-usage",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--window-size=1280,1800",
        ]
        .iter()
        .map(|s| s.to_string())
        .chain([format!("--user-data-dir={}", b.profile.path().display())])
        .collect::<Vec<_>>();
        let caps = json!({"capabilities": {"alwaysMatch": {
            "browserName": "chrome",
            "goog:chromeOptions": {"binary": chromium, "args": args},
            "goog:loggingPrefs": {"browser": "ALL"},
            "timeouts": {"implicit": IMPLICIT_WAIT_MS, "pageLoad": PAGE_LOAD_MS},
        }}});
        // New Session (§8.1).
        let v = b.call("POST", "/session", Some(caps))?;
        b.session = v["sessionId"]
            .as_str()
            .ok_or_else(|| format!("no session id in {v}"))?
            .to_string();
        Ok(b)
    }

    fn wait_ready(&self) -> Result<(), String> {
        let start = Instant::now();
        loop {
            // Status (§8.3).
            if let Ok(v) = self.call("GET", "/status", None)
                && v["ready"].as_bool() == Some(true)
            {
                return Ok(());
            }
            if start.elapsed() > Duration::from_secs(20) {
                return Err("chromedriver did not become ready in 20 s".into());
            }
            std::thread::sleep(Duration::from_millis(100));
        }
    }

    /// One command; the response's `value`, or its error as text.
    fn call(&self, method: &str, path: &str, body: Option<Value>) -> Result<Value, String> {
        let url = format!("{}{path}", self.base);
        let resp = match (method, body) {
            ("GET", _) => self.agent.get(&url).call(),
            ("DELETE", _) => self.agent.delete(&url).call(),
            (_, b) => self
                .agent
                .post(&url)
                .send_json(b.unwrap_or_else(|| json!({}))),
        };
        let mut resp = resp.map_err(|e| format!("{method} {path}: {e}"))?;
        let status = resp.status().as_u16();
        let text = resp
            .body_mut()
            .with_config()
            .limit(256 << 20)
            .read_to_string()
            .map_err(|e| format!("{method} {path}: {e}"))?;
        let v: Value =
            serde_json::from_str(&text).map_err(|e| format!("{method} {path}: {e}: {text}"))?;
        if status >= 400 {
            return Err(format!(
                "{method} {path}: {status} {}: {}",
                v["value"]["error"], v["value"]["message"]
            ));
        }
        Ok(v["value"].clone())
    }

    fn session_call(&self, method: &str, path: &str, body: Option<Value>) -> Value {
        let p = format!("/session/{}{path}", self.session);
        self.call(method, &p, body)
            .unwrap_or_else(|e| panic!("WebDriver: {e}"))
    }

    /// Navigate To (§10.1); waits for the page to load.
    pub fn goto(&self, url: &str) {
        self.session_call("POST", "/url", Some(json!({"url": url})));
    }

    /// Get Current URL (§10.2).
    pub fn current_url(&self) -> String {
        self.session_call("GET", "/url", None)
            .as_str()
            .unwrap_or_default()
            .to_string()
    }

    /// Find Element (§12.3.2) by CSS selector, waiting up to the implicit
    /// wait; panics with the selector when there is none.
    pub fn find(&self, css: &str) -> Element {
        let p = format!("/session/{}/element", self.session);
        let v = self
            .call(
                "POST",
                &p,
                Some(json!({"using": "css selector", "value": css})),
            )
            .unwrap_or_else(|e| {
                panic!(
                    "no element {css:?} on {}: {e}\n{}",
                    self.current_url(),
                    self.text("body")
                )
            });
        Element(v[ELEMENT_KEY].as_str().unwrap_or_default().to_string())
    }

    /// Find Elements (§12.3.3); empty when there is none (after the implicit wait).
    pub fn find_all(&self, css: &str) -> Vec<Element> {
        let v = self.session_call(
            "POST",
            "/elements",
            Some(json!({"using": "css selector", "value": css})),
        );
        v.as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|e| e[ELEMENT_KEY].as_str())
                    .map(|s| Element(s.to_string()))
                    .collect()
            })
            .unwrap_or_default()
    }

    /// Element Click (§12.5.1); a click that submits a form waits for the
    /// new page.
    pub fn click(&self, css: &str) {
        let e = self.find(css);
        self.session_call("POST", &format!("/element/{}/click", e.0), None);
    }

    /// Click an element that leads to a new page, and wait until that page
    /// has loaded. ChromeDriver waits for a navigation only when it starts
    /// at once; a form whose answer takes a while (issuing a bundle) would
    /// otherwise let the next command read the old page. The old document
    /// is marked first, so the wait ends only on a new one.
    pub fn click_to_navigate(&self, css: &str) {
        self.script("window.__gpOldPage = true;");
        self.click(css);
        let start = Instant::now();
        let p = format!("/session/{}/execute/sync", self.session);
        let probe = json!({
            "script": "return window.__gpOldPage === true ? 'old' : document.readyState;",
            "args": [],
        });
        loop {
            // Errors while the page changes ("no such execution context")
            // mean "not yet".
            if let Ok(v) = self.call("POST", &p, Some(probe.clone()))
                && v.as_str() == Some("complete")
            {
                return;
            }
            assert!(
                start.elapsed() < Duration::from_millis(PAGE_LOAD_MS),
                "no new page {PAGE_LOAD_MS} ms after clicking {css:?}"
            );
            std::thread::sleep(Duration::from_millis(50));
        }
    }

    /// Element Clear (§12.5.2), then Element Send Keys (§12.5.3). On a file
    /// input the text is the path of the file to choose.
    pub fn type_into(&self, css: &str, text: &str) {
        let e = self.find(css);
        if !css.contains("type=file") {
            self.session_call("POST", &format!("/element/{}/clear", e.0), None);
        }
        self.session_call(
            "POST",
            &format!("/element/{}/value", e.0),
            Some(json!({"text": text})),
        );
    }

    /// Choose the option with `value` in the `<select>` found by `css`.
    pub fn choose(&self, css: &str, value: &str) {
        self.click(&format!("{css} option[value=\"{value}\"]"));
    }

    /// Choose a file for a file input.
    pub fn choose_file(&self, css: &str, file: &Path) {
        let abs = std::fs::canonicalize(file).unwrap_or_else(|e| panic!("{file:?}: {e}"));
        self.type_into(css, &abs.display().to_string());
    }

    /// Get Element Text (§12.4.5) of the first element matching `css`.
    pub fn text(&self, css: &str) -> String {
        let p = format!("/session/{}/element", self.session);
        let Ok(v) = self.call(
            "POST",
            &p,
            Some(json!({"using": "css selector", "value": css})),
        ) else {
            return String::new();
        };
        let id = v[ELEMENT_KEY].as_str().unwrap_or_default();
        self.call(
            "GET",
            &format!("/session/{}/element/{id}/text", self.session),
            None,
        )
        .ok()
        .and_then(|t| t.as_str().map(str::to_string))
        .unwrap_or_default()
    }

    /// Get Named Cookie (§14.2): the cookie's value, HttpOnly ones included.
    pub fn cookie(&self, name: &str) -> Option<String> {
        let p = format!("/session/{}/cookie/{name}", self.session);
        self.call("GET", &p, None)
            .ok()
            .and_then(|v| v["value"].as_str().map(str::to_string))
    }

    /// Add Cookie (§14.3) for the current page's site, replacing one of
    /// the same name.
    pub fn set_cookie(&self, name: &str, value: &str) {
        self.session_call(
            "POST",
            "/cookie",
            Some(json!({"cookie": {"name": name, "value": value, "path": "/", "httpOnly": true}})),
        );
    }

    /// Get Page Source (§13.1): the serialized DOM.
    pub fn source(&self) -> String {
        self.session_call("GET", "/source", None)
            .as_str()
            .unwrap_or_default()
            .to_string()
    }

    /// Execute Script (§13.2.1); the script's return value.
    pub fn script(&self, body: &str) -> Value {
        self.session_call(
            "POST",
            "/execute/sync",
            Some(json!({"script": body, "args": []})),
        )
    }

    /// Run a Chrome DevTools Protocol command through ChromeDriver's
    /// `goog/cdp/execute` extension (not W3C): geolocation and
    /// permissions for the field app's test.
    #[allow(dead_code)] // used by the field app's test only
    pub fn cdp(&self, cmd: &str, params: Value) -> Value {
        self.session_call(
            "POST",
            "/goog/cdp/execute",
            Some(json!({"cmd": cmd, "params": params})),
        )
    }

    /// Take Screenshot (§17.1) of the viewport into `path` as PNG.
    pub fn screenshot(&self, path: &Path) {
        let v = self.session_call("GET", "/screenshot", None);
        let png = base64::engine::general_purpose::STANDARD
            .decode(v.as_str().unwrap_or_default())
            .expect("the screenshot is base64");
        std::fs::write(path, png).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    }

    /// Print Page (§18.1) on A4 paper (21.0 × 29.7 cm) with the page's
    /// backgrounds, as the browser's print does: the PDF's bytes.
    pub fn print_pdf(&self) -> Vec<u8> {
        let v = self.session_call(
            "POST",
            "/print",
            Some(json!({"page": {"width": 21.0, "height": 29.7}, "background": true})),
        );
        base64::engine::general_purpose::STANDARD
            .decode(v.as_str().unwrap_or_default())
            .expect("the PDF is base64")
    }

    /// The browser console entries logged since the last call
    /// (ChromeDriver's log endpoint; the log empties as it is read).
    pub fn console(&self) -> Vec<LogEntry> {
        let v = self.session_call("POST", "/se/log", Some(json!({"type": "browser"})));
        v.as_array()
            .map(|a| {
                a.iter()
                    .map(|e| LogEntry {
                        level: e["level"].as_str().unwrap_or_default().to_string(),
                        source: e["source"].as_str().unwrap_or_default().to_string(),
                        message: e["message"].as_str().unwrap_or_default().to_string(),
                    })
                    .collect()
            })
            .unwrap_or_default()
    }
}

impl Drop for Browser {
    fn drop(&mut self) {
        if !self.session.is_empty() {
            // Delete Session (§8.2) closes Chromium.
            let _ = self.call("DELETE", &format!("/session/{}", self.session), None);
        }
        let _ = self.driver.kill();
        let _ = self.driver.wait();
    }
}
