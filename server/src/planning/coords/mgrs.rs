//! MGRS grid references in the UTM band, AA lettering for WGS 84.
//!
//! A reference is zone (2 digits), latitude band letter, 100 km column and row letters, then
//! `d` easting digits and `d` northing digits (d = 0..=5; 5 digits = 1 m). The lettering follows
//! DMA TM 8358.1 as summarised in the project reference (formats-and-crates §5.1):
//! - band `C..X` without I and O, 8° each from 80°S, X covering 72°–84°N;
//! - column letters `A–H`, `J–R`, `S–Z` for zone mod 3 = 1, 2, 0, index ⌊E/100 km⌋ − 1;
//! - row letters `A–V` without I and O, cycling every 2 000 km, even zones shifted by 5.
//!
//! Digits are **truncated, never rounded**: a reference names the square containing the point
//! (GeoConvert(1)). As in GeographicLib 2.1.2 (`MGRS::Forward`), coordinates are first floored
//! to whole micrometres, a coordinate exactly on the open upper edge of the zone's range is moved
//! just inside it, and a latitude within 2⁻⁴⁶ degrees of the equator takes its band (M or N)
//! from the hemisphere.

use super::CoordsError;
use super::utm::{Hemisphere, Utm, latitude_band, to_utm};

const BAND_LETTERS: &[u8; 20] = b"CDEFGHJKLMNPQRSTUVWX";
const COLUMN_LETTERS: [&[u8; 8]; 3] = [b"ABCDEFGH", b"JKLMNPQR", b"STUVWXYZ"];
const ROW_LETTERS: &[u8; 20] = b"ABCDEFGHJKLMNPQRSTUV";
/// Micrometres per metre: the resolution at which coordinates are first floored.
const MICRO: f64 = 1e6;
/// Micrometres in a 100 km square.
const TILE_UM: i64 = 100_000_000_000;

/// Digits per coordinate of an MGRS reference, 0..=5.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct MgrsPrecision(u8);

impl MgrsPrecision {
    /// 5 digits: 1 m squares (GeoConvert `-m -p 0`).
    pub const ONE_METRE: MgrsPrecision = MgrsPrecision(5);
    /// 4 digits: 10 m squares.
    pub const TEN_METRES: MgrsPrecision = MgrsPrecision(4);
    /// 3 digits: 100 m squares.
    pub const HUNDRED_METRES: MgrsPrecision = MgrsPrecision(3);
    /// 2 digits: 1 km squares.
    pub const ONE_KILOMETRE: MgrsPrecision = MgrsPrecision(2);
    /// 1 digit: 10 km squares.
    pub const TEN_KILOMETRES: MgrsPrecision = MgrsPrecision(1);
    /// 0 digits: the 100 km square only.
    pub const HUNDRED_KILOMETRES: MgrsPrecision = MgrsPrecision(0);

    /// A precision of `digits` per coordinate (0..=5).
    pub fn new(digits: u8) -> Result<Self, CoordsError> {
        if digits > 5 {
            return Err(CoordsError::BadPrecision(digits));
        }
        Ok(Self(digits))
    }

    /// Digits per coordinate.
    pub fn digits(self) -> u8 {
        self.0
    }

    /// Side of the named square in metres (1 m for 5 digits, 100 000 m for 0).
    pub fn square_metres(self) -> f64 {
        10f64.powi(5 - i32::from(self.0))
    }
}

/// The MGRS reference of a WGS 84 position in the UTM band (−80° ≤ lat < 84°).
pub fn to_mgrs(lat: f64, lon: f64, precision: MgrsPrecision) -> Result<String, CoordsError> {
    let utm = to_utm(lat, lon)?;
    mgrs_from_utm(&utm, lat, precision)
}

/// The MGRS reference of a UTM position; `lat` is the point's latitude and selects the band.
pub fn mgrs_from_utm(utm: &Utm, lat: f64, precision: MgrsPrecision) -> Result<String, CoordsError> {
    let zone = utm.zone;
    if !(1..=60).contains(&zone) {
        return Err(CoordsError::BadZone(zone));
    }
    if !(-80.0..84.0).contains(&lat) {
        return Err(CoordsError::OutsideUtm(lat));
    }
    let outside = || CoordsError::OutsideZone {
        zone,
        easting: utm.easting,
        northing: utm.northing,
    };
    // Ranges of GeographicLib's MGRS::CheckCoords: columns 1..9, rows 0..95 (north) and
    // 10..100 (south), in 100 km units, closed below and open above.
    let (row_min, row_max) = match utm.hemisphere {
        Hemisphere::North => (0, 95),
        Hemisphere::South => (10, 100),
    };
    let ix = to_micrometres(utm.easting, 1, 9).ok_or_else(outside)?;
    let iy = to_micrometres(utm.northing, row_min, row_max).ok_or_else(outside)?;
    let xh = ix / TILE_UM;
    let yh = iy / TILE_UM;
    let band = if lat.abs() < 2f64.powi(-46) {
        match utm.hemisphere {
            Hemisphere::North => 0,
            Hemisphere::South => -1,
        }
    } else {
        latitude_band(lat)
    };
    let col_set = COLUMN_LETTERS[usize::from((zone - 1) % 3)];
    let col = usize::try_from(xh - 1).map_err(|_| outside())?;
    let row_shift = if zone.is_multiple_of(2) { 5 } else { 0 };
    let row = usize::try_from((yh + row_shift).rem_euclid(20)).map_err(|_| outside())?;
    let band_idx = usize::try_from(band + 10).map_err(|_| outside())?;
    let (Some(&b), Some(&c), Some(&r)) = (
        BAND_LETTERS.get(band_idx),
        col_set.get(col),
        ROW_LETTERS.get(row),
    ) else {
        return Err(outside());
    };
    let mut s = format!("{zone:02}{}{}{}", b as char, c as char, r as char);
    let d = u32::from(precision.digits());
    if d > 0 {
        let div = 10i64.pow(11 - d);
        let ex = (ix % TILE_UM) / div;
        let ny = (iy % TILE_UM) / div;
        let w = d as usize;
        s.push_str(&format!("{ex:0w$}{ny:0w$}"));
    }
    Ok(s)
}

