//! The sphere both sides measure short distances on: one Earth radius and
//! one haversine, so the office's clustering, its maps and field sheets, and
//! the scenario generator agree to the last bit; and one way to write a
//! position in decimal degrees, so that the field sheet and the field tools
//! print the same digits and derive UTM and MGRS from them.

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

/// Decimals of a position written in decimal degrees (1e-6° is about 0.1 m).
pub const DD_DECIMALS: i32 = 6;

/// A position (`lat`, `lon`) as it is written: each rounded to [`DD_DECIMALS`]
/// decimals, the longitude wrapped to −180..180 (180 stays 180), and no
/// negative zero. A sheet derives UTM and MGRS from these values, so that
/// the hemisphere, zone and band they name are the ones the printed digits
/// say (a centroid 1e-12° south of the equator is written 0.000000 and is
/// then in the north, band N). Non-finite values are returned unchanged.
pub fn as_written(lat: f64, lon: f64) -> (f64, f64) {
    let scale = 10f64.powi(DD_DECIMALS);
    let round = |x: f64| {
        if !x.is_finite() {
            return x;
        }
        let r = (x * scale).round() / scale;
        if r == 0.0 { 0.0 } else { r }
    };
    (round(lat), round(wrap_lon(round(lon))))
}

/// Writes a position as `lat, lon` in signed decimal degrees ([`as_written`]),
/// e.g. `-3.100000, -60.025000`. Latitude first with a comma is what phones
/// and most handheld units accept when a position is typed in (common
/// practice).
pub fn format_dd(lat: f64, lon: f64) -> String {
    let (lat, lon) = as_written(lat, lon);
    let d = DD_DECIMALS as usize;
    format!("{lat:.d$}, {lon:.d$}")
}

/// A longitude wrapped to −180..180; 180 itself stays 180.
fn wrap_lon(x: f64) -> f64 {
    if !x.is_finite() {
        return x;
    }
    let y = (x + 180.0).rem_euclid(360.0) - 180.0;
    if y == -180.0 && x > 0.0 { 180.0 } else { y }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn positions_as_written() {
        // Values chosen here; the format is the module's own definition.
        assert_eq!(format_dd(-3.1, -60.025), "-3.100000, -60.025000");
        assert_eq!(format_dd(-1e-12, 10.0), "0.000000, 10.000000");
        assert_eq!(as_written(-1e-12, 10.0), (0.0, 10.0));
        assert!(as_written(-1e-12, 10.0).0.is_sign_positive());
        assert_eq!(as_written(-6e-7, 190.0), (-0.000_001, -170.0));
        assert_eq!(as_written(7.999_999_9, 179.999_999_9), (8.0, 180.0));
        assert_eq!(format_dd(f64::NAN, 1.0), "NaN, 1.000000");
    }

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
