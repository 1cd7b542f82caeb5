#!/usr/bin/env python3
"""Make utm_mgrs_geoconvert.csv: UTM and MGRS reference values from GeographicLib's GeoConvert.

Run from anywhere:  python3 tests/reference/coords/make_fixture.py
Needs: GeoConvert on PATH (Debian: apt-get install geographiclib-tools).

Points (seeded, so the file is reproducible):
  * 2000 random global points, uniform in latitude [-80, 84) and longitude [-180, 180)
  * 500 random tropical points, latitude [-23.5, 23.5]
  * 200 points within 0.001 deg of the equator, plus latitude exactly 0 and -0.0
  * every UTM zone edge (longitude a multiple of 6) and 1e-7 deg either side, random latitudes
  * every MGRS latitude band edge (latitude a multiple of 8) and 1e-7 deg either side
  * the Norway (56..64N, 3..12E) and Svalbard (72..84N, 0..42E) exceptions and their edges
  * the UTM latitude limits -80 and just below 84, and longitudes -180, 180, 179.9999999

GeoConvert calls (one line per point, same input strings that are written to the fixture):
  GeoConvert -u -p 3    -> "zone+hemisphere easting northing", millimetre output
  GeoConvert -m -p 0    -> MGRS at 1 m (10 digits)     [-p is relative to 1 m]
  GeoConvert -m -p -1   -> MGRS at 10 m (8 digits)
  GeoConvert -m -p -3   -> MGRS at 1 km (4 digits)
  GeoConvert -m -p -5   -> MGRS 100 km square only (0 digits)
GeoConvert truncates MGRS coordinates (never rounds), see GeoConvert(1).
"""

import os
import random
import subprocess

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "utm_mgrs_geoconvert.csv")


def points():
    rng = random.Random(20240611)
    pts = []
    for _ in range(2000):
        pts.append((rng.uniform(-80.0, 84.0), rng.uniform(-180.0, 180.0)))
    for _ in range(500):
        pts.append((rng.uniform(-23.5, 23.5), rng.uniform(-180.0, 180.0)))
    for _ in range(200):
        pts.append((rng.uniform(-0.001, 0.001), rng.uniform(-180.0, 180.0)))
    pts.append((0.0, 10.0))
    pts.append((0.0, -60.0))
    pts.append((-0.0, 3.0))
    for z in range(0, 61):
        lon = -180.0 + 6.0 * z
        for d in (-1e-7, 0.0, 1e-7):
            lo = lon + d
            if lo < -180.0 or lo >= 180.0:
                continue
            pts.append((rng.uniform(-80.0, 84.0), lo))
    for b in range(-10, 11):
        lat = 8.0 * b
        for d in (-1e-7, 0.0, 1e-7):
            la = lat + d
            if la < -80.0 or la >= 84.0:
                continue
            pts.append((la, rng.uniform(-180.0, 180.0)))
    # Norway: grid over 55..65 N, 0..13 E, plus edges
    for la in (55.9999999, 56.0, 56.5, 60.0, 63.9999999, 64.0):
        for lo in (2.9999999, 3.0, 3.0000001, 5.9999999, 6.0, 8.0, 11.9999999, 12.0):
            pts.append((la, lo))
    for _ in range(100):
        pts.append((rng.uniform(55.0, 65.0), rng.uniform(0.0, 13.0)))
    # Svalbard: 71..84 N, -1..43 E, plus edges
    for la in (71.9999999, 72.0, 78.0, 83.9999999):
        for lo in (-0.0000001, 0.0, 8.9999999, 9.0, 20.9999999, 21.0, 32.9999999, 33.0,
                   41.9999999, 42.0):
            pts.append((la, lo))
    for _ in range(200):
        pts.append((rng.uniform(71.0, 84.0), rng.uniform(-1.0, 43.0)))
    # latitude and longitude limits
    for la in (-80.0, -79.9999999, 83.9999999, 83.99):
        for lo in (-180.0, -179.9999999, 0.0, 179.9999999):
            pts.append((la, lo))
    pts.append((12.0, 180.0))
    pts.append((-12.0, 180.0))
    # GeoConvert man-page / reference-file examples
    pts += [(33.3, 44.4), (40.748333, -73.985278), (-3.1, -60.025)]
    return pts


def fmt(x):
    s = "%.10f" % x
    if x == 0.0 and str(x).startswith("-"):
        s = "-" + s.lstrip("-")
    return s


def geoconvert(args, lines):
    out = subprocess.run(["GeoConvert"] + args, input="\n".join(lines) + "\n",
                         capture_output=True, text=True, check=True).stdout
    res = out.strip("\n").split("\n")
    assert len(res) == len(lines), (args, len(res), len(lines))
    return res


def main():
    version = subprocess.run(["GeoConvert", "--version"], capture_output=True,
                             text=True, check=True).stdout.strip()
    pts = points()
    lines = ["%s %s" % (fmt(la), fmt(lo)) for la, lo in pts]
    utm = geoconvert(["-u", "-p", "3"], lines)
    m0 = geoconvert(["-m", "-p", "0"], lines)
    m1 = geoconvert(["-m", "-p", "-1"], lines)
    m3 = geoconvert(["-m", "-p", "-3"], lines)
    m5 = geoconvert(["-m", "-p", "-5"], lines)
    with open(OUT, "w") as f:
        f.write("# UTM/MGRS reference values made by tests/reference/coords/make_fixture.py\n")
        f.write("# tool: %s (Debian geographiclib-tools)\n" % version)
        f.write("# utm: GeoConvert -u -p 3; mgrs_1m: -m -p 0; mgrs_10m: -m -p -1; "
                "mgrs_1km: -m -p -3; mgrs_100km: -m -p -5\n")
        f.write("lat,lon,zone,hemisphere,easting,northing,mgrs_1m,mgrs_10m,mgrs_1km,mgrs_100km\n")
        for line, u, a, b, c, d in zip(lines, utm, m0, m1, m3, m5):
            la, lo = line.split()
            zh, e, n = u.split()
            zone, hemi = int(zh[:-1]), zh[-1]
            f.write("%s,%s,%d,%s,%s,%s,%s,%s,%s,%s\n" % (la, lo, zone, hemi, e, n, a, b, c, d))
    print("wrote %d points to %s" % (len(pts), OUT))


if __name__ == "__main__":
    main()
