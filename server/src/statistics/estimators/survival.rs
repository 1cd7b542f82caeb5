//! Kaplan–Meier estimate for right-censored durations, such as time from
//! detection to visit where alerts not yet visited are censored at the
//! analysis cut-off.
//!
//! Conventions (statistics.md §1.3):
//! - Ŝ(t) = Π_{t_j ≤ t} (1 − d_j/n_j), right-continuous, 1 before the first event.
//! - Ties: at a shared time, events come first; units censored at t_j are
//!   still at risk at t_j (as NAG g12aac and lifelines do).
//! - Greenwood: SE = Ŝ·√Σ d_j/(n_j(n_j − d_j)). When the last units at risk
//!   all have the event, Ŝ = 0 and the SE is undefined: reported as `None`.
//! - Pointwise 95% band: log-log ("exponential Greenwood", the lifelines
//!   default): lower = Ŝ^exp(+zσ/|ln Ŝ|), upper = Ŝ^exp(−zσ/|ln Ŝ|), with
//!   σ² the Greenwood sum. It stays inside [0, 1]. Where Ŝ = 1 the band is
//!   [1, 1]; where Ŝ = 0 it is [0, 0] (as lifelines reports).
//! - The q-quantile of time is the smallest t with Ŝ(t) ≤ 1 − q; `None` means
//!   "not reached" (never the last time). On a flat stretch at exactly 1 − q
//!   this gives the left end (as lifelines; R's survival takes the midpoint).
//!   The comparison allows 1e-12 for rounding in the product, so a curve that
//!   is exactly 0.5 in exact arithmetic reaches the median.
//! - Median CI: first t where the lower band ≤ 0.5, first t where the upper
//!   band ≤ 0.5 (as R and lifelines read it off the band).

use serde::Serialize;

use super::StatsError;
use super::interval::{Interval, Z95};

/// Slack for "Ŝ(t) ≤ 1 − q" comparisons (see the module docs).
const LEVEL_SLACK: f64 = 1e-12;

/// One row of the curve, at a distinct observed time (event or censoring).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CurveStep {
    pub time: f64,
    /// Units with duration ≥ time (censored-at-time included).
    pub at_risk: usize,
    pub events: usize,
    pub censored: usize,
    /// Ŝ(time), after this row's events.
    pub survival: f64,
    /// Greenwood SE; `None` where Ŝ = 0.
    pub se: Option<f64>,
    /// Pointwise log-log 95% band.
    pub ci95: Interval,
}

/// Times at which a band crosses a level; `None` = not reached.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TimeBounds {
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

/// Ŝ at a chosen time, with its SE and band.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SurvivalPoint {
    pub time: f64,
    pub survival: f64,
    /// Greenwood SE; `None` where Ŝ = 0.
    pub se: Option<f64>,
    pub ci95: Interval,
}

/// The share with the event within a given time: 1 − Ŝ(T).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EventShare {
    pub within: f64,
    pub share: f64,
    /// Greenwood SE of Ŝ(T) (the same for 1 − Ŝ); `None` where Ŝ = 0.
    pub se: Option<f64>,
    /// 1 minus the log-log band of Ŝ(T), reversed.
    pub ci95: Interval,
    /// T is past the longest observed duration: Ŝ is held flat there, which
    /// is an extrapolation.
    pub beyond_follow_up: bool,
}

/// A fitted Kaplan–Meier curve; see the module docs for the conventions.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct KaplanMeier {
    pub subjects: usize,
    pub events: usize,
    pub censored: usize,
    pub steps: Vec<CurveStep>,
    /// Median time; `None` when Ŝ never falls to 0.5.
    pub median: Option<f64>,
    pub median_ci95: TimeBounds,
}

fn log_log_band(survival: f64, greenwood_sum: f64) -> Interval {
    if survival >= 1.0 {
        return Interval {
            lower: 1.0,
            upper: 1.0,
        };
    }
    if survival <= 0.0 {
        return Interval {
            lower: 0.0,
            upper: 0.0,
        };
    }
    let spread = Z95 * greenwood_sum.sqrt() / survival.ln().abs();
    Interval {
        lower: survival.powf(spread.exp()),
        upper: survival.powf((-spread).exp()),
    }
}

/// Fits the curve to `(duration, event_observed)` pairs; `false` = censored.
///
/// Returns `Ok(None)` for an empty input. Errors: a duration that is NaN,
/// infinite or negative.
pub fn kaplan_meier(observations: &[(f64, bool)]) -> Result<Option<KaplanMeier>, StatsError> {
    check(observations)?;
    let mut sorted = observations.to_vec();
    sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
    Ok(fit_sorted(&sorted))
}

