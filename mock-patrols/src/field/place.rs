//! Where photos and reports are taken: points on a sphere around a target.

/// Mean Earth radius in metres (IUGG mean radius R1, the one radius the
/// office and the field share; common practice for short spherical offsets).
pub(super) const EARTH_RADIUS_M: f64 = groundproof_sync::geodesy::MEAN_RADIUS_M;

/// The point `dist_m` from (lat, lon) along initial bearing `bearing_deg` on a sphere
/// of radius [`EARTH_RADIUS_M`] (destination formula, common practice).
pub(super) fn offset(lat: f64, lon: f64, dist_m: f64, bearing_deg: f64) -> (f64, f64) {
    let (phi1, lambda1) = (lat.to_radians(), lon.to_radians());
    let delta = dist_m / EARTH_RADIUS_M;
    let theta = bearing_deg.to_radians();
    let phi2 = (phi1.sin() * delta.cos() + phi1.cos() * delta.sin() * theta.cos()).asin();
    let lambda2 = lambda1
        + (theta.sin() * delta.sin() * phi1.cos()).atan2(delta.cos() - phi1.sin() * phi2.sin());
    let lon2 = (lambda2.to_degrees() + 540.0).rem_euclid(360.0) - 180.0;
    (phi2.to_degrees(), lon2)
}

/// Direction in [0, 360) from a bearing.
pub(super) fn direction(bearing_deg: f64) -> f64 {
    let d = bearing_deg.rem_euclid(360.0);
    if d >= 359.99 { 0.0 } else { d }
}
