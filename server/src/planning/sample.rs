//! Sample sizes and seeded stratified draws for an assessment trip.
//!
//! - Simple random sample for a proportion (Cochran 1977, *Sampling Techniques*, 3rd ed., §4.4;
//!   as presented in Israel 1992, "Determining Sample Size", Univ. of Florida IFAS PEOD-6,
//!   eqs. 1 and 3): n₀ = z²·p(1−p)/e², and with the finite population correction
//!   n = n₀ / (1 + (n₀ − 1)/N), rounded up.
//! - Stratified design for overall accuracy (Olofsson et al. 2014, RSE 148:42–57, eq. 13):
//!   n = (Σᵢ Wᵢ Sᵢ / S(Ô))², with Wᵢ = Nᵢ/N the stratum weights and Sᵢ = √(Uᵢ(1−Uᵢ)) from the
//!   anticipated user's accuracies Uᵢ, rounded up.
//! - Allocation ([`allocate`]): each stratum first gets `min_per_stratum` (or all its units if it
//!   has fewer); the rest of n is shared in proportion to Nᵢ with largest-remainder rounding,
//!   never more than a stratum holds (excess goes to the strata that still have room).
//!   Olofsson et al. recommend a floor for rare strata (they discuss 50–100 units; from memory)
//!   because proportional allocation alone leaves rare change classes with too few units to
//!   estimate their user's accuracy.
//! - Draw ([`draw_stratified`]): from one `ChaCha8Rng` seeded with a `u64`, strata in order,
//!   nₕ of Nₕ item indices without replacement by Floyd's algorithm (Bentley & Floyd 1987,
//!   CACM 30(9):754–757), returned sorted, each with inclusion probability nₕ/Nₕ. The same
//!   seed and inputs always give the same sample (rand_chacha's ChaCha8 stream and rand's
//!   `random_range` are both deterministic across platforms).

use std::collections::BTreeSet;

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use super::PlanError;

/// Standard normal 0.95 quantile (90 % two-sided): Python 3.11 `NormalDist().inv_cdf(0.95)`.
pub const Z_90: f64 = 1.644_853_626_951_471_5;
/// Standard normal 0.975 quantile (95 % two-sided); project reference statistics.md.
pub const Z_95: f64 = 1.959_963_984_540_054;
/// Standard normal 0.995 quantile (99 % two-sided): Python 3.11 `NormalDist().inv_cdf(0.995)`.
pub const Z_99: f64 = 2.575_829_303_548_9;

fn check_margin(margin: f64) -> Result<(), PlanError> {
    if margin.is_finite() && margin > 0.0 && margin < 0.5 {
        Ok(())
    } else {
        Err(PlanError::BadMarginOfError(margin))
    }
}

fn check_z(z: f64) -> Result<(), PlanError> {
    if z.is_finite() && z > 0.0 {
        Ok(())
    } else {
        Err(PlanError::BadZ(z))
    }
}

fn check_proportion(p: f64) -> Result<(), PlanError> {
    if (0.0..=1.0).contains(&p) {
        Ok(())
    } else {
        Err(PlanError::BadProportion(p))
    }
}

/// Cochran's n₀ = z²·p(1−p)/e² for a proportion `p` (0..=1), margin of error `margin` in
/// (0, 0.5), normal quantile `z` > 0. Not rounded.
pub fn cochran_n0(z: f64, p: f64, margin: f64) -> Result<f64, PlanError> {
    check_z(z)?;
    check_proportion(p)?;
    check_margin(margin)?;
    Ok(z * z * p * (1.0 - p) / (margin * margin))
}

/// The finite population correction n = n₀ / (1 + (n₀ − 1)/N), not rounded. For n₀ ≥ 1 the
/// result is at most N.
pub fn finite_population_correction(n0: f64, population: u64) -> Result<f64, PlanError> {
    if !(n0.is_finite() && n0 >= 0.0) {
        return Err(PlanError::BadSampleSize(n0));
    }
    if population == 0 {
        return Err(PlanError::EmptyPopulation);
    }
    Ok(n0 / (1.0 + (n0 - 1.0) / population as f64))
}

