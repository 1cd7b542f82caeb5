//! Control points: seeded random locations inside a zone that are far from every alert.
//!
//! Control points measure what the alerts miss: a team visits places where no alert was
//! raised. [`place_controls`] draws candidates uniformly on the sphere inside the zone's
//! bounding box (longitude uniform, sin(latitude) uniform, so equal areas are equally likely;
//! the sphere rather than the ellipsoid is common practice for sampling and changes the density
//! by under 0.7 %), keeps those inside the zone polygon (`geo::Contains`, so boundary points are
//! rejected) and at least `min_distance_m` metres (WGS 84 geodesic, geographiclib-rs) from every
//! alert, until K are placed or the try budget runs out (a clear error then).
//!
//! The alert test uses [`AlertGrid`], a hash grid over latitude rows and longitude columns in
//! cells of the alert radius in degrees, so that a query only looks at alerts that can be
//! within the radius. 100 000 alerts cost well under a second to index and query.

use std::collections::{BTreeMap, HashMap};

use geo::{BoundingRect, Contains, MultiPolygon, Point};
use geographiclib_rs::{Geodesic, InverseGeodesic};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use super::PlanError;
use crate::planning::coords::LatLon;

/// Default try budget per control point asked for (common practice: generous, bounded).
pub const DEFAULT_TRIES_PER_POINT: usize = 10_000;

/// WGS 84 semi-major axis, metres (NGA.SIG.0012).
const WGS84_A: f64 = 6_378_137.0;
/// Metres per degree of latitude, rounded down from the smallest value on WGS 84
/// (a(1−e²)·π/180 = 110 574 m at the equator; computed): a lower bound, so the latitude
/// window is never too narrow.
const MIN_METRES_PER_DEG_LAT: f64 = 110_000.0;

/// Index of alert positions for "is any alert within D metres of this point?".
#[derive(Debug, Clone)]
pub struct AlertGrid {
    alerts: Vec<LatLon>,
    radius_m: f64,
    /// Latitude window half-width, degrees.
    dlat: f64,
    /// Cell size, degrees (both directions).
    cell: f64,
    /// row → (column → alert indices).
    rows: HashMap<i64, BTreeMap<i64, Vec<u32>>>,
    ncols: i64,
}

impl AlertGrid {
    /// Indexes `alerts` for queries at distance `radius_m` (finite, ≥ 0).
    pub fn new(alerts: &[LatLon], radius_m: f64) -> Result<Self, PlanError> {
        if !(radius_m.is_finite() && radius_m >= 0.0) {
            return Err(PlanError::BadMinDistance(radius_m));
        }
        if alerts.len() > u32::MAX as usize {
            return Err(PlanError::TooManyAlerts(alerts.len()));
        }
        let mut pts = Vec::with_capacity(alerts.len());
        for (index, a) in alerts.iter().enumerate() {
            if LatLon::checked(a.lat, a.lon).is_err() {
                return Err(PlanError::BadAlert {
                    index,
                    lat: a.lat,
                    lon: a.lon,
                });
            }
            pts.push(LatLon::new(a.lat, wrap_lon(a.lon)));
        }
        let dlat = radius_m / MIN_METRES_PER_DEG_LAT;
        // Cells no smaller than 1e-6° (~0.1 m) and no larger than 10°.
        let cell = dlat.clamp(1e-6, 10.0);
        let ncols = (360.0 / cell).ceil() as i64;
        let mut rows: HashMap<i64, BTreeMap<i64, Vec<u32>>> = HashMap::new();
        for (i, p) in pts.iter().enumerate() {
            let (r, c) = (row_of(p.lat, cell), col_of(p.lon, cell, ncols));
            rows.entry(r)
                .or_default()
                .entry(c)
                .or_default()
                .push(i as u32);
        }
        Ok(Self {
            alerts: pts,
            radius_m,
            dlat,
            cell,
            rows,
            ncols,
        })
    }

    /// The query radius in metres.
    pub fn radius_m(&self) -> f64 {
        self.radius_m
    }

