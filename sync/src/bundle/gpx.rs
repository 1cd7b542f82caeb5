//! `route.gpx`: GPX 1.1 for handheld GPS units, written by hand in the
//! schema's element order (gpx-1.1.xsd: `metadata`, `wpt*`, `rte*`, `trk*`;
//! inside `wptType`: `name`, `cmt`, `desc`, `sym`, `type`; inside `trkType`:
//! `name`, `cmt`, `desc`, `type`, `trkseg*`). One waypoint per event
//! centroid (name = event code) and per control point, one for the start
//! point, one route from the start through the stops in visit order, and one
//! track per event footprint (one segment per ring, closed), so that the
//! outline shows on the unit's map.
//!
//! A handheld unit keeps one waypoint per name: loading a second bundle
//! overwrites the waypoints whose names it shares. Event codes come from the
//! event id (the same code is the same place in every bundle), but control
//! points are numbered `C0001`, `C0002`, … within each bundle, so a control
//! point's waypoint is named with the bundle's short code first
//! ([`short_bundle_code`], e.g. `7KQ2M-C0003`), which keeps a trip's points
//! together in the unit's list. Coordinates are written with 7 decimals
//! (about 1 cm).

use std::fmt::Write as _;

use chrono::{DateTime, SecondsFormat, Utc};
use geo::{LineString, Point};

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

/// Crockford's base32 alphabet (no I, L, O, U: read over a radio without doubt).
const CROCKFORD: &[u8; 32] = b"0123456789ABCDEFGHJKMNPQRSTVWXYZ";

/// The bundle's short code: the first 25 bits of its id in 5 characters of
/// Crockford's base32 (33,554,432 values; two random bundle ids share one
/// with probability 1 in 33.5 million). Shown on the field sheet beside the
/// control point codes.
pub fn short_bundle_code(bundle_id: &uuid::Uuid) -> String {
    let top = (bundle_id.as_u128() >> (128 - 25)) as usize;
    (0..5)
        .map(|i| CROCKFORD[(top >> (5 * (4 - i))) & 31] as char)
        .collect()
}

/// The waypoint name of control point `code` of bundle `bundle_id` on a
/// handheld unit: `7KQ2M-C0003` (11 characters).
pub fn control_waypoint_name(bundle_id: &uuid::Uuid, code: &str) -> String {
    format!("{}-{code}", short_bundle_code(bundle_id))
}

fn time(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Secs, true)
}

/// One stop of the route: where it is and what it is called.
struct Waypoint<'a> {
    point: Point<f64>,
    /// The stop's code (or the start's name): what the route refers to.
    code: &'a str,
    /// The name written (a control point's carries the bundle's short code).
    name: String,
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
        escape_xml(&w.name)
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
        code: &e.code,
        name: e.code.clone(),
        cmt: Some(format!("{:.1} ha, last {}", e.area_ha, e.last_detected)),
        desc: format!(
            "Clearing event {}: area {:.2} ha; detected {} to {}; sources {}; {} alert confidence{}; visit {}",
            e.code,
            e.area_ha,
            e.first_detected,
            e.last_detected,
            e.sources.join(", "),
            e.confidence_level().unwrap_or(&e.confidence),
            corroborated,
            e.visit_order
        ),
        sym: SYM_EVENT,
        kind: "event",
    }
}

fn control_waypoint<'a>(c: &'a ControlPoint, bundle_id: &uuid::Uuid) -> Waypoint<'a> {
    Waypoint {
        point: c.point,
        code: &c.code,
        name: control_waypoint_name(bundle_id, &c.code),
        cmt: Some(format!("control point {}", c.code)),
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
        code: &s.name,
        name: s.name.clone(),
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
    wpts.extend(
        controls
            .iter()
            .map(|c| control_waypoint(c, &header.bundle_id)),
    );
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
        if let Some(w) = wpts.iter().find(|w| w.code == code.as_str()) {
            write_wpt(&mut rte, "rtept", w, false);
        }
    }
    // Indent route points one level deeper than waypoints.
    for line in rte.lines() {
        let _ = writeln!(out, "  {line}");
    }
    out.push_str("  </rte>\n");
    for e in events {
        write_outline(&mut out, e);
    }
    out.push_str("</gpx>\n");
    out.into_bytes()
}

/// One closed ring as a track segment.
fn write_segment(out: &mut String, ring: &LineString<f64>) {
    out.push_str("    <trkseg>\n");
    for c in &ring.0 {
        let _ = writeln!(out, "      <trkpt lat=\"{:.7}\" lon=\"{:.7}\"/>", c.y, c.x);
    }
    out.push_str("    </trkseg>\n");
}

