//! Domain newtypes, parsed and validated once at the edge (CLI, HTTP,
//! import). Everything past the edge takes these types, so a value that
//! reaches storage or clustering has already been checked.

mod confidence;
mod day;
pub mod geodesy;
mod lonlat;
mod name;
mod role;
pub mod tuning;

pub use confidence::{Confidence, ConfidenceMap};
pub use day::Day;
pub use lonlat::LonLat;
pub use name::{SourceName, ZoneName};
pub use role::Role;
