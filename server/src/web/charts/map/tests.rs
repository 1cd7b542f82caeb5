//! Tests of the map: structure, links, projection shape and the scale bar
//! against an independent geodesic (Karney's algorithm, geographiclib-rs 0.2.7).

use super::super::testutil::{
    check_frame, colour_roles_hold, pairs, text_colours_pass, with_class,
};
use super::super::types::{MapEvent, MapZone};
use super::*;
use geo::{LineString, Polygon};
use geographiclib_rs::{Geodesic, InverseGeodesic};

fn rect(lon0: f64, lat0: f64, lon1: f64, lat1: f64) -> MultiPolygon<f64> {
    let ring = LineString::from(vec![
        (lon0, lat0),
        (lon1, lat0),
        (lon1, lat1),
        (lon0, lat1),
        (lon0, lat0),
    ]);
    MultiPolygon(vec![Polygon::new(ring, vec![])])
}

fn event(id: i64, status: EventStatus, fp: MultiPolygon<f64>) -> MapEvent {
    MapEvent {
        id,
        code: format!("E-{id:04}"),
        area_ha: 12.5,
        status,
        footprint: fp,
    }
}

/// A 0.1 x 0.1 degree zone at `lat`, a priority zone inside it, five events
/// (one about 10 m across), a start and a route.
fn scene(lat: f64) -> MapInput {
    let (w, s) = (20.0, lat - 0.05);
    MapInput {
        title: "Trip map".into(),
        words: Default::default(),
        zones: vec![
            MapZone {
                name: "north block".into(),
                shape: rect(w, s, w + 0.1, s + 0.1),
                priority: false,
            },
            MapZone {
                name: "river strip".into(),
                shape: rect(w + 0.06, s + 0.02, w + 0.09, s + 0.05),
                priority: true,
            },
        ],
        events: vec![
            event(
                1,
                EventStatus::Confirmed,
                rect(w + 0.01, s + 0.01, w + 0.02, s + 0.02),
            ),
            event(
                2,
                EventStatus::FalseAlarm,
                rect(w + 0.03, s + 0.05, w + 0.035, s + 0.06),
            ),
            event(
                3,
                EventStatus::Unvisited,
                rect(w + 0.07, s + 0.03, w + 0.08, s + 0.04),
            ),
            event(
                4,
                EventStatus::Disputed,
                rect(w + 0.05, s + 0.08, w + 0.06, s + 0.09),
            ),
            event(
                5,
                EventStatus::NotReached,
                rect(w + 0.04, s + 0.04, w + 0.0401, s + 0.0401),
            ),
        ],
        start: Some((w + 0.005, s + 0.005)),
        route: vec![
            (w + 0.005, s + 0.005),
            (w + 0.015, s + 0.015),
            (w + 0.075, s + 0.035),
        ],
    }
}

fn num(n: &roxmltree::Node<'_, '_>, a: &str) -> f64 {
    n.attribute(a)
        .and_then(|v| v.parse().ok())
        .expect("numeric attribute")
}

#[test]
fn structure_links_and_legend() {
    let svg = render_map(&scene(-3.0));
    let doc = check_frame(&svg);
    text_colours_pass(&doc);
    colour_roles_hold(&doc);
    let links = with_class(&doc, "event");
    assert_eq!(links.len(), 5);
    let mut hrefs: Vec<&str> = links.iter().filter_map(|a| a.attribute("href")).collect();
    hrefs.sort_unstable();
    assert_eq!(
        hrefs,
        [
            "/events/1",
            "/events/2",
            "/events/3",
            "/events/4",
            "/events/5"
        ]
    );
    for a in &links {
        assert_eq!(a.children().filter(|c| c.has_tag_name("title")).count(), 1);
        assert_eq!(
            a.children()
                .filter(|c| c
                    .attribute("class")
                    .is_some_and(|k| k.starts_with("footprint")))
                .count(),
            1
        );
    }
    // Four footprints are paths; the 10 m one (about 1 px here) is a marker.
    assert_eq!(with_class(&doc, "footprint").len(), 5);
    let markers = with_class(&doc, "marker");
    assert_eq!(markers.len(), 1);
    assert!(markers[0].has_tag_name("circle") && num(&markers[0], "r") >= 3.0);
    assert_eq!(
        markers[0].parent().and_then(|a| a.attribute("href")),
        Some("/events/5")
    );
    let tip = links
        .iter()
        .find(|a| a.attribute("href") == Some("/events/1"))
        .and_then(|a| a.first_element_child())
        .and_then(|t| t.text());
    assert_eq!(tip, Some("E-0001, 12.5 ha, confirmed loss"));
    assert_eq!(with_class(&doc, "legend-status").len(), 6);
    assert_eq!(with_class(&doc, "zone").len(), 2);
    assert_eq!(with_class(&doc, "priority").len(), 1);
    assert_eq!(
        with_class(&doc, "priority")[0].attribute("stroke-dasharray"),
        Some("7 4")
    );
    assert_eq!(with_class(&doc, "route").len(), 1);
    assert_eq!(with_class(&doc, "start").len(), 1);
    assert_eq!(with_class(&doc, "north-arrow").len(), 1);
    assert_eq!(with_class(&doc, "confirmed").len(), 0); // statuses are prefixed
    assert_eq!(
        with_class(&doc, "status-confirmed")[0].attribute("fill"),
        Some("#d55e00")
    );
}

