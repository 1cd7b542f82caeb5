//! The data of a page's pan-and-zoom map (drawn in the browser by the
//! vendored Leaflet through `templates/pages/js/page-map.js`): the same
//! [`MapInput`] the printable SVG is drawn from, as one GeoJSON
//! FeatureCollection with the status colours read from `web::charts` (never
//! defined here) and a legend of the statuses shown.
//!
//! Zones are listed largest first and carry no fill colour, so the script
//! draws them as outlines one above the other and none hides another.

use crate::web::charts::{EventStatus, MapInput, render_map, status_colour};
use geo::{Area, BoundingRect};
use serde_json::{Value, json};

/// A page's map: the printable SVG and the pan-and-zoom map's data
/// (`templates/pages/live_map.html`).
pub struct LiveMap {
    /// The element id (one map per page).
    pub id: &'static str,
    pub label: String,
    pub svg: String,
    pub json: String,
    /// On the preview: a click sets the start, a click on an event ticks it.
    pub pick: bool,
}

impl LiveMap {
    /// Both drawings of `input`; the live map opens on the events (and the
    /// route) when `frame_on_events`, else on everything.
    pub fn new(id: &'static str, input: &MapInput, frame_on_events: bool) -> LiveMap {
        LiveMap {
            id,
            label: input.title.clone(),
            svg: render_map(input),
            json: embed(&map_geojson(input, frame_on_events)),
            pick: false,
        }
    }
}

/// The map's GeoJSON: zones (largest first), events, the route and the
/// start, plus `legend` (the statuses present, in legend order) and `frame`
/// (the box to show first, `[west, south, east, north]`, or null).
pub fn map_geojson(m: &MapInput, frame_on_events: bool) -> Value {
    let mut zones: Vec<_> = m.zones.iter().collect();
    zones.sort_by(|a, b| b.shape.unsigned_area().total_cmp(&a.shape.unsigned_area()));
    let mut features: Vec<Value> = zones
        .iter()
        .map(|z| {
            json!({"type": "Feature", "geometry": geometry(&z.shape),
                "properties": {"kind": "zone", "name": z.name, "priority": z.priority}})
        })
        .collect();
    for e in &m.events {
        features.push(
            json!({"type": "Feature", "geometry": geometry(&e.footprint),
            "properties": {"kind": "event", "id": e.id, "code": e.code, "area_ha": e.area_ha,
                "status": e.status.as_str(), "label": e.status.label(),
                "colour": status_colour(e.status).hex().to_string()}}),
        );
    }
    if m.route.len() >= 2 {
        let line: Vec<[f64; 2]> = m.route.iter().map(|&(x, y)| [x, y]).collect();
        features.push(json!({"type": "Feature",
            "geometry": {"type": "LineString", "coordinates": line},
            "properties": {"kind": "route"}}));
    }
    if let Some((x, y)) = m.start {
        features.push(json!({"type": "Feature",
            "geometry": {"type": "Point", "coordinates": [x, y]},
            "properties": {"kind": "start"}}));
    }
    json!({"type": "FeatureCollection", "title": m.title, "features": features,
        "legend": legend(m), "frame": frame(m, frame_on_events)})
}

/// The statuses the map shows, in legend order, with their colours.
fn legend(m: &MapInput) -> Vec<Value> {
    EventStatus::ALL
        .iter()
        .filter(|s| m.events.iter().any(|e| e.status == **s))
        .map(|s| json!({"status": s.as_str(), "label": s.label(), "colour": status_colour(*s).hex().to_string()}))
        .collect()
}

