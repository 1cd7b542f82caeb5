//! Shared result pieces: the 95% normal quantile, a closed interval, and an
//! estimate with its standard error and 95% interval.

use serde::Serialize;

/// The 0.975 quantile of the standard normal distribution, used for every
/// two-sided 95% interval in this module (statistics.md, header). Some
/// published tables use 1.96, which changes the 4th significant digit.
pub const Z95: f64 = 1.959_963_984_540_054;

/// A closed interval [lower, upper].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Interval {
    pub lower: f64,
    pub upper: f64,
}

impl Interval {
    /// estimate ± [`Z95`]·se, clipped to [min, max] (a proportion cannot leave
    /// [0, 1], an area cannot be negative or exceed the mapped total).
    pub fn normal(estimate: f64, se: f64, min: f64, max: f64) -> Self {
        Interval {
            lower: (estimate - Z95 * se).clamp(min, max),
            upper: (estimate + Z95 * se).clamp(min, max),
        }
    }
}

/// A point estimate with its standard error and normal-theory 95% interval.
///
/// `se` and `ci95` are `None` when the variance cannot be estimated (for
/// example a stratum with a single sampled unit); the estimate still stands.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Estimate {
    pub estimate: f64,
    pub se: Option<f64>,
    pub ci95: Option<Interval>,
}

impl Estimate {
    /// Builds estimate, se and the clipped interval estimate ± z·se.
    pub fn normal(estimate: f64, se: Option<f64>, min: f64, max: f64) -> Self {
        Estimate {
            estimate,
            se,
            ci95: se.map(|s| Interval::normal(estimate, s, min, max)),
        }
    }

    /// The same estimate scaled by a positive factor (a proportion to a total).
    pub fn scaled(self, factor: f64) -> Self {
        Estimate {
            estimate: self.estimate * factor,
            se: self.se.map(|s| s * factor),
            ci95: self.ci95.map(|ci| Interval {
                lower: ci.lower * factor,
                upper: ci.upper * factor,
            }),
        }
    }
}
