//! Stratified estimate of a proportion (Cochran-style), for example "share of
//! alerts confirmed" when the visits are a stratified random sample with
//! strata such as source × confidence.
//!
//! p̂_st = Σ W_h p̂_h with W_h = N_h / N, and
//! V̂(p̂_st) = Σ W_h² · fpc_h · p̂_h(1 − p̂_h)/(n_h − 1), fpc_h = 1 − n_h/N_h
//! (statistics.md §1.2a). The total is N·p̂_st with SE N·SE(p̂_st); the 95%
//! interval is estimate ± z·SE, clipped to [0, 1] (to [0, N] for the total).
//!
//! Strata that cannot be used as they are, and what this module does:
//! - n_h = 0 (unsampled): left out. The estimate then describes only the
//!   population of the sampled strata; `population_covered` says how much.
//! - n_h = 1: its p̂_h enters the estimate, but its variance cannot be
//!   estimated, so the SE and interval are `None` (unless the stratum is a
//!   census, n_h = N_h with the fpc, whose variance is exactly 0).
//! - N_h = 0: weight 0; it changes nothing.
//!
//! The status of each stratum is reported in the result.

use serde::Serialize;

use super::StatsError;
use super::interval::Estimate;

/// Whether to apply the finite-population correction 1 − n_h/N_h. Use
/// `Ignore` when N_h is an area rather than a count of units.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Fpc {
    Apply,
    Ignore,
}

/// One stratum of the sample: its population size and the visited counts.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StratumCount {
    pub label: String,
    /// N_h: units (alerts) in the stratum, or its area when `Fpc::Ignore`.
    pub population: f64,
    /// n_h: units sampled and visited.
    pub sampled: u64,
    /// x_h: sampled units with the attribute (for example confirmed).
    pub successes: u64,
}

/// How a stratum entered the estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StratumStatus {
    /// n_h ≥ 2: estimate and variance.
    Estimated,
    /// n_h = N_h with the fpc applied: known exactly, variance 0.
    Census,
    /// n_h = 1: in the estimate, variance not estimable.
    SingleUnit,
    /// n_h = 0 and N_h > 0: left out of the estimate.
    Unsampled,
    /// N_h = 0: weight 0.
    Empty,
}

/// Per-stratum detail of a [`StratifiedProportion`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StratumResult {
    pub label: String,
    pub population: f64,
    /// W_h = N_h / (population of the sampled strata); 0 when left out.
    pub weight: f64,
    pub sampled: u64,
    pub successes: u64,
    /// p̂_h, `None` when unsampled.
    pub proportion: Option<f64>,
    /// W_h² · fpc_h · p̂_h(1 − p̂_h)/(n_h − 1), `None` when not estimable.
    pub variance_contribution: Option<f64>,
    pub status: StratumStatus,
}

/// Result of [`stratified_proportion`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StratifiedProportion {
    /// p̂_st with SE and 95% interval (clipped to [0, 1]).
    pub proportion: Estimate,
    /// N_covered · p̂_st with SE and 95% interval (clipped to [0, N_covered]).
    pub total: Estimate,
    /// Σ N_h over all strata.
    pub population: f64,
    /// Σ N_h over the strata that were sampled (what the estimate describes).
    pub population_covered: f64,
    pub fpc: Fpc,
    pub strata: Vec<StratumResult>,
}

/// Stratified proportion with optional finite-population correction.
///
/// Returns `Ok(None)` when no stratum with N_h > 0 has a sampled unit (no
/// data). Errors: x_h > n_h; N_h negative or not finite; n_h > N_h when the
/// fpc is applied.
pub fn stratified_proportion(
    strata: &[StratumCount],
    fpc: Fpc,
) -> Result<Option<StratifiedProportion>, StatsError> {
    check_strata(strata, fpc)?;
    let parts: Vec<Part> = strata
        .iter()
        .map(|s| {
            let mean = (s.sampled > 0).then(|| s.successes as f64 / s.sampled as f64);
            // p̂(1 − p̂)/(n − 1): s²_h/n_h of a 0/1 variable.
            let spread = mean.map_or(0.0, |p| p * (1.0 - p) / (s.sampled as f64 - 1.0));
            Part {
                label: &s.label,
                population: s.population,
                sampled: s.sampled,
                successes: s.successes,
                mean,
                spread,
            }
        })
        .collect();
    Ok(combine(&parts, fpc))
}

