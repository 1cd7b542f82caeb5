//! Joining alert pixels into clearing events (pure functions).
//!
//! - [`link`]: which alerts belong together: single linkage in space and
//!   time on a sorted grid with union-find.
//! - [`footprint`]: the outline and geodesic area of a set of pixel squares.
//! - [`summary`]: everything an event says about its alerts (dates, sources,
//!   confidence, corroboration).
//! - [`priority`]: the documented priority score.

pub mod footprint;
pub mod link;
pub mod priority;
pub mod summary;
mod unionfind;

pub use link::{LinkPoint, LinkRule};
pub use unionfind::UnionFind;
