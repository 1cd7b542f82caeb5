//! Planning a trip: which events to visit, in what order, where the control points
//! are, the field sheet, and the bundle issued for the trip.
//!
//! Issuing (reads and writes storage through its typed calls, never SQL):
//! - [`select`]: response mode (priority order) and assessment mode (a stratified
//!   random sample sized by Cochran's formula, plus control points), with each
//!   item's inclusion probability.
//! - [`issue`]: the bundle written durably, then recorded in one transaction.
//! - [`codes`]: short codes that are easy to read out over a radio.
//! - [`sheet`]: the printable field sheet and the preview pictures.
//! - [`coords`]: transverse Mercator, UTM and MGRS for the sheet.
//!
//! Pure functions, no storage or HTTP:
//! - [`route`]: visiting order from a start point over WGS 84 geodesic distances — exact
//!   (Held–Karp) up to 12 stops, nearest neighbour + 2-opt beyond — as an open path (start,
//!   then stops, no return), with leg lengths, total straight-line metres and a walking-time
//!   estimate. The solvers take any symmetric distance matrix and also solve closed tours.
//! - [`sample`]: sample sizes for an assessment (Cochran's formula for a proportion with the
//!   finite population correction; Olofsson et al. 2014 for overall accuracy of a stratified
//!   design), allocation to strata, and a seeded draw without replacement that records each
//!   unit's inclusion probability.
//! - [`controls`]: seeded random control points inside a zone polygon, at least a given
//!   geodesic distance from every alert, found by bounded rejection sampling over a spatial
//!   grid of the alerts.
//!
//! All randomness comes from `rand_chacha::ChaCha8Rng` seeded with a `u64` that the caller
//! records, so a plan can be reproduced exactly. Every failure is a [`PlanError`].

pub mod codes;
pub mod controls;
pub mod coords;
pub mod issue;
pub mod route;
pub mod sample;
pub mod select;
pub mod sheet;
pub mod trip_state;

pub use issue::{
    IssuedBundle, PlannedStop, TripPlan, cancel_bundle, issue_bundle, issue_bundle_in, plan_preview,
};
pub use select::TripRequest;
pub use trip_state::{TripFacts, TripState, trip_state};

pub use controls::{AlertGrid, DEFAULT_TRIES_PER_POINT, place_controls};
pub use route::{
    DistanceMatrix, EXACT_MAX_STOPS, Method, PathKind, Route, STRAIGHT_LINE_NOTE, Tour, plan_route,
    solve,
};
pub use sample::{
    StratifiedDesign, StratumDraw, StratumSpec, Z_90, Z_95, Z_99, allocate, cochran_n0,
    cochran_sample_size, design_stratified, draw_stratified, finite_population_correction,
    olofsson_n,
};

/// Everything that can go wrong while planning.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// A distance that is negative or not finite.
    #[error("distance between nodes {i} and {j} is {value}; distances must be finite and >= 0")]
    BadDistance { i: usize, j: usize, value: f64 },
    /// A stop whose position is not a valid latitude/longitude.
    #[error("stop {index} has an invalid position ({lat}, {lon})")]
    BadPosition { index: usize, lat: f64, lon: f64 },
    /// The start position is not a valid latitude/longitude.
    #[error("the start position ({lat}, {lon}) is invalid")]
    BadStart { lat: f64, lon: f64 },
    /// A visiting order that does not list every node once starting with node 0.
    #[error("the order must list every node exactly once, starting with node 0")]
    BadOrder,
    /// Walking speed not a finite number > 0.
    #[error("walking speed {0} km/h must be a finite number greater than 0")]
    BadSpeed(f64),
    /// Held–Karp asked for more stops than it handles.
    #[error("{stops} stops is more than the exact solver's limit of {max}")]
    TooManyStopsForExact { stops: usize, max: usize },
    /// Margin of error (or target standard error) outside the open interval (0, 0.5).
    #[error(
        "margin of error {0} must be greater than 0 and less than 0.5 (e.g. 0.05 for ±5 points)"
    )]
    BadMarginOfError(f64),
    /// Normal quantile z not a finite number > 0.
    #[error("z = {0} must be a finite number greater than 0 (1.96 for 95 %)")]
    BadZ(f64),
    /// A proportion or user's accuracy outside 0..=1.
    #[error("proportion {0} must be between 0 and 1")]
    BadProportion(f64),
    /// A sample size that is negative or not finite.
    #[error("sample size {0} must be a finite number >= 0")]
    BadSampleSize(f64),
    /// A population of zero units.
    #[error("the population is empty")]
    EmptyPopulation,
    /// A stratified design with no strata.
    #[error("a stratified design needs at least one stratum")]
    NoStrata,
    /// Strata sizes and allocation of different lengths.
    #[error("{populations} strata sizes but {allocation} allocations")]
    LengthMismatch {
        populations: usize,
        allocation: usize,
    },
    /// More units asked for than a stratum holds.
    #[error("stratum {stratum}: cannot draw {n} units from {population}")]
    SampleExceedsPopulation {
        stratum: usize,
        n: u64,
        population: u64,
    },
    /// Control distance not a finite number >= 0.
    #[error("minimum distance {0} m must be a finite number >= 0")]
    BadMinDistance(f64),
    /// More alerts than the grid indexes (u32 indices).
    #[error("{0} alerts is more than the grid can index")]
    TooManyAlerts(usize),
    /// An alert whose position is not a valid latitude/longitude.
    #[error("alert {index} has an invalid position ({lat}, {lon})")]
    BadAlert { index: usize, lat: f64, lon: f64 },
    /// A zone with no area to sample.
    #[error("the zone has no polygons")]
    EmptyZone,
    /// A zone whose coordinates are not longitude/latitude degrees.
    #[error("the zone's coordinates are not valid longitude/latitude degrees")]
    BadZone,
    /// The try budget ran out before all control points were placed.
    #[error(
        "placed only {placed} of {wanted} control points after {tries} tries: the zone may be \
             too small or too close to alerts everywhere; lower the distance or the count"
    )]
    ControlsNotPlaced {
        placed: usize,
        wanted: usize,
        tries: usize,
    },
}
