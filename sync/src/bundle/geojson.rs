//! The two GeoJSON entries (RFC 7946): `events.geojson`, a FeatureCollection
//! of event footprints (MultiPolygon, lon-lat, exterior rings
//! counter-clockwise), and `points.geojson`, a FeatureCollection of event
//! centroids, control points and the start point. Both carry every property
//! of their items, so that a bundle can be read back from them alone. No
//! `crs` member is written (RFC 7946 Appendix B).

use std::collections::BTreeMap;

use geo::{Coord, LineString, MultiPolygon, Point, Polygon};
use geojson::{
    Feature, FeatureCollection, Geometry, GeometryValue, JsonObject, JsonValue, Position,
};

use super::types::{BundleEvent, ControlPoint, StartPoint};

/// `kind` property of an event centroid in `points.geojson`.
pub const KIND_EVENT: &str = "event";
/// `kind` property of a control point.
pub const KIND_CONTROL: &str = "control";
/// `kind` property of the start point.
pub const KIND_START: &str = "start";

fn position(c: Coord<f64>) -> Position {
    Position::from([c.x, c.y])
}

fn ring_positions(ring: &LineString<f64>) -> Vec<Position> {
    ring.0.iter().map(|c| position(*c)).collect()
}

fn multipolygon_value(mp: &MultiPolygon<f64>) -> GeometryValue {
    let polys =
        mp.0.iter()
            .map(|p| {
                std::iter::once(p.exterior())
                    .chain(p.interiors())
                    .map(ring_positions)
                    .collect()
            })
            .collect();
    GeometryValue::MultiPolygon { coordinates: polys }
}

fn point_value(p: Point<f64>) -> GeometryValue {
    GeometryValue::Point {
        coordinates: position(p.0),
    }
}

/// The properties every event carries, in GeoJSON and in the GeoPackage.
fn event_properties(e: &BundleEvent) -> JsonObject {
    let mut p = JsonObject::new();
    p.insert("code".into(), e.code.clone().into());
    p.insert("event_id".into(), e.event_id.into());
    p.insert("area_ha".into(), e.area_ha.into());
    p.insert("first_detected".into(), e.first_detected.clone().into());
    p.insert("last_detected".into(), e.last_detected.clone().into());
    p.insert("sources".into(), e.sources.clone().into());
    p.insert("confidence".into(), e.confidence.clone().into());
    if let Some(level) = e.confidence_level() {
        p.insert("confidence_level".into(), level.into());
    }
    p.insert("corroborated".into(), e.corroborated.into());
    p.insert("priority".into(), e.priority.into());
    p.insert("visit_order".into(), e.visit_order.into());
    p.insert(
        "inclusion_probability".into(),
        e.inclusion_probability.into(),
    );
    p.insert("stratum".into(), e.stratum.clone().into());
    p
}

fn feature(id: &str, value: GeometryValue, properties: JsonObject) -> Feature {
    Feature {
        bbox: None,
        geometry: Some(Geometry::new(value)),
        id: Some(geojson::feature::Id::String(id.to_owned())),
        properties: Some(properties),
        foreign_members: None,
    }
}

/// Bytes of `events.geojson`, one Feature per event in the given order.
pub fn events_geojson(events: &[BundleEvent]) -> Vec<u8> {
    let fc = FeatureCollection::new(events.iter().map(|e| {
        feature(
            &e.code,
            multipolygon_value(&e.footprint),
            event_properties(e),
        )
    }));
    fc.to_string().into_bytes()
}

/// Bytes of `points.geojson`: event centroids, then control points, then the start.
pub fn points_geojson(
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
) -> Vec<u8> {
    let mut features = Vec::with_capacity(events.len() + controls.len() + 1);
    for e in events {
        let mut p = event_properties(e);
        p.insert("kind".into(), KIND_EVENT.into());
        p.insert("name".into(), e.code.clone().into());
        features.push(feature(&e.code, point_value(e.centroid), p));
    }
    for c in controls {
        let mut p = JsonObject::new();
        p.insert("kind".into(), KIND_CONTROL.into());
        p.insert("name".into(), c.code.clone().into());
        p.insert("code".into(), c.code.clone().into());
        p.insert("visit_order".into(), c.visit_order.into());
        p.insert(
            "inclusion_probability".into(),
            c.inclusion_probability.into(),
        );
        features.push(feature(&c.code, point_value(c.point), p));
    }
    let mut p = JsonObject::new();
    p.insert("kind".into(), KIND_START.into());
    p.insert("name".into(), start.name.clone().into());
    features.push(feature("start", point_value(start.point), p));
    FeatureCollection::new(features).to_string().into_bytes()
}

