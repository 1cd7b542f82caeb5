//! A validated WGS 84 position in decimal degrees, longitude first (the
//! GeoJSON order).

use serde::Serialize;

/// Longitude in [-180, 180], latitude in [-90, 90], both finite.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LonLat {
    lon: f64,
    lat: f64,
}

impl LonLat {
    pub fn new(lon: f64, lat: f64) -> Result<Self, String> {
        if !lon.is_finite() || !(-180.0..=180.0).contains(&lon) {
            return Err(format!("longitude {lon} is not a number in [-180, 180]"));
        }
        if !lat.is_finite() || !(-90.0..=90.0).contains(&lat) {
            return Err(format!("latitude {lat} is not a number in [-90, 90]"));
        }
        Ok(LonLat { lon, lat })
    }

    /// Parse "LAT,LON" (the order people read off a GPS unit).
    pub fn parse_lat_lon(raw: &str) -> Result<Self, String> {
        let mut parts = raw.split(',').map(str::trim);
        let (Some(a), Some(b), None) = (parts.next(), parts.next(), parts.next()) else {
            return Err(format!(
                "expected LAT,LON in decimal degrees, found '{raw}'"
            ));
        };
        let lat = a
            .parse::<f64>()
            .map_err(|_| format!("latitude '{a}' is not a number"))?;
        let lon = b
            .parse::<f64>()
            .map_err(|_| format!("longitude '{b}' is not a number"))?;
        LonLat::new(lon, lat)
    }

    pub fn lon(self) -> f64 {
        self.lon
    }

    pub fn lat(self) -> f64 {
        self.lat
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn validates_ranges() {
        assert!(LonLat::new(-60.0, -3.0).is_ok());
        assert!(LonLat::new(180.5, 0.0).unwrap_err().contains("longitude"));
        assert!(LonLat::new(0.0, f64::NAN).unwrap_err().contains("latitude"));
        let p = LonLat::parse_lat_lon("-3.5, -60.25").unwrap();
        assert_eq!((p.lon(), p.lat()), (-60.25, -3.5));
        assert!(LonLat::parse_lat_lon("1,2,3").is_err());
    }
}