/// Pixel x extent of the first zone (0.1 degree of longitude wide).
fn px_per_degree(doc: &roxmltree::Document<'_>) -> (f64, f64) {
    let zone = with_class(doc, "zone")[0];
    let pts = pairs(zone.attribute("d").expect("d"));
    let xs = pts.iter().map(|p| p.0);
    let ys = pts.iter().map(|p| p.1);
    let w = xs.clone().fold(f64::MIN, f64::max) - xs.fold(f64::MAX, f64::min);
    let h = ys.clone().fold(f64::MIN, f64::max) - ys.fold(f64::MAX, f64::min);
    (w / 0.1, h / 0.1)
}

#[test]
fn scale_bar_matches_geodesic_length() {
    for lat in [-3.0, 45.0, 62.0] {
        let svg = render_map(&scene(lat));
        let doc = check_frame(&svg);
        let (per_lon, per_lat) = px_per_degree(&doc);
        // Equirectangular: a degree of longitude is cos(centre lat) of a degree of latitude.
        let ratio = per_lon / per_lat;
        assert!(
            (ratio / lat.to_radians().cos() - 1.0).abs() < 0.01,
            "lat {lat}: ratio {ratio}"
        );
        let line = with_class(&doc, "scale-line")[0];
        let dlon = (num(&line, "x2") - num(&line, "x1")) / per_lon;
        let label = with_class(&doc, "scale-label")[0].text().expect("label");
        let (value, unit) = label.split_once(' ').expect("value and unit");
        let metres =
            value.parse::<f64>().expect("number") * if unit == "km" { 1000.0 } else { 1.0 };
        // Independent reference: WGS 84 geodesic (geographiclib-rs 0.2.7) along the centre latitude.
        let s12: f64 = Geodesic::wgs84().inverse(lat, 20.0, lat, 20.0 + dlon);
        assert!(
            (s12 / metres - 1.0).abs() < 0.01,
            "lat {lat}: bar {s12} m labelled {label}"
        );
        // The bar is a round 1-2-5 length of at most 30% of the map width.
        let lead = metres / 10f64.powf(metres.log10().floor());
        assert!(
            [1.0, 2.0, 5.0].iter().any(|m| (lead - m).abs() < 1e-9),
            "{label}"
        );
    }
}

#[test]
fn empty_and_unusable_inputs_give_no_data() {
    let svg = render_map(&MapInput {
        title: "none".into(),
        words: Default::default(),
        ..Default::default()
    });
    assert!(
        check_frame(&svg)
            .descendants()
            .any(|n| n.text() == Some("no data"))
    );
    let bad = MapInput {
        title: "bad".into(),
        words: Default::default(),
        events: vec![event(
            9,
            EventStatus::Confirmed,
            rect(f64::NAN, 0.0, f64::INFINITY, 1.0),
        )],
        start: Some((500.0, 0.0)),
        ..Default::default()
    };
    assert!(
        check_frame(&render_map(&bad))
            .descendants()
            .any(|n| n.text() == Some("no data"))
    );
}

#[test]
fn single_point_gives_a_map() {
    let one = MapInput {
        title: "one".into(),
        words: Default::default(),
        start: Some((10.0, 10.0)),
        ..Default::default()
    };
    let svg = render_map(&one);
    let doc = check_frame(&svg);
    assert_eq!(with_class(&doc, "start").len(), 1);
    assert_eq!(with_class(&doc, "scale-line").len(), 1);
}

#[test]
fn degenerate_shapes_do_not_panic() {
    let line = LineString::from(vec![(1.0, 1.0), (1.001, 1.0), (1.002, 1.0), (1.0, 1.0)]);
    let flat = MultiPolygon(vec![Polygon::new(line, vec![])]);
    let half_bad = rect(1.0, 1.0, f64::NAN, 1.01);
    let m = MapInput {
        title: "odd".into(),
        words: Default::default(),
        zones: vec![MapZone {
            name: "flat".into(),
            shape: flat.clone(),
            priority: true,
        }],
        events: vec![
            event(1, EventStatus::Inconclusive, flat),
            event(2, EventStatus::Confirmed, half_bad),
        ],
        ..Default::default()
    };
    let doc_svg = render_map(&m);
    let doc = check_frame(&doc_svg);
    // The half-bad rectangle keeps three usable corners: still drawn.
    assert_eq!(with_class(&doc, "event").len(), 2);
}

#[test]
fn hostile_names_are_escaped() {
    let mut m = scene(10.0);
    m.title = "<svg onload=alert(1)>".into();
    m.zones[0].name = "</text><script>x</script>".into();
    m.events[0].code = "\"><a href='javascript:x'>".into();
    let svg = render_map(&m);
    assert!(!svg.contains("<script>") && !svg.contains("<svg onload"));
    let doc = check_frame(&svg);
    assert!(
        doc.descendants()
            .any(|n| n.text() == Some("</text><script>x</script>"))
    );
    assert_eq!(with_class(&doc, "event").len(), 5);
}
