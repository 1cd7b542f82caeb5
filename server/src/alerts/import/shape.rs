//! A GeoJSON Polygon or MultiPolygon geometry as a `geo` shape, for zone
//! files, stored zones and footprints, and the extents coordinators draw.
//!
//! The geojson crate (1.0.0) reads a position of fewer than two numbers
//! (`[0]`, `[]`) without complaint and then panics converting it to `geo`
//! (`src/conversion/to_geo_types.rs` indexes `[0]` and `[1]`), so every
//! position is checked before the conversion.

use geo::MultiPolygon;
use geojson::{GeometryValue, Position};

/// Why a geometry is not a polygon shape.
pub const SHORT_POSITION: &str = "a position needs a longitude and a latitude";
/// Why a geometry is not a polygon shape.
pub const NOT_POLYGONAL: &str = "expected a Polygon or MultiPolygon";

/// The geometry as a MultiPolygon (a Polygon becomes one of one).
pub fn to_multipolygon(geom: geojson::Geometry) -> Result<MultiPolygon<f64>, &'static str> {
    if !positions_complete(&geom.value) {
        return Err(SHORT_POSITION);
    }
    match geo::Geometry::<f64>::try_from(geom) {
        Ok(geo::Geometry::Polygon(p)) => Ok(MultiPolygon::new(vec![p])),
        Ok(geo::Geometry::MultiPolygon(m)) => Ok(m),
        _ => Err(NOT_POLYGONAL),
    }
}

/// True when every position of the geometry (and of every geometry in a
/// collection) holds at least two numbers.
fn positions_complete(v: &GeometryValue) -> bool {
    let ok = |p: &Position| p.len() >= 2;
    match v {
        GeometryValue::Point { coordinates } => ok(coordinates),
        GeometryValue::MultiPoint { coordinates } | GeometryValue::LineString { coordinates } => {
            coordinates.iter().all(ok)
        }
        GeometryValue::MultiLineString { coordinates } | GeometryValue::Polygon { coordinates } => {
            coordinates.iter().flatten().all(ok)
        }
        GeometryValue::MultiPolygon { coordinates } => {
            coordinates.iter().flatten().flatten().all(ok)
        }
        GeometryValue::GeometryCollection { geometries } => {
            geometries.iter().all(|g| positions_complete(&g.value))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geometry(json: &str) -> geojson::Geometry {
        json.parse().expect("a GeoJSON geometry")
    }

    #[test]
    fn polygons_convert_and_short_positions_are_refused() {
        let square = r#"{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,0]]]}"#;
        assert_eq!(to_multipolygon(geometry(square)).map(|m| m.0.len()), Ok(1));
        let multi = r#"{"type":"MultiPolygon","coordinates":[[[[0,0],[1,0],[1,1],[0,0]]],[[[2,2],[3,2],[3,3],[2,2]]]]}"#;
        assert_eq!(to_multipolygon(geometry(multi)).map(|m| m.0.len()), Ok(2));
        let point = r#"{"type":"Point","coordinates":[0,0]}"#;
        assert_eq!(to_multipolygon(geometry(point)), Err(NOT_POLYGONAL));
        for short in [
            r#"{"type":"Polygon","coordinates":[[[0],[1,0],[1,1],[0,0]]]}"#,
            r#"{"type":"MultiPolygon","coordinates":[[[[0,0],[1,0],[1,1],[]]]]}"#,
            r#"{"type":"GeometryCollection","geometries":[{"type":"LineString","coordinates":[[0,0],[1]]}]}"#,
        ] {
            assert_eq!(
                to_multipolygon(geometry(short)),
                Err(SHORT_POSITION),
                "{short}"
            );
        }
    }
}
