//! `groundproof serve --tls-cert --tls-key`: the server speaks HTTPS with a
//! certificate made here (a self-signed one for 127.0.0.1, as a station's
//! local certificate authority would issue), and a client that trusts it
//! gets the field app and the API; a client that does not is refused at the
//! handshake.

use groundproof::platform::settings::Settings;
use groundproof::platform::storage::Db;
use groundproof::web::{self, AppState};
use rustls::pki_types::{CertificateDer, ServerName};
use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::sync::Arc;

/// One HTTP/1.1 GET over TLS, trusting only `roots`; the whole answer.
fn get_tls(
    addr: std::net::SocketAddr,
    roots: rustls::RootCertStore,
    path: &str,
) -> Result<String, String> {
    let config = rustls::ClientConfig::builder_with_provider(
        rustls::crypto::ring::default_provider().into(),
    )
    .with_safe_default_protocol_versions()
    .map_err(|e| e.to_string())?
    .with_root_certificates(roots)
    .with_no_client_auth();
    let name = ServerName::try_from("127.0.0.1").map_err(|e| e.to_string())?;
    let conn = rustls::ClientConnection::new(Arc::new(config), name).map_err(|e| e.to_string())?;
    let sock = TcpStream::connect(addr).map_err(|e| e.to_string())?;
    let mut tls = rustls::StreamOwned::new(conn, sock);
    let req = format!("GET {path} HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n");
    tls.write_all(req.as_bytes()).map_err(|e| e.to_string())?;
    let mut out = Vec::new();
    match tls.read_to_end(&mut out) {
        Ok(_) => {}
        // A peer that closes without close_notify still sent its answer.
        Err(e) if e.kind() == std::io::ErrorKind::UnexpectedEof && !out.is_empty() => {}
        Err(e) => return Err(e.to_string()),
    }
    Ok(String::from_utf8_lossy(&out).into_owned())
}

#[test]
fn serve_speaks_https_with_the_given_certificate() {
    let dir = tempfile::tempdir().expect("temp dir");
    let made =
        rcgen::generate_simple_self_signed(vec!["127.0.0.1".to_string()]).expect("a certificate");
    let cert_path = dir.path().join("station.crt");
    let key_path = dir.path().join("station.key");
    std::fs::write(&cert_path, made.cert.pem()).expect("cert file");
    std::fs::write(&key_path, made.signing_key.serialize_pem()).expect("key file");

    let tls = web::tls_config(&cert_path, &key_path).expect("TLS settings");
    let data = dir.path().join("data");
    std::fs::create_dir_all(&data).expect("data dir");
    let db = Arc::new(Db::open(&data).expect("database"));
    let listener = TcpListener::bind("127.0.0.1:0").expect("bind");
    let addr = listener.local_addr().expect("address");
    let state = AppState::new(db, data.clone(), Settings::default());
    let (tx, rx) = std::sync::mpsc::channel();
    let thread = std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(async move {
            let server = web::run_tls(listener, state, tls).expect("server builds");
            tx.send(server.handle()).expect("handle");
            let _ = server.await;
        });
    });
    let handle = rx.recv().expect("server started");

    let mut roots = rustls::RootCertStore::empty();
    roots
        .add(CertificateDer::from(made.cert.der().to_vec()))
        .expect("trust the station's certificate");
    let app = get_tls(addr, roots.clone(), "/field/").expect("the app over HTTPS");
    assert!(
        app.starts_with("HTTP/1.1 200"),
        "{}",
        &app[..app.len().min(200)]
    );
    assert!(app.contains("./app.js"), "the app's page");
    let health = get_tls(addr, roots, "/healthz").expect("health over HTTPS");
    assert!(health.starts_with("HTTP/1.1 200"), "{health}");

    // A client that does not trust the certificate is refused.
    let refused = get_tls(addr, rustls::RootCertStore::empty(), "/field/");
    assert!(refused.is_err(), "{refused:?}");

    // A key that does not belong to the certificate is refused with both names.
    let other = rcgen::generate_simple_self_signed(vec!["127.0.0.1".to_string()]).expect("cert");
    std::fs::write(&key_path, other.signing_key.serialize_pem()).expect("other key");
    let e = web::tls_config(&cert_path, &key_path)
        .expect_err("a mismatched key")
        .to_string();
    assert!(
        e.contains("station.crt") && e.contains("station.key"),
        "{e}"
    );

    let stopper = std::thread::spawn(move || {
        actix_web::rt::System::new().block_on(handle.stop(false));
    });
    let _ = stopper.join();
    let _ = thread.join();
}
