//! The server crate's one error type. Variants say how the error reaches
//! the user: a client fault (bad input, unknown name, conflict) or an
//! unexpected failure of the machine (database, disk).

use crate::alerts::import::ImportFailure;

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
    #[error("{context}: {source}")]
    Io {
        context: String,
        #[source]
        source: std::io::Error,
    },
}

impl Error {
    pub fn io(context: impl Into<String>, source: std::io::Error) -> Self {
        Error::Io {
            context: context.into(),
            source,
        }
    }
}

pub type Result<T, E = Error> = std::result::Result<T, E>;
