//! Browser test of the field app's control-point outcomes: the report
//! module served at `/field/report.js`, run in headless Chromium, offers a
//! control point its own outcomes from checklist 2 on (the event outcomes
//! with a checklist 1 trip), and its checks give the same verdicts as the
//! Rust validator (`groundproof_sync::returns::validate_report`) on the
//! same reports, with the real checklist of an issued assessment bundle.
//! Every catalogue holds the new words. Fails when `CI` is set and Chromium
//! or ChromeDriver is missing; elsewhere it says SKIP on stderr.

#[path = "webdriver.rs"]
#[allow(dead_code)]
mod webdriver;

use groundproof_e2e::{TestServer, get, issue_from_station, load_scenario, open_bundle_at};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::returns::{Report, validate_report};
use serde_json::{Value, json};
use std::time::{Duration, Instant};
use webdriver::Browser;

/// The JavaScript module's verdict on each case, run in the page.
fn js_verdicts(b: &Browser, cases: &Value) -> Value {
    b.script(&format!(
        "window.__verdicts = null;\
         import('/field/report.js').then((m) => {{\
           const cases = {cases};\
           window.__verdicts = cases.map(([r, c]) => {{\
             try {{ m.validateReport(r, c); return 'ok'; }} catch (e) {{ return e.key || String(e); }}\
           }});\
           window.__offered = [m.outcomesFor(cases[0][1], 'control'), m.outcomesFor(cases[0][1], 'event'),\
             m.outcomesFor(cases[cases.length - 1][1], 'control')];\
         }});\
         return true;"
    ));
    let start = Instant::now();
    loop {
        let v = b.script("return window.__verdicts;");
        if !v.is_null() {
            return v;
        }
        assert!(
            start.elapsed() < Duration::from_secs(30),
            "report.js did not answer: {:#?}",
            b.console()
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

fn report(bundle_id: &str, target: Value, outcome: &str, fields: Value) -> Value {
    let mut r = json!({
        "report_id": "6f1c2c3e-8d1b-4c55-9a57-0d3b0f1e2a11",
        "bundle_id": bundle_id,
        "target": target,
        "supersedes": null,
        "outcome": outcome,
        "reason": null,
        "cause": null,
        "position": {"lat": -3.1, "lon": -60.2, "accuracy_m": 5.0, "source": "manual"},
        "observed_at": "2026-11-02T10:00:00Z",
        "recorded_at": "2026-11-02T10:05:00Z",
        "area_ha": null,
        "notes": "",
        "photos": [],
    });
    for (k, v) in fields.as_object().expect("fields") {
        r[k] = v.clone();
    }
    r
}

fn photos() -> Value {
    json!([
        {"sha256": "1".repeat(64), "original_name": "a.jpg", "taken_at": null, "lat": null, "lon": null, "direction_deg": null},
        {"sha256": "2".repeat(64), "original_name": "b.jpg", "taken_at": null, "lat": null, "lon": null, "direction_deg": null},
    ])
}

#[test]
fn field_app_offers_control_points_their_own_outcomes() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    load_scenario(&s);
    let (_, zip) = issue_from_station(
        &s,
        json!({"team": "Team Basalt", "mode": "assessment", "zone": "Riverside Community Land",
            "margin": 0.3, "controls": 2, "seed": 7}),
    );
    let dir = tempfile::tempdir().expect("dir");
    let bundle = open_bundle_at(&dir.path().join("bundle.zip"), &zip);
    let v2 = bundle.checklist.clone();
    assert_eq!(v2.version, 2);
    let v1 = Checklist::default_v1();
    let bid = bundle.manifest.bundle_id.to_string();
    let control = json!({"kind": "control", "code": bundle.controls[0].code});
    let event = json!({"kind": "event", "code": bundle.events[0].code, "event_id": bundle.events[0].event_id});
    let found = json!({"cause": "fire", "area_ha": 0.7, "photos": photos()});
    let cases: Vec<(Value, &Checklist, &str)> = vec![
        (
            report(&bid, control.clone(), "clearing_found", found.clone()),
            &v2,
            "ok",
        ),
        (
            report(&bid, control.clone(), "no_clearing_found", json!({})),
            &v2,
            "ok",
        ),
        (
            report(
                &bid,
                control.clone(),
                "clearing_found",
                json!({"cause": "fire", "photos": photos()}),
            ),
            &v2,
            "problem.required_area_ha",
        ),
        (
            report(
                &bid,
                control.clone(),
                "clearing_found",
                json!({"area_ha": 0.7, "photos": photos()}),
            ),
            &v2,
            "problem.required_cause",
        ),
        (
            report(
                &bid,
                control.clone(),
                "clearing_found",
                json!({"cause": "fire", "area_ha": 0.7}),
            ),
            &v2,
            "problem.min_photos",
        ),
        (
            report(
                &bid,
                control.clone(),
                "false_alarm",
                json!({"reason": "no_change"}),
            ),
            &v2,
            "problem.pick_outcome",
        ),
        (
            report(&bid, event.clone(), "no_clearing_found", json!({})),
            &v2,
            "problem.pick_outcome",
        ),
        (
            report(
                &bid,
                control.clone(),
                "no_clearing_found",
                json!({"cause": "fire"}),
            ),
            &v2,
            "problem.pick_cause",
        ),
        // A trip of checklist 1: the control point takes the event words.
        (
            report(
                &bid,
                control.clone(),
                "false_alarm",
                json!({"reason": "no_change"}),
            ),
            &v1,
            "ok",
        ),
        (
            report(&bid, control, "no_clearing_found", json!({})),
            &v1,
            "problem.pick_outcome",
        ),
    ];
    let js_cases: Value = cases
        .iter()
        .map(|(r, c, _)| json!([r, serde_json::to_value(c).expect("checklist")]))
        .collect();
    b.goto(&s.url("/field/"));
    let verdicts = js_verdicts(&b, &js_cases);
    for (i, (r, c, want)) in cases.iter().enumerate() {
        assert_eq!(verdicts[i], json!(want), "case {i}: {r}");
        // The Rust validator agrees (accepts or refuses the same reports).
        let typed: Report = serde_json::from_value(r.clone()).expect("a report");
        assert_eq!(
            validate_report(&typed, c).is_ok(),
            *want == "ok",
            "case {i}: Rust says {:?}",
            validate_report(&typed, c)
        );
    }
    let offered = b.script("return window.__offered;");
    assert_eq!(
        offered,
        json!([
            [
                "no_clearing_found",
                "clearing_found",
                "inconclusive",
                "not_reached"
            ],
            ["confirmed", "false_alarm", "inconclusive", "not_reached"],
            ["confirmed", "false_alarm", "inconclusive", "not_reached"],
        ])
    );
    let errors: Vec<_> = b
        .console()
        .into_iter()
        .filter(|l| l.level == "SEVERE")
        .collect();
    assert!(errors.is_empty(), "{errors:#?}");
    // Every catalogue (Fluent, shared with the pages) has the new words.
    for lang in ["en", "es", "fr", "pt", "id"] {
        let r = get(&s.url(&format!("/field/i18n/{lang}/field.ftl")));
        assert_eq!(r.status, 200, "{lang}");
        for id in [
            "outcome-no_clearing_found",
            "outcome-clearing_found",
            "form-area_control",
        ] {
            let line = r
                .body
                .lines()
                .find(|l| l.starts_with(&format!("{id} =")))
                .unwrap_or_else(|| panic!("{lang}: {id} missing"));
            assert!(line.len() > id.len() + 3, "{lang}: {id} empty");
        }
    }
}

/// Waits until `expr` (a JavaScript expression) is truthy and returns it.
fn wait_until(b: &Browser, expr: &str, what: &str) -> Value {
    let start = Instant::now();
    loop {
        let v = b.script(&format!("return {expr};"));
        if !(v.is_null() || v == json!(false) || v == json!("")) {
            return v;
        }
        assert!(
            start.elapsed() < Duration::from_secs(30),
            "waiting for {what}: {:#?}",
            b.console()
        );
        std::thread::sleep(Duration::from_millis(100));
    }
}

/// Issue 14: the app shows an alert's confidence as "high" or "low", read
/// from `confidence_level`, and from the word in a bundle written before
/// that field, which still opens.
#[test]
fn field_app_shows_high_or_low_confidence_also_for_an_older_bundle() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    load_scenario(&s);
    let (_, zip) = issue_from_station(
        &s,
        json!({"team": "Team Basalt", "zone": "Core", "max": 10}),
    );
    let dir = tempfile::tempdir().expect("dir");
    let bundle = open_bundle_at(&dir.path().join("bundle.zip"), &zip);
    let station = mock_patrols::scenario().station;
    let levels: Vec<&str> = bundle
        .events
        .iter()
        .map(|e| e.confidence_level().expect("a level"))
        .collect();
    // The phone's position, so that the app asks no network for one.
    b.goto(&s.url("/field/"));
    b.cdp(
        "Browser.grantPermissions",
        json!({"origin": s.url(""), "permissions": ["geolocation"]}),
    );
    b.cdp(
        "Emulation.setGeolocationOverride",
        json!({"latitude": station.1, "longitude": station.0, "accuracy": 7}),
    );
    b.goto(&s.url("/field/"));
    wait_until(&b, "document.body.dataset.ready === 'yes'", "the app");

    // The new bundle through the app's reader: the level as written.
    let b64 = base64::Engine::encode(&base64::engine::general_purpose::STANDARD, &zip);
    b.script(&format!(
        "window.__levels = null;\
         import('/field/bundle.js').then(async (m) => {{\
           const bytes = Uint8Array.from(atob('{b64}'), (c) => c.charCodeAt(0));\
           const t = await m.openBundle(bytes);\
           window.__levels = t.events.map((e) => e.confidence_level);\
         }}).catch((e) => {{ window.__levels = String(e); }});\
         return true;"
    ));
    let got = wait_until(&b, "window.__levels", "the new bundle read");
    let mut want: Vec<(String, &str)> = bundle
        .events
        .iter()
        .zip(&levels)
        .map(|(e, l)| (e.code.clone(), *l))
        .collect();
    want.sort();
    assert_eq!(got, json!(levels));

    // The older bundle, opened as a team would: the stop page says it.
    let old = dir.path().join("older.zip");
    std::fs::write(&old, groundproof_e2e::without_confidence_level(&zip)).expect("saved");
    b.choose_file("#bundle-file", &old);
    wait_until(&b, "document.getElementById('cautions')", "the cautions");
    b.click("#cautions-ok");
    wait_until(&b, "document.getElementById('stops')", "the stops");
    let (code, level) = &want[0];
    b.click(&format!("#stops > li[data-code='{code}'] .row"));
    let shown = wait_until(
        &b,
        "document.getElementById('stop-confidence') && document.getElementById('stop-confidence').textContent",
        "the stop's confidence",
    );
    assert_eq!(shown, json!(level), "{code}");
    assert!(b.text("main").contains("Alert confidence"));
    let errors: Vec<String> = b
        .console()
        .into_iter()
        .filter(|m| m.level == "SEVERE")
        .map(|m| m.message)
        .collect();
    assert!(errors.is_empty(), "{errors:#?}");
}
