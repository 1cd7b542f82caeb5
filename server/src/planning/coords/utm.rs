//! UTM on WGS 84: standard zone (with the Norway and Svalbard exceptions), hemisphere,
//! easting and northing, following NGA.SIG.0012 as implemented by GeographicLib.
//!
//! Parameters (NGA.SIG.0012_2.0.0_UTMUPS; project reference formats-and-crates §5.1):
//! k0 = 0.9996, false easting 500 000 m, false northing 0 (north) or 10 000 000 m (south),
//! zone = ⌊(λ+180)/6⌋ + 1, central meridian 6·zone − 183.
//!
//! Conventions copied from GeographicLib 2.1.2 (`UTMUPS::StandardZone`) so that results are
//! identical to GeoConvert, checked on the committed fixture:
//! - the UTM band is −80° ≤ φ < 84° (84° itself is UPS there, so an error here);
//! - the zone uses the integer part ⌊λ⌋ of the wrapped longitude, so 180° is zone 1;
//! - Norway: band V (56°–64°N) and 3°E ≤ λ < 12°E → zone 32;
//!   Svalbard: band X (72°–84°N) and 0°E ≤ λ < 42°E → zones 31, 33, 35, 37;
//! - the hemisphere is south when the latitude's sign bit is set, so −0.0 is south.

use super::tm::{Ellipsoid, TransverseMercator, wrap_degrees};
use super::{CoordsError, check_lat_lon};

/// Which false northing applies.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Hemisphere {
    /// False northing 0.
    North,
    /// False northing 10 000 000 m.
    South,
}

impl Hemisphere {
    /// `'n'` or `'s'`, as GeoConvert writes it.
    pub fn letter(self) -> char {
        match self {
            Hemisphere::North => 'n',
            Hemisphere::South => 's',
        }
    }
}

/// A UTM position.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Utm {
    /// Zone 1..=60.
    pub zone: u8,
    /// Hemisphere (selects the false northing).
    pub hemisphere: Hemisphere,
    /// Easting, metres.
    pub easting: f64,
    /// Northing, metres.
    pub northing: f64,
}

impl std::fmt::Display for Utm {
    /// GeoConvert `-u -p 3` style: `38n 444140.545 3684706.356` (zone padded to 2 digits).
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{:02}{} {:.3} {:.3}",
            self.zone,
            self.hemisphere.letter(),
            self.easting,
            self.northing
        )
    }
}

/// UTM scale factor on the central meridian.
pub const UTM_K0: f64 = 0.9996;
/// UTM false easting, metres.
pub const UTM_FALSE_EASTING: f64 = 500_000.0;
/// UTM false northing in the southern hemisphere, metres.
pub const UTM_FALSE_NORTHING_SOUTH: f64 = 10_000_000.0;

/// MGRS latitude band index −10..=9 (C..X) of a latitude in the UTM band, as in GeographicLib's
/// `MGRS::LatitudeBand`: 8° bands from 80°S, with X stretched to 84°N.
pub(crate) fn latitude_band(lat: f64) -> i32 {
    let ilat = lat.floor() as i32;
    ((ilat + 80).div_euclid(8) - 10).clamp(-10, 9)
}

/// The standard UTM zone of a WGS 84 position, with the Norway and Svalbard exceptions.
pub fn utm_zone(lat: f64, lon: f64) -> Result<u8, CoordsError> {
    check_lat_lon(lat, lon)?;
    if !(-80.0..84.0).contains(&lat) {
        return Err(CoordsError::OutsideUtm(lat));
    }
    let mut ilon = wrap_degrees(lon).floor() as i32;
    if ilon >= 180 {
        ilon -= 360;
    }
    let mut zone = (ilon + 186) / 6;
    let band = latitude_band(lat);
    if band == 7 && zone == 31 && ilon >= 3 {
        zone = 32;
    } else if band == 9 && (0..42).contains(&ilon) {
        zone = 2 * ((ilon + 183) / 12) + 1;
    }
    // zone is 1..=60 by construction (ilon in -180..180).
    Ok(zone.clamp(1, 60) as u8)
}

/// The UTM projection of one zone and hemisphere.
fn zone_projection(zone: u8, hemisphere: Hemisphere) -> Result<TransverseMercator, CoordsError> {
    if !(1..=60).contains(&zone) {
        return Err(CoordsError::BadZone(zone));
    }
    let fnorth = match hemisphere {
        Hemisphere::North => 0.0,
        Hemisphere::South => UTM_FALSE_NORTHING_SOUTH,
    };
    TransverseMercator::new(
        Ellipsoid::WGS84,
        0.0,
        6.0 * f64::from(zone) - 183.0,
        UTM_K0,
        UTM_FALSE_EASTING,
        fnorth,
    )
}

/// Converts a WGS 84 latitude/longitude (degrees) to UTM in its standard zone.
pub fn to_utm(lat: f64, lon: f64) -> Result<Utm, CoordsError> {
    let zone = utm_zone(lat, lon)?;
    let hemisphere = if lat.is_sign_negative() {
        Hemisphere::South
    } else {
        Hemisphere::North
    };
    let (easting, northing) = zone_projection(zone, hemisphere)?.forward(lat, lon)?;
    Ok(Utm {
        zone,
        hemisphere,
        easting,
        northing,
    })
}

