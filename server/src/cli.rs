//! Command-line arguments and what each command does.

use anyhow::{Context, Result, bail};
use clap::{Args, Parser, Subcommand};
use groundproof::domain::{ConfidenceMap, Day, SourceName, ZoneName};
use groundproof::events::{ImportRequest, import_alerts, import_zones, ranked_events};
use groundproof::import::{Format, ReadOptions};
use groundproof::settings::Settings;
use groundproof::storage::{Db, EventFilter};
use groundproof::{Error, demo, web};
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Arc;

#[derive(Parser)]
#[command(
    name = "groundproof",
    version,
    about = "Check satellite deforestation alerts on the ground"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Args, Clone)]
struct DataArg {
    /// Data directory (database, evidence, settings.toml).
    #[arg(long, default_value = "./groundproof-data", env = "GROUNDPROOF_DATA")]
    data: PathBuf,
}

#[derive(Subcommand)]
enum Command {
    /// Serve the API and pages.
    Serve {
        #[command(flatten)]
        data: DataArg,
        /// Address to listen on.
        #[arg(long, default_value = "127.0.0.1:8080")]
        bind: String,
    },
    /// Load the invented demo scenario into a fresh data directory and serve it.
    Demo {
        /// Data directory; must be new or empty (default: a fresh folder under the system temp dir).
        #[arg(long)]
        data: Option<PathBuf>,
        #[arg(long, default_value = "127.0.0.1:8080")]
        bind: String,
        /// Load the scenario and exit without serving.
        #[arg(long)]
        no_serve: bool,
    },
    /// Alert sources.
    Sources {
        #[command(subcommand)]
        command: SourcesCommand,
    },
    /// Import alert or zone files.
    Import {
        #[command(subcommand)]
        command: ImportCommand,
    },
    /// Clearing events.
    Events {
        #[command(subcommand)]
        command: EventsCommand,
    },
}

#[derive(Subcommand)]
enum SourcesCommand {
    /// Register an alert source.
    Add {
        name: String,
        /// Pixel size in metres.
        #[arg(long)]
        pixel_size: f64,
        /// Revisit interval in days.
        #[arg(long)]
        revisit_days: i64,
        #[command(flatten)]
        data: DataArg,
    },
    /// List the registered sources.
    List {
        #[command(flatten)]
        data: DataArg,
    },
}

#[derive(Subcommand)]
enum ImportCommand {
    /// Import an alert file (CSV or GeoJSON) of one source.
    Alerts(AlertArgs),
    /// Import zones (GeoJSON Polygon/MultiPolygon features with `name` and `priority`).
    Zones {
        file: PathBuf,
        #[command(flatten)]
        data: DataArg,
    },
}

#[derive(Args)]
struct AlertArgs {
    file: PathBuf,
    /// The registered source the alerts come from.
    #[arg(long)]
    source: String,
    /// csv or geojson (default: from the file name, else the content).
    #[arg(long)]
    format: Option<String>,
    #[arg(long)]
    lon_column: Option<String>,
    #[arg(long)]
    lat_column: Option<String>,
    #[arg(long)]
    date_column: Option<String>,
    #[arg(long)]
    confidence_column: Option<String>,
    /// Read numeric confidence: values at or above T are confirmed, below are tentative.
    #[arg(long)]
    confidence_threshold: Option<f64>,
    /// Import the valid rows of a file with errors and list the skipped ones.
    #[arg(long)]
    skip_invalid: bool,
    #[command(flatten)]
    data: DataArg,
}

#[derive(Subcommand)]
enum EventsCommand {
    /// List events in priority order as GeoJSON.
    List {
        #[arg(long)]
        zone: Option<String>,
        #[arg(long)]
        source: Option<String>,
        #[arg(long)]
        min_area_ha: Option<f64>,
        #[arg(long)]
        limit: Option<usize>,
        #[command(flatten)]
        data: DataArg,
    },
}

/// Logs go to stderr; `RUST_LOG` overrides the default level (info).
pub fn init_logging() {
    let filter = tracing_subscriber::EnvFilter::try_from_default_env()
        .unwrap_or_else(|_| tracing_subscriber::EnvFilter::new("info"));
    tracing_subscriber::fmt()
        .with_env_filter(filter)
        .with_writer(std::io::stderr)
        .init();
}

fn open(data: &Path) -> Result<(Db, Settings)> {
    let settings = Settings::load(data)?;
    let db =
        Db::open(data).with_context(|| format!("opening the data directory {}", data.display()))?;
    Ok((db, settings))
}