/// Cochran's sample size, rounded up; with `Some(N)` the finite population correction is
/// applied and the result is at most N. p = 0 or 1 has no variance and gives 0.
pub fn cochran_sample_size(
    z: f64,
    p: f64,
    margin: f64,
    population: Option<u64>,
) -> Result<u64, PlanError> {
    let n0 = cochran_n0(z, p, margin)?;
    let n = match population {
        Some(pop) => finite_population_correction(n0, pop)?.min(pop as f64),
        None => n0,
    };
    Ok(ceil_count(n))
}

/// Rounds a non-negative sample size up, guarding against float noise just above an integer
/// (common practice: 323.0000000001 is 323).
fn ceil_count(n: f64) -> u64 {
    let r = n.round();
    if (n - r).abs() < 1e-9 {
        r as u64
    } else {
        n.ceil() as u64
    }
}

/// One stratum of a stratified design.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StratumSpec {
    /// Number of units (alerts, events or area units) in the stratum, Nₕ.
    pub population: u64,
    /// Anticipated user's accuracy Uₕ (share of the stratum's units that are correct), 0..=1.
    pub expected_users_accuracy: f64,
}

/// Olofsson et al. 2014 eq. 13: n = (Σ Wᵢ √(Uᵢ(1−Uᵢ)) / S(Ô))², not rounded, for a target
/// standard error `target_se` of overall accuracy in (0, 0.5).
pub fn olofsson_n(strata: &[StratumSpec], target_se: f64) -> Result<f64, PlanError> {
    check_margin(target_se)?;
    if strata.is_empty() {
        return Err(PlanError::NoStrata);
    }
    let total: u128 = strata.iter().map(|s| u128::from(s.population)).sum();
    if total == 0 {
        return Err(PlanError::EmptyPopulation);
    }
    let mut sum = 0.0;
    for s in strata {
        check_proportion(s.expected_users_accuracy)?;
        let w = s.population as f64 / total as f64;
        let u = s.expected_users_accuracy;
        sum += w * (u * (1.0 - u)).sqrt();
    }
    Ok((sum / target_se).powi(2))
}

/// A stratified sample design: how many units to visit in each stratum.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StratifiedDesign {
    /// n from Olofsson eq. 13 before rounding.
    pub n_formula: f64,
    /// Units to visit in all; ≥ ⌈n_formula⌉ when the per-stratum minimum forces more, and at
    /// most the whole population.
    pub total: u64,
    /// Units per stratum, in the order of the input; each ≤ its stratum's population.
    pub allocation: Vec<u64>,
    /// The minimum per stratum used.
    pub min_per_stratum: u64,
}

/// Sizes (Olofsson eq. 13) and allocates ([`allocate`]) a stratified sample.
pub fn design_stratified(
    strata: &[StratumSpec],
    target_se: f64,
    min_per_stratum: u64,
) -> Result<StratifiedDesign, PlanError> {
    let n_formula = olofsson_n(strata, target_se)?;
    let populations: Vec<u64> = strata.iter().map(|s| s.population).collect();
    let allocation = allocate(&populations, ceil_count(n_formula), min_per_stratum)?;
    Ok(StratifiedDesign {
        n_formula,
        total: allocation.iter().sum(),
        allocation,
        min_per_stratum,
    })
}