/// The footprint of event `e` as a track: one segment per ring (outer rings
/// and holes), each closed as the footprint's rings are.
fn write_outline(out: &mut String, e: &BundleEvent) {
    let _ = write!(
        out,
        "  <trk>\n    <name>{}</name>\n    <desc>{}</desc>\n    <type>footprint</type>\n",
        escape_xml(&format!("{} outline", e.code)),
        escape_xml(&format!(
            "Footprint of clearing event {}: {:.2} ha",
            e.code, e.area_ha
        ))
    );
    for polygon in &e.footprint.0 {
        write_segment(out, polygon.exterior());
        for hole in polygon.interiors() {
            write_segment(out, hole);
        }
    }
    out.push_str("  </trk>\n");
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;
    use geo::{MultiPolygon, polygon};

    fn header(id: u128) -> BundleHeader {
        let t = |d| {
            Utc.with_ymd_and_hms(2026, 11, d, 8, 0, 0)
                .single()
                .expect("t")
        };
        BundleHeader {
            bundle_id: uuid::Uuid::from_u128(id),
            team: "Team Amber".into(),
            mode: "assessment".into(),
            issued_at: t(1),
            due_at: t(10),
            expires_at: t(20),
            upload_key_id: "k1".into(),
            seed: Some(7),
            camera_zone: None,
        }
    }

    fn event() -> BundleEvent {
        let outer = polygon![(x: 23.40, y: -1.20), (x: 23.41, y: -1.20), (x: 23.41, y: -1.19), (x: 23.40, y: -1.19)];
        BundleEvent {
            code: "K0411".into(),
            event_id: 110_411,
            footprint: MultiPolygon::new(vec![outer]),
            centroid: Point::new(23.405, -1.195),
            area_ha: 1.2,
            first_detected: "2026-10-01".into(),
            last_detected: "2026-10-05".into(),
            sources: vec!["optical-10m".into()],
            confidence: "confirmed".into(),
            corroborated: false,
            priority: 1.0,
            visit_order: 1,
            inclusion_probability: None,
            stratum: None,
        }
    }

    fn controls() -> Vec<ControlPoint> {
        (1..=2)
            .map(|i| ControlPoint {
                code: format!("C000{i}"),
                point: Point::new(23.42 + 0.01 * f64::from(i), -1.24),
                visit_order: 1 + i,
                inclusion_probability: Some(0.01),
            })
            .collect()
    }

    /// The `<name>` of every `<wpt>` of a GPX text.
    fn waypoint_names(gpx: &str) -> Vec<String> {
        gpx.split("<wpt ")
            .skip(1)
            .map(|w| {
                let from = w.find("<name>").expect("name") + "<name>".len();
                let to = w.find("</name>").expect("/name");
                w[from..to].to_string()
            })
            .collect()
    }

    fn gpx_of(id: u128) -> String {
        let start = StartPoint {
            name: "Camp Ridge".into(),
            point: Point::new(23.39, -1.18),
        };
        let route: Vec<String> = ["K0411", "C0001", "C0002"].map(String::from).to_vec();
        String::from_utf8(route_gpx(
            &header(id),
            &[event()],
            &controls(),
            &start,
            &route,
        ))
        .expect("utf8")
    }

    #[test]
    fn short_codes_are_five_crockford_characters_of_the_id() {
        // 0x0b5e55ed…: the first 25 bits 00001 01101 01111 00101 01011 are
        // 1, 13, 15, 5, 11 → "1DF5B" (worked by hand).
        let id = uuid::Uuid::from_u128(0x0b5e_55ed_0000_4000_8000_0000_0000_0001);
        assert_eq!(short_bundle_code(&id), "1DF5B");
        assert_eq!(control_waypoint_name(&id, "C0003"), "1DF5B-C0003");
        assert_eq!(
            short_bundle_code(&uuid::Uuid::from_u128(u128::MAX)),
            "ZZZZZ"
        );
        assert_eq!(short_bundle_code(&uuid::Uuid::nil()), "00000");
    }

    #[test]
    fn control_point_names_are_unique_across_two_bundles() {
        // Two bundles both number their control points C0001 and C0002.
        let a = gpx_of(0x0b5e_55ed_0000_4000_8000_0000_0000_0001);
        let b = gpx_of(0x7e11_0000_0000_4000_8000_0000_0000_0002);
        let (na, nb) = (waypoint_names(&a), waypoint_names(&b));
        assert_eq!(na, ["K0411", "1DF5B-C0001", "1DF5B-C0002", "Camp Ridge"]);
        let controls = |n: &[String]| -> Vec<String> {
            n.iter().filter(|x| x.contains("-C")).cloned().collect()
        };
        let (ca, cb) = (controls(&na), controls(&nb));
        assert_eq!((ca.len(), cb.len()), (2, 2));
        assert!(ca.iter().all(|x| !cb.contains(x)), "{ca:?} {cb:?}");
        // The same event keeps its name in both bundles: it is the same place.
        assert!(nb.contains(&"K0411".to_string()));
        // The route names the waypoints as written.
        assert!(
            a.contains(
                "<rtept lat=\"-1.2400000\" lon=\"23.4300000\">\n      <name>1DF5B-C0001</name>"
            ),
            "{a}"
        );
    }

    #[test]
    fn descriptions_say_high_or_low_alert_confidence() {
        // "confirmed" is a visit's outcome: the description names the level.
        let a = gpx_of(1);
        assert!(a.contains("; high alert confidence;"), "{a}");
        assert!(!a.contains("confidence confirmed"), "{a}");
    }

    #[test]
    fn footprints_are_closed_tracks_after_the_route() {
        let a = gpx_of(1);
        let trk = a.find("<trk>").expect("a track");
        assert!(a.find("</rte>").expect("route") < trk, "trk after rte");
        assert!(a[trk..].contains("<name>K0411 outline</name>"));
        assert!(a[trk..].contains("<type>footprint</type>"));
        let points: Vec<&str> = a[trk..]
            .lines()
            .filter(|l| l.trim_start().starts_with("<trkpt"))
            .map(str::trim)
            .collect();
        // geo closes the ring: 4 corners and the first again.
        assert_eq!(points.len(), 5);
        assert_eq!(points[0], points[4]);
        assert_eq!(points[0], "<trkpt lat=\"-1.2000000\" lon=\"23.4000000\"/>");
    }
}
