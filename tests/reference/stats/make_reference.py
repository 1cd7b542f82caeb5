#!/usr/bin/env python3
"""Generate the reference fixtures for the Groundproof statistics module.

Run from any directory:

    pip install statsmodels lifelines numpy
    python3 tests/reference/stats/make_reference.py

It writes, next to this script:

- proportion.json: statsmodels `proportion_confint` (method='wilson' and
  method='beta', alpha=0.05) on a grid of (x, n) cases, edge cases included.
- survival.json: lifelines `KaplanMeierFitter` (survival, log-log 95% band,
  median and its CI, percentiles, predictions) and statsmodels
  `SurvfuncRight` (Greenwood SE) on the 6-MP arm of Freireich et al. 1963
  and on seeded random right-censored samples with ties.
- quantiles.json: numpy `percentile` (default method 'linear', i.e.
  Hyndman-Fan type 7) on seeded random samples.

Every file records the library versions that produced it. The Rust tests
read these files; they never run Python.
"""

import json
import math
import warnings
import platform
from pathlib import Path

import lifelines
import numpy as np
import statsmodels
from lifelines import KaplanMeierFitter
from lifelines.utils import median_survival_times
from statsmodels.duration.survfunc import SurvfuncRight
from statsmodels.stats.proportion import proportion_confint

HERE = Path(__file__).resolve().parent
ALPHA = 0.05


def versions():
    return {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "statsmodels": statsmodels.__version__,
        "lifelines": lifelines.__version__,
    }


def finite_or_none(value):
    """JSON has no inf/nan: 'not reached' (inf) and undefined (nan) become null."""
    value = float(value)
    return value if math.isfinite(value) else None


def write(name, payload):
    path = HERE / name
    path.write_text(json.dumps(payload, indent=1, sort_keys=True) + "\n")
    print(f"wrote {path}")


