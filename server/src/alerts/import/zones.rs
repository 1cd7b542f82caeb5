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
        let at = |m: String| format!("{file}: feature {i}: {m}");
        let name = f
            .property("name")
            .and_then(|v| v.as_str())
            .ok_or_else(|| "field 'name': a zone needs a string name".to_string())
            .and_then(ZoneName::parse);
        let name = match name {
            Ok(n) => n,
            Err(m) => {
                errors.push(at(m));
                continue;
            }
        };
        if !seen.insert(name.clone()) {
            errors.push(at(format!("field 'name': zone '{name}' appears twice")));
            continue;
        }
        let priority = match f.property("priority") {
            None | Some(serde_json::Value::Null) => false,
            Some(serde_json::Value::Bool(b)) => *b,
            Some(_) => {
                errors.push(at("field 'priority': expected true or false".into()));
                continue;
            }
        };
        let Some(geom) = f.geometry else {
            errors.push(at("field 'geometry': missing".into()));
            continue;
        };
        let geometry = geom.to_string();
        let shape: MultiPolygon<f64> = match super::to_multipolygon(geom) {
            Ok(m) => m,
            Err(m) => {
                errors.push(at(format!("field 'geometry': {m}")));
                continue;
            }
        };
        if !shape.is_valid() {
            errors.push(at(
                "field 'geometry': the polygon is not valid (self-intersecting or open ring)"
                    .into(),
            ));
            continue;
        }
        let Some(r) = shape.bounding_rect() else {
            errors.push(at("field 'geometry': empty polygon".into()));
            continue;
        };
        let (w, s, e, n) = (r.min().x, r.min().y, r.max().x, r.max().y);
        if w < -180.0 || e > 180.0 || s < -90.0 || n > 90.0 {
            errors.push(at(
                "field 'geometry': coordinates out of range (longitude, latitude order)".into(),
            ));
            continue;
        }
        zones.push(ParsedZone {
            name,
            priority,
            shape,
            geometry,
            bbox: (w, s, e, n),
        });
    }
    if errors.is_empty() {
        Ok(zones)
    } else {
        Err(errors)
    }
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
