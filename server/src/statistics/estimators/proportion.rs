//! Confidence intervals for a single proportion x/n: the Wilson score
//! interval (Newcombe 1998, "method 3", no continuity correction), used for
//! every confirmation rate, and the Clopper–Pearson "exact" interval for
//! comparison. Both are two-sided 95% intervals. n = 0 is "no data" (`None`).

use serde::Serialize;

use super::StatsError;
use super::interval::{Interval, Z95};
use super::special::inverse_regularized_incomplete_beta;

/// How an interval for a proportion was computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ProportionMethod {
    /// Wilson score interval, no continuity correction.
    Wilson,
    /// Clopper–Pearson interval from beta quantiles.
    ClopperPearson,
}

/// A proportion x/n with its 95% interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProportionEstimate {
    pub successes: u64,
    pub trials: u64,
    /// x/n.
    pub estimate: f64,
    pub ci95: Interval,
    pub method: ProportionMethod,
}

fn check(successes: u64, trials: u64) -> Result<(), StatsError> {
    if successes > trials {
        return Err(StatsError::SuccessesExceedTrials { successes, trials });
    }
    Ok(())
}

/// Wilson score 95% interval for `successes` out of `trials`.
///
/// L, U = [2x + z² ∓ z·√(z² + 4x(n − x)/n)] / [2(n + z²)] with z = [`Z95`].
/// The bounds are exactly 0 when x = 0 and exactly 1 when x = n.
/// Returns `Ok(None)` when `trials` is 0 (no data) and an error when
/// `successes > trials`.
pub fn wilson(successes: u64, trials: u64) -> Result<Option<ProportionEstimate>, StatsError> {
    check(successes, trials)?;
    if trials == 0 {
        return Ok(None);
    }
    let (x, n) = (successes as f64, trials as f64);
    let z2 = Z95 * Z95;
    let centre = (x + z2 / 2.0) / (n + z2);
    let half = Z95 * (x * (n - x) / n + z2 / 4.0).sqrt() / (n + z2);
    let lower = if successes == 0 {
        0.0
    } else {
        (centre - half).max(0.0)
    };
    let upper = if successes == trials {
        1.0
    } else {
        (centre + half).min(1.0)
    };
    Ok(Some(ProportionEstimate {
        successes,
        trials,
        estimate: x / n,
        ci95: Interval { lower, upper },
        method: ProportionMethod::Wilson,
    }))
}

