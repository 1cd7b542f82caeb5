//! Browser test: a coordinator and a manager work through the real pages
//! in headless Chromium, driven over WebDriver (Debian's `chromium` and
//! `chromium-driver`; `.ci/run` installs both). The server is the real one
//! on a random loopback port, loaded with the invented scenario.
//!
//! The walk: the login page guards every page; the coordinator logs in
//! through the form, imports an alert file (and sees a bad one refused
//! with its line), issues a bundle and downloads it with the session; the
//! field kit records two devices' visits (one event disputed) and packs
//! their returns; the station page takes both returns (and refuses a file
//! that is not one); a form with a stale security token and one sent after
//! the session ended are refused with a message and change nothing; the
//! coordinator logs out, the manager logs in,
//! settles the dispute and opens the dashboard.
//!
//! The server is loaded as the demo loads it, and the logins are the
//! demo's, so this walk is also the README's tour.
//!
//! On every page: its key elements are there, the browser console logged
//! no error (failed loads included), every form control has a label, and a
//! screenshot is saved under `CARGO_TARGET_TMPDIR/browser-screenshots/`
//! (and, when `GROUNDPROOF_TOUR_DIR` is set, there too: the README's tour
//! pictures are made this way).
//!
//! Fails when `CI` is set and Chromium or ChromeDriver is missing; elsewhere it
//! says SKIP on stderr and passes.

mod station;
mod summary;
mod trips;
mod webdriver;
// The administration pages (issue 13).
mod admin;

use groundproof::demo::{DEMO_LOGINS, load, run_trips};
use groundproof::platform::settings::Settings;
use groundproof_e2e::TestServer;
use std::path::{Path, PathBuf};
use webdriver::Browser;

/// A demo login's password (the README's tour uses the same).
fn password_of(name: &str) -> &'static str {
    DEMO_LOGINS
        .iter()
        .find(|(n, _, _)| *n == name)
        .map(|(_, _, p)| *p)
        .unwrap_or_else(|| panic!("no demo login {name}"))
}

/// Where screenshots go.
struct Shots {
    dirs: Vec<PathBuf>,
}

impl Shots {
    fn new() -> Shots {
        let mut dirs = vec![Path::new(env!("CARGO_TARGET_TMPDIR")).join("browser-screenshots")];
        if let Some(d) = std::env::var_os("GROUNDPROOF_TOUR_DIR") {
            dirs.push(PathBuf::from(d));
        }
        for d in &dirs {
            std::fs::create_dir_all(d).expect("screenshot folder");
        }
        Shots { dirs }
    }

    /// Save the viewport as `stem.png`; it must be a real, non-blank PNG.
    fn take(&self, b: &Browser, stem: &str) {
        for d in &self.dirs {
            let path = d.join(format!("{stem}.png"));
            b.screenshot(&path);
            let bytes = std::fs::read(&path).expect("screenshot written");
            // PNG signature (PNG specification, 3rd ed., §5.2).
            assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{stem}: a PNG");
            assert!(
                bytes.len() > 10_000,
                "{stem}: the screenshot is not blank ({} bytes)",
                bytes.len()
            );
            println!("screenshot: {}", path.display());
        }
    }
}

/// What every page must satisfy: no console error since the last check
/// (a failed request for a style sheet, icon or image logs one), and a
/// label for every visible form control (WCAG 2.x success criterion 1.3.1
/// / 4.1.2: each control has an accessible name).
fn assert_clean(b: &Browser, page: &str) {
    assert_clean_with_status(b, page, None);
}

/// As [`assert_clean`], for a page that answers a refused form with an
/// error status on purpose (422): Chromium logs that status for the page
/// itself, and only that entry is allowed.
fn assert_clean_with_status(b: &Browser, page: &str, status: Option<u16>) {
    let url = b.current_url();
    let allowed = |e: &webdriver::LogEntry| {
        status.is_some_and(|st| {
            e.source == "network"
                && e.message.starts_with(&url)
                && e.message.contains(&format!("status of {st} "))
        })
    };
    let errors: Vec<String> = b
        .console()
        .into_iter()
        .filter(|e| e.level == "SEVERE" && !allowed(e))
        .map(|e| e.message)
        .collect();
    assert!(errors.is_empty(), "{page}: console errors: {errors:#?}");
    let unlabelled = b.script(
        "return Array.from(document.querySelectorAll(\
           'input:not([type=hidden]), select, textarea'))\
         .filter(e => !(e.labels && e.labels.length) && !e.getAttribute('aria-label'))\
         .map(e => e.outerHTML.slice(0, 160));",
    );
    assert_eq!(
        unlabelled.as_array().map_or(0, Vec::len),
        0,
        "{page}: form controls without a label: {unlabelled}"
    );
}

