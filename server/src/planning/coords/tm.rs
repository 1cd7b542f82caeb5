//! Transverse Mercator on an ellipsoid by the Krüger series to order n⁶ (Karney 2011).
//!
//! Forward: geodetic latitude → conformal latitude (via τ' = tan χ), then the spherical
//! transverse Mercator of the conformal sphere in Gauss–Schreiber form (ξ', η'), then the Krüger
//! α series maps (ξ', η') to the rectifying sphere (ξ, η). Inverse: the β series back to (ξ', η'),
//! then τ from τ' by Newton's method (Karney 2011, eqs. 7–9, 19–21). The coefficients are those of
//! Karney 2011 eqs. (35) and (36), as quoted in the project reference (formats-and-crates §5.2).
//! Within 3 900 km of the central meridian the error is a few nanometres (Karney 2011, §6; from
//! memory of the paper), so UTM and national grids are far inside the accurate region.

use super::{CoordsError, check_lat_lon};

/// A reference ellipsoid given by semi-major axis `a` (metres) and flattening `f`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ellipsoid {
    /// Semi-major axis, metres.
    pub a: f64,
    /// Flattening (a − b)/a.
    pub f: f64,
}

impl Ellipsoid {
    /// WGS 84: a = 6 378 137 m, 1/f = 298.257 223 563 (NGA.SIG.0012; GeoConvert(1)).
    pub const WGS84: Ellipsoid = Ellipsoid {
        a: 6_378_137.0,
        f: 1.0 / 298.257_223_563,
    };

    /// An ellipsoid from `a` and flattening `f` (0 ≤ f < 1).
    pub fn new(a: f64, f: f64) -> Result<Self, CoordsError> {
        if !(a.is_finite() && a > 0.0 && f.is_finite() && (0.0..1.0).contains(&f)) {
            return Err(CoordsError::BadEllipsoid { a, f });
        }
        Ok(Self { a, f })
    }

    /// An ellipsoid from `a` and inverse flattening 1/f (must be > 1).
    pub fn from_inverse_flattening(a: f64, inv_f: f64) -> Result<Self, CoordsError> {
        if !(inv_f.is_finite() && inv_f > 1.0) {
            return Err(CoordsError::BadEllipsoid { a, f: 1.0 / inv_f });
        }
        Self::new(a, 1.0 / inv_f)
    }

    /// An ellipsoid from `a` and first eccentricity squared e² (0 ≤ e² < 1).
    pub fn from_eccentricity_squared(a: f64, e2: f64) -> Result<Self, CoordsError> {
        if !(e2.is_finite() && (0.0..1.0).contains(&e2)) {
            return Err(CoordsError::BadEllipsoid { a, f: f64::NAN });
        }
        Self::new(a, 1.0 - (1.0 - e2).sqrt())
    }
}

/// A transverse Mercator projection: ellipsoid, origin, scale on the central meridian and
/// false origin. Use [`TransverseMercator::new`] so that the series coefficients are set up.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TransverseMercator {
    ellipsoid: Ellipsoid,
    lat0: f64,
    lon0: f64,
    k0: f64,
    false_easting: f64,
    false_northing: f64,
    /// First eccentricity e.
    e: f64,
    /// Rectifying radius A = a/(1+n)·(1 + n²/4 + n⁴/64 + n⁶/256).
    big_a: f64,
    alpha: [f64; 6],
    beta: [f64; 6],
    /// ξ of the origin latitude on the central meridian (so northing is 0 there before FN).
    xi0: f64,
}

impl TransverseMercator {
    /// A projection with origin latitude `lat0` and central meridian `lon0` (degrees), scale
    /// factor `k0` on the central meridian, and false easting / northing in metres.
    pub fn new(
        ellipsoid: Ellipsoid,
        lat0: f64,
        lon0: f64,
        k0: f64,
        false_easting: f64,
        false_northing: f64,
    ) -> Result<Self, CoordsError> {
        let ellipsoid = Ellipsoid::new(ellipsoid.a, ellipsoid.f)?;
        check_parameters(lat0, lon0, k0, false_easting, false_northing)?;
        let f = ellipsoid.f;
        let n = f / (2.0 - f);
        let e = (f * (2.0 - f)).sqrt();
        let (big_a, alpha, beta) = kruger_series(ellipsoid.a, n);
        let mut tm = Self {
            ellipsoid,
            lat0,
            lon0,
            k0,
            false_easting,
            false_northing,
            e,
            big_a,
            alpha,
            beta,
            xi0: 0.0,
        };
        tm.xi0 = tm.xi_eta(lat0, 0.0).0;
        Ok(tm)
    }

