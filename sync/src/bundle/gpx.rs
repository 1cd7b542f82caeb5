//! `route.gpx`: GPX 1.1 for handheld GPS units, written by hand in the
//! schema's element order (gpx-1.1.xsd: `metadata`, `wpt*`, `rte*`; inside
//! `wptType`: `name`, `cmt`, `desc`, `sym`, `type`). One waypoint per event
//! centroid and per control point (name = code), one for the start point,
//! and one route from the start through the stops in visit order.
//! Coordinates are written with 7 decimals (about 1 cm).

use std::fmt::Write as _;

use chrono::{DateTime, SecondsFormat, Utc};
use geo::Point;

use super::types::{BundleEvent, BundleHeader, ControlPoint, StartPoint};
use crate::markup::escape_xml;

/// `creator` attribute of the `gpx` element.
pub const GPX_CREATOR: &str = "Groundproof bundle writer";
/// Symbol of an event waypoint (handheld symbol name, formats-and-crates.md §2.2, from memory).
pub const SYM_EVENT: &str = "Flag, Red";
/// Symbol of a control point waypoint.
pub const SYM_CONTROL: &str = "Flag, Blue";
/// Symbol of the start waypoint.
pub const SYM_START: &str = "Flag, Green";

fn time(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Secs, true)
}

/// One stop of the route: where it is and what it is called.
struct Waypoint<'a> {
    point: Point<f64>,
    name: &'a str,
    cmt: Option<String>,
    desc: String,
    sym: &'static str,
    kind: &'static str,
}

fn write_wpt(out: &mut String, tag: &str, w: &Waypoint<'_>, full: bool) {
    let _ = write!(
        out,
        "  <{tag} lat=\"{:.7}\" lon=\"{:.7}\">\n    <name>{}</name>\n",
        w.point.y(),
        w.point.x(),
        escape_xml(w.name)
    );
    if full {
        if let Some(cmt) = &w.cmt {
            let _ = writeln!(out, "    <cmt>{}</cmt>", escape_xml(cmt));
        }
        let _ = writeln!(out, "    <desc>{}</desc>", escape_xml(&w.desc));
    }
    let _ = write!(
        out,
        "    <sym>{}</sym>\n    <type>{}</type>\n  </{tag}>\n",
        escape_xml(w.sym),
        w.kind
    );
}

fn event_waypoint(e: &BundleEvent) -> Waypoint<'_> {
    let corroborated = if e.corroborated { "; corroborated" } else { "" };
    Waypoint {
        point: e.centroid,
        name: &e.code,
        cmt: Some(format!("{:.1} ha, last {}", e.area_ha, e.last_detected)),
        desc: format!(
            "Clearing event {}: area {:.2} ha; detected {} to {}; sources {}; confidence {}{}; visit {}",
            e.code,
            e.area_ha,
            e.first_detected,
            e.last_detected,
            e.sources.join(", "),
            e.confidence,
            corroborated,
            e.visit_order
        ),
        sym: SYM_EVENT,
        kind: "event",
    }
}

fn control_waypoint(c: &ControlPoint) -> Waypoint<'_> {
    Waypoint {
        point: c.point,
        name: &c.code,
        cmt: Some("control point".into()),
        desc: format!(
            "Control point {} (no alert here); visit {}",
            c.code, c.visit_order
        ),
        sym: SYM_CONTROL,
        kind: "control",
    }
}

fn start_waypoint(s: &StartPoint) -> Waypoint<'_> {
    Waypoint {
        point: s.point,
        name: &s.name,
        cmt: None,
        desc: format!("Start: {}", s.name),
        sym: SYM_START,
        kind: "start",
    }
}

/// Bytes of `route.gpx`. `route` holds the stop codes in visit order; every
/// code in it must be an event or control code (the writer checks this first).
pub fn route_gpx(
    header: &BundleHeader,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
    route: &[String],
) -> Vec<u8> {
    let mut wpts: Vec<Waypoint<'_>> = events.iter().map(event_waypoint).collect();
    wpts.extend(controls.iter().map(control_waypoint));
    let start_wpt = start_waypoint(start);

    let mut all_points: Vec<Point<f64>> = wpts.iter().map(|w| w.point).collect();
    all_points.push(start.point);
    all_points.extend(events.iter().flat_map(|e| {
        e.footprint
            .0
            .iter()
            .flat_map(|p| p.exterior().0.iter().map(|c| Point(*c)))
    }));
    let (mut minlat, mut minlon, mut maxlat, mut maxlon) = (90.0f64, 180.0f64, -90.0f64, -180.0f64);
    for p in &all_points {
        minlat = minlat.min(p.y());
        maxlat = maxlat.max(p.y());
        minlon = minlon.min(p.x());
        maxlon = maxlon.max(p.x());
    }

    let mut out = String::new();
    out.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        out,
        "<gpx xmlns=\"http://www.topografix.com/GPX/1/1\" version=\"1.1\" creator=\"{}\">",
        escape_xml(GPX_CREATOR)
    );
    let _ = write!(
        out,
        "  <metadata>\n    <name>{}</name>\n    <desc>{}</desc>\n    <time>{}</time>\n    \
         <bounds minlat=\"{minlat:.7}\" minlon=\"{minlon:.7}\" maxlat=\"{maxlat:.7}\" maxlon=\"{maxlon:.7}\"/>\n  </metadata>\n",
        escape_xml(&format!("Bundle for {}", header.team)),
        escape_xml(&format!(
            "{} bundle {}: {} events, {} control points; due {}, expires {}",
            header.mode,
            header.bundle_id,
            events.len(),
            controls.len(),
            time(header.due_at),
            time(header.expires_at)
        )),
        time(header.issued_at)
    );
    for w in &wpts {
        write_wpt(&mut out, "wpt", w, true);
    }
    write_wpt(&mut out, "wpt", &start_wpt, true);

    let _ = write!(
        out,
        "  <rte>\n    <name>{}</name>\n    <desc>{}</desc>\n",
        escape_xml(&format!("Route {}", header.team)),
        escape_xml(&format!(
            "From {} through {} stops in visit order",
            start.name,
            route.len()
        ))
    );
    let mut rte = String::new();
    write_wpt(&mut rte, "rtept", &start_wpt, false);
    for code in route {
        if let Some(w) = wpts.iter().find(|w| w.name == code.as_str()) {
            write_wpt(&mut rte, "rtept", w, false);
        }
    }
    // Indent route points one level deeper than waypoints.
    for line in rte.lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push_str("  </rte>\n</gpx>\n");
    out.into_bytes()
}
