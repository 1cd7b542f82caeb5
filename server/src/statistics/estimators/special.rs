//! Special functions needed by the exact (Clopper–Pearson) interval: the log
//! gamma function, the regularized incomplete beta function I_x(a, b) and its
//! inverse in x. Private to the statistics module.
//!
//! Methods (common practice, recalled from memory): the Lanczos approximation
//! with g = 7 and 9 coefficients for ln Γ (relative error about 1e-15), the
//! Lentz continued fraction for I_x(a, b) as in Press et al., *Numerical
//! Recipes*, section 6.4, and bisection for the inverse (I_x is increasing in
//! x, so bisection cannot fail to converge). The tests compare the resulting
//! intervals with statsmodels/scipy, which use different algorithms.

/// Lanczos coefficients for g = 7, n = 9.
const LANCZOS: [f64; 9] = [
    0.999_999_999_999_809_9,
    676.520_368_121_885_1,
    -1_259.139_216_722_402_8,
    771.323_428_777_653_1,
    -176.615_029_162_140_6,
    12.507_343_278_686_905,
    -0.138_571_095_265_720_12,
    9.984_369_578_019_572e-6,
    1.505_632_735_149_311_6e-7,
];

/// ln Γ(x) for x > 0.
pub(crate) fn ln_gamma(x: f64) -> f64 {
    if x < 0.5 {
        // Reflection: Γ(x) Γ(1 − x) = π / sin(πx).
        let pi = std::f64::consts::PI;
        return (pi / (pi * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut sum = LANCZOS[0];
    for (i, c) in LANCZOS.iter().enumerate().skip(1) {
        sum += c / (x + i as f64);
    }
    let t = x + 7.5;
    0.5 * (2.0 * std::f64::consts::PI).ln() + (x + 0.5) * t.ln() - t + sum.ln()
}

/// Continued fraction for the incomplete beta function (modified Lentz).
fn beta_continued_fraction(a: f64, b: f64, x: f64) -> f64 {
    const MAX_ITERATIONS: usize = 100_000;
    const EPS: f64 = 1e-16;
    const TINY: f64 = 1e-300;
    let guard = |v: f64| if v.abs() < TINY { TINY } else { v };
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 / guard(1.0 - qab * x / qap);
    let mut h = d;
    for m in 1..=MAX_ITERATIONS {
        let m = m as f64;
        let m2 = 2.0 * m;
        let aa = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 / guard(1.0 + aa * d);
        c = guard(1.0 + aa / c);
        h *= d * c;
        let aa = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 / guard(1.0 + aa * d);
        c = guard(1.0 + aa / c);
        let delta = d * c;
        h *= delta;
        if (delta - 1.0).abs() < EPS {
            break;
        }
    }
    h
}

/// The regularized incomplete beta function I_x(a, b), for a, b > 0.
pub(crate) fn regularized_incomplete_beta(a: f64, b: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    if x >= 1.0 {
        return 1.0;
    }
    let ln_front = ln_gamma(a + b) - ln_gamma(a) - ln_gamma(b) + a * x.ln() + b * (-x).ln_1p();
    let front = ln_front.exp();
    if x < (a + 1.0) / (a + b + 2.0) {
        front * beta_continued_fraction(a, b, x) / a
    } else {
        1.0 - front * beta_continued_fraction(b, a, 1.0 - x) / b
    }
}

/// The x in [0, 1] with I_x(a, b) = p, for a, b > 0 and p in [0, 1].
pub(crate) fn inverse_regularized_incomplete_beta(a: f64, b: f64, p: f64) -> f64 {
    if p <= 0.0 {
        return 0.0;
    }
    if p >= 1.0 {
        return 1.0;
    }
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    for _ in 0..2_000 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi || hi - lo <= 2.0 * f64::EPSILON * hi {
            break;
        }
        if regularized_incomplete_beta(a, b, mid) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ln_gamma_matches_factorials() {
        // Γ(n) = (n − 1)!, exact integers (common practice).
        assert!((ln_gamma(1.0)).abs() < 1e-14);
        assert!((ln_gamma(5.0) - 24.0_f64.ln()).abs() < 1e-13);
        assert!((ln_gamma(11.0) - 3_628_800.0_f64.ln()).abs() < 1e-12);
        // Γ(1/2) = √π (common practice).
        assert!((ln_gamma(0.5) - std::f64::consts::PI.sqrt().ln()).abs() < 1e-14);
    }

    #[test]
    fn incomplete_beta_closed_forms() {
        // I_x(1, 1) = x; I_x(a, 1) = x^a; I_x(1, b) = 1 − (1 − x)^b (common practice).
        for &x in &[0.01, 0.3, 0.5, 0.77, 0.999] {
            assert!((regularized_incomplete_beta(1.0, 1.0, x) - x).abs() < 1e-14);
            assert!((regularized_incomplete_beta(3.0, 1.0, x) - x.powi(3)).abs() < 1e-14);
            let expected = 1.0 - (1.0 - x).powi(4);
            assert!((regularized_incomplete_beta(1.0, 4.0, x) - expected).abs() < 1e-14);
        }
    }

    #[test]
    fn inverse_round_trips() {
        for &(a, b) in &[(1.0, 20.0), (81.0, 183.0), (15.0, 134.0), (500.0, 9501.0)] {
            for &p in &[0.025, 0.5, 0.975] {
                let x = inverse_regularized_incomplete_beta(a, b, p);
                assert!((regularized_incomplete_beta(a, b, x) - p).abs() < 1e-12);
            }
        }
    }
}
