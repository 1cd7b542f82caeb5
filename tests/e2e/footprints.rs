//! Event footprints checked by GEOS through GDAL's ogrinfo (SQLite dialect, `ST_IsValid`):
//! the pixel patterns in `tests/reference/footprints/patterns.json`, among them one whose
//! union gave a hole to a one-pixel island before the fix (issue 12 item 12).

use groundproof::alerts::cluster::footprint::{Pixel, footprint};
use groundproof_e2e::tool;

#[test]
fn footprints_of_the_reference_patterns_are_valid_for_geos() {
    let fixture: serde_json::Value =
        serde_json::from_str(include_str!("../reference/footprints/patterns.json"))
            .expect("fixture");
    let size_m = fixture["pixel_m"].as_f64().expect("pixel_m");
    let step = fixture["step_deg"].as_f64().expect("step_deg");
    let patterns = fixture["patterns"].as_array().expect("patterns");
    let mut features = Vec::new();
    for p in patterns {
        let (lon0, lat0) = (p["lon0"].as_f64().unwrap(), p["lat0"].as_f64().unwrap());
        let pixels: Vec<Pixel> = p["cells"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| Pixel {
                lon: lon0 + step * c[0].as_f64().unwrap(),
                lat: lat0 + step * c[1].as_f64().unwrap(),
                size_m,
            })
            .collect();
        let shape = footprint(&pixels).shape;
        let geometry = geojson::Geometry::new(geojson::GeometryValue::from(&shape));
        features.push(serde_json::json!({
            "type": "Feature",
            "properties": {"name": p["name"]},
            "geometry": serde_json::to_value(&geometry).unwrap(),
        }));
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("footprints.geojson");
    let collection = serde_json::json!({"type": "FeatureCollection", "features": features});
    std::fs::write(&path, collection.to_string()).unwrap();
    let Some(o) = tool(
        "ogrinfo",
        &[
            "-ro",
            "-q",
            "-dialect",
            "sqlite",
            "-sql",
            "SELECT name, ST_IsValid(geometry) AS valid FROM footprints",
            path.to_str().unwrap(),
        ],
    ) else {
        return;
    };
    let text = String::from_utf8_lossy(&o.stdout);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(!err.contains("GEOS"), "{err}");
    let valid = text.matches("valid (Integer) = 1").count();
    assert_eq!(valid, patterns.len(), "{text}\n{err}");
}
