//! The one error type of the crate. Every variant that concerns a bundle
//! entry names the entry, and says what is wrong with it in words a
//! coordinator or a field team can act on.

use chrono::{DateTime, Utc};

/// Everything that can go wrong while writing or opening a bundle or a return,
/// keeping the field outbox, running a field command or pushing a return.
#[derive(Debug, thiserror::Error)]
pub enum SyncError {
    /// The caller's data cannot go into a bundle (bad code, date, coordinate…).
    #[error("invalid bundle input: {0}")]
    InvalidInput(String),

    /// An I/O failure, with what was being done.
    #[error("{context}: {source}")]
    Io {
        context: String,
        #[source]
        source: std::io::Error,
    },

    /// The ZIP container itself could not be written or read.
    #[error("ZIP container: {context}: {source}")]
    Zip {
        context: String,
        #[source]
        source: zip::result::ZipError,
    },

    /// Building the GeoPackage failed in SQLite.
    #[error("GeoPackage: {context}: {source}")]
    GeoPackage {
        context: String,
        #[source]
        source: rusqlite::Error,
    },

    /// The manifest names another format than `groundproof-bundle`.
    #[error(
        "not a Groundproof bundle: manifest.json names format {found:?}, expected {expected:?}"
    )]
    WrongFormat {
        found: String,
        expected: &'static str,
    },

    /// The manifest names a format version this build does not read.
    #[error("unsupported bundle format version {found}; this build reads version {supported}")]
    UnsupportedVersion { found: u64, supported: u32 },

    /// The bundle file is larger than the reader accepts.
    #[error("package file is {size} bytes, more than the limit of {max} bytes")]
    BundleTooLarge { size: u64, max: u64 },

    /// The ZIP holds more entries than the reader accepts.
    #[error("package holds {count} entries, more than the limit of {max}")]
    TooManyEntries { count: usize, max: usize },

    /// An entry whose name or kind is not allowed in a bundle.
    #[error("entry {name:?} is not allowed: {reason}")]
    EntryNotAllowed { name: String, reason: String },

    /// The same entry name appears twice.
    #[error("entry {name:?} appears more than once")]
    DuplicateEntry { name: String },

    /// An entry the manifest (or the format) requires is absent.
    #[error("entry {name:?} is missing from the bundle")]
    MissingEntry { name: String },

    /// An entry is in the ZIP but not listed in manifest.json.
    #[error("entry {name:?} is not listed in manifest.json")]
    UnlistedEntry { name: String },

    /// Decompressing an entry went past a size limit.
    #[error("entry {name:?} decompresses to more than {max} bytes")]
    EntryTooLarge { name: String, max: u64 },

    /// All entries together decompress past the total limit.
    #[error("package entries decompress to more than {max} bytes in total")]
    TotalTooLarge { max: u64 },

    /// An entry's size differs from the one in manifest.json.
    #[error("entry {name:?} has {actual} bytes, manifest.json says {expected}")]
    SizeMismatch {
        name: String,
        expected: u64,
        actual: u64,
    },

    /// An entry's SHA-256 differs from the one in manifest.json.
    #[error(
        "entry {name:?} is corrupt or altered: SHA-256 is {actual}, manifest.json says {expected}"
    )]
    ChecksumMismatch {
        name: String,
        expected: String,
        actual: String,
    },

    /// An entry could be read but its content is wrong.
    #[error("entry {name:?} is invalid: {reason}")]
    InvalidEntry { name: String, reason: String },

    /// A return's `signature.json` is malformed or its MAC does not match.
    #[error("signature.json: {reason}")]
    BadSignature { reason: String },

    /// The server knows no (unrevoked) upload key for this bundle and key id.
    #[error("no valid upload key {key_id:?} for bundle {bundle_id}; the bundle may be cancelled")]
    UnknownKey {
        bundle_id: uuid::Uuid,
        key_id: String,
    },

    /// The field outbox database failed.
    #[error("outbox database: {context}: {source}")]
    Database {
        context: String,
        #[source]
        source: rusqlite::Error,
    },

    /// A field command was refused: bad arguments, unknown code, checklist rule…
    #[error("{0}")]
    Usage(String),

    /// Pushing a return to the server failed.
    #[error("push: {0}")]
    Push(String),

    /// The bundle is past its expiry time.
    #[error("bundle expired at {expires_at} (now {now}); ask the office for a new bundle")]
    Expired {
        expires_at: DateTime<Utc>,
        now: DateTime<Utc>,
    },
}

impl SyncError {
    /// An [`SyncError::Io`] with a short description of the operation.
    pub(crate) fn io(context: impl Into<String>, source: std::io::Error) -> Self {
        SyncError::Io {
            context: context.into(),
            source,
        }
    }

    /// A [`SyncError::Zip`] with a short description of the operation.
    pub(crate) fn zip(context: impl Into<String>, source: zip::result::ZipError) -> Self {
        SyncError::Zip {
            context: context.into(),
            source,
        }
    }

    /// A [`SyncError::GeoPackage`] with a short description of the operation.
    pub(crate) fn gpkg(context: impl Into<String>, source: rusqlite::Error) -> Self {
        SyncError::GeoPackage {
            context: context.into(),
            source,
        }
    }

    /// A [`SyncError::Database`] with a short description of the operation.
    pub(crate) fn db(context: impl Into<String>, source: rusqlite::Error) -> Self {
        SyncError::Database {
            context: context.into(),
            source,
        }
    }

    /// A [`SyncError::InvalidEntry`] for the entry `name`.
    pub(crate) fn invalid_entry(name: &str, reason: impl Into<String>) -> Self {
        SyncError::InvalidEntry {
            name: name.to_owned(),
            reason: reason.into(),
        }
    }
}
