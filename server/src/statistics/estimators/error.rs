//! The one error type of the statistics module: inputs that no estimator can
//! accept (counts that contradict each other, non-finite numbers, shapes that
//! do not match). "No data" is not an error; estimators return `None` for it.

use thiserror::Error;

/// Why a statistics function refused its input.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum StatsError {
    /// More successes than trials, in a proportion or in a stratum.
    #[error("{successes} successes exceed {trials} trials")]
    SuccessesExceedTrials { successes: u64, trials: u64 },
    /// A number that must be finite (a duration, a size, a probability) is NaN or infinite.
    #[error("{what} must be a finite number")]
    NotFinite { what: &'static str },
    /// A number that must be zero or more is negative.
    #[error("{what} must not be negative")]
    Negative { what: &'static str },
    /// A probability or quantile level outside [0, 1].
    #[error("probability {0} is outside [0, 1]")]
    ProbabilityOutOfRange(f64),
    /// More units sampled from a stratum than it holds (with the finite-population correction).
    #[error("stratum {stratum}: {sampled} units sampled from a population of {population}")]
    SampleExceedsPopulation {
        stratum: usize,
        sampled: u64,
        population: f64,
    },
    /// The error matrix is not square or does not match the list of mapped sizes.
    #[error("error matrix shape: {0}")]
    Shape(String),
    /// Unit values of a stratum that cannot all lie in [0, 1].
    #[error("stratum {stratum}: {what}")]
    ValuesOutOfRange { stratum: usize, what: String },
    /// A map class with mapped size but no sampled unit: its stratum cannot be estimated.
    #[error("map class {class} has mapped size {mapped} but no sampled unit")]
    UnsampledStratum { class: usize, mapped: f64 },
}