// ---------------------------------------------------------------- reading

fn coord(p: &Position) -> Result<Coord<f64>, String> {
    match p.as_slice() {
        [x, y, ..] if x.is_finite() && y.is_finite() => Ok(Coord { x: *x, y: *y }),
        _ => Err("a position needs two finite numbers".into()),
    }
}

fn ring(positions: &[Position]) -> Result<LineString<f64>, String> {
    positions
        .iter()
        .map(coord)
        .collect::<Result<Vec<_>, _>>()
        .map(LineString::new)
}

fn to_multipolygon(value: &GeometryValue) -> Result<MultiPolygon<f64>, String> {
    let GeometryValue::MultiPolygon { coordinates } = value else {
        return Err(format!(
            "geometry is a {}, expected MultiPolygon",
            value.type_name()
        ));
    };
    let polys = coordinates
        .iter()
        .map(|rings| {
            let (ext, holes) = rings.split_first().ok_or("a polygon has no ring")?;
            let holes = holes
                .iter()
                .map(|r| ring(r))
                .collect::<Result<Vec<_>, _>>()?;
            Ok(Polygon::new(ring(ext)?, holes))
        })
        .collect::<Result<Vec<_>, String>>()?;
    Ok(MultiPolygon::new(polys))
}

fn to_point(value: &GeometryValue) -> Result<Point<f64>, String> {
    match value {
        GeometryValue::Point { coordinates } => coord(coordinates).map(Point),
        other => Err(format!(
            "geometry is a {}, expected Point",
            other.type_name()
        )),
    }
}

/// Typed access to one feature's properties, with errors naming the feature and key.
struct Props<'a> {
    at: String,
    map: &'a JsonObject,
}

impl<'a> Props<'a> {
    fn of(f: &'a Feature, i: usize) -> Result<Self, String> {
        let map = f
            .properties
            .as_ref()
            .ok_or_else(|| format!("feature {i} has no properties"))?;
        let at = match map.get("code").and_then(JsonValue::as_str) {
            Some(code) => format!("feature {i} ({code})"),
            None => format!("feature {i}"),
        };
        Ok(Props { at, map })
    }
    fn get(&self, key: &str) -> Option<&'a JsonValue> {
        self.map.get(key).filter(|v| !v.is_null())
    }
    fn missing(&self, key: &str, what: &str) -> String {
        format!("{}: property {key:?} is missing or not {what}", self.at)
    }
    fn str(&self, key: &str) -> Result<String, String> {
        self.get(key)
            .and_then(JsonValue::as_str)
            .map(str::to_owned)
            .ok_or_else(|| self.missing(key, "a string"))
    }
    fn opt_str(&self, key: &str) -> Result<Option<String>, String> {
        self.get(key)
            .map(|v| {
                v.as_str()
                    .map(str::to_owned)
                    .ok_or_else(|| self.missing(key, "a string"))
            })
            .transpose()
    }
    fn f64(&self, key: &str) -> Result<f64, String> {
        self.get(key)
            .and_then(JsonValue::as_f64)
            .ok_or_else(|| self.missing(key, "a number"))
    }
    fn opt_f64(&self, key: &str) -> Result<Option<f64>, String> {
        self.get(key)
            .map(|v| v.as_f64().ok_or_else(|| self.missing(key, "a number")))
            .transpose()
    }
    fn i64(&self, key: &str) -> Result<i64, String> {
        self.get(key)
            .and_then(JsonValue::as_i64)
            .ok_or_else(|| self.missing(key, "an integer"))
    }
    fn u32(&self, key: &str) -> Result<u32, String> {
        self.get(key)
            .and_then(JsonValue::as_u64)
            .and_then(|v| u32::try_from(v).ok())
            .ok_or_else(|| self.missing(key, "a 32-bit unsigned integer"))
    }
    fn bool(&self, key: &str) -> Result<bool, String> {
        self.get(key)
            .and_then(JsonValue::as_bool)
            .ok_or_else(|| self.missing(key, "a boolean"))
    }
    fn strings(&self, key: &str) -> Result<Vec<String>, String> {
        let arr = self
            .get(key)
            .and_then(JsonValue::as_array)
            .ok_or_else(|| self.missing(key, "an array of strings"))?;
        arr.iter()
            .map(|v| {
                v.as_str()
                    .map(str::to_owned)
                    .ok_or_else(|| self.missing(key, "an array of strings"))
            })
            .collect()
    }
}