/// [`kaplan_meier`] of observations already sorted by duration (in the
/// order of `f64::total_cmp`), for a caller that fits several curves from
/// one sort.
pub(crate) fn kaplan_meier_sorted(
    sorted: &[(f64, bool)],
) -> Result<Option<KaplanMeier>, StatsError> {
    check(sorted)?;
    debug_assert!(sorted.is_sorted_by(|a, b| a.0.total_cmp(&b.0).is_le()));
    Ok(fit_sorted(sorted))
}

/// The errors of [`kaplan_meier`].
fn check(observations: &[(f64, bool)]) -> Result<(), StatsError> {
    if observations.iter().any(|(t, _)| !t.is_finite()) {
        return Err(StatsError::NotFinite { what: "duration" });
    }
    if observations.iter().any(|&(t, _)| t < 0.0) {
        return Err(StatsError::Negative { what: "duration" });
    }
    Ok(())
}

/// The curve of valid observations sorted by duration; `None` when empty.
fn fit_sorted(sorted: &[(f64, bool)]) -> Option<KaplanMeier> {
    if sorted.is_empty() {
        return None;
    }
    let mut steps = Vec::new();
    let (mut at_risk, mut survival, mut greenwood) = (sorted.len(), 1.0_f64, 0.0_f64);
    let mut rest = sorted;
    while let Some(&(time, _)) = rest.first() {
        let same = rest.iter().take_while(|(t, _)| *t == time).count();
        let (group, tail) = rest.split_at(same);
        rest = tail;
        let events = group.iter().filter(|(_, e)| *e).count();
        let censored = same - events;
        if events > 0 {
            let (n, d) = (at_risk as f64, events as f64);
            survival *= 1.0 - d / n;
            if at_risk > events {
                greenwood += d / (n * (n - d));
            } else {
                survival = 0.0;
            }
        }
        steps.push(CurveStep {
            time,
            at_risk,
            events,
            censored,
            survival,
            se: (survival > 0.0).then(|| survival * greenwood.sqrt()),
            ci95: log_log_band(survival, greenwood),
        });
        at_risk -= same;
    }
    let events = sorted.iter().filter(|(_, e)| *e).count();
    let first_at_or_below = |value: fn(&CurveStep) -> f64| {
        steps
            .iter()
            .find(|s| value(s) <= 0.5 + LEVEL_SLACK)
            .map(|s| s.time)
    };
    let median = first_at_or_below(|s| s.survival);
    let median_ci95 = TimeBounds {
        lower: first_at_or_below(|s| s.ci95.lower),
        upper: first_at_or_below(|s| s.ci95.upper),
    };
    Some(KaplanMeier {
        subjects: sorted.len(),
        events,
        censored: sorted.len() - events,
        steps,
        median,
        median_ci95,
    })
}

impl KaplanMeier {
    /// The last step at or before `t`, if any.
    fn step_at(&self, t: f64) -> Result<Option<&CurveStep>, StatsError> {
        if t.is_nan() {
            return Err(StatsError::NotFinite { what: "time" });
        }
        Ok(self.steps.iter().take_while(|s| s.time <= t).last())
    }

    /// Ŝ(t) with its SE and band (Ŝ = 1, SE 0, band [1, 1] before the first
    /// observed time). Error: `t` is NaN.
    pub fn survival_at(&self, t: f64) -> Result<SurvivalPoint, StatsError> {
        Ok(match self.step_at(t)? {
            Some(s) => SurvivalPoint {
                time: t,
                survival: s.survival,
                se: s.se,
                ci95: s.ci95,
            },
            None => SurvivalPoint {
                time: t,
                survival: 1.0,
                se: Some(0.0),
                ci95: Interval {
                    lower: 1.0,
                    upper: 1.0,
                },
            },
        })
    }

    /// 1 − Ŝ(T): the share with the event within `within` (for example the
    /// share of alerts visited within 30 days).
    pub fn share_with_event_within(&self, within: f64) -> Result<EventShare, StatsError> {
        let point = self.survival_at(within)?;
        let last = self.steps.last().map_or(0.0, |s| s.time);
        Ok(EventShare {
            within,
            share: 1.0 - point.survival,
            se: point.se,
            ci95: Interval {
                lower: 1.0 - point.ci95.upper,
                upper: 1.0 - point.ci95.lower,
            },
            beyond_follow_up: within > last,
        })
    }

    /// The q-quantile of time (0 < q ≤ 1): smallest t with Ŝ(t) ≤ 1 − q;
    /// `Ok(None)` when not reached.
    pub fn quantile(&self, q: f64) -> Result<Option<f64>, StatsError> {
        if !(q > 0.0 && q <= 1.0) {
            return Err(StatsError::ProbabilityOutOfRange(q));
        }
        let level = 1.0 - q + LEVEL_SLACK;
        Ok(self
            .steps
            .iter()
            .find(|s| s.survival <= level)
            .map(|s| s.time))
    }
}

#[cfg(test)]
mod tests;
