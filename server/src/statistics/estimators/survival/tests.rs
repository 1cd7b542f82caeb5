//! Tests of the Kaplan–Meier module against the lifelines/statsmodels fixture,
//! the NAG g12aac published example and the values in statistics.md §2.6.

use super::*;
use serde::Deserialize;
use std::collections::BTreeMap;

#[derive(Deserialize)]
struct Fixture {
    cases: Vec<Case>,
}
#[derive(Deserialize)]
struct Case {
    name: String,
    times: Vec<f64>,
    events: Vec<bool>,
    rows: Vec<Row>,
    median: Option<f64>,
    median_ci_loglog: [Option<f64>; 2],
    quantiles: BTreeMap<String, Option<f64>>,
    predictions: Vec<Prediction>,
}
#[derive(Deserialize)]
struct Row {
    time: f64,
    at_risk: usize,
    events: usize,
    censored: usize,
    survival: f64,
    loglog_lower: Option<f64>,
    loglog_upper: Option<f64>,
    greenwood_se_statsmodels: Option<f64>,
}
#[derive(Deserialize)]
struct Prediction {
    t: f64,
    survival: f64,
}

/// (t, at risk, events, NAG S, NAG SE, [C] S, [C] SE, [C] log-log lower, upper).
type SixMpRow = (f64, usize, usize, f64, f64, f64, f64, f64, f64);

fn fit(times: &[f64], events: &[bool]) -> KaplanMeier {
    let obs: Vec<(f64, bool)> = times.iter().copied().zip(events.iter().copied()).collect();
    kaplan_meier(&obs).expect("valid").expect("non-empty")
}

/// Freireich et al. 1963, 6-MP arm, weeks, `false` = censored (statistics.md §2.6).
fn six_mp() -> KaplanMeier {
    let spec = "6 6 6 6+ 7 9+ 10 10+ 11+ 13 16 17+ 19+ 20+ 22 23 25+ 32+ 32+ 34+ 35+";
    let obs: Vec<(f64, bool)> = spec
        .split_whitespace()
        .map(|s| {
            (
                s.trim_end_matches('+').parse().expect("number"),
                !s.ends_with('+'),
            )
        })
        .collect();
    kaplan_meier(&obs).expect("valid").expect("non-empty")
}

#[test]
fn matches_lifelines_and_statsmodels_fixture() {
    // Source: tests/reference/stats/survival.json, lifelines 0.30.3 KaplanMeierFitter
    // and statsmodels 0.15.0 SurvfuncRight, made by make_reference.py.
    let text = include_str!(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../tests/reference/stats/survival.json"
    ));
    let fixture: Fixture = serde_json::from_str(text).expect("fixture parses");
    assert_eq!(fixture.cases.len(), 5);
    for case in &fixture.cases {
        let km = fit(&case.times, &case.events);
        let name = &case.name;
        assert_eq!(km.steps.len(), case.rows.len(), "{name}");
        for (s, r) in km.steps.iter().zip(&case.rows) {
            assert_eq!(
                (s.time, s.at_risk, s.events, s.censored),
                (r.time, r.at_risk, r.events, r.censored)
            );
            assert!(
                (s.survival - r.survival).abs() < 1e-12,
                "{name} S({})",
                r.time
            );
            let (lo, hi) = (
                r.loglog_lower.expect("finite"),
                r.loglog_upper.expect("finite"),
            );
            assert!((s.ci95.lower - lo).abs() < 1e-9, "{name} lower({})", r.time);
            assert!((s.ci95.upper - hi).abs() < 1e-9, "{name} upper({})", r.time);
            if let Some(se) = r.greenwood_se_statsmodels {
                assert!(
                    (s.se.expect("se") - se).abs() < 1e-12,
                    "{name} se({})",
                    r.time
                );
            }
        }
        for p in &case.predictions {
            let ours = km.survival_at(p.t).expect("valid").survival;
            assert!((ours - p.survival).abs() < 1e-12, "{name} predict({})", p.t);
        }
        // Where Ŝ equals 1 − q exactly in exact arithmetic, lifelines' float product
        // (exp of a sum of logs) can land a hair above the level and report a later
        // time; we report the exact-arithmetic answer by design (module docs).
        // four-events-to-zero: Ŝ(1) = 3/4, lifelines 0.7500000000000001 → reports 2.
        // ties-and-zero: Ŝ(2) = 5/6 · 3/5 = 1/2, lifelines 0.5000000000000001 → reports 8.
        let exact_ties: &[(f64, f64, f64)] = match name.as_str() {
            "four-events-to-zero" => &[(0.25, 2.0, 1.0)],
            "ties-and-zero" => &[(0.5, 8.0, 2.0)],
            _ => &[],
        };
        let mut expected_quantiles: Vec<(f64, Option<f64>)> = case
            .quantiles
            .iter()
            .map(|(q, v)| (q.parse().expect("q"), *v))
            .collect();
        for &(q, theirs, ours) in exact_ties {
            let entry = expected_quantiles
                .iter_mut()
                .find(|(fq, _)| *fq == q)
                .expect("tie listed in fixture");
            assert_eq!(entry.1, Some(theirs), "{name}: fixture changed");
            entry.1 = Some(ours);
        }
        for &(q, expected) in &expected_quantiles {
            assert_eq!(km.quantile(q).expect("valid q"), expected, "{name} q={q}");
            if q == 0.5 {
                assert_eq!(km.median, expected, "{name} median");
            }
        }
        if exact_ties.iter().all(|t| t.0 != 0.5) {
            assert_eq!(km.median, case.median, "{name} median");
        }
        assert_eq!(
            km.median_ci95.lower, case.median_ci_loglog[0],
            "{name} median lower"
        );
        assert_eq!(
            km.median_ci95.upper, case.median_ci_loglog[1],
            "{name} median upper"
        );
    }
}