/// Shares `total` units among strata of the given sizes: first `min(min_per_stratum, Nₕ)`
/// each, then the rest in proportion to Nₕ (largest remainder, ties to the lower index),
/// capped at Nₕ with the excess passed on. If the minimums alone exceed `total`, the
/// minimums are returned (the sum is then larger than `total`); if `total` ≥ ΣNₕ every unit
/// is taken.
pub fn allocate(
    populations: &[u64],
    total: u64,
    min_per_stratum: u64,
) -> Result<Vec<u64>, PlanError> {
    if populations.is_empty() {
        return Err(PlanError::NoStrata);
    }
    let pop_total: u128 = populations.iter().map(|&p| u128::from(p)).sum();
    if u128::from(total) >= pop_total {
        return Ok(populations.to_vec());
    }
    let mut alloc: Vec<u64> = populations
        .iter()
        .map(|&p| p.min(min_per_stratum))
        .collect();
    let base: u128 = alloc.iter().map(|&a| u128::from(a)).sum();
    if base >= u128::from(total) {
        return Ok(alloc);
    }
    let mut remaining = u128::from(total) - base;
    // Each round gives every stratum with room its proportional share of `remaining`; a
    // stratum that fills up leaves the active set. Terminates: each round either places all of
    // `remaining` or removes at least one stratum.
    loop {
        let active: Vec<usize> = (0..populations.len())
            .filter(|&h| alloc[h] < populations[h])
            .collect();
        let weight: u128 = active.iter().map(|&h| u128::from(populations[h])).sum();
        if remaining == 0 || weight == 0 {
            break;
        }
        let mut share: Vec<(usize, u128, u128)> = active
            .iter()
            .map(|&h| {
                let num = remaining * u128::from(populations[h]);
                (h, num / weight, num % weight)
            })
            .collect();
        let given: u128 = share.iter().map(|s| s.1).sum();
        let mut left = remaining - given;
        let mut by_rem: Vec<usize> = (0..share.len()).collect();
        by_rem.sort_by(|&a, &b| {
            share[b]
                .2
                .cmp(&share[a].2)
                .then(share[a].0.cmp(&share[b].0))
        });
        for &i in &by_rem {
            if left == 0 {
                break;
            }
            share[i].1 += 1;
            left -= 1;
        }
        let mut capped = false;
        for &(h, s, _) in &share {
            let room = u128::from(populations[h] - alloc[h]);
            let take = s.min(room);
            if s > room {
                capped = true;
            }
            // take ≤ room ≤ u64::MAX
            alloc[h] += u64::try_from(take).unwrap_or(0);
            remaining -= take;
        }
        if !capped {
            break;
        }
    }
    Ok(alloc)
}

/// The units drawn from one stratum.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StratumDraw {
    /// Stratum index (position in the input).
    pub stratum: usize,
    /// Nₕ.
    pub population: u64,
    /// Chosen item indices in 0..Nₕ, ascending, no repeats; `indices.len()` = nₕ.
    pub indices: Vec<u64>,
    /// nₕ/Nₕ (0 for an empty stratum); the design weight of each chosen unit is its inverse.
    pub inclusion_probability: f64,
}

/// Draws `allocation[h]` of `populations[h]` item indices per stratum without replacement,
/// reproducibly from `seed`.
pub fn draw_stratified(
    populations: &[u64],
    allocation: &[u64],
    seed: u64,
) -> Result<Vec<StratumDraw>, PlanError> {
    if populations.len() != allocation.len() {
        return Err(PlanError::LengthMismatch {
            populations: populations.len(),
            allocation: allocation.len(),
        });
    }
    for (h, (&pop, &n)) in populations.iter().zip(allocation).enumerate() {
        if n > pop {
            return Err(PlanError::SampleExceedsPopulation {
                stratum: h,
                n,
                population: pop,
            });
        }
    }
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    Ok(populations
        .iter()
        .zip(allocation)
        .enumerate()
        .map(|(stratum, (&population, &n))| StratumDraw {
            stratum,
            population,
            indices: floyd_sample(&mut rng, population, n),
            inclusion_probability: if population == 0 {
                0.0
            } else {
                n as f64 / population as f64
            },
        })
        .collect())
}