fn assert_has(b: &Browser, page: &str, needles: &[&str]) {
    let dom = b.source();
    for n in needles {
        assert!(dom.contains(n), "{page}: the page lacks {n:?}");
    }
    assert!(
        dom.contains("/static/app.css"),
        "{page}: the style sheet is linked"
    );
}

fn log_in(b: &Browser, name: &str, password: &str) {
    b.find("form[action=\"/login\"]");
    b.type_into("#name", name);
    b.type_into("#password", password);
    b.click_to_navigate("form[action=\"/login\"] button[type=submit]");
    let who = b.text(".who");
    assert!(who.contains(name), "signed in as {name}: {who:?}");
}

/// Submit the form whose `action` starts with `action`.
fn submit(b: &Browser, action: &str) {
    b.click_to_navigate(&format!("form[action^=\"{action}\"] button[type=submit]"));
}

/// Download `href` with the browser's session cookie, as the link does.
fn download_with_session(b: &Browser, s: &TestServer, href: &str) -> Vec<u8> {
    let cookies = b.script("return document.cookie;");
    // The session cookie is HttpOnly: scripts cannot read it (that is the
    // point), so it is taken from WebDriver's cookie store instead.
    assert!(
        !cookies.as_str().unwrap_or_default().contains("gp_session"),
        "the session cookie is hidden from scripts"
    );
    let session = b.cookie("gp_session").expect("a session cookie");
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let mut r = agent
        .get(&s.url(href))
        .header("Cookie", format!("gp_session={session}"))
        .call()
        .expect("download reaches the server");
    assert_eq!(r.status().as_u16(), 200, "download {href}");
    r.body_mut()
        .with_config()
        .limit(256 << 20)
        .read_to_vec()
        .expect("download body")
}

