//! HTTP: the only module that knows actix-web. Handlers parse requests
//! into domain types, run blocking database work off the executor with
//! `web::block`, and map [`crate::Error`] to status codes in one place
//! ([`error`]).

mod access;
mod adjudication;
pub mod api;
pub mod charts;
mod error;
mod field;
pub mod i18n;
mod login;
pub mod pages;
mod pairing;
mod tls;
pub mod urls;

pub use tls::tls_config;

use crate::platform::settings::{LiveSettings, Settings};
use crate::platform::storage::Db;
use actix_web::{App, HttpServer, dev::Server, web};
use std::net::TcpListener;
use std::sync::Arc;

/// Largest request body accepted for an alert or zone file upload (bytes).
pub const MAX_UPLOAD_BYTES: usize = 64 * 1024 * 1024;
/// Largest JSON request body (bytes).
pub const MAX_JSON_BYTES: usize = 256 * 1024;

/// Opens object `key` of the data directory's evidence store for an answer
/// body: its size and its bytes as a stream (never whole in memory). A key
/// a row names but the store lacks is a server fault.
pub(crate) async fn evidence_stream(
    data_dir: &std::path::Path,
    key: &str,
) -> Result<(u64, crate::platform::evidence::ChunkStream), crate::Error> {
    let store = crate::platform::evidence::of(data_dir)?;
    store
        .open_stream(key)
        .await?
        .ok_or_else(|| crate::Error::Internal(format!("the evidence store has no {key}")))
}

/// What every handler can reach.
#[derive(Clone)]
pub struct AppState {
    pub db: Arc<Db>,
    /// The data directory (bundles, evidence).
    pub data_dir: std::path::PathBuf,
    /// The settings in force (an admin may change them while the server
    /// runs, here or on another instance of the same database;
    /// `state.settings.get().priority` reads the current value).
    pub settings: Arc<LiveSettings>,
    /// The statistics of the current facts, shared by every handler.
    pub stats: Arc<crate::statistics::kept::StatsCache>,
    /// Bearer tokens verified since the last commit (`web::access::resolve`).
    pub tokens: Arc<crate::platform::auth::VerifiedTokens>,
}

impl AppState {
    /// The state of one server on `db`: `settings` are in force while the
    /// database stores none (the stored ones win, and are followed). Call
    /// off the async executor (it reads the database).
    pub fn new(db: Arc<Db>, data_dir: std::path::PathBuf, settings: Settings) -> AppState {
        AppState {
            settings: LiveSettings::shared(db.clone(), data_dir.clone(), settings),
            db,
            data_dir,
            stats: Arc::new(crate::statistics::kept::StatsCache::new()),
            tokens: Arc::new(crate::platform::auth::VerifiedTokens::new()),
        }
    }

    /// Intake's knobs for this data directory (its evidence settings).
    pub fn intake_options(&self) -> crate::intake::IntakeOptions {
        crate::intake::IntakeOptions::from_settings(&self.settings.get())
    }
}

/// Register all routes (used by the server and by tests). Each route names
/// its permission here or in `api::configure` / `pages::configure`
/// ([`access::Access`]); a request that matches no route needs
/// `ViewEvents` before it hears 404.
pub fn configure(cfg: &mut web::ServiceConfig) {
    use access::Access;
    cfg.app_data(web::PayloadConfig::new(MAX_UPLOAD_BYTES))
        .app_data(
            web::JsonConfig::default()
                .limit(MAX_JSON_BYTES)
                .error_handler(error::json_body_error),
        )
        .app_data(web::QueryConfig::default().error_handler(error::query_error))
        .service(
            web::scope("/api/v1")
                .wrap(
                    actix_web::middleware::ErrorHandlers::new()
                        .default_handler_client(error::json_api_errors),
                )
                .configure(api::configure),
        )
        .route("/healthz", web::get().to(api::health).public())
        .route("/login", web::get().to(login::form).public())
        .route("/login", web::post().to(login::submit).public())
        .route("/logout", web::post().to(login::logout).public())
        .route("/language", web::post().to(i18n::switch).public())
        .configure(field::configure)
        .configure(pages::configure)
        .default_service(
            web::to(|| async { actix_web::HttpResponse::NotFound().finish() })
                .needs(crate::platform::auth::Action::ViewEvents),
        );
}

/// How the HTTP server is set up. [`HttpTuning::default`] is what
/// `groundproof serve` uses; the serving bench compares others with it
/// ([`run_tuned`]).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HttpTuning {
    /// Worker threads (each runs its own executor).
    pub workers: usize,
    /// `TCP_NODELAY` on accepted connections; `None`: the system's default.
    pub tcp_nodelay: Option<bool>,
    /// actix's HTTP/1 write buffer: answers are flushed once this much is
    /// buffered; `None`: actix's default (32 KiB).
    pub h1_write_buffer: Option<usize>,
}

impl Default for HttpTuning {
    fn default() -> Self {
        HttpTuning {
            workers: 2,
            tcp_nodelay: None,
            h1_write_buffer: None,
        }
    }
}

/// Start serving on an already bound listener (port 0 in tests).
pub fn run(listener: TcpListener, state: AppState) -> std::io::Result<Server> {
    run_with(listener, state, None, HttpTuning::default())
}

/// [`run`] with another set-up (for the serving bench).
pub fn run_tuned(
    listener: TcpListener,
    state: AppState,
    tuning: HttpTuning,
) -> std::io::Result<Server> {
    run_with(listener, state, None, tuning)
}

/// [`run`] over HTTPS with `tls` (see [`tls_config`]).
pub fn run_tls(
    listener: TcpListener,
    state: AppState,
    tls: rustls::ServerConfig,
) -> std::io::Result<Server> {
    run_with(listener, state, Some(tls), HttpTuning::default())
}

fn run_with(
    listener: TcpListener,
    state: AppState,
    tls: Option<rustls::ServerConfig>,
    tuning: HttpTuning,
) -> std::io::Result<Server> {
    crate::statistics::kept::keep_fresh(Arc::downgrade(&state.db), Arc::downgrade(&state.stats));
    let data = web::Data::new(state);
    let server = HttpServer::new(move || {
        App::new()
            .app_data(data.clone())
            .wrap(actix_web::middleware::from_fn(access::resolve))
            .wrap(actix_web::middleware::Logger::new("%r %s %b %Dms"))
            .configure(configure)
    })
    .workers(tuning.workers.max(1));
    let server = match tuning.tcp_nodelay {
        Some(on) => server.tcp_nodelay(on),
        None => server,
    };
    let server = match tuning.h1_write_buffer {
        Some(size) => server.h1_write_buffer_size(size.max(1)),
        None => server,
    };
    let server = match tls {
        Some(config) => server.listen_rustls_0_23(listener, config)?,
        None => server.listen(listener)?,
    };
    Ok(server.run())
}

/// Escape text for HTML.
pub use groundproof_sync::markup::escape_html as html_escape;

/// Only local paths are followed after login (no open redirect).
pub(crate) fn safe_next(n: Option<&str>) -> String {
    match n {
        Some(p)
            if p.starts_with('/') && !p.starts_with("//") && !p.contains('\\') && p.len() < 512 =>
        {
            p.to_string()
        }
        _ => "/".to_string(),
    }
}