def proportion_cases():
    grid = set()
    for n in [1, 2, 3, 4, 5, 7, 10, 20, 29, 50, 100, 148, 263, 1000, 10000, 123457]:
        for x in {0, 1, 2, n // 3, n // 2, n - 2, n - 1, n}:
            if 0 <= x <= n:
                grid.add((x, n))
    grid |= {(81, 263), (15, 148), (0, 20), (1, 29), (50, 100), (1, 123457), (5, 123457)}
    cases = []
    for x, n in sorted(grid, key=lambda c: (c[1], c[0])):
        wl, wu = proportion_confint(x, n, alpha=ALPHA, method="wilson")
        bl, bu = proportion_confint(x, n, alpha=ALPHA, method="beta")
        cases.append({"x": x, "n": n, "wilson": [float(wl), float(wu)], "beta": [float(bl), float(bu)]})
    write(
        "proportion.json",
        {
            "generator": "tests/reference/stats/make_reference.py",
            "calls": "statsmodels.stats.proportion.proportion_confint(x, n, alpha=0.05, method='wilson'|'beta')",
            "versions": versions(),
            "cases": cases,
        },
    )


def six_mp():
    # Freireich et al. 1963, 6-MP arm (weeks; False = censored), as listed in
    # /work/shared/references/statistics.md section 2.6 (NAG g12aac example data).
    spec = "6 6 6 6+ 7 9+ 10 10+ 11+ 13 16 17+ 19+ 20+ 22 23 25+ 32+ 32+ 34+ 35+"
    times, events = [], []
    for item in spec.split():
        censored = item.endswith("+")
        times.append(float(item.rstrip("+")))
        events.append(not censored)
    return times, events


def random_sample(seed, n, censor_share, rounding):
    rng = np.random.default_rng(seed)
    event_times = rng.exponential(scale=30.0, size=n)
    censor_times = rng.uniform(0.0, 60.0, size=n)
    times = np.minimum(event_times, censor_times)
    observed = event_times <= censor_times
    # Force some extra censoring so that the curve may stay above 0.5.
    extra = rng.random(n) < censor_share
    observed = observed & ~extra
    if rounding:
        times = np.round(times)  # integer days: many ties, some zero durations
    return [float(t) for t in times], [bool(e) for e in observed]


def km_case(name, times, events, predict_at):
    kmf = KaplanMeierFitter()
    kmf.fit(times, event_observed=events, alpha=ALPHA)
    table = kmf.event_table
    surv = kmf.survival_function_.iloc[:, 0]
    ci = kmf.confidence_interval_
    lower_col, upper_col = ci.columns[0], ci.columns[1]
    sm = SurvfuncRight(np.asarray(times), np.asarray(events, dtype=float))
    sm_se = dict(zip([float(t) for t in sm.surv_times], [finite_or_none(s) for s in sm.surv_prob_se]))
    rows = []
    for t in table.index:
        t = float(t)
        if t == 0.0 and table.loc[t, "observed"] == 0 and table.loc[t, "censored"] == 0:
            continue  # lifelines' synthetic time-0 row
        rows.append(
            {
                "time": t,
                "at_risk": int(table.loc[t, "at_risk"]),
                "events": int(table.loc[t, "observed"]),
                "censored": int(table.loc[t, "censored"]),
                "survival": float(surv.loc[t]),
                "loglog_lower": finite_or_none(ci.loc[t, lower_col]),
                "loglog_upper": finite_or_none(ci.loc[t, upper_col]),
                # statsmodels lists event times only; Greenwood SE there.
                "greenwood_se_statsmodels": sm_se.get(t),
            }
        )
    median_ci = median_survival_times(ci)
    quantiles = {}
    for q in [0.25, 0.5, 0.75, 0.9]:
        # lifelines percentile(p) is the time where S first falls to <= p,
        # i.e. the q = 1 - p quantile of time.
        quantiles[str(q)] = finite_or_none(kmf.percentile(1.0 - q))
    predictions = [{"t": float(t), "survival": float(kmf.predict(float(t)))} for t in predict_at]
    return {
        "name": name,
        "times": [float(t) for t in times],
        "events": [bool(e) for e in events],
        "rows": rows,
        "median": finite_or_none(kmf.median_survival_time_),
        "median_ci_loglog": [
            finite_or_none(median_ci.iloc[0, 0]),
            finite_or_none(median_ci.iloc[0, 1]),
        ],
        "quantiles": quantiles,
        "predictions": predictions,
    }


def survival_cases():
    cases = []
    t, e = six_mp()
    cases.append(km_case("freireich-6mp", t, e, [0, 5.9, 6, 6.5, 10, 12.99, 13, 23, 30, 35]))
    # Hand-made: the curve sits exactly at 0.5 over [2, 3) and ends at 0.
    cases.append(km_case("four-events-to-zero", [1.0, 2.0, 3.0, 4.0], [True] * 4, [0, 1.5, 2, 2.5, 3, 4, 9]))
    # Hand-made: event and censoring tied at 2, zero duration at 0.
    cases.append(
        km_case("ties-and-zero", [0.0, 2.0, 2.0, 2.0, 5.0, 8.0], [True, True, False, True, False, True], [0, 2, 5, 8])
    )
    t, e = random_sample(seed=20240611, n=60, censor_share=0.2, rounding=True)
    cases.append(km_case("seeded-60-integer-days", t, e, [0, 1, 7, 14, 30, 45]))
    t, e = random_sample(seed=7, n=200, censor_share=0.5, rounding=False)
    cases.append(km_case("seeded-200-continuous", t, e, [0.5, 3, 10, 20, 40, 59]))
    write(
        "survival.json",
        {
            "generator": "tests/reference/stats/make_reference.py",
            "calls": (
                "lifelines.KaplanMeierFitter().fit(times, events, alpha=0.05): event_table, "
                "survival_function_, confidence_interval_ (log-log), median_survival_time_, "
                "utils.median_survival_times(confidence_interval_), percentile(1 - q), predict(t); "
                "statsmodels.duration.survfunc.SurvfuncRight(times, events).surv_prob_se (Greenwood)"
            ),
            "versions": versions(),
            "cases": cases,
        },
    )


def quantile_cases():
    rng = np.random.default_rng(424242)
    samples = [
        [5.0],
        [3.0, 1.0],
        [2.0, 9.0, 4.0],
        [1.0, 1.0, 1.0, 2.0],
        [float(v) for v in np.round(rng.exponential(12.0, size=10), 1)],
        [float(v) for v in rng.lognormal(2.0, 1.0, size=101)],
        [float(v) for v in rng.integers(0, 90, size=1000)],
    ]
    probs = [0.0, 0.1, 0.25, 0.5, 0.75, 0.9, 1.0]
    cases = []
    for sample in samples:
        values = np.percentile(np.asarray(sample), [100.0 * p for p in probs])
        cases.append({"sample": sample, "probs": probs, "quantiles": [float(v) for v in values]})
    write(
        "quantiles.json",
        {
            "generator": "tests/reference/stats/make_reference.py",
            "calls": "numpy.percentile(sample, 100 * p) with the default method='linear' (Hyndman-Fan type 7)",
            "versions": versions(),
            "cases": cases,
        },
    )


if __name__ == "__main__":
    # lifelines warns that percentile() reads the step function; that is what we want.
    warnings.simplefilter("ignore", category=UserWarning)
    proportion_cases()
    survival_cases()
    quantile_cases()