#[test]
fn coordinator_and_manager_work_through_the_pages_in_chromium() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    // The server holds what `cargo run --release -- demo` shows: the
    // scenario, the demo's logins, and its trips pushed back by the field kit.
    let s = TestServer::start();
    let work = tempfile::tempdir().expect("work folder");
    let summary = load(&s.db, s.data_dir(), &Settings::default()).expect("demo loads");
    run_trips(&s.db, &summary, &work.path().join("demo"), &s.url("")).expect("demo trips");
    let shots = Shots::new();

    // Nobody unauthenticated sees a page: the events page sends to the login.
    b.goto(&s.url("/events"));
    assert!(b.current_url().contains("/login"), "{}", b.current_url());
    assert_has_login(&b);
    assert_clean(&b, "login");
    shots.take(&b, "login");

    // The coordinator logs in and lands where they were going.
    log_in(&b, "coordinator", password_of("coordinator"));
    assert!(b.current_url().ends_with("/events"), "{}", b.current_url());
    assert_has(
        &b,
        "events",
        &["<svg", "Events in priority order", "Safety first"],
    );
    assert_clean(&b, "events");
    shots.take(&b, "events");

    // Import: a good alert file, then a bad one.
    let station = mock_patrols::scenario().station;
    let good = work.path().join("new-alerts.csv");
    std::fs::write(
        &good,
        format!(
            "longitude,latitude,date,confidence\n{:.6},{:.6},2026-11-20,confirmed\n{:.6},{:.6},2026-11-20,tentative\n",
            station.0 - 0.05,
            station.1,
            station.0 - 0.05,
            station.1 + 0.0001
        ),
    )
    .expect("alert file");
    b.goto(&s.url("/import"));
    assert_clean(&b, "import form");
    b.choose("#alert-source", "optical-10m");
    b.choose_file("#alert-file", &good);
    submit(&b, "/import/alerts");
    let ok = b.text(".ok-box");
    assert!(ok.contains("alerts imported 2"), "import result: {ok}");
    assert!(ok.contains("events created 1"), "import result: {ok}");
    assert_clean(&b, "import result");
    shots.take(&b, "import");

    let bad = work.path().join("bad-alerts.csv");
    std::fs::write(
        &bad,
        "longitude,latitude,date,confidence\n-60.5,-3.6,2026-11-20,confirmed\n-60.5,95.0,2026-11-20,confirmed\n",
    )
    .expect("bad file");
    b.goto(&s.url("/import"));
    b.choose("#alert-source", "optical-10m");
    b.choose_file("#alert-file", &bad);
    submit(&b, "/import/alerts");
    let err = b.text(".error-box");
    assert!(err.contains("Nothing was imported"), "{err}");
    assert!(err.contains("line 3"), "the error names the line: {err}");
    assert!(err.contains("latitude"), "the error names the field: {err}");
    assert_clean_with_status(&b, "import refused", Some(422));

    // Issue a bundle for Team Amber in the Core zone.
    b.goto(&s.url("/trips"));
    assert_clean(&b, "trips form");
    b.choose("#t-team", "Team Amber");
    b.choose("#t-zone", "Core");
    b.type_into("#t-max", "6");
    b.type_into("#t-lat", &format!("{:.6}", station.1));
    b.type_into("#t-lon", &format!("{:.6}", station.0));
    submit(&b, "/trips");
    // The preview first; its first button issues.
    assert_clean(&b, "trip preview");
    submit(&b, "/trips");
    assert_eq!(b.text("h1"), "Bundle issued");
    assert_has(&b, "bundle issued", &["<svg", "Stops in visit order"]);
    assert_clean(&b, "bundle issued");
    shots.take(&b, "trip");
    let href = b
        .script("return document.querySelector('a[href$=\"/download\"]').getAttribute('href');")
        .as_str()
        .expect("a download link")
        .to_string();
    let zip = download_with_session(&b, &s, &href);
    let bundle = work.path().join("bundle.zip");
    std::fs::write(&bundle, &zip).expect("bundle saved");

    // The field kit plays the team: two devices, one event they disagree on.
    let plan = mock_patrols::field::TripPlan {
        disputed_pair: true,
        ..Default::default()
    };
    let trip = mock_patrols::field::make_trip_return(&bundle, &work.path().join("field"), &plan, 7)
        .expect("field returns");
    assert_eq!(trip.returns.len(), 2, "two devices");
    let disputed = trip.disputed.clone().expect("a disputed event");

    // The station takes both returns.
    for (i, ret) in trip.returns.iter().enumerate() {
        b.goto(&s.url("/station"));
        b.choose_file("#s-package", &ret.zip);
        submit(&b, "/station");
        let ok = b.text(".ok-box");
        let expected = format!("{} accepted, 0 duplicate, 0 rejected", ret.reports.len());
        assert!(ok.contains(&expected), "return {i}: {ok}");
        assert_has(&b, "station result", &["<table"]);
        assert_clean(&b, "station result");
        if i == 0 {
            shots.take(&b, "station");
        }
    }
    // A file that is not a return is refused on the page.
    b.goto(&s.url("/station"));
    b.choose_file("#s-package", &good);
    submit(&b, "/station");
    let err = b.text(".error-box");
    assert!(err.contains("not taken in"), "{err}");
    assert_clean_with_status(&b, "station refused", Some(422));

    // A form sent with a stale security token is refused with a message,
    // and nothing is issued.
    let bundles = |s: &TestServer| s.db.read(|r| r.bundles()).expect("bundles").len();
    let before = bundles(&s);
    b.goto(&s.url("/trips"));
    b.choose("#t-team", "Team Amber");
    b.script(
        "document.querySelector('form[action=\"/trips\"] input[name=csrf_token]').value = 'stale';",
    );
    submit(&b, "/trips");
    assert!(
        b.text("body")
            .contains("security token is missing or stale"),
        "{}",
        b.text("body")
    );
    assert_clean_with_status(&b, "stale token", Some(403));
    assert_eq!(bundles(&s), before, "nothing issued with a stale token");

    // A session that has ended under an open form: the form is not taken,
    // the login page says why, and logging in again goes on.
    let alerts_before = s.db.read(|r| r.alert_count()).expect("alerts");
    b.goto(&s.url("/import"));
    b.set_cookie("gp_session", "00000000000000000000000000000000");
    b.choose("#alert-source", "optical-10m");
    b.choose_file("#alert-file", &good);
    submit(&b, "/import/alerts");
    assert!(b.current_url().contains("/login"), "{}", b.current_url());
    assert!(
        b.text("[role=alert]").contains("session has ended"),
        "{}",
        b.text("body")
    );
    assert_eq!(
        s.db.read(|r| r.alert_count()).expect("alerts"),
        alerts_before,
        "nothing imported after the session ended"
    );
    log_in(&b, "coordinator", password_of("coordinator"));

    // Log out: the login page again, and a page asks for it.
    submit(&b, "/logout");
    b.goto(&s.url("/dashboard"));
    assert!(b.current_url().contains("/login"), "{}", b.current_url());

    // The manager settles the dispute.
    log_in(&b, "manager", password_of("manager"));
    b.goto(&s.url("/disputes"));
    assert_has(&b, "disputes", &["Disputes", &disputed]);
    assert_clean(&b, "disputes");
    shots.take(&b, "disputes");
    let section = b
        .script(&format!(
            "return Array.from(document.querySelectorAll('section.card'))\
               .find(s => s.querySelector('h2').textContent.includes('{disputed}')).id;"
        ))
        .as_str()
        .expect("the disputed event's section")
        .to_string();
    b.choose(&format!("#{section} select[name=outcome]"), "confirmed");
    b.type_into(
        &format!("#{section} textarea[name=reason]"),
        "Both photo sets show fresh stumps; the second visit looked at the wrong patch.",
    );
    b.click_to_navigate(&format!("#{section} button[type=submit]"));
    let ok = b.text(".ok-box");
    assert!(ok.contains("was recorded"), "{ok}");
    assert!(
        !b.source().contains(&format!("Event {disputed}<")),
        "the settled event leaves the queue"
    );
    assert_clean(&b, "dispute settled");

    // Its event page now says confirmed.
    b.click_to_navigate(".ok-box a");
    assert!(b.text("h1").contains("confirmed"), "{}", b.text("h1"));
    assert_has(&b, "event", &["Attributes", "Alerts ("]);
    assert_clean(&b, "event");
    shots.take(&b, "event");

    // The dashboard.
    b.goto(&s.url("/dashboard"));
    assert_has(
        &b,
        "dashboard",
        &["<svg", "Kaplan", "descriptive (response visits)"],
    );
    dashboard_map_is_drawn(&b);
    assert_clean(&b, "dashboard");
    shots.take(&b, "dashboard");

    // A manager may not issue bundles: the page says so, nothing changes.
    let before = s.db.read(|r| r.bundles()).expect("bundles").len();
    b.goto(&s.url("/trips"));
    assert!(
        b.find_all("form[action=\"/trips\"] button[type=submit]")
            .is_empty()
            || b.source().contains("not allowed"),
        "a manager sees no issue form"
    );
    assert_eq!(s.db.read(|r| r.bundles()).expect("bundles").len(), before);
}