    /// The ellipsoid of this projection.
    pub fn ellipsoid(&self) -> Ellipsoid {
        self.ellipsoid
    }

    /// The central meridian, degrees.
    pub fn central_meridian(&self) -> f64 {
        self.lon0
    }

    /// Rectifying-sphere coordinates (ξ, η) for latitude `lat` and longitude offset `dlon` from
    /// the central meridian, both in degrees.
    fn xi_eta(&self, lat: f64, dlon: f64) -> (f64, f64) {
        let phi = lat.to_radians();
        let lam = dlon.to_radians();
        let tau = phi.tan();
        let tau_p = taup(tau, self.e);
        let (sin_l, cos_l) = lam.sin_cos();
        let xi_p = tau_p.atan2(cos_l);
        let eta_p = (sin_l / tau_p.hypot(cos_l)).asinh();
        let mut xi = xi_p;
        let mut eta = eta_p;
        for (j, a) in self.alpha.iter().enumerate() {
            let k = 2.0 * (j as f64 + 1.0);
            xi += a * (k * xi_p).sin() * (k * eta_p).cosh();
            eta += a * (k * xi_p).cos() * (k * eta_p).sinh();
        }
        (xi, eta)
    }

    /// Projects a latitude/longitude (degrees) to (easting, northing) in metres.
    pub fn forward(&self, lat: f64, lon: f64) -> Result<(f64, f64), CoordsError> {
        check_lat_lon(lat, lon)?;
        let dlon = wrap_degrees(lon - self.lon0);
        let (xi, eta) = self.xi_eta(lat, dlon);
        let scale = self.k0 * self.big_a;
        Ok((
            self.false_easting + scale * eta,
            self.false_northing + scale * (xi - self.xi0),
        ))
    }

    /// Converts (easting, northing) in metres back to latitude/longitude in degrees, the
    /// longitude wrapped to −180..180.
    pub fn inverse(&self, easting: f64, northing: f64) -> Result<(f64, f64), CoordsError> {
        if !easting.is_finite() {
            return Err(CoordsError::BadParameter {
                name: "easting",
                value: easting,
            });
        }
        if !northing.is_finite() {
            return Err(CoordsError::BadParameter {
                name: "northing",
                value: northing,
            });
        }
        let scale = self.k0 * self.big_a;
        let xi = (northing - self.false_northing) / scale + self.xi0;
        let eta = (easting - self.false_easting) / scale;
        let mut xi_p = xi;
        let mut eta_p = eta;
        for (j, b) in self.beta.iter().enumerate() {
            let k = 2.0 * (j as f64 + 1.0);
            xi_p -= b * (k * xi).sin() * (k * eta).cosh();
            eta_p -= b * (k * xi).cos() * (k * eta).sinh();
        }
        let sinh_eta = eta_p.sinh();
        let (sin_xi, cos_xi) = xi_p.sin_cos();
        let tau_p = sin_xi / sinh_eta.hypot(cos_xi);
        let lam = sinh_eta.atan2(cos_xi);
        let tau = tau_from_taup(tau_p, self.e);
        let lat = tau.atan().to_degrees();
        let lon = wrap_degrees(self.lon0 + lam.to_degrees());
        Ok((lat, lon))
    }
}

/// τ' = tan χ (conformal latitude) from τ = tan φ: τ' = τ√(1+σ²) − σ√(1+τ²),
/// σ = sinh(e·atanh(e·τ/√(1+τ²))) (Karney 2011, eqs. 7–9).
fn taup(tau: f64, e: f64) -> f64 {
    let tau1 = tau.hypot(1.0);
    let sig = (e * (e * tau / tau1).atanh()).sinh();
    tau * sig.hypot(1.0) - sig * tau1
}

/// Solves τ' = taup(τ) for τ by Newton's method (Karney 2011, eqs. 19–21).
fn tau_from_taup(tau_p: f64, e: f64) -> f64 {
    if !tau_p.is_finite() {
        return tau_p;
    }
    let e2m = 1.0 - e * e;
    let mut tau = tau_p / e2m;
    let tol = f64::EPSILON.sqrt() * 0.1;
    for _ in 0..10 {
        let tau_p_i = taup(tau, e);
        let d = (tau_p - tau_p_i) * (1.0 + e2m * tau * tau)
            / (e2m * tau.hypot(1.0) * tau_p_i.hypot(1.0));
        tau += d;
        if d.abs() < tol * tau.abs().max(1.0) {
            break;
        }
    }
    tau
}

/// Wraps an angle in degrees to −180..180.
pub(crate) fn wrap_degrees(x: f64) -> f64 {
    let y = (x + 180.0).rem_euclid(360.0) - 180.0;
    if y == -180.0 && x > 0.0 { 180.0 } else { y }
}

