#!/usr/bin/env python3
"""Generate the clustering reference fixture for Groundproof.

Run from any directory:

    pip install scikit-learn numpy        # scipy comes with scikit-learn
    python3 tests/reference/dbscan/make_fixture.py

It writes, next to this script:

- points.csv: `lon,lat,site,day`, one row per alert pixel in point order.
  lon and lat have 9 decimals; every value is a multiple of 1e-5 degree, so
  the decimal text is exact and parses to the same f64 in Python and Rust.
- labels.csv: `label`, one row per point in the same order: scikit-learn
  DBSCAN(eps=15 m / R, min_samples=1, metric='haversine',
  algorithm='ball_tree') on radians [lat, lon]. Clusters are numbered
  0, 1, 2, ... in order of their first point, which is how scikit-learn's
  DBSCAN numbers them.
- labels_window30.csv: `label`, the space-time reference: pairs within 15 m
  (BallTree haversine query_radius, distance <= eps) AND |day difference|
  <= 30 days are joined, then scipy connected_components; labels renumbered
  in order of first point, like DBSCAN's.
- meta.json: library and Python versions, eps, R, seed, grid, counts of
  points and clusters per site, and the smallest gap between any pair's
  distance and eps (so nobody has to wonder about borderline pairs).

The points are made by a small seeded generator of clumped alert pixels
(random-walk blobs, gappy, around hotspots, plus lone pixels) on a 9e-5
degree grid (about 10 m on the ground at the equator) at two sites: one
across the equator (lon 0.5..0.7, lat -0.1..0.1) and one at 60 degrees north
(lon 0.5..0.9, lat 59.9..60.1). At 60 N the same degree grid is only about
5 m wide in longitude, so pairs three columns apart are just above 15 m south
of about 60.0248 N and just below it further north: the fixture checks that
the distance test follows the cosine of latitude.

The Rust tests read these files; they never run Python.
"""

import csv
import json
import math
import platform
from pathlib import Path

import numpy as np
import scipy
import sklearn
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from sklearn.cluster import DBSCAN
from sklearn.neighbors import BallTree

HERE = Path(__file__).resolve().parent
SEED = 20250101
R_M = 6371008.8  # mean Earth radius in metres (IUGG), as in the performance notes
EPS_M = 15.0  # 1.5 pixel widths
EPS_RAD = EPS_M / R_M
WINDOW_DAYS = 30
UNIT = 1e-5  # coordinates are integers in units of 1e-5 degree
STEP = 9  # grid step in units: 9e-5 degree
POINTS_PER_SITE = 2500
# Isolated point pairs three grid columns apart in one row, added at the 60 N
# site; at these latitudes they are 14.96..15.06 m apart (see module docstring).
PROBE_PAIRS = 40
DAYS_SPAN = 730

# name, lon range (degrees), lat range (degrees)
SITES = [
    ("equator", (0.5, 0.7), (-0.1, 0.1)),
    ("north60", (0.5, 0.9), (59.9, 60.1)),
]


def site_cells(rng, nx, ny, n):
    """n clumped (ix, iy, day) grid cells in an nx by ny pixel box."""
    in_blobs = n - n // 10
    hotspots = [(rng.uniform(0, nx), rng.uniform(0, ny)) for _ in range(4)]
    sigma = 100.0  # pixels
    cells = []
    while len(cells) < in_blobs:
        size = int(round(math.exp(rng.uniform(math.log(5), math.log(300)))))
        if rng.random() < 0.7:
            hx, hy = hotspots[rng.integers(len(hotspots))]
            cx, cy = hx + sigma * rng.standard_normal(), hy + sigma * rng.standard_normal()
        else:
            cx, cy = rng.uniform(0, nx), rng.uniform(0, ny)
        at = (int(min(max(cx, 0), nx - 1)), int(min(max(cy, 0), ny - 1)))
        base = int(rng.integers(DAYS_SPAN))
        seen = set()
        steps = 0
        while len(seen) < size and steps < size * 60:
            if at not in seen:
                seen.add(at)
                # 10% of a blob's pixels are dropped, so the alerts are gappy.
                if rng.random() >= 0.1 and len(cells) < in_blobs:
                    lag = min(int(rng.exponential(7.0)), 60)
                    cells.append((at[0], at[1], base + lag))
            steps += 1
            move = rng.integers(4)
            at = [(at[0] + 1, at[1]), (at[0] - 1, at[1]), (at[0], at[1] + 1), (at[0], at[1] - 1)][move]
    while len(cells) < n:
        cells.append((int(rng.integers(nx)), int(rng.integers(ny)), int(rng.integers(DAYS_SPAN))))
    return cells


