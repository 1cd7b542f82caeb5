//! The text the sheet shows, computed once from the input so that the template only places
//! it: positions in decimal degrees, UTM and MGRS (from [`crate::planning::coords`]), areas, distances
//! and checklist labels.

use crate::planning::coords::format::as_written;
use crate::planning::coords::{Hemisphere, MgrsPrecision, format_dd, group_mgrs, to_mgrs, to_utm};
use crate::platform::i18n::Tr;

/// Shown instead of UTM or MGRS for a latitude outside the UTM band (the poles).
pub const OUTSIDE_UTM: &str = "outside the UTM/MGRS band";

/// One position written three ways.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PositionText {
    /// `lat, lon` in decimal degrees, six decimals ([`format_dd`]).
    pub dd: String,
    /// UTM zone, hemisphere, easting and northing; `None` outside the UTM band.
    pub utm: Option<UtmText>,
    /// MGRS at 1 m, grouped (`20M RB 30710 56888`), or [`OUTSIDE_UTM`].
    pub mgrs: String,
}

/// The four parts of a UTM position as printed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UtmText {
    /// Zone number, two digits (`07`, `20`), as GPS units show it.
    pub zone: String,
    /// `north` or `south`: written out, because a single `S` is easily read as the MGRS
    /// latitude band S, which lies in the northern hemisphere.
    pub hemisphere: &'static str,
    /// Easting in whole metres, truncated like the MGRS digits so that the two agree digit
    /// for digit (rounding would put them 1 m apart half of the time).
    pub easting: String,
    /// Northing in whole metres, truncated like the easting.
    pub northing: String,
}

impl UtmText {
    /// The message id of the hemisphere's word on the sheet.
    pub fn hemisphere_id(&self) -> &'static str {
        if self.hemisphere == "south" {
            "sheet-hemisphere-south"
        } else {
            "sheet-hemisphere-north"
        }
    }
}

/// A checklist token in the sheet's language: the field app's word
/// (`<prefix>-<token>` of the catalogues, e.g. `outcome-false_alarm`), else
/// the token for people ([`humanise`]).
pub fn token_words(tr: &Tr, prefix: &str, token: &str) -> String {
    tr.get(&format!("{prefix}-{token}"))
        .unwrap_or_else(|| humanise(token))
}

/// The position (`lat`, `lon`) in decimal degrees, UTM and MGRS. UTM and MGRS are computed
/// from the position as written in decimal degrees ([`as_written`]), so the three agree on
/// hemisphere, zone and band even for a point on the equator or a band edge.
pub fn position_text(lat: f64, lon: f64) -> PositionText {
    let (lat, lon) = as_written(lat, lon);
    let utm = to_utm(lat, lon).ok().map(|u| UtmText {
        zone: format!("{:02}", u.zone),
        hemisphere: match u.hemisphere {
            Hemisphere::North => "north",
            Hemisphere::South => "south",
        },
        easting: format!("{:.0}", u.easting.floor()),
        northing: format!("{:.0}", u.northing.floor()),
    });
    let mgrs = to_mgrs(lat, lon, MgrsPrecision::ONE_METRE)
        .map(|m| group_mgrs(&m))
        .unwrap_or_else(|_| OUTSIDE_UTM.to_owned());
    PositionText {
        dd: format_dd(lat, lon),
        utm,
        mgrs,
    }
}

/// A checklist token for people: `false_alarm` → `false alarm`.
pub fn humanise(token: &str) -> String {
    token.replace('_', " ")
}

/// An area: `12.34 ha` (two decimals, 100 m² steps).
pub fn area_text(ha: f64) -> String {
    format!("{ha:.2} ha")
}

/// A distance: `3.4 km` (one decimal, 100 m steps).
pub fn km_text(km: f64) -> String {
    format!("{km:.1} km")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn position_uses_coords_output() {
        // -3.1, -60.025 lies in UTM zone 20 south (zone = floor((lon+180)/6)+1 = 20).
        let p = position_text(-3.1, -60.025);
        assert_eq!(p.dd, "-3.100000, -60.025000");
        let u = p.utm.expect("inside the UTM band");
        let exact = to_utm(-3.1, -60.025).expect("inside the UTM band");
        assert_eq!(u.zone, "20");
        assert_eq!(u.hemisphere, "south");
        assert_eq!(u.easting, format!("{:.0}", exact.easting.floor()));
        assert_eq!(u.northing, format!("{:.0}", exact.northing.floor()));
        let mgrs = to_mgrs(-3.1, -60.025, MgrsPrecision::ONE_METRE).expect("inside");
        assert_eq!(p.mgrs, group_mgrs(&mgrs));
        assert!(p.mgrs.starts_with("20M "), "{}", p.mgrs);
        // MGRS digits are the UTM metres modulo 100 km (NGA.SIG.0012 MGRS definition), so
        // the truncated UTM text ends with the same five digits.
        let groups: Vec<&str> = p.mgrs.split(' ').collect();
        assert_eq!(&u.easting[u.easting.len() - 5..], groups[2]);
        assert_eq!(&u.northing[u.northing.len() - 5..], groups[3]);
    }

    /// A centroid a hair south of the equator (floating noise of a pixel centred on it) prints
    /// 0.000000 in decimal degrees, so UTM and MGRS must say north and band N too, not south
    /// with northing 10000000 (NGA.SIG.0012: band N starts at 0°, the southern hemisphere's false
    /// northing is 10 000 000 m). The same at a band edge (8° is band P) and a zone edge (−60°
    /// is the first meridian of zone 21: zone = floor((lon + 180) / 6) + 1).
    #[test]
    fn degrees_utm_and_mgrs_agree_at_the_edges() {
        for noise in [-1e-12, -1e-9, -4e-7, 1e-12] {
            let p = position_text(noise, 10.0);
            assert_eq!(p.dd, "0.000000, 10.000000");
            let u = p.utm.expect("inside the UTM band");
            assert_eq!((u.zone.as_str(), u.hemisphere), ("32", "north"), "{noise}");
            assert_eq!(u.northing, "0", "{noise}");
            assert!(p.mgrs.starts_with("32N "), "{noise}: {}", p.mgrs);
        }
        let p = position_text(-6e-7, 10.0);
        assert_eq!(p.dd, "-0.000001, 10.000000");
        let u = p.utm.expect("inside the UTM band");
        assert_eq!((u.hemisphere, u.northing.as_str()), ("south", "9999999"));
        assert!(p.mgrs.starts_with("32M "), "{}", p.mgrs);
        let p = position_text(8.0 - 1e-9, 10.0);
        assert_eq!(p.dd, "8.000000, 10.000000");
        assert!(p.mgrs.starts_with("32P "), "{}", p.mgrs);
        let p = position_text(-3.0, -60.0 - 1e-9);
        assert_eq!(p.dd, "-3.000000, -60.000000");
        assert_eq!(p.utm.expect("inside").zone, "21");
        assert!(p.mgrs.starts_with("21M "), "{}", p.mgrs);
    }

    #[test]
    fn poles_have_no_utm() {
        // UTM covers -80 <= lat < 84 (coords::CoordsError::OutsideUtm); UPS is not provided.
        let p = position_text(85.0, 10.0);
        assert_eq!(p.utm, None);
        assert_eq!(p.mgrs, OUTSIDE_UTM);
        assert_eq!(p.dd, "85.000000, 10.000000");
    }

    #[test]
    fn labels() {
        assert_eq!(humanise("not_reached"), "not reached");
        assert_eq!(area_text(1.005_1), "1.01 ha");
        assert_eq!(km_text(12.349), "12.3 km");
    }
}