/// Checks the projection's parameters: a latitude of origin in range and finite numbers.
fn check_parameters(
    lat0: f64,
    lon0: f64,
    k0: f64,
    false_easting: f64,
    false_northing: f64,
) -> Result<(), CoordsError> {
    let bad = |name: &'static str, value: f64| Err(CoordsError::BadParameter { name, value });
    if !(-90.0..=90.0).contains(&lat0) {
        return bad("lat0", lat0);
    }
    if !lon0.is_finite() {
        return bad("lon0", lon0);
    }
    if !(k0.is_finite() && k0 > 0.0) {
        return bad("k0", k0);
    }
    if !false_easting.is_finite() {
        return bad("false_easting", false_easting);
    }
    if !false_northing.is_finite() {
        return bad("false_northing", false_northing);
    }
    Ok(())
}

/// The rectifying radius A and the Krüger α and β coefficients for third flattening `n`
/// (Karney 2011, eqs. 14, 35 and 36), for semi-major axis `a`.
///
/// One piece on purpose: each line is one coefficient of the published series, kept in the
/// paper's order so that it can be compared term by term.
fn kruger_series(a: f64, n: f64) -> (f64, [f64; 6], [f64; 6]) {
    let n2 = n * n;
    let n3 = n2 * n;
    let n4 = n3 * n;
    let n5 = n4 * n;
    let n6 = n5 * n;
    let big_a = a / (1.0 + n) * (1.0 + n2 / 4.0 + n4 / 64.0 + n6 / 256.0);
    let alpha = [
        n / 2.0 - 2.0 * n2 / 3.0 + 5.0 * n3 / 16.0 + 41.0 * n4 / 180.0 - 127.0 * n5 / 288.0
            + 7891.0 * n6 / 37800.0,
        13.0 * n2 / 48.0 - 3.0 * n3 / 5.0 + 557.0 * n4 / 1440.0 + 281.0 * n5 / 630.0
            - 1983433.0 * n6 / 1935360.0,
        61.0 * n3 / 240.0 - 103.0 * n4 / 140.0 + 15061.0 * n5 / 26880.0 + 167603.0 * n6 / 181440.0,
        49561.0 * n4 / 161280.0 - 179.0 * n5 / 168.0 + 6601661.0 * n6 / 7257600.0,
        34729.0 * n5 / 80640.0 - 3418889.0 * n6 / 1995840.0,
        212378941.0 * n6 / 319334400.0,
    ];
    let beta = [
        n / 2.0 - 2.0 * n2 / 3.0 + 37.0 * n3 / 96.0 - n4 / 360.0 - 81.0 * n5 / 512.0
            + 96199.0 * n6 / 604800.0,
        n2 / 48.0 + n3 / 15.0 - 437.0 * n4 / 1440.0 + 46.0 * n5 / 105.0
            - 1118711.0 * n6 / 3870720.0,
        17.0 * n3 / 480.0 - 37.0 * n4 / 840.0 - 209.0 * n5 / 4480.0 + 5569.0 * n6 / 90720.0,
        4397.0 * n4 / 161280.0 - 11.0 * n5 / 504.0 - 830251.0 * n6 / 7257600.0,
        4583.0 * n5 / 161280.0 - 108847.0 * n6 / 3991680.0,
        20648693.0 * n6 / 638668800.0,
    ];
    (big_a, alpha, beta)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dms(d: f64, m: f64, s: f64) -> f64 {
        d + m / 60.0 + s / 3600.0
    }

    #[test]
    fn iogp_guidance_note_7_2_british_national_grid_example() {
        // IOGP Publication 373-7-2 (Guidance Note 7-2), transverse Mercator worked example,
        // OSGB 1936 / British National Grid: Airy 1830 a = 6377563.396, 1/f = 299.3249646;
        // lat0 = 49°N, lon0 = 2°W, k0 = 0.9996012717, FE = 400000, FN = -100000;
        // φ = 50°30'N, λ = 0°30'E → E = 577274.99, N = 69740.50 (published, cm).
        // PROJ (reference formats-and-crates §5.3, verified) gives 577274.984, 69740.492.
        let airy = Ellipsoid::from_inverse_flattening(6_377_563.396, 299.324_964_6).unwrap();
        let tm = TransverseMercator::new(airy, 49.0, -2.0, 0.999_601_271_7, 400_000.0, -100_000.0)
            .unwrap();
        let (e, n) = tm
            .forward(dms(50.0, 30.0, 0.0), dms(0.0, 30.0, 0.0))
            .unwrap();
        // The published figures come from the Guidance Note's own (USGS-style) series, which
        // PROJ and this Krüger series differ from by up to 6 mm here: allow 1 cm.
        assert!((e - 577_274.99).abs() < 0.01, "E = {e}");
        assert!((n - 69_740.50).abs() < 0.01, "N = {n}");
        assert!((e - 577_274.984).abs() < 0.001, "E = {e} vs PROJ");
        assert!((n - 69_740.492).abs() < 0.001, "N = {n} vs PROJ");
        // IOGP 7-2 reverse example: the same point back.
        let (lat, lon) = tm.inverse(577_274.99, 69_740.50).unwrap();
        assert!((lat - 50.5).abs() < 1e-7, "lat = {lat}");
        assert!((lon - 0.5).abs() < 1e-7, "lon = {lon}");
    }

    #[test]
    fn snyder_clarke_1866_example() {
        // Snyder 1987, USGS PP 1395, App. A, TM ellipsoidal forward: Clarke 1866
        // (a = 6378206.4, e² = 0.00676866), φ = 40°30'N, λ = 73°30'W, λ0 = 75°W, k0 = 0.9996:
        // x = 127106.5, y = 4484124.4 (published figures recalled from memory per the reference);
        // PROJ 9.1.1 (`+proj=tmerc +ellps=clrk66 +lon_0=-75 +k=0.9996`, reference §5.3, verified)
        // gives 127106.467, 4484124.434. PROJ's clrk66 uses b = 6356583.8, whose e² equals
        // 0.00676866 to 8 digits, so agreement is checked to 1 cm.
        let clarke = Ellipsoid::from_eccentricity_squared(6_378_206.4, 0.006_768_66).unwrap();
        let tm = TransverseMercator::new(clarke, 0.0, -75.0, 0.9996, 0.0, 0.0).unwrap();
        let (x, y) = tm.forward(40.5, -73.5).unwrap();
        assert!((x - 127_106.5).abs() < 0.05, "x = {x}");
        assert!((y - 4_484_124.4).abs() < 0.05, "y = {y}");
        assert!((x - 127_106.467).abs() < 0.01, "x = {x} vs PROJ");
        assert!((y - 4_484_124.434).abs() < 0.01, "y = {y} vs PROJ");
    }

    #[test]
    fn inverse_undoes_forward_to_a_micrometre() {
        // Round trip (no outside value): 30° either side of the central meridian.
        let tm =
            TransverseMercator::new(Ellipsoid::WGS84, 0.0, 9.0, 0.9996, 500_000.0, 0.0).unwrap();
        for lat in [-89.0, -80.0, -45.5, -0.3, 0.0, 12.25, 56.0, 83.9] {
            for dlon in [-30.0, -3.0, -0.001, 0.0, 2.9, 7.5, 30.0] {
                let (e, n) = tm.forward(lat, 9.0 + dlon).unwrap();
                let (la, lo) = tm.inverse(e, n).unwrap();
                let (e2, n2) = tm.forward(la, lo).unwrap();
                assert!(
                    (e - e2).abs() < 1e-6 && (n - n2).abs() < 1e-6,
                    "{lat} {dlon}"
                );
                assert!((la - lat).abs() < 1e-10 && (lo - 9.0 - dlon).abs() < 1e-10);
            }
        }
    }

    #[test]
    fn bad_input_is_an_error() {
        assert!(Ellipsoid::new(-1.0, 0.003).is_err());
        assert!(Ellipsoid::new(6e6, 1.0).is_err());
        assert!(Ellipsoid::from_inverse_flattening(6e6, 0.5).is_err());
        let tm = TransverseMercator::new(Ellipsoid::WGS84, 0.0, 3.0, 0.9996, 0.0, 0.0).unwrap();
        assert!(tm.forward(91.0, 0.0).is_err());
        assert!(tm.forward(f64::NAN, 0.0).is_err());
        assert!(tm.forward(0.0, f64::INFINITY).is_err());
        assert!(tm.inverse(f64::NAN, 0.0).is_err());
        assert!(TransverseMercator::new(Ellipsoid::WGS84, 0.0, 3.0, 0.0, 0.0, 0.0).is_err());
    }

    #[test]
    fn wrap_degrees_keeps_range() {
        // Common practice: longitudes differ by whole turns.
        assert_eq!(wrap_degrees(190.0), -170.0);
        assert_eq!(wrap_degrees(-190.0), 170.0);
        assert_eq!(wrap_degrees(180.0), 180.0);
        assert_eq!(wrap_degrees(-180.0), -180.0);
        assert_eq!(wrap_degrees(0.0), 0.0);
    }
}
