//! The first step of the flow: alert files become clearing events.
//!
//! - [`import`]: pure parsing of alert CSV/GeoJSON and zone GeoJSON into
//!   validated rows, with file/line/field errors.
//! - [`cluster`]: pure single linkage in space and time, footprints, event
//!   attributes and the priority score.
//! - [`events`]: applies an import in one transaction (create, grow, merge
//!   events; relink zones) and answers event queries.
//! - [`sources`]: registers and edits alert sources, with the administration log.

pub mod cluster;
pub mod events;
pub mod import;
pub mod sources;