    /// True if some alert is closer than the radius (geodesic) to `p`; false for radius 0.
    pub fn any_within(&self, p: LatLon) -> bool {
        if self.radius_m <= 0.0 || self.alerts.is_empty() {
            return false;
        }
        let g = Geodesic::wgs84();
        let lon = wrap_lon(p.lon);
        // Along any path shorter than D the latitude stays within dlat of p, and the parallel
        // radius N·cosφ ≥ a·cosφ, so |Δλ| < D / (a·cos φmax).
        let phi_max = p.lat.abs() + self.dlat;
        let dlon = if phi_max >= 89.999 {
            360.0
        } else {
            (self.radius_m / (WGS84_A * phi_max.to_radians().cos())).to_degrees() * 1.000_001
        };
        let r0 = row_of((p.lat - self.dlat).max(-90.0), self.cell);
        let r1 = row_of((p.lat + self.dlat).min(90.0), self.cell);
        let col_ranges: Vec<(i64, i64)> = if 2.0 * dlon >= 360.0 {
            vec![(0, self.ncols - 1)]
        } else {
            let c0 = ((lon - dlon + 180.0) / self.cell).floor() as i64;
            let c1 = ((lon + dlon + 180.0) / self.cell).floor() as i64;
            if c0 < 0 {
                vec![(0, c1), (c0 + self.ncols, self.ncols - 1)]
            } else if c1 >= self.ncols {
                vec![(c0, self.ncols - 1), (0, c1 - self.ncols)]
            } else {
                vec![(c0, c1)]
            }
        };
        for r in r0..=r1 {
            let Some(row) = self.rows.get(&r) else {
                continue;
            };
            for &(c0, c1) in &col_ranges {
                if c0 > c1 {
                    continue;
                }
                for (_, idx) in row.range(c0..=c1) {
                    for &i in idx {
                        let a = self.alerts[i as usize];
                        let s12: f64 = g.inverse(p.lat, lon, a.lat, a.lon);
                        if s12 < self.radius_m {
                            return true;
                        }
                    }
                }
            }
        }
        false
    }
}

fn wrap_lon(lon: f64) -> f64 {
    (lon + 180.0).rem_euclid(360.0) - 180.0
}

fn row_of(lat: f64, cell: f64) -> i64 {
    ((lat + 90.0) / cell).floor() as i64
}

fn col_of(lon: f64, cell: f64, ncols: i64) -> i64 {
    (((lon + 180.0) / cell).floor() as i64).rem_euclid(ncols)
}

