//! Distances and pixel geometry on the Earth.
//!
//! Link decisions use the great-circle (haversine) distance on a sphere of
//! the IUGG mean radius, the same model scikit-learn's haversine metric
//! uses, so our partition can be checked against it. Pixel squares are laid
//! out on the WGS 84 ellipsoid (meridional and prime-vertical radii), and
//! areas are geodesic on WGS 84 (Karney's algorithm through `geo`), so a
//! 10 m pixel has 100 m² to well within 0.1%.

use geo::{Coord, GeodesicArea, LineString, MultiPolygon, Polygon};

/// The sphere of link decisions: one radius and one haversine, shared with
/// the field side (the contract crate holds them).
pub use groundproof_sync::geodesy::{MEAN_RADIUS_M, haversine_m};

/// WGS 84 semi-major axis (NIMA TR8350.2).
const WGS84_A: f64 = 6_378_137.0;
/// WGS 84 flattening (NIMA TR8350.2).
const WGS84_F: f64 = 1.0 / 298.257_223_563;

/// Half the side of a square pixel of `size_m` metres centred at `lat`, in
/// degrees of longitude and latitude, from the WGS 84 radii of curvature.
pub fn pixel_half_extent_deg(lat: f64, size_m: f64) -> (f64, f64) {
    let e2 = WGS84_F * (2.0 - WGS84_F);
    let s = lat.to_radians().sin();
    let w = (1.0 - e2 * s * s).sqrt();
    let meridional = WGS84_A * (1.0 - e2) / (w * w * w);
    let prime_vertical = WGS84_A / w;
    let half = size_m / 2.0;
    let dlat = (half / meridional).to_degrees();
    let coslat = lat.to_radians().cos().max(1e-9);
    let dlon = (half / (prime_vertical * coslat)).to_degrees();
    (dlon, dlat)
}

/// Grid to which pixel corners are snapped (1e-8 degree, about 1 mm), so
/// that squares of neighbouring pixels of one grid share exact corners.
const SNAP_DEG: f64 = 1e-8;

fn snap(v: f64) -> f64 {
    (v / SNAP_DEG).round() * SNAP_DEG
}

/// The square of one pixel as a counter-clockwise polygon in (lon, lat).
pub fn pixel_square(lon: f64, lat: f64, size_m: f64) -> Polygon<f64> {
    let (dlon, dlat) = pixel_half_extent_deg(lat, size_m);
    let (w, e, s, n) = (
        snap(lon - dlon),
        snap(lon + dlon),
        snap(lat - dlat),
        snap(lat + dlat),
    );
    Polygon::new(
        LineString::new(vec![
            Coord { x: w, y: s },
            Coord { x: e, y: s },
            Coord { x: e, y: n },
            Coord { x: w, y: n },
            Coord { x: w, y: s },
        ]),
        vec![],
    )
}

/// Nearest a new clearing's square may come to a pole, as a latitude (our choice: beyond 85°
/// a square of a few kilometres spans many degrees of longitude and no forest grows there).
pub const MAX_CLEARING_LAT: f64 = 85.0;

