//! GeoJSON alert files: an RFC 7946 FeatureCollection of Point features
//! whose properties hold the date and the confidence.

use super::{CONFIDENCE_NAMES, DATE_NAMES, Parsed, ParsedAlert, ReadOptions, RowError, build_row};
use serde_json::Value;

fn err(file: &str, line: usize, field: &str, message: String) -> RowError {
    RowError {
        file: file.into(),
        line,
        unit: "feature",
        field: field.into(),
        message,
    }
}

fn prop<'a>(
    props: &'a serde_json::Map<String, Value>,
    given: Option<&str>,
    usual: &[&str],
) -> Option<(&'a str, String)> {
    let pick = |k: &str| {
        props
            .get_key_value(k)
            .or_else(|| props.iter().find(|(name, _)| name.eq_ignore_ascii_case(k)))
    };
    let found = match given {
        Some(g) => pick(g),
        None => usual.iter().find_map(|k| pick(k)),
    }?;
    let text = match found.1 {
        Value::String(s) => s.clone(),
        Value::Number(n) => n.to_string(),
        _ => return None,
    };
    Some((found.0.as_str(), text))
}

pub fn parse(file: &str, bytes: &[u8], opts: &ReadOptions) -> Parsed {
    let mut out = Parsed {
        rows_read: 0,
        alerts: Vec::new(),
        errors: Vec::new(),
    };
    let features = match features_of(bytes) {
        Ok(f) => f,
        Err((field, message)) => {
            out.errors.push(err(file, 0, field, message));
            return out;
        }
    };
    for (i, f) in features.iter().enumerate() {
        out.rows_read += 1;
        match read_feature(f, i, opts) {
            Ok(a) => out.alerts.push(a),
            Err((field, message)) => out.errors.push(err(file, i, &field, message)),
        }
    }
    out
}

/// The `features` array of a FeatureCollection, or the file-level error.
fn features_of(bytes: &[u8]) -> Result<Vec<Value>, (&'static str, String)> {
    // serde_json refuses nesting deeper than 128 levels, which bounds the
    // stack an untrusted file can use.
    let mut doc: Value =
        serde_json::from_slice(bytes).map_err(|e| ("(file)", format!("not valid JSON: {e}")))?;
    let is_collection = doc.get("type").and_then(Value::as_str) == Some("FeatureCollection");
    match doc.get_mut("features").map(Value::take) {
        Some(Value::Array(f)) if is_collection => Ok(f),
        _ => Err((
            "type",
            "expected a GeoJSON FeatureCollection with a 'features' array".into(),
        )),
    }
}

/// One feature: a Point with [longitude, latitude] and the date and
/// confidence properties, or the field that failed and why.
fn read_feature(f: &Value, i: usize, opts: &ReadOptions) -> Result<ParsedAlert, (String, String)> {
    let (lon, lat) = point_of(f)?;
    let empty = serde_json::Map::new();
    let props = f
        .get("properties")
        .and_then(Value::as_object)
        .unwrap_or(&empty);
    let (date_key, date) =
        prop(props, opts.date_column.as_deref(), DATE_NAMES).ok_or_else(|| {
            (
                "properties".to_string(),
                format!(
                    "no date property: expected one of {}",
                    DATE_NAMES.join(", ")
                ),
            )
        })?;
    let (conf_key, conf) = prop(props, opts.confidence_column.as_deref(), CONFIDENCE_NAMES)
        .ok_or_else(|| {
            (
                "properties".to_string(),
                format!(
                    "no confidence property: expected one of {}",
                    CONFIDENCE_NAMES.join(", ")
                ),
            )
        })?;
    let (lon_s, lat_s) = (lon.to_string(), lat.to_string());
    build_row(
        [&lon_s, &lat_s, &date, &conf],
        opts,
        i,
        ["coordinates[0]", "coordinates[1]", date_key, conf_key],
    )
}

/// The longitude and latitude of a Point geometry.
fn point_of(f: &Value) -> Result<(f64, f64), (String, String)> {
    let coords = f
        .get("geometry")
        .filter(|g| g.get("type").and_then(Value::as_str) == Some("Point"))
        .and_then(|g| g.get("coordinates"))
        .and_then(Value::as_array);
    let Some(c) = coords.filter(|c| c.len() >= 2) else {
        return Err((
            "geometry".into(),
            "expected a Point geometry with [longitude, latitude]".into(),
        ));
    };
    match (c[0].as_f64(), c[1].as_f64()) {
        (Some(lon), Some(lat)) => Ok((lon, lat)),
        _ => Err(("geometry".into(), "coordinates must be numbers".into())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_points_and_reports_feature_index() {
        let text = r#"{"type":"FeatureCollection","features":[
          {"type":"Feature","geometry":{"type":"Point","coordinates":[-60.1,-3.2]},"properties":{"detected_on":"2026-05-01","confidence":"confirmed"}},
          {"type":"Feature","geometry":{"type":"Polygon","coordinates":[]},"properties":{}},
          {"type":"Feature","geometry":{"type":"Point","coordinates":[-200,-3.2]},"properties":{"date":"2026-05-01","confidence":"tentative"}}
        ]}"#;
        let p = parse("a.geojson", text.as_bytes(), &ReadOptions::default());
        assert_eq!(p.rows_read, 3);
        assert_eq!(p.alerts.len(), 1);
        assert_eq!(
            (p.errors[0].line, p.errors[0].field.as_str()),
            (1, "geometry")
        );
        assert_eq!(
            (p.errors[1].line, p.errors[1].field.as_str()),
            (2, "coordinates[0]")
        );
    }

    #[test]
    fn refuses_non_collections_and_deep_nesting() {
        let p = parse("x.json", b"[1,2]", &ReadOptions::default());
        assert_eq!(p.errors[0].field, "type");
        let deep = "[".repeat(10_000);
        let p = parse("x.json", deep.as_bytes(), &ReadOptions::default());
        assert!(p.errors[0].message.contains("not valid JSON"));
    }
}