/// The dashboard's pan-and-zoom map: drawn by Leaflet with the events in
/// their status colours and a legend, the printable SVG kept in the page
/// (hidden on screen only).
fn dashboard_map_is_drawn(b: &Browser) {
    let start = std::time::Instant::now();
    let drawn = "return !!(document.querySelector('#dashboard-map.leaflet-container') \
                 && !document.getElementById('dashboard-map').hidden);";
    while b.script(drawn).as_bool() != Some(true) {
        assert!(
            start.elapsed() < std::time::Duration::from_secs(10),
            "waited 10 s for the dashboard's map"
        );
        std::thread::sleep(std::time::Duration::from_millis(50));
    }
    let paths = b
        .find_all("#dashboard-map .leaflet-overlay-pane path")
        .len();
    assert!(paths > 1, "zones and events drawn: {paths} paths");
    let legend = b.text("#dashboard-map .map-legend");
    assert!(legend.contains("zone"), "a legend: {legend}");
    let svg = b.script(
        "return getComputedStyle(document.querySelector('.map-block .static-map')).display;",
    );
    assert_eq!(svg.as_str(), Some("none"), "the SVG gives way on screen");
    assert!(
        !b.find_all(".map-block .static-map svg").is_empty(),
        "the printable SVG stays in the page"
    );
}

fn assert_has_login(b: &Browser) {
    let dom = b.source();
    assert!(
        dom.contains("User name") && dom.contains("Password"),
        "{dom}"
    );
}
