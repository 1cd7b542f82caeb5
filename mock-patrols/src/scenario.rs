//! The invented scenario: one reserve, its zones, three alert sources, three
//! field teams and a ranger station, for a single calendar year.
//!
//! `zones[0]` is always the reserve outline itself (named after the reserve,
//! not a priority); the zones after it lie inside the reserve and do not
//! overlap each other.

use crate::layout::{self, RESERVE, STATION, ZONES};

/// One alert system the organisation imports from.
#[derive(Debug, Clone, PartialEq)]
pub struct SourceSpec {
    pub name: &'static str,
    pub pixel_size_m: f64,
    pub revisit_days: u32,
}

/// A named polygon: `ring` is (lon, lat), closed (first point repeated at the
/// end) and counter-clockwise.
#[derive(Debug, Clone, PartialEq)]
pub struct ZoneSpec {
    pub name: String,
    pub priority: bool,
    pub ring: Vec<(f64, f64)>,
}

/// Everything the demo needs to know about the invented place.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    pub reserve_name: String,
    /// `zones[0]` is the reserve outline; the others lie inside it.
    pub zones: Vec<ZoneSpec>,
    pub sources: Vec<SourceSpec>,
    pub teams: Vec<String>,
    /// Ranger station (lon, lat), just outside the east edge.
    pub station: (f64, f64),
    /// First day of the alert year, `YYYY-MM-DD`.
    pub start_date: String,
    /// Last day of the alert year, `YYYY-MM-DD`, inclusive.
    pub end_date: String,
}

/// One alert pixel as an alert file carries it.
#[derive(Debug, Clone, PartialEq)]
pub struct AlertRow {
    /// Pixel centre longitude, degrees.
    pub lon: f64,
    /// Pixel centre latitude, degrees.
    pub lat: f64,
    /// Date of first detection, `YYYY-MM-DD`.
    pub date: String,
    /// `"tentative"` or `"confirmed"`.
    pub confidence: &'static str,
}

/// Rounds degrees to 1e-6 (about 0.1 m) so the written files are short and exact.
fn round6(v: f64) -> f64 {
    (v * 1e6).round() / 1e6
}

fn ring_from_km(outline: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut ring: Vec<(f64, f64)> = outline
        .iter()
        .map(|&(x, y)| {
            let (lon, lat) = layout::to_lonlat(x, y);
            (round6(lon), round6(lat))
        })
        .collect();
    if let Some(&first) = ring.first() {
        ring.push(first);
    }
    ring
}

/// The invented scenario. Always the same.
pub fn scenario() -> Scenario {
    let reserve_name = "Serra Vesper Reserve".to_string();
    let mut zones = vec![ZoneSpec {
        name: reserve_name.clone(),
        priority: false,
        ring: ring_from_km(RESERVE),
    }];
    zones.extend(ZONES.iter().map(|z| ZoneSpec {
        name: z.name.to_string(),
        priority: z.priority,
        ring: ring_from_km(z.outline),
    }));
    let (slon, slat) = layout::to_lonlat(STATION.0, STATION.1);
    Scenario {
        reserve_name,
        zones,
        sources: vec![
            SourceSpec {
                name: "optical-10m",
                pixel_size_m: 10.0,
                revisit_days: 5,
            },
            SourceSpec {
                name: "radar-10m",
                pixel_size_m: 10.0,
                revisit_days: 12,
            },
            SourceSpec {
                name: "optical-30m",
                pixel_size_m: 30.0,
                revisit_days: 8,
            },
        ],
        teams: vec![
            "Team Amber".to_string(),
            "Team Basalt".to_string(),
            "Team Cedar".to_string(),
        ],
        station: (round6(slon), round6(slat)),
        start_date: "2025-11-01".to_string(),
        end_date: "2026-10-31".to_string(),
    }
}

/// The reserve outline (`zones[0].ring`), or an empty slice if there are no zones.
pub fn reserve_ring(s: &Scenario) -> &[(f64, f64)] {
    s.zones.first().map_or(&[], |z| z.ring.as_slice())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::planar::{ring_contains, signed_area};

    #[test]
    fn shape_of_the_scenario() {
        let s = scenario();
        assert_eq!(s.zones[0].name, s.reserve_name);
        assert!(
            (4..=6).contains(&s.zones.len()),
            "3 to 5 zones inside the reserve"
        );
        assert!(s.zones.iter().any(|z| z.priority));
        assert_eq!(s.sources.len(), 3);
        assert_eq!(s.teams.len(), 3);
        for z in &s.zones {
            assert_eq!(z.ring.first(), z.ring.last(), "{} closed", z.name);
            assert!(signed_area(&z.ring) > 0.0, "{} counter-clockwise", z.name);
        }
    }

    #[test]
    fn reserve_is_about_40_by_30_km_in_the_tropics() {
        let s = scenario();
        let ring = reserve_ring(&s);
        let (mut lo_lon, mut hi_lon, mut lo_lat, mut hi_lat) =
            (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
        for &(lon, lat) in ring {
            lo_lon = lo_lon.min(lon);
            hi_lon = hi_lon.max(lon);
            lo_lat = lo_lat.min(lat);
            hi_lat = hi_lat.max(lat);
        }
        // Tropics: |lat| < 23.44 degrees (Earth's axial tilt, common knowledge).
        assert!(hi_lat < 23.44 && lo_lat > -23.44);
        // 1 degree of latitude is about 110.6 km, of longitude about 111.3 km x cos(lat) (recalled from memory).
        let ew_km = (hi_lon - lo_lon) * 111.32 * lo_lat.to_radians().cos();
        let ns_km = (hi_lat - lo_lat) * 110.57;
        assert!((38.0..42.0).contains(&ew_km), "{ew_km}");
        assert!((28.0..32.0).contains(&ns_km), "{ns_km}");
        assert!(!ring_contains(ring, s.station.0, s.station.1));
    }
}