/// Clopper–Pearson ("exact") 95% interval for `successes` out of `trials`.
///
/// L = Beta⁻¹(0.025; x, n − x + 1), U = Beta⁻¹(0.975; x + 1, n − x), with
/// L = 0 when x = 0 and U = 1 when x = n. This is statsmodels'
/// `proportion_confint(method='beta')`. Returns `Ok(None)` when `trials` is 0.
pub fn clopper_pearson(
    successes: u64,
    trials: u64,
) -> Result<Option<ProportionEstimate>, StatsError> {
    check(successes, trials)?;
    if trials == 0 {
        return Ok(None);
    }
    let (x, n) = (successes as f64, trials as f64);
    let half_alpha: f64 = 0.025;
    let lower = if successes == 0 {
        0.0
    } else if successes == trials {
        // Closed form of Beta⁻¹(α/2; n, 1).
        half_alpha.powf(1.0 / n)
    } else {
        inverse_regularized_incomplete_beta(x, n - x + 1.0, half_alpha)
    };
    let upper = if successes == trials {
        1.0
    } else if successes == 0 {
        // Closed form of Beta⁻¹(1 − α/2; 1, n).
        1.0 - half_alpha.powf(1.0 / n)
    } else {
        inverse_regularized_incomplete_beta(x + 1.0, n - x, 1.0 - half_alpha)
    };
    Ok(Some(ProportionEstimate {
        successes,
        trials,
        estimate: x / n,
        ci95: Interval { lower, upper },
        method: ProportionMethod::ClopperPearson,
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
        x: u64,
        n: u64,
        wilson: [f64; 2],
        beta: [f64; 2],
    }

    fn interval(
        f: fn(u64, u64) -> Result<Option<ProportionEstimate>, StatsError>,
        x: u64,
        n: u64,
    ) -> Interval {
        f(x, n).expect("valid counts").expect("n > 0").ci95
    }

    #[test]
    fn matches_statsmodels_fixture() {
        // Source: tests/reference/stats/proportion.json, statsmodels 0.15.0
        // proportion_confint(method='wilson' | 'beta'), made by make_reference.py.
        let text = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../tests/reference/stats/proportion.json"
        ));
        let fixture: Fixture = serde_json::from_str(text).expect("fixture parses");
        assert!(fixture.cases.len() > 80);
        for c in &fixture.cases {
            let w = interval(wilson, c.x, c.n);
            assert!(
                (w.lower - c.wilson[0]).abs() < 1e-12,
                "wilson L {}/{}",
                c.x,
                c.n
            );
            assert!(
                (w.upper - c.wilson[1]).abs() < 1e-12,
                "wilson U {}/{}",
                c.x,
                c.n
            );
            let b = interval(clopper_pearson, c.x, c.n);
            assert!(
                (b.lower - c.beta[0]).abs() < 1e-10,
                "CP L {}/{}: {} vs {}",
                c.x,
                c.n,
                b.lower,
                c.beta[0]
            );
            assert!(
                (b.upper - c.beta[1]).abs() < 1e-10,
                "CP U {}/{}: {} vs {}",
                c.x,
                c.n,
                b.upper,
                c.beta[1]
            );
        }
    }

    #[test]
    fn matches_newcombe_1998_published_wilson() {
        // Newcombe 1998, Stat Med 17:857-872, method 3, as quoted by the m-Py/propint
        // test (statistics.md §2.5), 4 dp: 81/263 -> 0.2553-0.3662; 15/148 -> 0.0624-0.1605.
        let a = interval(wilson, 81, 263);
        assert!((a.lower - 0.2553).abs() < 5e-5 && (a.upper - 0.3662).abs() < 5e-5);
        let b = interval(wilson, 15, 148);
        assert!((b.lower - 0.0624).abs() < 5e-5 && (b.upper - 0.1605).abs() < 5e-5);
        // Newcombe 1998 Table II, recalled [M] in statistics.md §2.5: 0/20 -> 0-0.1611,
        // 1/29 -> 0.0061-0.1718 (Wilson); CP 0/20 -> 0-0.1684, 1/29 -> 0.0009-0.1776.
        let c = interval(wilson, 0, 20);
        assert!(c.lower == 0.0 && (c.upper - 0.1611).abs() < 5e-5);
        let d = interval(wilson, 1, 29);
        assert!((d.lower - 0.0061).abs() < 5e-5 && (d.upper - 0.1718).abs() < 5e-5);
        let e = interval(clopper_pearson, 0, 20);
        assert!(e.lower == 0.0 && (e.upper - 0.1684).abs() < 5e-5);
        let f = interval(clopper_pearson, 1, 29);
        assert!((f.lower - 0.0009).abs() < 5e-5 && (f.upper - 0.1776).abs() < 5e-5);
    }

    #[test]
    fn edge_cases() {
        // n = 0 is no data; x > n is refused; bounds are exact at x = 0 and x = n
        // (statistics.md §1.1). 0/1 CP upper = 0.975 exactly (statsmodels, §2.5).
        assert_eq!(wilson(0, 0), Ok(None));
        assert_eq!(clopper_pearson(0, 0), Ok(None));
        assert!(matches!(
            wilson(3, 2),
            Err(StatsError::SuccessesExceedTrials { .. })
        ));
        assert!(clopper_pearson(3, 2).is_err());
        for n in [1, 2, 7, 1000] {
            assert_eq!(interval(wilson, 0, n).lower, 0.0);
            assert_eq!(interval(wilson, n, n).upper, 1.0);
            assert_eq!(interval(clopper_pearson, 0, n).lower, 0.0);
            assert_eq!(interval(clopper_pearson, n, n).upper, 1.0);
        }
        assert!((interval(clopper_pearson, 0, 1).upper - 0.975).abs() < 1e-15);
        let w = wilson(50, 100).expect("ok").expect("some");
        assert_eq!(w.estimate, 0.5);
        assert_eq!(w.method, ProportionMethod::Wilson);
    }
}