fn geometry_value(f: &Feature, i: usize) -> Result<&GeometryValue, String> {
    f.geometry
        .as_ref()
        .map(|g| &g.value)
        .ok_or_else(|| format!("feature {i} has no geometry"))
}

fn parse_collection(bytes: &[u8]) -> Result<FeatureCollection, String> {
    let text = std::str::from_utf8(bytes).map_err(|_| "not UTF-8".to_owned())?;
    text.parse::<FeatureCollection>().map_err(|e| e.to_string())
}

/// Events read back from `events.geojson`; their `centroid` is left at (0, 0)
/// and filled in from `points.geojson` by [`parse_points`]'s result.
pub fn parse_events(bytes: &[u8]) -> Result<Vec<BundleEvent>, String> {
    let fc = parse_collection(bytes)?;
    fc.features
        .iter()
        .enumerate()
        .map(|(i, f)| {
            let p = Props::of(f, i)?;
            let footprint =
                to_multipolygon(geometry_value(f, i)?).map_err(|e| format!("{}: {e}", p.at))?;
            check_confidence_level(&p)?;
            Ok(BundleEvent {
                code: p.str("code")?,
                event_id: p.i64("event_id")?,
                footprint,
                centroid: Point::new(0.0, 0.0),
                area_ha: p.f64("area_ha")?,
                first_detected: p.str("first_detected")?,
                last_detected: p.str("last_detected")?,
                sources: p.strings("sources")?,
                confidence: p.str("confidence")?,
                corroborated: p.bool("corroborated")?,
                priority: p.f64("priority")?,
                visit_order: p.u32("visit_order")?,
                inclusion_probability: p.opt_f64("inclusion_probability")?,
                stratum: p.opt_str("stratum")?,
            })
        })
        .collect()
}

/// `confidence_level` is optional (bundles written before it have none and
/// are read through [`super::confidence_level`]); when present it must be
/// `high` or `low` and agree with `confidence`.
fn check_confidence_level(p: &Props<'_>) -> Result<(), String> {
    let Some(level) = p.opt_str("confidence_level")? else {
        return Ok(());
    };
    let word = p.str("confidence")?;
    match (
        super::confidence_level(&level),
        super::confidence_level(&word),
    ) {
        (Some(l), Some(w)) if l == level && l == w => Ok(()),
        _ => Err(format!(
            "{}: confidence_level {level:?} must be \"high\" or \"low\" and agree with confidence {word:?}",
            p.at
        )),
    }
}

/// What `points.geojson` holds.
#[derive(Debug, Clone, PartialEq)]
pub struct ParsedPoints {
    /// Event centroids by event code.
    pub centroids: BTreeMap<String, Point<f64>>,
    /// Control points in file order.
    pub controls: Vec<ControlPoint>,
    /// The start point.
    pub start: StartPoint,
}

