//! `groundproof-field push` over HTTPS: the command-line kit sends a return
//! to `serve --tls-cert --tls-key` trusting a station's own certificate
//! authority (`--ca-file`), and refuses a server it cannot verify.

use groundproof::platform::settings::Settings;
use groundproof::web::{self, AppState};
use groundproof_e2e::{TestServer, field_kit as field, issue_from_station, load_scenario};
use groundproof_sync::client::PushOptions;
use groundproof_sync::field::{Snapshot, push};
use serde_json::json;
use std::net::TcpListener;
use std::time::Duration;

#[test]
fn push_sends_a_return_over_https_to_a_station_ca() {
    // The office's server, and the same data served over HTTPS with a
    // certificate for 127.0.0.1 made here (a station's local CA would issue
    // such a one; here it signs itself).
    let s = TestServer::start();
    load_scenario(&s);
    let tmp = tempfile::tempdir().expect("dir");
    let made =
        rcgen::generate_simple_self_signed(vec!["127.0.0.1".to_string()]).expect("a certificate");
    let (cert, key) = (
        tmp.path().join("station.crt"),
        tmp.path().join("station.key"),
    );
    std::fs::write(&cert, made.cert.pem()).expect("cert");
    std::fs::write(&key, made.signing_key.serialize_pem()).expect("key");
    let tls = web::tls_config(&cert, &key).expect("TLS settings");
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind");
    let https = format!("https://{}", listener.local_addr().expect("addr"));
    let state = AppState::new(s.db.clone(), s.data_path(), Settings::default());
    let (tx, rx) = std::sync::mpsc::channel();
    let thread = std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = web::run_tls(listener, state, tls).expect("server builds");
            tx.send(server.handle()).expect("handle");
            let _ = server.await;
        });
    });
    let handle = rx.recv().expect("server started");

    // A trip with one report, recorded with the command-line kit.
    let (_, bundle) =
        issue_from_station(&s, json!({"team": "Team Amber", "zone": "Core", "max": 2}));
    let ws = crate::intake::open_workspace(tmp.path(), "ws", &bundle);
    let w = ws.to_str().expect("path");
    let e = Snapshot::load(&ws).expect("snapshot").events[0].clone();
    let at = format!("{},{}", e.lat, e.lon);
    field(&[
        "--workspace",
        w,
        "report",
        &e.code,
        "--outcome",
        "not_reached",
        "--reason",
        "safety",
        "--at",
        &at,
    ]);

    let options = |ca: Option<&std::path::Path>| PushOptions {
        max_failures: 2,
        initial_backoff: Duration::from_millis(10),
        max_backoff: Duration::from_millis(20),
        call_timeout: Duration::from_secs(20),
        progress: false,
        ca_file: ca.map(std::path::Path::to_path_buf),
        ..PushOptions::default()
    };
    let token = groundproof_e2e::admin_token(&s);
    // Not trusted: the public roots do not know the station's certificate.
    let refused = push(&ws, &https, Some(&token), &options(None));
    assert!(refused.is_err(), "an unknown issuer is refused");
    // A CA file that holds no certificate is a clear usage error.
    let junk = tmp.path().join("junk.pem");
    std::fs::write(&junk, "not a certificate").expect("junk");
    let err = push(&ws, &https, Some(&token), &options(Some(&junk))).expect_err("junk CA");
    assert!(err.to_string().contains("no PEM certificate"), "{err}");
    // Trusted through --ca-file: sent and accepted.
    let summary =
        push(&ws, &https, Some(&token), &options(Some(&cert))).expect("pushed over HTTPS");
    assert_eq!((summary.accepted, summary.rejected.len()), (1, 0));

    actix_web::rt::System::new().block_on(handle.stop(true));
    thread.join().expect("server thread");
}
