//! Zone files: a GeoJSON FeatureCollection of Polygon or MultiPolygon
//! features with a `name` and an optional boolean `priority` property.

use crate::domain::ZoneName;
use geo::{BoundingRect, MultiPolygon, Validation};

/// One valid zone.
#[derive(Debug, Clone, PartialEq)]
pub struct ParsedZone {
    pub name: ZoneName,
    pub priority: bool,
    pub shape: MultiPolygon<f64>,
    /// The GeoJSON geometry as given.
    pub geometry: String,
    pub bbox: (f64, f64, f64, f64),
}

/// Parse a zone file; every problem is listed as "feature N: …".
pub fn parse_zones(file: &str, bytes: &[u8]) -> Result<Vec<ParsedZone>, Vec<String>> {
    let text = std::str::from_utf8(bytes).map_err(|_| vec![format!("{file}: not UTF-8 text")])?;
    let gj: geojson::GeoJson = text
        .parse()
        .map_err(|e| vec![format!("{file}: not valid GeoJSON: {e}")])?;
    let geojson::GeoJson::FeatureCollection(fc) = gj else {
        return Err(vec![format!("{file}: expected a FeatureCollection")]);
    };
    let mut zones = Vec::new();
    let mut errors = Vec::new();
    let mut seen = std::collections::HashSet::new();
    for (i, f) in fc.features.into_iter().enumerate() {
        match read_zone(f, &mut seen) {
            Ok(z) => zones.push(z),
            Err(m) => errors.push(format!("{file}: feature {i}: {m}")),
        }
    }
    if errors.is_empty() {
        Ok(zones)
    } else {
        Err(errors)
    }
}

/// One feature as a zone; a name already in `seen` is refused.
fn read_zone(
    f: geojson::Feature,
    seen: &mut std::collections::HashSet<ZoneName>,
) -> Result<ParsedZone, String> {
    let name = f
        .property("name")
        .and_then(|v| v.as_str())
        .ok_or_else(|| "field 'name': a zone needs a string name".to_string())
        .and_then(ZoneName::parse)?;
    if !seen.insert(name.clone()) {
        return Err(format!("field 'name': zone '{name}' appears twice"));
    }
    let priority = match f.property("priority") {
        None | Some(serde_json::Value::Null) => false,
        Some(serde_json::Value::Bool(b)) => *b,
        Some(_) => return Err("field 'priority': expected true or false".into()),
    };
    let geom = f.geometry.ok_or("field 'geometry': missing")?;
    let geometry = geom.to_string();
    let shape = zone_shape(geom)?;
    let bbox = zone_bbox(&shape)?;
    Ok(ParsedZone {
        name,
        priority,
        shape,
        geometry,
        bbox,
    })
}

/// A Polygon or MultiPolygon that is valid.
fn zone_shape(geom: geojson::Geometry) -> Result<MultiPolygon<f64>, String> {
    let shape: MultiPolygon<f64> =
        super::to_multipolygon(geom).map_err(|m| format!("field 'geometry': {m}"))?;
    if !shape.is_valid() {
        return Err(
            "field 'geometry': the polygon is not valid (self-intersecting or open ring)".into(),
        );
    }
    Ok(shape)
}

/// The bounding box (west, south, east, north), inside the degree ranges.
fn zone_bbox(shape: &MultiPolygon<f64>) -> Result<(f64, f64, f64, f64), String> {
    let r = shape
        .bounding_rect()
        .ok_or("field 'geometry': empty polygon")?;
    let (w, s, e, n) = (r.min().x, r.min().y, r.max().x, r.max().y);
    if w < -180.0 || e > 180.0 || s < -90.0 || n > 90.0 {
        return Err(
            "field 'geometry': coordinates out of range (longitude, latitude order)".into(),
        );
    }
    Ok((w, s, e, n))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zones_and_their_errors() {
        let ok = r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"name":"Core","priority":true},
          "geometry":{"type":"Polygon","coordinates":[[[0,0],[1,0],[1,1],[0,1],[0,0]]]}}]}"#;
        let z = parse_zones("z.geojson", ok.as_bytes()).unwrap();
        assert_eq!((z[0].name.as_str(), z[0].priority), ("Core", true));
        let bad = r#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{},
          "geometry":{"type":"Point","coordinates":[0,0]}},{"type":"Feature","properties":{"name":"B"},
          "geometry":{"type":"Point","coordinates":[0,0]}}]}"#;
        let e = parse_zones("z.geojson", bad.as_bytes()).unwrap_err();
        assert!(e[0].contains("feature 0: field 'name'"), "{e:?}");
        assert!(e[1].contains("feature 1: field 'geometry'"), "{e:?}");
    }
}