/// One stratum of a sample whose unit values y_u are numbers in [0, 1]
/// (for example the share of a plot that is cleared), given by their sums.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StratumValues {
    pub label: String,
    /// N_h: units in the stratum, or its area when `Fpc::Ignore`.
    pub population: f64,
    /// n_h: units sampled and observed.
    pub sampled: u64,
    /// Units with y_u > 0 (reported as the stratum's `successes`).
    pub positive: u64,
    /// Σ y_u over the n_h units.
    pub sum: f64,
    /// Σ y_u² over the n_h units.
    pub sum_sq: f64,
}

/// Stratified mean of a variable in [0, 1]: ȳ_st = Σ W_h ȳ_h and
/// V̂ = Σ W_h² · fpc_h · s²_yh/n_h with s²_yh = (Σy² − n_h ȳ_h²)/(n_h − 1),
/// the Stehman (2014) form of statistics.md §1.2(c) for an area proportion.
/// With y_u ∈ {0, 1} it equals [`stratified_proportion`] (s²_yh/n_h =
/// p̂_h(1 − p̂_h)/(n_h − 1)). Awkward strata are treated as there; the result
/// has the same shape. Errors: N_h negative or not finite, a sum that is not
/// finite or outside [0, n_h], n_h > N_h when the fpc is applied.
pub fn stratified_mean(
    strata: &[StratumValues],
    fpc: Fpc,
) -> Result<Option<StratifiedProportion>, StatsError> {
    check_values(strata, fpc)?;
    let parts: Vec<Part> = strata
        .iter()
        .map(|s| {
            let n = s.sampled as f64;
            let mean = (s.sampled > 0).then(|| s.sum / n);
            let spread = mean.map_or(0.0, |m| ((s.sum_sq - s.sum * m) / (n - 1.0)).max(0.0) / n);
            Part {
                label: &s.label,
                population: s.population,
                sampled: s.sampled,
                successes: s.positive,
                mean,
                spread,
            }
        })
        .collect();
    Ok(combine(&parts, fpc))
}

/// A checked stratum as both estimators hand it to [`combine`].
struct Part<'a> {
    label: &'a str,
    population: f64,
    sampled: u64,
    successes: u64,
    /// ȳ_h (p̂_h), `None` when unsampled.
    mean: Option<f64>,
    /// s²_yh/n_h, used only when n_h ≥ 2.
    spread: f64,
}