def add_probes(rng, cells, nx, ny, pairs):
    """Append `pairs` isolated pairs (ix, iy) and (ix + 3, iy), each pair at
    least 12 pixels from every other cell, with days 0..29 apart (so the
    30-day window keeps them joined when distance joins them)."""
    taken = {(c[0], c[1]) for c in cells}
    added = 0
    while added < pairs:
        ix, iy = int(rng.integers(nx - 3)), int(rng.integers(ny))
        near = any((ix + dx, iy + dy) in taken for dx in range(-12, 16) for dy in range(-12, 13))
        if near:
            continue
        d = int(rng.integers(DAYS_SPAN))
        cells.append((ix, iy, d))
        cells.append((ix + 3, iy, d + int(rng.integers(30))))
        taken.update({(ix, iy), (ix + 3, iy)})
        added += 1


def first_appearance(labels):
    """Renumber labels 0, 1, ... in order of each label's first point."""
    mapping = {}
    out = np.empty(len(labels), dtype=np.int64)
    for i, lab in enumerate(labels):
        out[i] = mapping.setdefault(int(lab), len(mapping))
    return out


def haversine_m(lat1, lon1, lat2, lon2):
    """Great-circle distance in metres, radians in (same formula as scikit-learn's)."""
    a = np.sin((lat2 - lat1) / 2) ** 2 + np.cos(lat1) * np.cos(lat2) * np.sin((lon2 - lon1) / 2) ** 2
    return 2 * R_M * np.arcsin(np.sqrt(a))


