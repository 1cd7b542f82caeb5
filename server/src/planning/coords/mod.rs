//! Coordinates for the field: transverse Mercator, UTM, MGRS and decimal degrees.
//!
//! Field teams navigate with handheld GPS units and paper maps that speak UTM and MGRS, while
//! the server stores WGS 84 longitude/latitude. This module converts the one into the other
//! with no outside library:
//!
//! - [`tm`]: the transverse Mercator projection on any ellipsoid by the Krüger series to the
//!   sixth order in the third flattening n (Karney 2011, "Transverse Mercator with an accuracy
//!   of a few nanometers", J. Geodesy 85(8):475–485), forward and inverse.
//! - [`utm`]: UTM on WGS 84 for latitudes −80° ≤ φ < 84°: standard zone with the Norway and
//!   Svalbard exceptions, hemisphere, easting and northing; and back.
//! - [`mgrs`]: MGRS grid references (AA lettering for WGS 84) at 0 to 5 digits per coordinate,
//!   truncated, never rounded, as GeographicLib's GeoConvert does.
//! - [`format`]: [`format_dd`], a plain decimal-degree string for sheets and GPS entry.
//!
//! Polar regions (UPS) are not covered: a latitude outside the UTM band is a
//! [`CoordsError::OutsideUtm`]. Every function checks its input and returns a [`CoordsError`]
//! rather than panicking.
//!
//! The results are checked against the IOGP Guidance Note 7-2 transverse Mercator example and
//! against 3 354 points converted by GeoConvert (GeographicLib 2.1.2); the fixture and the
//! script that makes it are in `tests/reference/coords/`.

pub mod format;
pub mod mgrs;
pub mod tm;
pub mod utm;

pub use format::format_dd;
pub use mgrs::{MgrsPrecision, group_mgrs, mgrs_from_utm, to_mgrs};
pub use tm::{Ellipsoid, TransverseMercator};
pub use utm::{Hemisphere, Utm, from_utm, to_utm, utm_zone};

/// A WGS 84 geographic position in decimal degrees.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LatLon {
    /// Latitude, degrees north (−90..=90).
    pub lat: f64,
    /// Longitude, degrees east (−180..=180; other finite values are wrapped where it matters).
    pub lon: f64,
}

impl LatLon {
    /// A position from latitude and longitude in degrees (no checks; see [`LatLon::checked`]).
    pub fn new(lat: f64, lon: f64) -> Self {
        Self { lat, lon }
    }

    /// A position whose latitude is in −90..=90 and longitude is finite.
    pub fn checked(lat: f64, lon: f64) -> Result<Self, CoordsError> {
        check_lat_lon(lat, lon)?;
        Ok(Self { lat, lon })
    }
}

/// Everything that can go wrong in the coordinate functions.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CoordsError {
    /// Latitude is not a number in −90..=90.
    #[error("latitude {0} is not a number in -90..=90 degrees")]
    BadLatitude(f64),
    /// Longitude is not a finite number.
    #[error("longitude {0} is not a finite number of degrees")]
    BadLongitude(f64),
    /// Latitude is outside the UTM band −80° ≤ φ < 84° (the poles use UPS, not provided).
    #[error(
        "latitude {0} is outside the UTM band (-80 <= lat < 84); polar (UPS) references are not supported"
    )]
    OutsideUtm(f64),
    /// An ellipsoid with a non-positive semi-major axis or a flattening outside [0, 1).
    #[error("invalid ellipsoid: a = {a}, f = {f}")]
    BadEllipsoid { a: f64, f: f64 },
    /// A projection parameter (scale factor, origin, false easting/northing) is not usable.
    #[error("invalid projection parameter {name} = {value}")]
    BadParameter { name: &'static str, value: f64 },
    /// A UTM zone number outside 1..=60.
    #[error("UTM zone {0} is not in 1..=60")]
    BadZone(u8),
    /// Easting/northing not finite, or outside the area an MGRS reference can name.
    #[error("UTM coordinates ({easting}, {northing}) are outside the range of zone {zone}")]
    OutsideZone {
        zone: u8,
        easting: f64,
        northing: f64,
    },
    /// MGRS precision other than 0..=5 digits per coordinate.
    #[error("MGRS precision {0} is not in 0..=5 digits")]
    BadPrecision(u8),
}

/// Checks that `lat` is a number in −90..=90 and `lon` is finite.
pub(crate) fn check_lat_lon(lat: f64, lon: f64) -> Result<(), CoordsError> {
    if !(-90.0..=90.0).contains(&lat) {
        return Err(CoordsError::BadLatitude(lat));
    }
    if !lon.is_finite() {
        return Err(CoordsError::BadLongitude(lon));
    }
    Ok(())
}

#[cfg(test)]
mod geoconvert_tests;
