//! GeoJSON alert files: an RFC 7946 FeatureCollection of Point features
//! whose properties hold the date and the confidence.

use super::{CONFIDENCE_NAMES, DATE_NAMES, Parsed, ReadOptions, RowError, build_row};
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
    // serde_json refuses nesting deeper than 128 levels, which bounds the
    // stack an untrusted file can use.
    let doc: Value = match serde_json::from_slice(bytes) {
        Ok(v) => v,
        Err(e) => {
            out.errors
                .push(err(file, 0, "(file)", format!("not valid JSON: {e}")));
            return out;
        }
    };
    let features = match (doc.get("type").and_then(Value::as_str), doc.get("features")) {
        (Some("FeatureCollection"), Some(Value::Array(f))) => f,
        _ => {
            out.errors.push(err(
                file,
                0,
                "type",
                "expected a GeoJSON FeatureCollection with a 'features' array".into(),
            ));
            return out;
        }
    };
    for (i, f) in features.iter().enumerate() {
        out.rows_read += 1;
        let coords = f
            .get("geometry")
            .filter(|g| g.get("type").and_then(Value::as_str) == Some("Point"))
            .and_then(|g| g.get("coordinates"))
            .and_then(Value::as_array);
        let Some(c) = coords.filter(|c| c.len() >= 2) else {
            out.errors.push(err(
                file,
                i,
                "geometry",
                "expected a Point geometry with [longitude, latitude]".into(),
            ));
            continue;
        };
        let (Some(lon), Some(lat)) = (c[0].as_f64(), c[1].as_f64()) else {
            out.errors.push(err(
                file,
                i,
                "geometry",
                "coordinates must be numbers".into(),
            ));
            continue;
        };
        let empty = serde_json::Map::new();
        let props = f
            .get("properties")
            .and_then(Value::as_object)
            .unwrap_or(&empty);
        let Some((date_key, date)) = prop(props, opts.date_column.as_deref(), DATE_NAMES) else {
            out.errors.push(err(
                file,
                i,
                "properties",
                format!(
                    "no date property: expected one of {}",
                    DATE_NAMES.join(", ")
                ),
            ));
            continue;
        };
        let Some((conf_key, conf)) =
            prop(props, opts.confidence_column.as_deref(), CONFIDENCE_NAMES)
        else {
            out.errors.push(err(
                file,
                i,
                "properties",
                format!(
                    "no confidence property: expected one of {}",
                    CONFIDENCE_NAMES.join(", ")
                ),
            ));
            continue;
        };
        let (lon_s, lat_s) = (lon.to_string(), lat.to_string());
        match build_row(
            [&lon_s, &lat_s, &date, &conf],
            opts,
            i,
            ["coordinates[0]", "coordinates[1]", date_key, conf_key],
        ) {
            Ok(a) => out.alerts.push(a),
            Err((field, message)) => out.errors.push(err(file, i, &field, message)),
        }
    }
    out
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
