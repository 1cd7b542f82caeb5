//! Sample quantiles of durations (for example detection → visit, in days).
//!
//! Convention: Hyndman & Fan (1996) type 7, the default of numpy
//! (`percentile`, method 'linear') and of R's `quantile`: with the sorted
//! sample x_0 ≤ … ≤ x_{n−1} and h = (n − 1)·p, Q(p) = x_⌊h⌋ + (h − ⌊h⌋)·(x_⌈h⌉ − x_⌊h⌋).
//! So the median of an even-sized sample is the mean of the two middle
//! values, and Q(0) and Q(1) are the minimum and maximum.
//!
//! These are plain sample quantiles: they ignore durations that have not
//! ended yet (an alert not yet visited). Use [`super::survival`] for those.
//! An empty sample gives `None`; a NaN or infinite value is an error.

use serde::Serialize;

use super::StatsError;

/// Count, minimum, median, 90th percentile and maximum of a sample.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DurationSummary {
    pub count: usize,
    pub min: f64,
    pub median: f64,
    pub p90: f64,
    pub max: f64,
}

/// A copy of `sample` to select from; an error when a value is not finite.
fn finite_copy(sample: &[f64]) -> Result<Vec<f64>, StatsError> {
    if sample.iter().any(|v| !v.is_finite()) {
        return Err(StatsError::NotFinite {
            what: "sample value",
        });
    }
    Ok(sample.to_vec())
}

/// Type 7 quantile of a non-empty, finite sample. The values at the two
/// ranks it reads are found by selection, in linear time: they are the
/// values a sort would put there. Reorders `values`.
fn quantile_of(values: &mut [f64], p: f64) -> f64 {
    let last = values.len() - 1;
    let h = last as f64 * p;
    let below = (h.floor() as usize).min(last);
    let above = (h.ceil() as usize).min(last);
    let fraction = h - below as f64;
    let (_, a, larger) = values.select_nth_unstable_by(below, f64::total_cmp);
    let a = *a;
    // `above` is `below` or the next rank: the smallest of the larger values.
    let b = if above == below {
        a
    } else {
        larger.iter().copied().min_by(f64::total_cmp).unwrap_or(a)
    };
    a + fraction * (b - a)
}

/// The p-quantile (0 ≤ p ≤ 1) of `sample`, Hyndman–Fan type 7.
pub fn quantile(sample: &[f64], p: f64) -> Result<Option<f64>, StatsError> {
    if !(0.0..=1.0).contains(&p) {
        return Err(StatsError::ProbabilityOutOfRange(p));
    }
    let mut values = finite_copy(sample)?;
    if values.is_empty() {
        return Ok(None);
    }
    Ok(Some(quantile_of(&mut values, p)))
}

/// The median (type 7, p = 0.5).
pub fn median(sample: &[f64]) -> Result<Option<f64>, StatsError> {
    quantile(sample, 0.5)
}

/// The 90th percentile (type 7, p = 0.9).
pub fn percentile_90(sample: &[f64]) -> Result<Option<f64>, StatsError> {
    quantile(sample, 0.9)
}

/// Count, min, median, 90th percentile and max, by selection on one copy.
pub fn duration_summary(sample: &[f64]) -> Result<Option<DurationSummary>, StatsError> {
    let mut values = finite_copy(sample)?;
    let min = values.iter().copied().min_by(f64::total_cmp);
    let max = values.iter().copied().max_by(f64::total_cmp);
    let (Some(min), Some(max)) = (min, max) else {
        return Ok(None);
    };
    Ok(Some(DurationSummary {
        count: values.len(),
        min,
        median: quantile_of(&mut values, 0.5),
        p90: quantile_of(&mut values, 0.9),
        max,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde::Deserialize;

    #[derive(Deserialize)]
    struct Fixture {
        cases: Vec<Case>,
    }
    #[derive(Deserialize)]
    struct Case {
        sample: Vec<f64>,
        probs: Vec<f64>,
        quantiles: Vec<f64>,
    }

    #[test]
    fn matches_numpy_fixture() {
        // Source: tests/reference/stats/quantiles.json, numpy 2.4.6 percentile
        // (method 'linear'), made by make_reference.py.
        let text = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../tests/reference/stats/quantiles.json"
        ));
        let fixture: Fixture = serde_json::from_str(text).expect("fixture parses");
        assert!(fixture.cases.len() >= 7);
        for case in &fixture.cases {
            for (&p, &expected) in case.probs.iter().zip(&case.quantiles) {
                let actual = quantile(&case.sample, p)
                    .expect("valid")
                    .expect("non-empty");
                let tolerance = 1e-12 * expected.abs().max(1.0);
                assert!(
                    (actual - expected).abs() <= tolerance,
                    "p={p}: {actual} vs {expected}"
                );
            }
            let summary = duration_summary(&case.sample)
                .expect("valid")
                .expect("non-empty");
            assert_eq!(summary.count, case.sample.len());
            assert_eq!(Some(summary.median), median(&case.sample).expect("valid"));
            assert_eq!(
                Some(summary.p90),
                percentile_90(&case.sample).expect("valid")
            );
        }
    }

    #[test]
    fn hand_values_and_edges() {
        // Type 7 by hand (common practice): sorted 1, 2, 3, 4 → h = 1.5 for the
        // median → 2.5; p90 → h = 2.7 → 3.7.
        let sample = [4.0, 1.0, 3.0, 2.0];
        assert_eq!(median(&sample), Ok(Some(2.5)));
        let p90 = percentile_90(&sample).expect("valid").expect("some");
        assert!((p90 - 3.7).abs() < 1e-12);
        assert_eq!(median(&[7.0]), Ok(Some(7.0)));
        assert_eq!(median(&[]), Ok(None));
        assert_eq!(duration_summary(&[]), Ok(None));
        assert!(quantile(&sample, 1.5).is_err());
        assert!(quantile(&sample, f64::NAN).is_err());
        assert!(median(&[1.0, f64::INFINITY]).is_err());
        let s = duration_summary(&sample).expect("valid").expect("some");
        assert_eq!((s.min, s.max), (1.0, 4.0));
    }
}
