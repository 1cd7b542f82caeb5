//! The invented geography in local kilometres, and its placement on Earth.
//!
//! Everything is drawn in a local frame: x kilometres east and y kilometres
//! north of the frame's south-west corner. [`to_lonlat`] places that frame in
//! the tropics with an equirectangular approximation, which is accurate to a
//! few metres over 40 km and is all an invented map needs.

/// Longitude of the frame origin (x = 0), degrees.
pub(crate) const LON0: f64 = -60.93;
/// Latitude of the frame origin (y = 0), degrees.
pub(crate) const LAT0: f64 = -3.71;
/// Kilometres per degree of latitude near the equator (WGS 84 meridian arc, recalled from memory, about 110.57 km).
const KM_PER_DEG_LAT: f64 = 110.574;
/// Kilometres per degree of longitude at the equator (WGS 84, recalled from memory, about 111.32 km).
const KM_PER_DEG_LON_EQ: f64 = 111.320;
/// Frame latitude used for the longitude scale: the middle of the reserve.
const LAT_MID: f64 = LAT0 + 15.0 / KM_PER_DEG_LAT;

fn km_per_deg_lon() -> f64 {
    KM_PER_DEG_LON_EQ * LAT_MID.to_radians().cos()
}

/// Local kilometres to (lon, lat) degrees.
pub(crate) fn to_lonlat(x: f64, y: f64) -> (f64, f64) {
    (LON0 + x / km_per_deg_lon(), LAT0 + y / KM_PER_DEG_LAT)
}

#[cfg(test)]
/// (lon, lat) degrees to local kilometres.
pub(crate) fn to_km(lon: f64, lat: f64) -> (f64, f64) {
    (
        (lon - LON0) * km_per_deg_lon(),
        (lat - LAT0) * KM_PER_DEG_LAT,
    )
}

/// Reserve outline, about 40 km x 30 km, counter-clockwise, not closed.
pub(crate) const RESERVE: &[(f64, f64)] = &[
    (0.0, 3.0),
    (6.0, 0.0),
    (22.0, 1.0),
    (34.0, 0.0),
    (40.0, 6.0),
    (39.0, 18.0),
    (40.0, 27.0),
    (30.0, 30.0),
    (16.0, 29.0),
    (5.0, 30.0),
    (0.0, 22.0),
    (2.0, 12.0),
];

/// One zone inside the reserve: name, priority, counter-clockwise outline (not closed).
pub(crate) struct ZoneKm {
    pub name: &'static str,
    pub priority: bool,
    pub outline: &'static [(f64, f64)],
}

/// The zones inside the reserve; they do not overlap each other.
pub(crate) const ZONES: &[ZoneKm] = &[
    ZoneKm {
        name: "North Buffer",
        priority: false,
        outline: &[
            (3.0, 22.0),
            (38.0, 22.0),
            (38.0, 26.0),
            (30.0, 28.0),
            (16.0, 27.0),
            (6.0, 28.0),
            (3.0, 25.0),
        ],
    },
    ZoneKm {
        name: "Core",
        priority: true,
        outline: &[
            (12.0, 8.0),
            (30.0, 8.0),
            (32.0, 18.0),
            (24.0, 21.0),
            (12.0, 20.0),
            (10.0, 14.0),
        ],
    },
    ZoneKm {
        name: "Riverside Community Land",
        priority: true,
        outline: &[
            (3.0, 4.0),
            (10.0, 2.0),
            (20.0, 3.0),
            (20.0, 7.0),
            (11.0, 7.0),
            (9.0, 13.0),
            (4.0, 14.0),
            (3.0, 9.0),
        ],
    },
    ZoneKm {
        name: "East Access Strip",
        priority: false,
        outline: &[
            (33.0, 3.0),
            (38.0, 7.0),
            (37.0, 20.0),
            (34.0, 20.0),
            (32.0, 8.0),
        ],
    },
];

/// Ranger station, about 1 km outside the east edge, on the trunk road.
pub(crate) const STATION: (f64, f64) = (40.5, 12.3);

/// Invented roads and tracks, as polylines. Most clearings start along them.
pub(crate) const ROADS: &[&[(f64, f64)]] = &[
    // Trunk road from the station westwards across the reserve.
    &[
        (40.5, 12.3),
        (33.0, 13.0),
        (26.0, 11.5),
        (19.0, 12.0),
        (12.0, 15.5),
        (5.0, 16.5),
    ],
    // Southern track up from the community land.
    &[
        (7.0, 0.4),
        (10.0, 4.0),
        (15.0, 7.5),
        (21.0, 9.0),
        (26.0, 11.5),
    ],
    // Northern spur down to the trunk road.
    &[(24.0, 29.5), (23.0, 25.0), (20.0, 21.0), (19.0, 12.0)],
];

/// Smallholder fields in the community land, as (x0, y0, x1, y1) rectangles.
/// Clearings there creep outwards from the field edges.
pub(crate) const FIELDS: &[(f64, f64, f64, f64)] = &[
    (5.0, 5.0, 6.2, 6.0),
    (6.5, 8.0, 7.8, 9.2),
    (12.0, 4.0, 13.5, 5.0),
    (15.0, 4.5, 16.0, 5.8),
    (4.5, 10.5, 5.8, 11.8),
];

#[cfg(test)]
mod tests {
    use super::*;
    use crate::planar::{ring_contains, signed_area};

    fn closed(ring: &[(f64, f64)]) -> Vec<(f64, f64)> {
        let mut v = ring.to_vec();
        v.push(ring[0]);
        v
    }

    #[test]
    fn round_trip_km_degrees() {
        let (lon, lat) = to_lonlat(12.5, 7.25);
        let (x, y) = to_km(lon, lat);
        assert!((x - 12.5).abs() < 1e-9 && (y - 7.25).abs() < 1e-9);
    }

    #[test]
    fn outlines_are_counter_clockwise() {
        assert!(signed_area(&closed(RESERVE)) > 0.0);
        for z in ZONES {
            assert!(signed_area(&closed(z.outline)) > 0.0, "{}", z.name);
        }
    }

    #[test]
    fn zones_lie_inside_the_reserve_and_do_not_overlap() {
        let reserve = closed(RESERVE);
        for z in ZONES {
            for &(x, y) in z.outline {
                assert!(ring_contains(&reserve, x, y), "{} vertex ({x},{y})", z.name);
            }
        }
        // Sample a 100 m lattice: no point lies in two zones.
        let rings: Vec<_> = ZONES.iter().map(|z| closed(z.outline)).collect();
        for i in 0..400 {
            for j in 0..300 {
                let (x, y) = (f64::from(i) * 0.1 + 0.05, f64::from(j) * 0.1 + 0.05);
                let n = rings.iter().filter(|r| ring_contains(r, x, y)).count();
                assert!(n <= 1, "({x},{y}) in {n} zones");
                if n == 1 {
                    assert!(ring_contains(&reserve, x, y));
                }
            }
        }
    }

    #[test]
    fn station_is_near_but_outside_the_edge() {
        let reserve = closed(RESERVE);
        assert!(!ring_contains(&reserve, STATION.0, STATION.1));
        assert!(ring_contains(&reserve, STATION.0 - 1.5, STATION.1));
    }
}