/// The footprint of a new clearing reported in the field: a square of `area_ha` hectares
/// centred on (`lon`, `lat`), bounded by two parallels and two meridians, with the reported
/// geodesic area on WGS 84.
///
/// The latitude side comes from the meridional radius; the longitude side is then scaled so
/// that the geodesic area is the reported one (the area between two parallels grows in
/// proportion to the longitude span). A square that crosses the antimeridian is cut there
/// into two pieces, one on each side (RFC 7946 §3.1.9). A square that would reach beyond
/// [`MAX_CLEARING_LAT`] is refused, as is a position or area out of range; the result passes
/// [`check_stored_geometry`].
pub fn clearing_square(lon: f64, lat: f64, area_ha: f64) -> Result<MultiPolygon<f64>, String> {
    use groundproof_sync::returns::MAX_AREA_HA;
    if !((-180.0..=180.0).contains(&lon) && (-90.0..=90.0).contains(&lat)) {
        return Err(format!("position ({lat}, {lon}) is out of range"));
    }
    if !(area_ha.is_finite() && area_ha > 0.0 && area_ha <= MAX_AREA_HA) {
        return Err(format!("area {area_ha} ha is not in (0, {MAX_AREA_HA}]"));
    }
    let (_, dlat) = pixel_half_extent_deg(lat, (area_ha * 10_000.0).sqrt());
    let (south, north) = (lat - dlat, lat + dlat);
    if south < -MAX_CLEARING_LAT || north > MAX_CLEARING_LAT {
        return Err(format!(
            "a square of {area_ha} ha at latitude {lat} reaches closer to the pole than {MAX_CLEARING_LAT}°: not stored"
        ));
    }
    // One degree of longitude between the two parallels, then the span that gives the area.
    let one_degree = lon_lat_box(0.0, 1.0, south, north).geodesic_area_unsigned();
    let dlon = area_ha * 10_000.0 / one_degree / 2.0;
    let square = split_at_antimeridian(lon - dlon, lon + dlon, south, north);
    check_stored_geometry(&square)?;
    Ok(square)
}

/// The box from `west` to `east` (which may pass ±180°) as one piece, or two pieces cut at
/// the antimeridian.
fn split_at_antimeridian(west: f64, east: f64, south: f64, north: f64) -> MultiPolygon<f64> {
    let pieces = if east > 180.0 {
        vec![
            lon_lat_box(west, 180.0, south, north),
            lon_lat_box(-180.0, east - 360.0, south, north),
        ]
    } else if west < -180.0 {
        vec![
            lon_lat_box(west + 360.0, 180.0, south, north),
            lon_lat_box(-180.0, east, south, north),
        ]
    } else {
        vec![lon_lat_box(west, east, south, north)]
    };
    MultiPolygon::new(pieces)
}

/// A counter-clockwise box in (lon, lat).
fn lon_lat_box(west: f64, east: f64, south: f64, north: f64) -> Polygon<f64> {
    Polygon::new(
        LineString::new(vec![
            Coord { x: west, y: south },
            Coord { x: east, y: south },
            Coord { x: east, y: north },
            Coord { x: west, y: north },
            Coord { x: west, y: south },
        ]),
        vec![],
    )
}

/// Checks a footprint before it is stored: not empty, every coordinate a number with
/// longitude in −180..=180 and latitude in −90..=90, and valid as OGC Simple Features
/// define it (geo's validation).
pub fn check_stored_geometry(shape: &MultiPolygon<f64>) -> Result<(), String> {
    check_in_range(shape)?;
    check_valid(shape)
}

/// [`check_stored_geometry`] for an event footprint made by the pixel union: the full OGC
/// validation only when it has holes or several parts, where a union can go wrong (a hole
/// on the wrong shell, parts touching along a line). A single ring without holes comes out
/// of the overlay simple; validating each of them cost 40% of the event step of a
/// million-alert import (1.9 s of 3.9 s, `import_cluster` bench) for nothing found.
pub fn check_event_footprint(shape: &MultiPolygon<f64>) -> Result<(), String> {
    check_in_range(shape)?;
    if shape.0.len() > 1 || shape.0.iter().any(|p| !p.interiors().is_empty()) {
        check_valid(shape)?;
    }
    Ok(())
}

/// Valid as OGC Simple Features define it (geo's validation).
fn check_valid(shape: &MultiPolygon<f64>) -> Result<(), String> {
    use geo::Validation;
    shape
        .check_validation()
        .map_err(|e| format!("the footprint is not a valid MultiPolygon: {e}"))
}

