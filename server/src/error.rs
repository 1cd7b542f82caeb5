//! The server crate's one error type. Variants say how the error reaches
//! the user: a client fault (bad input, unknown name, conflict, a refused or
//! broken return package) or an unexpected failure of the machine (database,
//! disk). The web layer maps each variant to one HTTP status in one place
//! (`web::error::status`); nothing below the web layer speaks HTTP.
//!
//! The pure modules keep a small precise error of their own (listed in
//! DEVELOPERS.md): `planning::PlanError`, `planning::coords::CoordsError`,
//! `planning::sheet::SheetError`, `statistics::estimators::StatsError` and
//! `statistics::figures::FiguresError`. The module that calls them turns
//! them into [`Error::Invalid`] or [`Error::Internal`] with the context of
//! the call.

use serde::Serialize;
use std::fmt;

/// Everything that can go wrong in the server library.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The input is wrong; the message says what and where.
    #[error("{0}")]
    Invalid(String),
    /// A named thing does not exist.
    #[error("{0}")]
    NotFound(String),
    /// The request clashes with what is stored.
    #[error("{0}")]
    Conflict(String),
    /// A return package's signature or key is refused (unknown key, revoked
    /// key, forged signature).
    #[error("{0}")]
    Refused(String),
    /// An upload's offset is not the one the client sent (the answer carries
    /// the upload's offset).
    #[error("upload offset is {offset}, not {sent}")]
    OffsetMismatch { offset: u64, sent: u64 },
    /// An upload is being written by another request (the answer carries
    /// the upload's offset).
    #[error("another request is appending to this upload")]
    Busy { offset: u64 },
    /// An upload's data was lost; the client starts a new upload.
    #[error("{0}")]
    Gone(String),
    /// A body or a declared size is over a documented bound.
    #[error("{0}")]
    TooLarge(String),
    /// A return package is broken (ZIP structure, bomb, manifest, checksum,
    /// unreadable reports); nothing of it is stored.
    #[error("{0}")]
    Package(String),
    /// Too many open uploads (server-wide or for the bundle); retry later.
    #[error("{0}")]
    Limit(String),
    /// An alert file had errors and nothing was imported.
    #[error("{0}")]
    ImportRejected(ImportFailure),
    /// The database file is newer than this binary.
    #[error(
        "database schema version {found} is newer than this binary supports ({supported}); use a newer groundproof"
    )]
    SchemaTooNew { found: i64, supported: i64 },
    /// Something that should not happen did (a bug or a broken file).
    #[error("internal error: {0}")]
    Internal(String),
    #[error("database: {0}")]
    Db(#[from] rusqlite::Error),
    /// PostgreSQL's error, when the database is PostgreSQL (`--database postgres://…`).
    #[error("database (PostgreSQL): {}", postgres_message(.0))]
    Postgres(#[from] postgres::Error),
    /// A client fault whose sentence the pages translate: `Fault` says
    /// whose fault it is (and so its status), [`Said`] carries the message
    /// id and its variables beside the English text, which is what the
    /// command line and the JSON API show.
    #[error("{}", .1.english)]
    Said(Fault, Box<Said>),
    #[error("{context}: {source}")]
    Io {
        context: String,
        #[source]
        source: std::io::Error,
    },
}

/// PostgreSQL's own message when the server sent one (the client's
/// `Display` says only "db error").
fn postgres_message(e: &postgres::Error) -> String {
    match e.as_db_error() {
        Some(db) => match db.detail() {
            Some(d) => format!("{}: {} ({d})", db.code().code(), db.message()),
            None => format!("{}: {}", db.code().code(), db.message()),
        },
        None => e.to_string(),
    }
}

/// The kind of client fault an [`Error::Said`] is (the same statuses as
/// [`Error::Invalid`], [`Error::NotFound`] and [`Error::Conflict`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Fault {
    Invalid,
    NotFound,
    Conflict,
}

/// A refusal's sentence as a message of the page catalogues
/// (`templates/i18n/<lang>/pages.ftl`, ids `why-*`): a stable id and its
/// variables (as text), beside the same sentence in English. The English
/// catalogue says what `english` says.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Said {
    pub id: &'static str,
    pub args: Vec<(&'static str, String)>,
    pub english: String,
}

impl Error {
    /// A client fault with its message id: `args` are the id's variables,
    /// `english` the sentence the command line and the API show.
    pub fn said(
        fault: Fault,
        id: &'static str,
        args: &[(&'static str, &dyn fmt::Display)],
        english: impl Into<String>,
    ) -> Error {
        let args = args.iter().map(|(k, v)| (*k, v.to_string())).collect();
        Error::Said(
            fault,
            Box::new(Said {
                id,
                args,
                english: english.into(),
            }),
        )
    }

    /// This error with a message id when it is a client fault of the three
    /// kinds without one (its English text kept as it is); any other error
    /// unchanged. For messages made below `platform` (storage, `domain`).
    pub fn worded(self, id: &'static str, args: &[(&'static str, &dyn fmt::Display)]) -> Error {
        let (fault, english) = match self {
            Error::Invalid(m) => (Fault::Invalid, m),
            Error::NotFound(m) => (Fault::NotFound, m),
            Error::Conflict(m) => (Fault::Conflict, m),
            other => return other,
        };
        Error::said(fault, id, args, english)
    }

    /// The message id of a refusal that has one.
    pub fn words(&self) -> Option<&Said> {
        match self {
            Error::Said(_, s) => Some(s),
            _ => None,
        }
    }

    /// A refusal of a return package that is replayed to a later `complete`
    /// of the same upload (the package itself is bad, so it stays bad).
    pub fn is_final(&self) -> bool {
        matches!(self, Error::Refused(_) | Error::Package(_))
    }

    pub fn io(context: impl Into<String>, source: std::io::Error) -> Self {
        Error::Io {
            context: context.into(),
            source,
        }
    }
}

/// What an alert import that refused a whole file reports (parsed by
/// `alerts::import`, carried by [`Error::ImportRejected`]).
/// A problem with one row or feature: where and what.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RowError {
    pub file: String,
    /// CSV line number (1 is the header) or GeoJSON feature index.
    pub line: usize,
    /// "line" for CSV, "feature" for GeoJSON.
    pub unit: &'static str,
    pub field: String,
    pub message: String,
}

impl fmt::Display for RowError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: {} {}: field '{}': {}",
            self.file, self.unit, self.line, self.field, self.message
        )
    }
}

/// Why a file imported nothing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportFailure {
    pub file: String,
    pub rows_read: usize,
    pub error_count: usize,
    /// The first `alerts::import::MAX_LISTED_ERRORS` errors.
    pub errors: Vec<RowError>,
}

impl fmt::Display for ImportFailure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "{}: {} error(s) in {} row(s); nothing was imported (use --skip-invalid to import the valid rows)",
            self.file, self.error_count, self.rows_read
        )?;
        for e in &self.errors {
            writeln!(f, "  {e}")?;
        }
        if self.error_count > self.errors.len() {
            writeln!(f, "  … and {} more", self.error_count - self.errors.len())?;
        }
        Ok(())
    }
}

pub type Result<T, E = Error> = std::result::Result<T, E>;
