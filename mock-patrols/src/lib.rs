//! An invented scenario for Groundproof and its deterministic generator.
//!
//! [`scenario`] describes an invented reserve in the tropics (zones, three
//! alert sources, field teams, a ranger station). [`generate_alerts`] makes a
//! year of alert pixels for each source from a seed: clumped, gappy clearings
//! along invented roads and field edges that grow over a few weeks, some seen
//! by two or three sources, plus scattered lone false pixels.
//! [`alerts_csv`], [`alerts_geojson`] and [`zones_geojson`] write them in the
//! formats the importer reads. [`clumped_points`] makes large synthetic point
//! sets for clustering benchmarks. [`damage`] damages valid files from a seed
//! for the robustness tests. The same seed always gives the same output.

mod alerts;
mod calendar;
mod clumped;
pub mod damage;
mod export;
mod fasthash;
pub mod field;
mod layout;
pub mod photos;
mod planar;
mod scenario;

pub use alerts::generate_alerts;
pub use clumped::clumped_points;
pub use export::{alerts_csv, alerts_geojson, zones_geojson};
pub use planar::ring_contains;
pub use scenario::{AlertRow, Scenario, SourceSpec, ZoneSpec, reserve_ring, scenario};