pub fn run() -> Result<ExitCode> {
    match Cli::parse().command {
        Command::Serve { data, bind } => {
            let (db, settings) = open(&data.data)?;
            serve(db, settings, &bind)?;
        }
        Command::Demo {
            data,
            bind,
            no_serve,
        } => {
            let dir = match data {
                Some(d) => d,
                None => demo::fresh_dir()?,
            };
            let (db, settings) = open_fresh(&dir)?;
            let summary = demo::load(&db, &settings)?;
            println!("{summary}");
            println!("data directory: {}", dir.display());
            if !no_serve {
                serve(db, settings, &bind)?;
            }
        }
        Command::Sources { command } => match command {
            SourcesCommand::Add {
                name,
                pixel_size,
                revisit_days,
                data,
            } => {
                let name = SourceName::parse(&name).map_err(Error::Invalid)?;
                groundproof::events::validate_source(pixel_size, revisit_days)?;
                let (db, _) = open(&data.data)?;
                let s = db.write(|tx| tx.add_source(name.as_str(), pixel_size, revisit_days))?;
                println!(
                    "source '{}' registered: {} m pixels, {} day revisit",
                    s.name, s.pixel_size_m, s.revisit_days
                );
            }
            SourcesCommand::List { data } => {
                let (db, _) = open(&data.data)?;
                for s in db.read(|r| r.sources())? {
                    println!("{}\t{} m\t{} days", s.name, s.pixel_size_m, s.revisit_days);
                }
            }
        },
        Command::Import { command } => match command {
            ImportCommand::Alerts(a) => return import_alert_file(a),
            ImportCommand::Zones { file, data } => {
                let bytes =
                    std::fs::read(&file).with_context(|| format!("reading {}", file.display()))?;
                let (db, _) = open(&data.data)?;
                let out = import_zones(&db, &file.display().to_string(), &bytes)?;
                println!(
                    "zones imported: {} ({} events relinked)",
                    out.zones.join(", "),
                    out.events_relinked
                );
            }
        },
        Command::Events { command } => match command {
            EventsCommand::List {
                zone,
                source,
                min_area_ha,
                limit,
                data,
            } => {
                let (db, settings) = open(&data.data)?;
                let filter = EventFilter {
                    zone: zone
                        .map(|z| ZoneName::parse(&z).map(|n| n.to_string()))
                        .transpose()
                        .map_err(Error::Invalid)?,
                    source: source
                        .map(|s| SourceName::parse(&s).map(|n| n.to_string()))
                        .transpose()
                        .map_err(Error::Invalid)?,
                    min_area_ha,
                    limit,
                    ..Default::default()
                };
                let events = ranked_events(&db, &filter, &settings.priority, Day::today())?;
                println!(
                    "{}",
                    serde_json::to_string_pretty(&groundproof::events::events_collection(&events))?
                );
            }
        },
    }
    Ok(ExitCode::SUCCESS)
}

fn open_fresh(dir: &Path) -> Result<(Db, Settings)> {
    if dir.join("groundproof.sqlite3").exists() {
        bail!(
            "{} already holds a database; the demo needs a new or empty directory",
            dir.display()
        );
    }
    open(dir)
}

fn import_alert_file(a: AlertArgs) -> Result<ExitCode> {
    let source = SourceName::parse(&a.source).map_err(Error::Invalid)?;
    let bytes = std::fs::read(&a.file).with_context(|| format!("reading {}", a.file.display()))?;
    let file_name = a.file.display().to_string();
    let format = match &a.format {
        Some(f) => Format::parse(f).map_err(Error::Invalid)?,
        None => Format::detect(&file_name, &bytes),
    };
    let (db, settings) = open(&a.data.data)?;
    let req = ImportRequest {
        source: &source,
        file_name: &file_name,
        bytes: &bytes,
        format,
        read: ReadOptions {
            lon_column: a.lon_column,
            lat_column: a.lat_column,
            date_column: a.date_column,
            confidence_column: a.confidence_column,
            confidence: ConfidenceMap {
                numeric_threshold: a.confidence_threshold,
            },
        },
        skip_invalid: a.skip_invalid,
    };
    match import_alerts(&db, &req, &settings.cluster) {
        Ok(o) => {
            println!(
                "{}: {} rows read, {} imported, {} duplicates, {} skipped; events: {} created, {} grown, {} merged",
                o.file,
                o.rows_read,
                o.imported,
                o.duplicates,
                o.skipped,
                o.events_created,
                o.events_grown,
                o.events_merged
            );
            for e in &o.skipped_rows {
                println!("  skipped {e}");
            }
            Ok(ExitCode::SUCCESS)
        }
        Err(Error::ImportRejected(f)) => {
            eprint!("{f}");
            Ok(ExitCode::FAILURE)
        }
        Err(e) => Err(e.into()),
    }
}

fn serve(db: Db, settings: Settings, bind: &str) -> Result<()> {
    let listener = TcpListener::bind(bind).with_context(|| format!("binding {bind}"))?;
    let addr = listener.local_addr()?;
    let state = web::AppState {
        db: Arc::new(db),
        settings: Arc::new(settings),
    };
    println!("Groundproof is serving on http://{addr}/ (press Ctrl-C to stop)");
    println!("  events:  http://{addr}/api/v1/events");
    println!("  zones:   http://{addr}/api/v1/zones");
    actix_web::rt::System::new().block_on(async move { web::run(listener, state)?.await })?;
    Ok(())
}