/// Reads `points.geojson`; exactly one start point is required.
pub fn parse_points(bytes: &[u8]) -> Result<ParsedPoints, String> {
    let fc = parse_collection(bytes)?;
    let mut centroids = BTreeMap::new();
    let mut controls = Vec::new();
    let mut start = None;
    for (i, f) in fc.features.iter().enumerate() {
        let p = Props::of(f, i)?;
        let point = to_point(geometry_value(f, i)?).map_err(|e| format!("{}: {e}", p.at))?;
        match p.str("kind")?.as_str() {
            KIND_EVENT => {
                if centroids.insert(p.str("code")?, point).is_some() {
                    return Err(format!("{}: event centroid appears twice", p.at));
                }
            }
            KIND_CONTROL => controls.push(ControlPoint {
                code: p.str("code")?,
                point,
                visit_order: p.u32("visit_order")?,
                inclusion_probability: p.opt_f64("inclusion_probability")?,
            }),
            KIND_START => {
                if start.is_some() {
                    return Err("more than one start point".into());
                }
                start = Some(StartPoint {
                    name: p.str("name")?,
                    point,
                });
            }
            other => return Err(format!("{}: unknown kind {other:?}", p.at)),
        }
    }
    let start = start.ok_or("no start point")?;
    Ok(ParsedPoints {
        centroids,
        controls,
        start,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{Winding, polygon};

    fn event() -> BundleEvent {
        BundleEvent {
            code: "K0417".into(),
            event_id: 417,
            footprint: MultiPolygon::new(vec![polygon![
                (x: -60.0, y: -3.0), (x: -59.99, y: -3.0), (x: -59.99, y: -2.99), (x: -60.0, y: -3.0)
            ]]),
            centroid: Point::new(-59.9933333, -2.9966667),
            area_ha: 41.2,
            first_detected: "2026-08-01".into(),
            last_detected: "2026-08-20".into(),
            sources: vec!["optical-10m".into(), "radar-10m".into()],
            confidence: "confirmed".into(),
            corroborated: true,
            priority: 0.75,
            visit_order: 1,
            inclusion_probability: None,
            stratum: Some("optical-10m/confirmed".into()),
        }
    }

    #[test]
    fn events_round_trip() {
        let e = event();
        let bytes = events_geojson(std::slice::from_ref(&e));
        let text = String::from_utf8(bytes.clone()).expect("utf8");
        // RFC 7946 Appendix B: no "crs" member.
        assert!(!text.contains("\"crs\""));
        let back = parse_events(&bytes).expect("parse");
        assert_eq!(back.len(), 1);
        assert_eq!(
            back[0],
            BundleEvent {
                centroid: Point::new(0.0, 0.0),
                ..e.clone()
            }
        );
        assert!(back[0].footprint.0[0].exterior().is_ccw());
    }

    #[test]
    fn points_round_trip() {
        let e = event();
        let c = ControlPoint {
            code: "C0001".into(),
            point: Point::new(-60.05, -3.02),
            visit_order: 2,
            inclusion_probability: Some(0.01),
        };
        let s = StartPoint {
            name: "Post \"Seven\"".into(),
            point: Point::new(-60.1, -3.1),
        };
        let bytes = points_geojson(std::slice::from_ref(&e), std::slice::from_ref(&c), &s);
        let back = parse_points(&bytes).expect("parse");
        assert_eq!(back.centroids.get("K0417"), Some(&e.centroid));
        assert_eq!(back.controls, vec![c]);
        assert_eq!(back.start, s);
    }

    #[test]
    fn bad_input_is_an_error_not_a_panic() {
        let short = br#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"code":"K0001"},
            "geometry":{"type":"MultiPolygon","coordinates":[[[[1],[2],[3],[1]]]]}}]}"#;
        assert!(parse_events(short).is_err());
        let wrong = br#"{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"kind":"start"},
            "geometry":{"type":"Point","coordinates":[1,2]}}]}"#;
        let err = parse_points(wrong).expect_err("start without name");
        assert!(err.contains("\"name\""), "{err}");
        assert!(parse_points(b"[]").is_err());
    }

    #[test]
    fn confidence_level_is_written_and_older_events_still_read() {
        let e = event();
        let text = String::from_utf8(events_geojson(std::slice::from_ref(&e))).expect("utf8");
        assert!(text.contains("\"confidence_level\":\"high\""), "{text}");
        // As a bundle written before the field: no confidence_level at all.
        let old = text.replace(",\"confidence_level\":\"high\"", "");
        assert!(!old.contains("confidence_level"));
        let back = parse_events(old.as_bytes()).expect("an older bundle still reads");
        assert_eq!(back[0].confidence_level(), Some("high"));
        let low = old.replace("\"confirmed\"", "\"tentative\"");
        let back = parse_events(low.as_bytes()).expect("tentative");
        assert_eq!(back[0].confidence_level(), Some("low"));
        // A level that contradicts the word, or a word of its own, is refused.
        for bad in ["\"low\"", "\"confirmed\"", "3"] {
            let t = text.replace(
                "\"confidence_level\":\"high\"",
                &format!("\"confidence_level\":{bad}"),
            );
            let err = parse_events(t.as_bytes()).expect_err(bad);
            assert!(err.contains("confidence_level"), "{err}");
        }
    }
}