/// Converts UTM back to WGS 84 (latitude, longitude) in degrees.
pub fn from_utm(utm: &Utm) -> Result<(f64, f64), CoordsError> {
    zone_projection(utm.zone, utm.hemisphere)?.inverse(utm.easting, utm.northing)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn published_geoconvert_examples() {
        // GeoConvert (GeographicLib 2.1.2) outputs recorded in the reference
        // formats-and-crates §5.3 ("GeoConvert, extra points", verified).
        let cases = [
            (
                33.3,
                44.4,
                38,
                Hemisphere::North,
                444_140.545,
                3_684_706.356,
            ),
            (
                40.748333,
                -73.985278,
                18,
                Hemisphere::North,
                585_664.121,
                4_511_315.422,
            ),
            (
                -3.1,
                -60.025,
                20,
                Hemisphere::South,
                830_710.588,
                9_656_888.872,
            ),
            (0.0, 10.0, 32, Hemisphere::North, 611_280.651, 0.0),
        ];
        for (lat, lon, zone, hemi, e, n) in cases {
            let u = to_utm(lat, lon).unwrap();
            assert_eq!((u.zone, u.hemisphere), (zone, hemi), "{lat} {lon}");
            assert!(
                (u.easting - e).abs() < 0.0006,
                "{lat} {lon} E {}",
                u.easting
            );
            assert!(
                (u.northing - n).abs() < 0.0006,
                "{lat} {lon} N {}",
                u.northing
            );
        }
        assert_eq!(
            to_utm(33.3, 44.4).unwrap().to_string(),
            "38n 444140.545 3684706.356"
        );
    }

    #[test]
    fn zone_rules() {
        // NGA.SIG.0012 zone rules as listed in the reference formats-and-crates §5.1.
        assert_eq!(utm_zone(0.0, -180.0).unwrap(), 1);
        assert_eq!(utm_zone(0.0, 180.0).unwrap(), 1); // GeoConvert: 0 180 -> 01n
        assert_eq!(utm_zone(0.0, 5.999_999).unwrap(), 31);
        assert_eq!(utm_zone(0.0, 6.0).unwrap(), 32);
        assert_eq!(utm_zone(0.0, 179.9).unwrap(), 60);
        assert_eq!(utm_zone(60.0, 2.9).unwrap(), 31); // Norway exception starts at 3°E
        assert_eq!(utm_zone(60.0, 3.0).unwrap(), 32);
        assert_eq!(utm_zone(64.0, 3.0).unwrap(), 31); // band W: no exception
        assert_eq!(utm_zone(75.0, 8.9).unwrap(), 31); // Svalbard
        assert_eq!(utm_zone(75.0, 9.0).unwrap(), 33);
        assert_eq!(utm_zone(75.0, 21.0).unwrap(), 35);
        assert_eq!(utm_zone(75.0, 33.0).unwrap(), 37);
        assert_eq!(utm_zone(75.0, 42.0).unwrap(), 38);
        assert_eq!(utm_zone(71.9, 9.0).unwrap(), 32);
    }

    #[test]
    fn limits_and_bad_input() {
        assert!(to_utm(-80.0, 0.0).is_ok());
        assert!(to_utm(83.999_999, 0.0).is_ok());
        assert_eq!(to_utm(84.0, 0.0), Err(CoordsError::OutsideUtm(84.0)));
        assert!(matches!(
            to_utm(-80.000_001, 0.0),
            Err(CoordsError::OutsideUtm(_))
        ));
        assert!(matches!(
            to_utm(f64::NAN, 0.0),
            Err(CoordsError::BadLatitude(_))
        ));
        assert!(matches!(
            to_utm(0.0, f64::NAN),
            Err(CoordsError::BadLongitude(_))
        ));
        let bad = Utm {
            zone: 0,
            hemisphere: Hemisphere::North,
            easting: 5e5,
            northing: 0.0,
        };
        assert_eq!(from_utm(&bad), Err(CoordsError::BadZone(0)));
    }

    #[test]
    fn minus_zero_is_south_like_geoconvert() {
        // GeoConvert 2.1.2: "-0.0 3" -u -> "31s 500000.000 10000000.000" (run for this module).
        let u = to_utm(-0.0, 3.0).unwrap();
        assert_eq!(u.hemisphere, Hemisphere::South);
        assert!((u.northing - 10_000_000.0).abs() < 1e-6);
    }

    #[test]
    fn from_utm_round_trip() {
        // Round trip (no outside value) through the standard zone.
        for (lat, lon) in [(33.3, 44.4), (-3.1, -60.025), (78.0, 20.9), (-79.5, 179.9)] {
            let u = to_utm(lat, lon).unwrap();
            let (la, lo) = from_utm(&u).unwrap();
            assert!(
                (la - lat).abs() < 1e-9 && (lo - lon).abs() < 1e-9,
                "{lat} {lon}"
            );
        }
    }
}