/// Not empty, and every coordinate in the degree ranges.
fn check_in_range(shape: &MultiPolygon<f64>) -> Result<(), String> {
    use geo::CoordsIter;
    if shape.0.is_empty() {
        return Err("the footprint is empty".into());
    }
    if let Some(c) = shape
        .coords_iter()
        .find(|c| !((-180.0..=180.0).contains(&c.x) && (-90.0..=90.0).contains(&c.y)))
    {
        return Err(format!(
            "the footprint has a corner out of range (longitude {}, latitude {})",
            c.x, c.y
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use geographiclib_rs::{Geodesic, InverseGeodesic};

    /// Our haversine against Karney's ellipsoidal geodesic (geographiclib-rs
    /// 0.2.7): the sphere is within 0.6% of WGS 84 at these latitudes, which
    /// bounds how close a pair must sit to the link distance to flip.
    #[test]
    fn haversine_close_to_geodesic() {
        let g = Geodesic::wgs84();
        for lat in [0.0, 60.0] {
            for (dlon, dlat) in [
                (0.00009, 0.0),
                (0.0, 0.00009),
                (0.00009, 0.00009),
                (0.01, 0.02),
            ] {
                let a = (10.0, lat);
                let b = (10.0 + dlon, lat + dlat);
                let ours = haversine_m(a, b);
                let s12: f64 = g.inverse(a.1, a.0, b.1, b.0);
                assert!(
                    ((ours - s12) / s12).abs() < 0.006,
                    "lat {lat}: {ours} vs {s12}"
                );
            }
        }
    }

    /// Every corner of a stored footprint in range.
    fn in_range(mp: &MultiPolygon<f64>) -> bool {
        use geo::CoordsIter;
        mp.coords_iter()
            .all(|c| (-180.0..=180.0).contains(&c.x) && (-90.0..=90.0).contains(&c.y))
    }

    /// New clearings near a pole or across the antimeridian: the square is either built in
    /// range, valid and with the reported area (geodesic, Karney through geo 0.33, within 1%),
    /// or refused with a reason; never a footprint with longitudes beyond ±180° or latitudes
    /// beyond ±90°. 10,000 ha is the largest area a report may give
    /// (`groundproof_sync::returns::MAX_AREA_HA`).
    #[test]
    fn clearing_squares_near_the_poles_and_the_antimeridian() {
        use geo::Validation;
        let cases = [
            (179.99, 0.0, 10_000.0),
            (-179.99, -10.0, 2.5),
            (180.0, 60.0, 100.0),
            (-180.0, 0.0, 1.0),
            (10.0, 89.99, 10_000.0),
            (10.0, -89.999, 1.0),
            (0.0, 90.0, 1.0),
            (-60.0, -3.0, 10_000.0),
        ];
        for (lon, lat, ha) in cases {
            match clearing_square(lon, lat, ha) {
                Ok(mp) => {
                    assert!(in_range(&mp), "({lon}, {lat}, {ha}): {mp:?}");
                    assert!(mp.is_valid(), "({lon}, {lat}, {ha}): {mp:?}");
                    let got = mp.geodesic_area_unsigned() / 10_000.0;
                    assert!(
                        ((got - ha) / ha).abs() < 0.01,
                        "({lon}, {lat}, {ha}): {got} ha"
                    );
                }
                Err(m) => assert!(m.contains("pole"), "({lon}, {lat}, {ha}): {m}"),
            }
        }
        // Away from the poles and the antimeridian the square is built, one piece.
        let mp = clearing_square(-60.0, -3.0, 2.5).expect("built");
        assert_eq!(mp.0.len(), 1);
        // Across the antimeridian it is cut in two pieces, one on each side (RFC 7946 §3.1.9).
        let mp = clearing_square(179.99, 0.0, 10_000.0).expect("built");
        assert_eq!(mp.0.len(), 2);
    }

    /// A 10 m pixel is 0.01 ha and a 30 m pixel 0.09 ha (common practice:
    /// 1 ha = 10,000 m²); our squares' geodesic areas agree within 0.1% at
    /// the equator and at 60 degrees.
    #[test]
    fn pixel_areas() {
        for lat in [0.0, -3.2, 60.0] {
            for (size, ha) in [(10.0, 0.01), (30.0, 0.09)] {
                let a = pixel_square(-60.0, lat, size).geodesic_area_unsigned() / 10_000.0;
                assert!(
                    ((a - ha) / ha).abs() < 0.001,
                    "lat {lat} size {size}: {a} ha"
                );
            }
        }
    }
}
