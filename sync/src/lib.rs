//! The office–field contract of Groundproof: the formats that cross between
//! the server and the field kit. The bundle format (what a field team takes
//! offline) lives in [`bundle`]; the return format (what comes back) in
//! [`returns`]; the field kit's outbox, commands and push client in
//! [`outbox`], [`field`] and [`client`]; helpers both sides share in
//! [`fileio`] (hashing reads, folder fsync), [`geodesy`] (one Earth radius,
//! one haversine) and [`markup`] (XML and HTML escaping). Every fallible function of the crate returns
//! [`SyncError`].

pub mod bundle;
pub mod client;
pub mod error;
pub mod field;
pub mod fileio;
pub mod geodesy;
pub mod markup;
pub mod outbox;
pub mod photo;
pub mod returns;
pub mod safezip;
pub mod vocab;

pub use error::SyncError;
pub use vocab::{
    BundleMode, Cause, Outcome, Reason, Sha256Digest, TargetKind, Timestamp, UnknownWord,
};

/// Format name written into every bundle manifest.
pub const BUNDLE_FORMAT: &str = "groundproof-bundle";
/// Bundle format version this build writes and reads.
pub const BUNDLE_FORMAT_VERSION: u32 = 1;
