//! Domain newtypes, parsed and validated once at the edge (CLI, HTTP,
//! import). Everything past the edge takes these types, so a value that
//! reaches storage or clustering has already been checked.

mod confidence;
mod day;
pub mod geodesy;
pub mod localtime;
mod lonlat;
mod name;
mod role;
pub mod sheet;
mod status;
pub mod tuning;

pub use confidence::{Confidence, ConfidenceMap};
pub use day::Day;
/// The words that cross between office and field are defined in the
/// contract crate; the server names them from here.
pub use groundproof_sync::vocab::{
    BundleMode, Cause, Outcome, Reason, Sha256Digest, TargetKind, Timestamp, UnknownWord,
};
pub use localtime::OrgZone;
pub use lonlat::LonLat;
pub use name::{SourceName, TeamName, ZoneName};
pub use role::Role;
pub use status::EventStatus;
