//! Writers for the files a coordinator would import: zones as GeoJSON,
//! alerts as CSV or GeoJSON.
//!
//! GeoJSON follows RFC 7946: a FeatureCollection, WGS 84 (lon, lat) order,
//! polygon exterior rings counter-clockwise. Numbers are written in the
//! shortest form that parses back to the same `f64`.

use serde_json::{Value, json};

use crate::scenario::{AlertRow, Scenario};

fn collection(features: Vec<Value>) -> String {
    json!({ "type": "FeatureCollection", "features": features }).to_string()
}

/// The scenario's zones (the reserve outline first) as Polygon features with
/// properties `{"name": .., "priority": bool}`.
pub fn zones_geojson(s: &Scenario) -> String {
    let features = s
        .zones
        .iter()
        .map(|z| {
            let ring: Vec<[f64; 2]> = z.ring.iter().map(|&(lon, lat)| [lon, lat]).collect();
            json!({
                "type": "Feature",
                "properties": { "name": z.name, "priority": z.priority },
                "geometry": { "type": "Polygon", "coordinates": [ring] },
            })
        })
        .collect();
    collection(features)
}

/// Alerts as CSV with the header `longitude,latitude,detected_on,confidence`
/// and `\n` line ends. No field needs quoting: all are numbers, dates or fixed words.
pub fn alerts_csv(rows: &[AlertRow]) -> String {
    let mut out = String::with_capacity(40 * (rows.len() + 1));
    out.push_str("longitude,latitude,detected_on,confidence\n");
    for r in rows {
        out.push_str(&format!(
            "{},{},{},{}\n",
            r.lon, r.lat, r.date, r.confidence
        ));
    }
    out
}

/// Alerts as Point features with properties `{"detected_on": .., "confidence": ..}`.
pub fn alerts_geojson(rows: &[AlertRow]) -> String {
    let features = rows
        .iter()
        .map(|r| {
            json!({
                "type": "Feature",
                "properties": { "detected_on": r.date, "confidence": r.confidence },
                "geometry": { "type": "Point", "coordinates": [r.lon, r.lat] },
            })
        })
        .collect();
    collection(features)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{generate_alerts, scenario};

    fn sample() -> Vec<AlertRow> {
        vec![
            AlertRow {
                lon: -60.81234,
                lat: -3.65,
                date: "2025-03-04".into(),
                confidence: "tentative",
            },
            AlertRow {
                lon: -60.9,
                lat: -3.5,
                date: "2025-12-31".into(),
                confidence: "confirmed",
            },
        ]
    }

    #[test]
    fn csv_header_and_rows() {
        let csv = alerts_csv(&sample());
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines[0], "longitude,latitude,detected_on,confidence");
        assert_eq!(lines[1], "-60.81234,-3.65,2025-03-04,tentative");
        assert_eq!(lines.len(), 3);
        assert!(csv.ends_with('\n'));
    }

    #[test]
    fn csv_values_parse_back_exactly() {
        let s = scenario();
        let all = generate_alerts(&s, 11);
        for (_, rows) in &all {
            let csv = alerts_csv(rows);
            for (line, r) in csv.lines().skip(1).zip(rows) {
                let f: Vec<&str> = line.split(',').collect();
                assert_eq!(f.len(), 4);
                assert_eq!(f[0].parse::<f64>().unwrap(), r.lon);
                assert_eq!(f[1].parse::<f64>().unwrap(), r.lat);
                assert_eq!(f[2], r.date);
            }
        }
    }

    #[test]
    fn alerts_geojson_parses() {
        let v: Value = serde_json::from_str(&alerts_geojson(&sample())).unwrap();
        assert_eq!(v["type"], "FeatureCollection");
        let f = &v["features"][1];
        assert_eq!(f["geometry"]["type"], "Point");
        assert_eq!(f["geometry"]["coordinates"][0].as_f64(), Some(-60.9));
        assert_eq!(f["properties"]["detected_on"], "2025-12-31");
        assert_eq!(f["properties"]["confidence"], "confirmed");
        let empty: Value = serde_json::from_str(&alerts_geojson(&[])).unwrap();
        assert_eq!(empty["features"].as_array().map(Vec::len), Some(0));
    }

    #[test]
    fn zones_geojson_parses_with_closed_rings() {
        let s = scenario();
        let v: Value = serde_json::from_str(&zones_geojson(&s)).unwrap();
        let feats = v["features"].as_array().unwrap();
        assert_eq!(feats.len(), s.zones.len());
        for (f, z) in feats.iter().zip(&s.zones) {
            assert_eq!(f["geometry"]["type"], "Polygon");
            assert_eq!(f["properties"]["name"], z.name.as_str());
            assert_eq!(f["properties"]["priority"], z.priority);
            let ring = f["geometry"]["coordinates"][0].as_array().unwrap();
            // RFC 7946 section 3.1.6: a linear ring has at least 4 positions, first equals last.
            assert!(ring.len() >= 4);
            assert_eq!(ring.first(), ring.last());
            assert_eq!(ring[1][0].as_f64(), Some(z.ring[1].0));
        }
    }
}
