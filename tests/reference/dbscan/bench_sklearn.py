#!/usr/bin/env python3
"""Time scikit-learn DBSCAN on a binary point file, for comparison with Rust.

    python3 tests/reference/dbscan/bench_sklearn.py POINTS.bin [LABELS.bin]

POINTS.bin holds packed little-endian records of 20 bytes each:
f64 lon, f64 lat, i32 day (degrees; the day is read but not used, as
DBSCAN has no time window). The script runs

    DBSCAN(eps=15 / 6371008.8, min_samples=1, metric='haversine',
           algorithm='ball_tree', n_jobs=1).fit(radians([lat, lon]))

timing `fit` only, and prints one JSON line:
{"points": N, "clusters": K, "seconds": S, "sklearn": "x.y.z"}.
With LABELS.bin it also writes the labels there as little-endian i32, one
per point in input order, numbered by first point as DBSCAN does.
"""

import json
import sys
import time

import numpy as np
import sklearn
from sklearn.cluster import DBSCAN

R_M = 6371008.8
EPS_M = 15.0
RECORD = np.dtype([("lon", "<f8"), ("lat", "<f8"), ("day", "<i4")])


def main(argv):
    if len(argv) not in (2, 3):
        sys.stderr.write(__doc__)
        return 2
    data = np.fromfile(argv[1], dtype=RECORD)
    X = np.radians(np.column_stack([data["lat"], data["lon"]]))
    db = DBSCAN(eps=EPS_M / R_M, min_samples=1, metric="haversine", algorithm="ball_tree", n_jobs=1)
    t0 = time.perf_counter()
    db.fit(X)
    seconds = time.perf_counter() - t0
    labels = db.labels_.astype("<i4")
    clusters = int(labels.max()) + 1 if len(labels) else 0
    if len(argv) == 3:
        labels.tofile(argv[2])
    print(json.dumps({"points": int(len(data)), "clusters": clusters, "seconds": round(seconds, 4), "sklearn": sklearn.__version__}))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
