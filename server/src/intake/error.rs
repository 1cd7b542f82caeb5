//! The errors of intake, each with the HTTP status that says whose fault it
//! was (the web layer maps them; the lead may fold them into `crate::Error`).

/// Why an upload or a return was refused.
#[derive(Debug, thiserror::Error)]
pub enum IntakeError {
    /// The request is malformed (bad id, bad header, bad JSON body): 400.
    #[error("{0}")]
    Invalid(String),
    /// The package's signature or key is refused (unknown key, revoked key,
    /// forged signature): 403.
    #[error("{0}")]
    Refused(String),
    /// No such upload, return or photo: 404.
    #[error("{0}")]
    NotFound(String),
    /// The upload's offset is not the one the client sent: 409 with `Upload-Offset`.
    #[error("upload offset is {offset}, not {sent}")]
    OffsetMismatch { offset: u64, sent: u64 },
    /// The upload is being written by another request: 409 with `Upload-Offset`.
    #[error("another request is appending to this upload")]
    Busy { offset: u64 },
    /// The upload's data was lost; start a new upload: 410.
    #[error("{0}")]
    Gone(String),
    /// A body or a declared size is over a documented bound: 413.
    #[error("{0}")]
    TooLarge(String),
    /// The package is broken (ZIP structure, bomb, manifest, checksum,
    /// unreadable reports): 422; nothing of it is stored.
    #[error("{0}")]
    Package(String),
    /// Too many open uploads (server-wide or for the bundle): 429, retry later.
    #[error("{0}")]
    Limit(String),
    /// The machine failed (database, disk): 500.
    #[error(transparent)]
    Server(#[from] crate::Error),
}

impl IntakeError {
    /// The HTTP status code of this error.
    pub fn status(&self) -> u16 {
        match self {
            IntakeError::Invalid(_) => 400,
            IntakeError::Refused(_) => 403,
            IntakeError::NotFound(_) => 404,
            IntakeError::OffsetMismatch { .. } | IntakeError::Busy { .. } => 409,
            IntakeError::Gone(_) => 410,
            IntakeError::TooLarge(_) => 413,
            IntakeError::Package(_) => 422,
            IntakeError::Limit(_) => 429,
            IntakeError::Server(e) => match e {
                crate::Error::Invalid(_) => 400,
                crate::Error::NotFound(_) => 404,
                crate::Error::Conflict(_) => 409,
                _ => 500,
            },
        }
    }

    /// A refusal that is replayed to a later `complete` of the same upload
    /// (the package itself is bad, so it stays bad).
    pub fn is_final(&self) -> bool {
        matches!(self, IntakeError::Refused(_) | IntakeError::Package(_))
    }
}

impl From<rusqlite::Error> for IntakeError {
    fn from(e: rusqlite::Error) -> Self {
        IntakeError::Server(crate::Error::Db(e))
    }
}