/// Floyd's algorithm: a uniform random n-subset of 0..population (n ≤ population), ascending.
fn floyd_sample(rng: &mut ChaCha8Rng, population: u64, n: u64) -> Vec<u64> {
    let mut chosen = BTreeSet::new();
    for j in (population - n)..population {
        let t = rng.random_range(0..=j);
        if !chosen.insert(t) {
            chosen.insert(j);
        }
    }
    chosen.into_iter().collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cochran_textbook_example() {
        // Israel 1992 (PEOD-6), applying Cochran's eq.: p = 0.5, ±5 %, 95 % (z = 1.96) gives
        // n0 = 385 for a large population, and for a population of 2 000,
        // n = 385 / (1 + (385 − 1)/2000) = 323 (values recalled from memory; the example's
        // existence is confirmed by a public excerpt of the paper). 1.96² · 0.25 / 0.05² = 384.16.
        let n0 = cochran_n0(1.96, 0.5, 0.05).unwrap();
        assert!((n0 - 384.16).abs() < 1e-9);
        assert_eq!(cochran_sample_size(1.96, 0.5, 0.05, None).unwrap(), 385);
        assert_eq!(
            cochran_sample_size(1.96, 0.5, 0.05, Some(2000)).unwrap(),
            323
        );
        assert_eq!(
            cochran_sample_size(Z_95, 0.5, 0.05, Some(2000)).unwrap(),
            323
        );
        // Python 3.11: z = NormalDist().inv_cdf(0.975) → n0 = 384.1458820694123,
        // fpc with N = 2000 → 322.385536663696.
        let n0 = cochran_n0(Z_95, 0.5, 0.05).unwrap();
        assert!((n0 - 384.145_882_069_412_3).abs() < 1e-9);
        assert!(
            (finite_population_correction(n0, 2000).unwrap() - 322.385_536_663_696).abs() < 1e-9
        );
    }

    #[test]
    fn cochran_limits_and_errors() {
        // A population smaller than n0 caps the sample at N (property of the formula).
        assert_eq!(cochran_sample_size(Z_95, 0.5, 0.05, Some(50)).unwrap(), 45);
        assert!(cochran_sample_size(Z_95, 0.5, 0.05, Some(1)).unwrap() <= 1);
        assert_eq!(cochran_sample_size(Z_95, 0.0, 0.05, None).unwrap(), 0);
        for bad in [0.0, 0.5, -0.1, 0.7, f64::NAN] {
            assert_eq!(
                cochran_n0(Z_95, 0.5, bad).map_err(|e| matches!(e, PlanError::BadMarginOfError(_))),
                Err(true),
                "{bad}"
            );
        }
        assert!(matches!(
            cochran_n0(Z_95, 1.5, 0.05),
            Err(PlanError::BadProportion(_))
        ));
        assert!(matches!(
            cochran_n0(-1.0, 0.5, 0.05),
            Err(PlanError::BadZ(_))
        ));
        assert_eq!(
            cochran_sample_size(Z_95, 0.5, 0.05, Some(0)),
            Err(PlanError::EmptyPopulation)
        );
    }

    fn olofsson_strata() -> Vec<StratumSpec> {
        // Olofsson et al. 2014, Table 8 mapped pixels (deforestation, gain, stable forest,
        // stable non-forest) with the anticipated user's accuracies 0.70, 0.60, 0.90, 0.95 of
        // their §5.1 sample-size example (inputs as in the project reference statistics.md §2.1
        // and in a public implementation's test of this example).
        [
            (200_000, 0.70),
            (150_000, 0.60),
            (3_200_000, 0.90),
            (6_450_000, 0.95),
        ]
        .into_iter()
        .map(|(population, expected_users_accuracy)| StratumSpec {
            population,
            expected_users_accuracy,
        })
        .collect()
    }

    #[test]
    fn olofsson_example_sample_size() {
        // Olofsson et al. 2014 §5.1: target S(Ô) = 0.01 gives n ≈ 641 (recalled from memory;
        // the same inputs with total_sample_size = 641 appear in a public implementation's test).
        let n = olofsson_n(&olofsson_strata(), 0.01).unwrap();
        assert!((n - 640.54).abs() < 0.01, "{n}");
        let d = design_stratified(&olofsson_strata(), 0.01, 75).unwrap();
        assert_eq!(d.total, 641);
        assert_eq!(d.allocation.iter().sum::<u64>(), 641);
        // 75 each, then 641 − 300 = 341 shared by Nₕ/N with largest remainder:
        // 6.82 → 7, 5.115 → 5, 109.12 → 109, 219.945 → 220 (hand computation).
        assert_eq!(d.allocation, vec![82, 80, 184, 295]);
        assert!(matches!(
            olofsson_n(&olofsson_strata(), 0.5),
            Err(PlanError::BadMarginOfError(_))
        ));
        assert!(matches!(olofsson_n(&[], 0.01), Err(PlanError::NoStrata)));
    }

    #[test]
    fn allocation_caps_and_minimums() {
        // Hand-checked cases of the documented rule.
        assert_eq!(allocate(&[10, 20, 30], 100, 5).unwrap(), vec![10, 20, 30]); // census
        assert_eq!(allocate(&[3, 1000, 1000], 30, 10).unwrap(), vec![3, 14, 13]);
        assert_eq!(allocate(&[100, 100], 10, 20).unwrap(), vec![20, 20]); // minimum wins
        // Small stratum fills up, its excess goes to the other.
        let a = allocate(&[12, 10_000], 5_000, 10).unwrap();
        assert_eq!(a, vec![12, 4_988]);
        for (pops, total, min) in [(vec![5u64, 7, 900, 1], 60u64, 4u64), (vec![1, 1, 1], 2, 0)] {
            let a = allocate(&pops, total, min).unwrap();
            assert!(a.iter().zip(&pops).all(|(n, p)| n <= p));
            assert_eq!(a.iter().sum::<u64>(), total);
        }
        assert_eq!(allocate(&[], 5, 1), Err(PlanError::NoStrata));
    }

    #[test]
    fn draw_is_reproducible_and_without_replacement() {
        let pops = [1000u64, 50, 7, 0];
        let alloc = [100u64, 50, 3, 0];
        let a = draw_stratified(&pops, &alloc, 42).unwrap();
        let b = draw_stratified(&pops, &alloc, 42).unwrap();
        let c = draw_stratified(&pops, &alloc, 43).unwrap();
        assert_eq!(a, b);
        assert_ne!(a[0].indices, c[0].indices);
        for (d, (&p, &n)) in a.iter().zip(pops.iter().zip(&alloc)) {
            assert_eq!(d.indices.len() as u64, n);
            assert!(d.indices.windows(2).all(|w| w[0] < w[1]));
            assert!(d.indices.iter().all(|&i| i < p));
        }
        assert_eq!(a[1].indices, (0..50).collect::<Vec<_>>());
        assert!((a[0].inclusion_probability - 0.1).abs() < 1e-15);
        assert_eq!(a[3].inclusion_probability, 0.0);
        assert_eq!(
            draw_stratified(&[5], &[6], 1),
            Err(PlanError::SampleExceedsPopulation {
                stratum: 0,
                n: 6,
                population: 5
            })
        );
        assert!(matches!(
            draw_stratified(&[5], &[], 1),
            Err(PlanError::LengthMismatch { .. })
        ));
    }

    #[test]
    fn each_unit_is_drawn_with_probability_n_over_n() {
        // Empirical inclusion frequency over 4 000 seeds, 3 of 10 units: expected 0.3 each,
        // binomial SE √(0.3·0.7/4000) ≈ 0.0072; allow 5 SE (fixed seeds, so no flakiness).
        let mut counts = [0u32; 10];
        for seed in 0..4000u64 {
            for i in &draw_stratified(&[10], &[3], seed).unwrap()[0].indices {
                counts[*i as usize] += 1;
            }
        }
        for c in counts {
            assert!((f64::from(c) / 4000.0 - 0.3).abs() < 0.036, "{counts:?}");
        }
    }
}