/// Places `count` control points inside `zone` (lon/lat degrees, x = longitude), each at
/// least `min_distance_m` metres from every alert, reproducibly from `seed`, using at most
/// `max_tries` candidates in all. Points are returned in the order they were found.
pub fn place_controls(
    zone: &MultiPolygon<f64>,
    alerts: &[LatLon],
    count: usize,
    min_distance_m: f64,
    seed: u64,
    max_tries: usize,
) -> Result<Vec<LatLon>, PlanError> {
    let grid = AlertGrid::new(alerts, min_distance_m)?;
    let Some(bbox) = zone.bounding_rect() else {
        return Err(PlanError::EmptyZone);
    };
    let (lon0, lon1, lat0, lat1) = (bbox.min().x, bbox.max().x, bbox.min().y, bbox.max().y);
    // Longitudes may run past ±180 for a zone drawn across the antimeridian, but not by more
    // than a turn.
    if !(lon0 >= -540.0 && lon1 <= 540.0 && lat0 >= -90.0 && lat1 <= 90.0) {
        return Err(PlanError::BadZone);
    }
    if count == 0 {
        return Ok(Vec::new());
    }
    let (z0, z1) = (lat0.to_radians().sin(), lat1.to_radians().sin());
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut placed = Vec::with_capacity(count);
    let mut tries = 0usize;
    while placed.len() < count {
        if tries >= max_tries {
            return Err(PlanError::ControlsNotPlaced {
                placed: placed.len(),
                wanted: count,
                tries,
            });
        }
        tries += 1;
        let lon = if lon1 > lon0 {
            rng.random_range(lon0..lon1)
        } else {
            lon0
        };
        let z: f64 = if z1 > z0 {
            rng.random_range(z0..z1)
        } else {
            z0
        };
        let lat = z.clamp(-1.0, 1.0).asin().to_degrees();
        if !zone.contains(&Point::new(lon, lat)) {
            continue;
        }
        let p = LatLon::new(lat, lon);
        if grid.any_within(p) {
            continue;
        }
        placed.push(p);
    }
    Ok(placed)
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{MultiPolygon, polygon};

    fn square(lon0: f64, lat0: f64, size: f64) -> MultiPolygon<f64> {
        MultiPolygon::new(vec![polygon![
            (x: lon0, y: lat0),
            (x: lon0 + size, y: lat0),
            (x: lon0 + size, y: lat0 + size),
            (x: lon0, y: lat0 + size),
            (x: lon0, y: lat0),
        ]])
    }

    /// Brute force: geodesic distance to every alert (the oracle for the grid).
    fn brute_within(alerts: &[LatLon], p: LatLon, d: f64) -> bool {
        let g = Geodesic::wgs84();
        alerts.iter().any(|a| {
            let s: f64 = g.inverse(p.lat, p.lon, a.lat, a.lon);
            s < d
        })
    }

    fn random_points(seed: u64, n: usize, lat: (f64, f64), lon: (f64, f64)) -> Vec<LatLon> {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        (0..n)
            .map(|_| {
                LatLon::new(
                    rng.random_range(lat.0..lat.1),
                    rng.random_range(lon.0..lon.1),
                )
            })
            .collect()
    }

    #[test]
    fn grid_agrees_with_brute_force_including_antimeridian_and_poles() {
        for (seed, lat, lon, d) in [
            (1u64, (-1.0, 1.0), (-1.0, 1.0), 5_000.0),
            (2, (10.0, 10.5), (179.5, 180.0), 3_000.0),
            (3, (10.0, 10.5), (-180.0, -179.5), 3_000.0),
            (4, (88.5, 90.0), (-180.0, 180.0), 20_000.0),
            (5, (-70.0, -69.0), (20.0, 21.0), 800.0),
        ] {
            let mut alerts = random_points(seed, 400, lat, lon);
            // Put the antimeridian cases' alerts on both sides.
            if seed == 2 || seed == 3 {
                alerts.extend(random_points(seed + 10, 400, lat, (-180.0, -179.5)));
                alerts.extend(random_points(seed + 20, 400, lat, (179.5, 180.0)));
            }
            let grid = AlertGrid::new(&alerts, d).unwrap();
            for q in random_points(seed + 100, 500, lat, lon) {
                assert_eq!(
                    grid.any_within(q),
                    brute_within(&alerts, q, d),
                    "{seed} {q:?}"
                );
            }
        }
    }

    #[test]
    fn controls_keep_distance_from_100k_alerts() {
        // 100 000 alerts in a 1° square near the equator, 20 controls at ≥ 150 m.
        let zone = square(-60.5, -3.5, 1.0);
        let alerts = random_points(7, 100_000, (-3.5, -2.5), (-60.5, -59.5));
        let t = std::time::Instant::now();
        let ctl = place_controls(&zone, &alerts, 20, 150.0, 99, 200_000).unwrap();
        let elapsed = t.elapsed();
        assert_eq!(ctl.len(), 20);
        for p in &ctl {
            assert!(zone.contains(&Point::new(p.lon, p.lat)));
            assert!(!brute_within(&alerts, *p, 150.0), "{p:?}");
        }
        // Generous bound for a debug build on 2 cores; the point is "not quadratic".
        assert!(elapsed.as_secs() < 20, "{elapsed:?}");
        // Reproducible from the seed.
        assert_eq!(
            place_controls(&zone, &alerts, 20, 150.0, 99, 200_000).unwrap(),
            ctl
        );
        assert_ne!(
            place_controls(&zone, &alerts, 20, 150.0, 100, 200_000).unwrap(),
            ctl
        );
    }

    #[test]
    fn impossible_placement_is_a_clear_error() {
        // One alert in the middle of a ~1.1 km square with D = 5 km: nothing fits.
        let zone = square(10.0, 0.0, 0.01);
        let alerts = [LatLon::new(0.005, 10.005)];
        let err = place_controls(&zone, &alerts, 3, 5_000.0, 1, 500).unwrap_err();
        assert_eq!(
            err,
            PlanError::ControlsNotPlaced {
                placed: 0,
                wanted: 3,
                tries: 500
            }
        );
        assert!(err.to_string().contains("0 of 3"));
        assert_eq!(
            place_controls(&MultiPolygon::new(vec![]), &alerts, 1, 10.0, 1, 10),
            Err(PlanError::EmptyZone)
        );
        assert_eq!(
            place_controls(&square(0.0, 80.0, 20.0), &alerts, 1, 1.0, 1, 10),
            Err(PlanError::BadZone)
        );
        // A huge radius is answered quickly (rows are clamped to the globe).
        let far = AlertGrid::new(&alerts, 1e300).unwrap();
        assert!(far.any_within(LatLon::new(-80.0, -170.0)));
        assert!(matches!(
            place_controls(&zone, &alerts, 1, -1.0, 1, 10),
            Err(PlanError::BadMinDistance(_))
        ));
        assert!(matches!(
            place_controls(&zone, &[LatLon::new(f64::NAN, 0.0)], 1, 1.0, 1, 10),
            Err(PlanError::BadAlert { index: 0, .. })
        ));
    }

    #[test]
    fn points_are_inside_and_spread_by_area() {
        // No alerts, D = 0: every candidate inside is kept. A 60°-tall box: uniform area means
        // the share of points below 30°N in a 0..60°N box is sin30/sin60 = 0.577 (geometry).
        let zone = square(0.0, 0.0, 60.0);
        let ctl = place_controls(&zone, &[], 4000, 0.0, 5, 100_000).unwrap();
        let low = ctl.iter().filter(|p| p.lat < 30.0).count() as f64 / 4000.0;
        // Binomial SE √(0.577·0.423/4000) ≈ 0.0078; 5 SE.
        assert!((low - 0.577_35).abs() < 0.04, "{low}");
        assert!(ctl.iter().all(|p| zone.contains(&Point::new(p.lon, p.lat))));
    }
}
