//! The sphere both sides measure short distances on: one Earth radius and
//! one haversine, so the office's clustering, its maps and field sheets, and
//! the scenario generator agree to the last bit.

/// IUGG mean Earth radius R1 in metres (Moritz 1980, Geodetic Reference
/// System 1980), the radius scikit-learn users and `geo` take for haversine.
pub const MEAN_RADIUS_M: f64 = 6_371_008.8;

/// Great-circle distance in metres between two (lon, lat) points in degrees,
/// on the sphere of radius [`MEAN_RADIUS_M`].
pub fn haversine_m(a: (f64, f64), b: (f64, f64)) -> f64 {
    let (p1, p2) = (a.1.to_radians(), b.1.to_radians());
    let dphi = p2 - p1;
    let dlam = (b.0 - a.0).to_radians();
    let h = (dphi / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dlam / 2.0).sin().powi(2);
    2.0 * MEAN_RADIUS_M * h.sqrt().min(1.0).asin()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_degree_along_the_equator() {
        // 2 * pi * 6371008.8 / 360 = 111195.08 m (hand computation).
        assert!((haversine_m((0.0, 0.0), (1.0, 0.0)) - 111_195.08).abs() < 0.01);
        // Along a meridian the same, and symmetric.
        let d = haversine_m((10.0, -0.5), (10.0, 0.5));
        assert!((d - 111_195.08).abs() < 0.01, "{d}");
        assert_eq!(d, haversine_m((10.0, 0.5), (10.0, -0.5)));
        assert_eq!(haversine_m((3.0, 4.0), (3.0, 4.0)), 0.0);
        // Antipodes: half the circumference (the clamp keeps asin defined).
        let half = std::f64::consts::PI * MEAN_RADIUS_M;
        assert!((haversine_m((0.0, 0.0), (180.0, 0.0)) - half).abs() < 1e-6);
    }
}