/// Floors a coordinate in metres to whole micrometres, checking it lies in
/// [lo·100 km, hi·100 km]; a value on the (open) upper edge is moved 1 µm inside.
fn to_micrometres(x: f64, lo: i64, hi: i64) -> Option<i64> {
    let lo_m = (lo as f64) * 1e5;
    let hi_m = (hi as f64) * 1e5;
    if !(x.is_finite() && x >= lo_m && x <= hi_m) {
        return None;
    }
    let v = (x * MICRO).floor() as i64;
    let hi_um = hi * TILE_UM;
    Some(if v >= hi_um {
        hi_um - 1
    } else {
        v.max(lo * TILE_UM)
    })
}

/// Writes an MGRS reference in the grouped field style, e.g. `20MRB3071056888` →
/// `20M RB 30710 56888` (common practice on field sheets). Text that is not a well-formed
/// reference is returned unchanged.
pub fn group_mgrs(mgrs: &str) -> String {
    let b = mgrs.as_bytes();
    let ok = b.len() >= 5
        && b.iter().all(|c| c.is_ascii_alphanumeric())
        && b[..2].iter().all(u8::is_ascii_digit)
        && b[2..5].iter().all(u8::is_ascii_uppercase)
        && b[5..].iter().all(u8::is_ascii_digit)
        && (b.len() - 5).is_multiple_of(2);
    if !ok {
        return mgrs.to_string();
    }
    let half = (b.len() - 5) / 2;
    let mut out = format!("{} {}", &mgrs[..3], &mgrs[3..5]);
    if half > 0 {
        out.push(' ');
        out.push_str(&mgrs[5..5 + half]);
        out.push(' ');
        out.push_str(&mgrs[5 + half..]);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn published_examples() {
        // GeoConvert(1) man page: "E44d24 N33d20 -m -p -3" -> 38SMB4488 (reference §5.3).
        assert_eq!(
            to_mgrs(33.0 + 20.0 / 60.0, 44.4, MgrsPrecision::ONE_KILOMETRE).unwrap(),
            "38SMB4488"
        );
        // GeoConvert 2.1.2 outputs recorded in the reference formats-and-crates §5.1/§5.3.
        let one_m = MgrsPrecision::ONE_METRE;
        assert_eq!(to_mgrs(33.3, 44.4, one_m).unwrap(), "38SMB4414084706");
        assert_eq!(
            to_mgrs(40.748333, -73.985278, one_m).unwrap(),
            "18TWL8566411315"
        );
        assert_eq!(to_mgrs(-3.1, -60.025, one_m).unwrap(), "20MRB3071056888");
        assert_eq!(
            to_mgrs(-3.1, -60.025, MgrsPrecision::TEN_METRES).unwrap(),
            "20MRB30715688"
        );
        assert_eq!(
            to_mgrs(-3.1, -60.025, MgrsPrecision::HUNDRED_METRES).unwrap(),
            "20MRB307568"
        );
        assert_eq!(to_mgrs(0.0, 10.0, one_m).unwrap(), "32NPF1128000000");
    }

    #[test]
    fn grouping_and_errors() {
        // Field grouping as shown in the reference §5.1.
        assert_eq!(group_mgrs("20MRB3071056888"), "20M RB 30710 56888");
        assert_eq!(group_mgrs("20MRB"), "20M RB");
        assert_eq!(group_mgrs("not mgrs"), "not mgrs");
        assert_eq!(MgrsPrecision::new(6), Err(CoordsError::BadPrecision(6)));
        assert_eq!(MgrsPrecision::new(5).unwrap(), MgrsPrecision::ONE_METRE);
        assert_eq!(MgrsPrecision::ONE_KILOMETRE.square_metres(), 1000.0);
        assert!(matches!(
            to_mgrs(84.0, 0.0, MgrsPrecision::ONE_METRE),
            Err(CoordsError::OutsideUtm(_))
        ));
        let far = Utm {
            zone: 31,
            hemisphere: Hemisphere::North,
            easting: 950_000.0,
            northing: 0.0,
        };
        assert!(matches!(
            mgrs_from_utm(&far, 0.0, MgrsPrecision::ONE_METRE),
            Err(CoordsError::OutsideZone { .. })
        ));
    }
}