/// The weighted estimate over checked strata; `None` without data.
fn combine(strata: &[Part<'_>], fpc: Fpc) -> Option<StratifiedProportion> {
    let population: f64 = strata.iter().map(|s| s.population).sum();
    let covered: f64 = strata
        .iter()
        .filter(|s| s.population > 0.0 && s.sampled > 0)
        .map(|s| s.population)
        .sum();
    if covered <= 0.0 {
        return None;
    }
    let mut estimate = 0.0;
    let mut variance = Some(0.0);
    let mut results = Vec::with_capacity(strata.len());
    for s in strata {
        let r = stratum_result(s, fpc, covered);
        if in_estimate(r.status) {
            estimate += r.weight * r.proportion.unwrap_or(0.0);
            variance = variance.zip(r.variance_contribution).map(|(v, c)| v + c);
        }
        results.push(r);
    }
    let se = variance.map(|v| v.max(0.0).sqrt());
    let proportion = Estimate::normal(estimate, se, 0.0, 1.0);
    Some(StratifiedProportion {
        proportion,
        total: proportion.scaled(covered),
        population,
        population_covered: covered,
        fpc,
        strata: results,
    })
}

/// The errors of [`stratified_mean`], stratum by stratum.
fn check_values(strata: &[StratumValues], fpc: Fpc) -> Result<(), StatsError> {
    for (index, s) in strata.iter().enumerate() {
        let n = s.sampled as f64;
        if !(s.sum.is_finite() && s.sum_sq.is_finite()) {
            return Err(StatsError::NotFinite {
                what: "stratum sum of values",
            });
        }
        if s.sum < 0.0 || s.sum_sq < 0.0 || s.sum > n || s.sum_sq > s.sum || s.positive > s.sampled
        {
            return Err(StatsError::ValuesOutOfRange {
                stratum: index,
                what: format!(
                    "sum {} and sum of squares {} of {} values (and {} positive) cannot all be in [0, 1]",
                    s.sum, s.sum_sq, s.sampled, s.positive
                ),
            });
        }
        check_population(index, s.population, s.sampled, fpc)?;
    }
    Ok(())
}

/// The errors of [`stratified_proportion`], stratum by stratum.
fn check_strata(strata: &[StratumCount], fpc: Fpc) -> Result<(), StatsError> {
    for (index, s) in strata.iter().enumerate() {
        if s.successes > s.sampled {
            return Err(StatsError::SuccessesExceedTrials {
                successes: s.successes,
                trials: s.sampled,
            });
        }
        check_population(index, s.population, s.sampled, fpc)?;
    }
    Ok(())
}

/// N_h finite and not negative; n_h ≤ N_h when the fpc is applied.
fn check_population(
    index: usize,
    population: f64,
    sampled: u64,
    fpc: Fpc,
) -> Result<(), StatsError> {
    if !population.is_finite() {
        return Err(StatsError::NotFinite {
            what: "stratum population",
        });
    }
    if population < 0.0 {
        return Err(StatsError::Negative {
            what: "stratum population",
        });
    }
    if fpc == Fpc::Apply && sampled as f64 > population {
        return Err(StatsError::SampleExceedsPopulation {
            stratum: index,
            sampled,
            population,
        });
    }
    Ok(())
}

fn status_of(s: &Part<'_>, fpc: Fpc) -> StratumStatus {
    if s.population == 0.0 {
        StratumStatus::Empty
    } else if s.sampled == 0 {
        StratumStatus::Unsampled
    } else if fpc == Fpc::Apply && s.sampled as f64 == s.population {
        StratumStatus::Census
    } else if s.sampled == 1 {
        StratumStatus::SingleUnit
    } else {
        StratumStatus::Estimated
    }
}

/// Whether a stratum with this status enters the estimate.
fn in_estimate(status: StratumStatus) -> bool {
    !matches!(status, StratumStatus::Empty | StratumStatus::Unsampled)
}

/// Stratum `s`'s weight, proportion and variance contribution, given the
/// population `covered` by the sampled strata.
fn stratum_result(s: &Part<'_>, fpc: Fpc, covered: f64) -> StratumResult {
    let status = status_of(s, fpc);
    let weight = if in_estimate(status) {
        s.population / covered
    } else {
        0.0
    };
    let contribution = match (status, s.mean) {
        (StratumStatus::Estimated, Some(_)) => {
            let correction = match fpc {
                Fpc::Apply => 1.0 - s.sampled as f64 / s.population,
                Fpc::Ignore => 1.0,
            };
            Some(weight * weight * correction * s.spread)
        }
        (StratumStatus::SingleUnit, _) => None,
        _ => Some(0.0),
    };
    StratumResult {
        label: s.label.to_string(),
        population: s.population,
        weight,
        sampled: s.sampled,
        successes: s.successes,
        proportion: s.mean,
        variance_contribution: contribution,
        status,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stratum(label: &str, population: f64, sampled: u64, successes: u64) -> StratumCount {
        StratumCount {
            label: label.to_string(),
            population,
            sampled,
            successes,
        }
    }

    /// statistics.md §2.4, a constructed alert example (not from a publication).
    fn alert_example() -> Vec<StratumCount> {
        vec![
            stratum("corroborated", 400.0, 40, 34),
            stratum("confirmed", 1000.0, 50, 30),
            stratum("tentative", 600.0, 30, 9),
        ]
    }

    #[test]
    fn alert_example_with_and_without_fpc() {
        // Values [C] in statistics.md §2.4: hand formula = samplics 0.6.0
        // TaylorEstimator(PopParam.mean), 7 dp.
        let with = stratified_proportion(&alert_example(), Fpc::Apply)
            .expect("valid")
            .expect("data");
        let p = with.proportion;
        assert!((p.estimate - 0.56).abs() < 1e-12);
        assert!((p.se.expect("se") - 0.0435901).abs() < 5e-8);
        let ci = p.ci95.expect("ci");
        assert!((ci.lower - 0.4745650).abs() < 5e-8 && (ci.upper - 0.6454350).abs() < 5e-8);
        assert!((with.total.estimate - 1120.0).abs() < 1e-9);
        assert!((with.total.se.expect("se") - 2000.0 * 0.0435901).abs() < 2000.0 * 5e-8);

        let without = stratified_proportion(&alert_example(), Fpc::Ignore)
            .expect("valid")
            .expect("data");
        let p = without.proportion;
        assert!((p.se.expect("se") - 0.0447994).abs() < 5e-8);
        let ci = p.ci95.expect("ci");
        assert!((ci.lower - 0.4721949).abs() < 5e-8 && (ci.upper - 0.6478051).abs() < 5e-8);
        assert!(
            with.strata
                .iter()
                .all(|s| s.status == StratumStatus::Estimated)
        );
    }

    #[test]
    fn single_stratum_reduces_to_simple_random_sample() {
        // One stratum without fpc: SE = √(p(1−p)/(n−1)) (common practice).
        let r = stratified_proportion(&[stratum("all", 1e6, 50, 20)], Fpc::Ignore)
            .expect("valid")
            .expect("data");
        let expected = (0.4_f64 * 0.6 / 49.0).sqrt();
        assert!((r.proportion.se.expect("se") - expected).abs() < 1e-15);
    }

    #[test]
    fn awkward_strata_are_reported() {
        let mut strata = alert_example();
        strata.push(stratum("never-visited", 500.0, 0, 0));
        strata.push(stratum("empty", 0.0, 0, 0));
        let r = stratified_proportion(&strata, Fpc::Apply)
            .expect("valid")
            .expect("data");
        // The unsampled stratum is left out: same estimate, covered population 2000 of 2500.
        assert!((r.proportion.estimate - 0.56).abs() < 1e-12);
        assert_eq!(r.population, 2500.0);
        assert_eq!(r.population_covered, 2000.0);
        assert_eq!(r.strata[3].status, StratumStatus::Unsampled);
        assert_eq!(r.strata[4].status, StratumStatus::Empty);

        strata.push(stratum("lonely", 50.0, 1, 1));
        let r = stratified_proportion(&strata, Fpc::Apply)
            .expect("valid")
            .expect("data");
        assert_eq!(r.strata[5].status, StratumStatus::SingleUnit);
        assert_eq!(r.proportion.se, None);
        assert_eq!(r.proportion.ci95, None);
        // 0.56·2000/2050 + 1·50/2050.
        assert!((r.proportion.estimate - (1120.0 + 50.0) / 2050.0).abs() < 1e-12);

        // A census stratum (n_h = N_h) has zero variance even with n_h = 1.
        let census = [stratum("a", 1.0, 1, 1), stratum("b", 10.0, 10, 3)];
        let r = stratified_proportion(&census, Fpc::Apply)
            .expect("valid")
            .expect("data");
        assert_eq!(r.proportion.se, Some(0.0));
        assert_eq!(r.strata[0].status, StratumStatus::Census);
    }

    #[test]
    fn no_data_and_bad_input() {
        assert_eq!(stratified_proportion(&[], Fpc::Apply), Ok(None));
        assert_eq!(
            stratified_proportion(&[stratum("a", 10.0, 0, 0)], Fpc::Apply),
            Ok(None)
        );
        assert!(stratified_proportion(&[stratum("a", 10.0, 3, 4)], Fpc::Apply).is_err());
        assert!(stratified_proportion(&[stratum("a", 2.0, 3, 1)], Fpc::Apply).is_err());
        assert!(stratified_proportion(&[stratum("a", 2.0, 3, 1)], Fpc::Ignore).is_ok());
        assert!(stratified_proportion(&[stratum("a", f64::NAN, 3, 1)], Fpc::Ignore).is_err());
        assert!(stratified_proportion(&[stratum("a", -1.0, 0, 0)], Fpc::Ignore).is_err());
    }

    #[test]
    fn mean_of_zero_one_values_is_the_proportion() {
        // §2.4's strata as 0/1 values: the same estimate and SE (statistics.md §2.4 [C]).
        let values: Vec<StratumValues> = alert_example()
            .iter()
            .map(|s| StratumValues {
                label: s.label.clone(),
                population: s.population,
                sampled: s.sampled,
                positive: s.successes,
                sum: s.successes as f64,
                sum_sq: s.successes as f64,
            })
            .collect();
        let m = stratified_mean(&values, Fpc::Apply)
            .expect("valid")
            .expect("data");
        assert!((m.proportion.estimate - 0.56).abs() < 1e-12);
        assert!((m.proportion.se.expect("se") - 0.0435901).abs() < 5e-8);
    }

    #[test]
    fn mean_of_fractions_by_hand() {
        // Worked by hand: one stratum without fpc, values 0.25, 0, 0, 0:
        // ȳ = 0.0625, s² = (0.0625 − 4·0.0625²)/3 = 0.015625, SE = √(s²/4) = 0.0625.
        let v = StratumValues {
            label: "control".into(),
            population: 1000.0,
            sampled: 4,
            positive: 1,
            sum: 0.25,
            sum_sq: 0.0625,
        };
        let m = stratified_mean(std::slice::from_ref(&v), Fpc::Ignore)
            .expect("valid")
            .expect("data");
        assert!((m.proportion.estimate - 0.0625).abs() < 1e-15);
        assert!((m.proportion.se.expect("se") - 0.0625).abs() < 1e-15);
        assert!((m.total.estimate - 62.5).abs() < 1e-12);
        let bad = StratumValues {
            sum: 5.0,
            ..v.clone()
        };
        assert!(stratified_mean(&[bad], Fpc::Ignore).is_err());
        let bad = StratumValues { sum_sq: 0.5, ..v };
        assert!(stratified_mean(&[bad], Fpc::Ignore).is_err());
    }
}