def main():
    rng = np.random.default_rng(SEED)
    rows = []  # (lon_text, lat_text, site, day)
    probe_keys = []  # ((lon_text, lat_text), (lon_text, lat_text)) of each probe pair
    for name, (lon_lo, lon_hi), (lat_lo, lat_hi) in SITES:
        x0, y0 = round(lon_lo / UNIT), round(lat_lo / UNIT)
        nx = (round(lon_hi / UNIT) - x0) // STEP
        ny = (round(lat_hi / UNIT) - y0) // STEP
        probes = PROBE_PAIRS if lat_lo > 45 else 0
        cells = site_cells(rng, nx, ny, POINTS_PER_SITE - 2 * probes)
        first_probe = len(cells)
        add_probes(rng, cells, nx, ny, probes)
        texts = [
            # (x0 + ix * STEP) / 1e5 is the correctly rounded f64 of k * 1e-5.
            (f"{(x0 + ix * STEP) / 1e5:.9f}", f"{(y0 + iy * STEP) / 1e5:.9f}", name, day)
            for ix, iy, day in cells
        ]
        rows.extend(texts)
        probe_keys.extend(
            (texts[k][:2], texts[k + 1][:2]) for k in range(first_probe, len(texts), 2)
        )
    order = rng.permutation(len(rows))
    rows = [rows[i] for i in order]

    lon = np.array([float(r[0]) for r in rows])
    lat = np.array([float(r[1]) for r in rows])
    day = np.array([r[3] for r in rows], dtype=np.int64)
    site = np.array([r[2] for r in rows])
    X = np.radians(np.column_stack([lat, lon]))

    db = DBSCAN(eps=EPS_RAD, min_samples=1, metric="haversine", algorithm="ball_tree").fit(X)
    labels = db.labels_.astype(np.int64)
    assert (labels >= 0).all(), "min_samples=1 leaves no noise"
    assert (first_appearance(labels) == labels).all(), "DBSCAN numbers clusters by first point"

    # Space-time reference: spatial pairs within eps, kept when |dday| <= window.
    tree = BallTree(X, metric="haversine")
    neigh = tree.query_radius(X, r=EPS_RAD)
    src, dst = [], []
    min_gap = math.inf
    for i, js in enumerate(neigh):
        for j in js:
            if j > i and abs(day[i] - day[j]) <= WINDOW_DAYS:
                src.append(i)
                dst.append(j)
    # Smallest |distance - eps| over all pairs up to 2 eps apart.
    for i, js in enumerate(tree.query_radius(X, r=2 * EPS_RAD)):
        js = js[js > i]
        if len(js):
            d = haversine_m(X[i, 0], X[i, 1], X[js, 0], X[js, 1])
            min_gap = min(min_gap, float(np.min(np.abs(d - EPS_M))))
    n = len(rows)
    graph = coo_matrix((np.ones(len(src)), (src, dst)), shape=(n, n))
    _, comp = connected_components(graph, directed=False)
    window_labels = first_appearance(comp)

    with open(HERE / "points.csv", "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["lon", "lat", "site", "day"])
        w.writerows(rows)
    for fname, labs in [("labels.csv", labels), ("labels_window30.csv", window_labels)]:
        with open(HERE / fname, "w", newline="") as f:
            f.write("label\n")
            f.writelines(f"{int(v)}\n" for v in labs)

    per_site = {}
    for name, _, _ in SITES:
        m = site == name
        sizes = np.bincount(labels[m])
        sizes = sizes[sizes > 0]
        per_site[name] = {
            "points": int(m.sum()),
            "clusters": int(len(np.unique(labels[m]))),
            "singletons": int((sizes == 1).sum()),
            "largest_cluster": int(sizes.max()),
            "clusters_window30": int(len(np.unique(window_labels[m]))),
        }
    meta = {
        "generator": "tests/reference/dbscan/make_fixture.py",
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "sklearn": sklearn.__version__,
        "dbscan": "DBSCAN(eps=eps_m/R_m, min_samples=1, metric='haversine', algorithm='ball_tree') on radians [lat, lon]",
        "window_reference": "BallTree(metric='haversine').query_radius(r=eps_m/R_m), keep pairs with |day_i - day_j| <= window_days, scipy connected_components, labels renumbered by first point",
        "eps_m": EPS_M,
        "R_m": R_M,
        "eps_rad": EPS_RAD,
        "window_days": WINDOW_DAYS,
        "seed": SEED,
        "grid_deg": STEP * UNIT,
        "sites": {name: {"lon": list(lo), "lat": list(la)} for name, lo, la in SITES},
        "points": n,
        "clusters": int(labels.max() + 1),
        "clusters_window30": int(window_labels.max() + 1),
        "per_site": per_site,
        "min_abs_distance_minus_eps_m": min_gap,
    }
    # Probe pairs: how many ended up in one cluster (each is alone otherwise).
    index = {(r[0], r[1]): i for i, r in enumerate(rows)}
    linked = [labels[index[a]] == labels[index[b]] for a, b in probe_keys]
    per_site["north60"]["probe_pairs"] = len(probe_keys)
    per_site["north60"]["probe_pairs_linked"] = int(sum(linked))
    per_site["north60"]["probe_pairs_linked_window30"] = int(
        sum(window_labels[index[a]] == window_labels[index[b]] for a, b in probe_keys)
    )
    meta["per_site"] = per_site
    (HERE / "meta.json").write_text(json.dumps(meta, indent=2) + "\n")
    print(json.dumps(meta, indent=2))


if __name__ == "__main__":
    main()