#[test]
fn six_mp_published_and_computed_values() {
    // [P] NAG g12aac example results (g12aace.r), 3 dp: S and SE at the event times.
    // [C] statistics.md §2.6 (by hand = lifelines 0.30.3), 6 dp: S, SE, log-log band.
    let table: [SixMpRow; 7] = [
        (
            6.0, 21, 3, 0.857, 0.076, 0.857143, 0.076360, 0.619718, 0.951552,
        ),
        (
            7.0, 17, 1, 0.807, 0.087, 0.806723, 0.086935, 0.563147, 0.922809,
        ),
        (
            10.0, 15, 1, 0.753, 0.096, 0.752941, 0.096350, 0.503200, 0.889362,
        ),
        (
            13.0, 12, 1, 0.690, 0.107, 0.690196, 0.106815, 0.431610, 0.849066,
        ),
        (
            16.0, 11, 1, 0.627, 0.114, 0.627451, 0.114054, 0.367511, 0.804912,
        ),
        (
            22.0, 7, 1, 0.538, 0.128, 0.537815, 0.128234, 0.267779, 0.746791,
        ),
        (
            23.0, 6, 1, 0.448, 0.135, 0.448179, 0.134591, 0.188052, 0.680143,
        ),
    ];
    let km = six_mp();
    let event_steps: Vec<&CurveStep> = km.steps.iter().filter(|s| s.events > 0).collect();
    assert_eq!(event_steps.len(), table.len());
    for (s, &(t, n, d, p_s, p_se, c_s, c_se, lo, hi)) in event_steps.iter().zip(&table) {
        assert_eq!((s.time, s.at_risk, s.events), (t, n, d));
        let se = s.se.expect("se");
        assert!(
            (s.survival - p_s).abs() <= 5e-4 && (se - p_se).abs() <= 5e-4,
            "NAG t={t}"
        );
        assert!(
            (s.survival - c_s).abs() <= 5e-7 && (se - c_se).abs() <= 5e-7,
            "[C] t={t}"
        );
        assert!((s.ci95.lower - lo).abs() <= 5e-7 && (s.ci95.upper - hi).abs() <= 5e-7);
    }
    // Exact fraction [C]: Ŝ(23) = 18/21 · 16/17 · 14/15 · 11/12 · 10/11 · 6/7 · 5/6.
    let exact =
        18.0 / 21.0 * 16.0 / 17.0 * 14.0 / 15.0 * 11.0 / 12.0 * 10.0 / 11.0 * 6.0 / 7.0 * 5.0 / 6.0;
    assert!((km.survival_at(35.0).expect("t").survival - exact).abs() < 1e-12);
    // Median 23, CI 13 to not reached (log-log band); 25th percentile 13; 75th not
    // reached (statistics.md §2.6, lifelines).
    assert_eq!(km.median, Some(23.0));
    assert_eq!(
        km.median_ci95,
        TimeBounds {
            lower: Some(13.0),
            upper: None
        }
    );
    assert_eq!(km.quantile(0.25), Ok(Some(13.0)));
    assert_eq!(km.quantile(0.75), Ok(None));
    assert_eq!((km.subjects, km.events, km.censored), (21, 9, 12));
}

#[test]
fn share_within_days() {
    let km = six_mp();
    // 1 − Ŝ(10) = 1 − 0.752941 with the same Greenwood SE 0.096350 (statistics.md §2.6 [C]).
    let s = km.share_with_event_within(12.0).expect("valid");
    assert!((s.share - (1.0 - 0.752941)).abs() < 5e-7);
    assert!((s.se.expect("se") - 0.096350).abs() < 5e-7);
    assert!((s.ci95.lower - (1.0 - 0.889362)).abs() < 5e-7);
    assert!((s.ci95.upper - (1.0 - 0.503200)).abs() < 5e-7);
    assert!(!s.beyond_follow_up);
    let before = km.share_with_event_within(1.0).expect("valid");
    assert_eq!((before.share, before.se), (0.0, Some(0.0)));
    assert!(
        km.share_with_event_within(40.0)
            .expect("valid")
            .beyond_follow_up
    );
    assert!(km.share_with_event_within(f64::NAN).is_err());
}

#[test]
fn edges() {
    assert_eq!(kaplan_meier(&[]), Ok(None));
    assert!(kaplan_meier(&[(f64::NAN, true)]).is_err());
    assert!(kaplan_meier(&[(-1.0, true)]).is_err());
    assert!(kaplan_meier(&[(f64::INFINITY, false)]).is_err());
    // All censored: Ŝ stays 1, median not reached.
    let km = fit(&[3.0, 5.0], &[false, false]);
    assert_eq!(km.median, None);
    assert!(
        km.steps
            .iter()
            .all(|s| s.survival == 1.0 && s.ci95.lower == 1.0)
    );
    // Curve reaching 0: SE undefined there.
    let km = fit(&[1.0, 2.0], &[true, true]);
    assert_eq!(km.steps[1].survival, 0.0);
    assert_eq!(km.steps[1].se, None);
    assert!(km.quantile(0.0).is_err() && km.quantile(1.5).is_err());
    assert_eq!(km.quantile(1.0), Ok(Some(2.0)));
}
