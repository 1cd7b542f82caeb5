//! Distances and pixel geometry on the Earth.
//!
//! Link decisions use the great-circle (haversine) distance on a sphere of
//! the IUGG mean radius, the same model scikit-learn's haversine metric
//! uses, so our partition can be checked against it. Pixel squares are laid
//! out on the WGS 84 ellipsoid (meridional and prime-vertical radii), and
//! areas are geodesic on WGS 84 (Karney's algorithm through `geo`), so a
//! 10 m pixel has 100 m² to well within 0.1%.

use geo::{Coord, LineString, Polygon};

/// The sphere of link decisions: one radius and one haversine, shared with
/// the field side (the contract crate holds them).
pub use groundproof_sync::geodesy::{MEAN_RADIUS_M, haversine_m};

/// WGS 84 semi-major axis (NIMA TR8350.2).
const WGS84_A: f64 = 6_378_137.0;
/// WGS 84 flattening (NIMA TR8350.2).
const WGS84_F: f64 = 1.0 / 298.257_223_563;

/// Half the side of a square pixel of `size_m` metres centred at `lat`, in
/// degrees of longitude and latitude, from the WGS 84 radii of curvature.
pub fn pixel_half_extent_deg(lat: f64, size_m: f64) -> (f64, f64) {
    let e2 = WGS84_F * (2.0 - WGS84_F);
    let s = lat.to_radians().sin();
    let w = (1.0 - e2 * s * s).sqrt();
    let meridional = WGS84_A * (1.0 - e2) / (w * w * w);
    let prime_vertical = WGS84_A / w;
    let half = size_m / 2.0;
    let dlat = (half / meridional).to_degrees();
    let coslat = lat.to_radians().cos().max(1e-9);
    let dlon = (half / (prime_vertical * coslat)).to_degrees();
    (dlon, dlat)
}

/// Grid to which pixel corners are snapped (1e-8 degree, about 1 mm), so
/// that squares of neighbouring pixels of one grid share exact corners.
const SNAP_DEG: f64 = 1e-8;

fn snap(v: f64) -> f64 {
    (v / SNAP_DEG).round() * SNAP_DEG
}

/// The square of one pixel as a counter-clockwise polygon in (lon, lat).
pub fn pixel_square(lon: f64, lat: f64, size_m: f64) -> Polygon<f64> {
    let (dlon, dlat) = pixel_half_extent_deg(lat, size_m);
    let (w, e, s, n) = (
        snap(lon - dlon),
        snap(lon + dlon),
        snap(lat - dlat),
        snap(lat + dlat),
    );
    Polygon::new(
        LineString::new(vec![
            Coord { x: w, y: s },
            Coord { x: e, y: s },
            Coord { x: e, y: n },
            Coord { x: w, y: n },
            Coord { x: w, y: s },
        ]),
        vec![],
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::GeodesicArea;
    use geographiclib_rs::{Geodesic, InverseGeodesic};

    /// Our haversine against Karney's ellipsoidal geodesic (geographiclib-rs
    /// 0.2.7): the sphere is within 0.6% of WGS 84 at these latitudes, which
    /// bounds how close a pair must sit to the link distance to flip.
    #[test]
    fn haversine_close_to_geodesic() {
        let g = Geodesic::wgs84();
        for lat in [0.0, 60.0] {
            for (dlon, dlat) in [
                (0.00009, 0.0),
                (0.0, 0.00009),
                (0.00009, 0.00009),
                (0.01, 0.02),
            ] {
                let a = (10.0, lat);
                let b = (10.0 + dlon, lat + dlat);
                let ours = haversine_m(a, b);
                let s12: f64 = g.inverse(a.1, a.0, b.1, b.0);
                assert!(
                    ((ours - s12) / s12).abs() < 0.006,
                    "lat {lat}: {ours} vs {s12}"
                );
            }
        }
    }

    /// A 10 m pixel is 0.01 ha and a 30 m pixel 0.09 ha (common practice:
    /// 1 ha = 10,000 m²); our squares' geodesic areas agree within 0.1% at
    /// the equator and at 60 degrees.
    #[test]
    fn pixel_areas() {
        for lat in [0.0, -3.2, 60.0] {
            for (size, ha) in [(10.0, 0.01), (30.0, 0.09)] {
                let a = pixel_square(-60.0, lat, size).geodesic_area_unsigned() / 10_000.0;
                assert!(
                    ((a - ha) / ha).abs() < 0.001,
                    "lat {lat} size {size}: {a} ha"
                );
            }
        }
    }
}