/// The box to show first: around the events (and route) when asked and
/// there are some, else around everything.
fn frame(m: &MapInput, on_events: bool) -> Value {
    let mut pts: Vec<(f64, f64)> = Vec::new();
    let mut add = |r: Option<geo::Rect<f64>>| {
        if let Some(r) = r {
            pts.push((r.min().x, r.min().y));
            pts.push((r.max().x, r.max().y));
        }
    };
    for e in &m.events {
        add(e.footprint.bounding_rect());
    }
    if !on_events || m.events.is_empty() {
        for z in &m.zones {
            add(z.shape.bounding_rect());
        }
    }
    pts.extend(m.route.iter().copied());
    pts.extend(m.start);
    pts.retain(|p| p.0.is_finite() && p.1.is_finite());
    if pts.is_empty() {
        return Value::Null;
    }
    let f = |sel: fn(&(f64, f64)) -> f64, max: bool| {
        pts.iter().map(sel).fold(
            if max { f64::MIN } else { f64::MAX },
            if max { f64::max } else { f64::min },
        )
    };
    json!([
        f(|p| p.0, false),
        f(|p| p.1, false),
        f(|p| p.0, true),
        f(|p| p.1, true)
    ])
}

fn geometry(m: &geo::MultiPolygon<f64>) -> Value {
    serde_json::to_value(geojson::Geometry::new(geojson::GeometryValue::from(m)))
        .unwrap_or(Value::Null)
}

/// Adds events that are not part of the plan (the preview's other
/// candidates) to a map's GeoJSON: drawn hollow, a click adds them by code.
pub fn with_candidates(mut v: Value, candidates: &[crate::web::charts::MapEvent]) -> Value {
    if let Some(f) = v["features"].as_array_mut() {
        for e in candidates {
            f.push(json!({"type": "Feature", "geometry": geometry(&e.footprint),
                "properties": {"kind": "candidate", "id": e.id, "code": e.code, "area_ha": e.area_ha,
                    "label": e.status.label()}}));
        }
    }
    v
}

/// The map data as text that is safe inside `<script type="application/json">`
/// (no `<` that could close the element).
pub fn embed(v: &Value) -> String {
    v.to_string().replace('<', "\\u003c")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::web::charts::{MapEvent, MapZone};
    use geo::{MultiPolygon, polygon};

    fn square(x: f64, y: f64, d: f64) -> MultiPolygon<f64> {
        MultiPolygon(vec![
            polygon![(x: x, y: y), (x: x + d, y: y), (x: x + d, y: y + d), (x: x, y: y + d), (x: x, y: y)],
        ])
    }

    fn input() -> MapInput {
        MapInput {
            title: "t</script>".into(),
            words: Default::default(),
            zones: vec![
                MapZone {
                    name: "small".into(),
                    shape: square(0.0, 0.0, 0.1),
                    priority: true,
                },
                MapZone {
                    name: "big".into(),
                    shape: square(-1.0, -1.0, 3.0),
                    priority: false,
                },
            ],
            events: vec![MapEvent {
                id: 7,
                code: "A0007".into(),
                area_ha: 1.0,
                status: EventStatus::Confirmed,
                footprint: square(0.5, 0.5, 0.01),
            }],
            start: Some((0.4, 0.4)),
            route: vec![(0.4, 0.4), (0.505, 0.505)],
        }
    }

    #[test]
    fn zones_come_largest_first_and_the_frame_fits_the_event() {
        let v = map_geojson(&input(), true);
        let f = v["features"].as_array().unwrap();
        assert_eq!(f[0]["properties"]["name"], "big");
        assert_eq!(f[1]["properties"]["name"], "small");
        assert_eq!(
            f[2]["properties"]["colour"],
            status_colour(EventStatus::Confirmed).hex().to_string()
        );
        assert_eq!(v["legend"].as_array().unwrap().len(), 1);
        // Framed on the footprint, the start and the route; not on the 3° zone.
        let fr: Vec<f64> = serde_json::from_value(v["frame"].clone()).unwrap();
        assert_eq!(fr, vec![0.4, 0.4, 0.51, 0.51]);
        let whole: Vec<f64> =
            serde_json::from_value(map_geojson(&input(), false)["frame"].clone()).unwrap();
        assert_eq!(whole, vec![-1.0, -1.0, 2.0, 2.0]);
    }

    #[test]
    fn the_embedded_text_cannot_close_its_script_element() {
        let t = embed(&map_geojson(&input(), true));
        assert!(!t.contains('<'), "{t}");
        let back: Value = serde_json::from_str(&t).unwrap();
        assert_eq!(back["title"], "t</script>");
    }
}
