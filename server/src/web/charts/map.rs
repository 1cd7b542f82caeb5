//! The printable map: zones, event footprints coloured by status (Okabe–Ito)
//! and linked to their pages, an optional trip start and route, a legend, a
//! north arrow and a scale bar, in an equirectangular projection (x scaled by
//! the cosine of the centre latitude) fitted to the data with a margin.
//! Nothing is fetched: no tiles, no script.

use super::axis::format_number;
use super::map_parts::{LEGEND_COLS, legend, north_arrow, scale_bar, status_colour};
use super::palette::{AXIS, BLACK, ORANGE, TEXT, ZONE_FILL};
use super::projection::{Frame, MAP_W, MAP_X0, MAP_Y0, usable};
use super::svg::{self, escape, px};
use super::types::{ChartWords, EventStatus, MapEvent, MapInput, MapZone};
use geo::{Coord, InteriorPoint, LineString, MultiPolygon, Polygon};
use std::fmt::{self, Write};

pub use super::projection::{haversine_m, scale_label, scale_length_m};

const W: f64 = 800.0;
/// Footprints smaller than this (px, both ways) are drawn as a marker.
const MIN_PX: f64 = 3.0;
const MARKER_R: f64 = 3.0;

/// The shape with every unusable vertex dropped, and polygons whose outer
/// ring keeps fewer than three vertices dropped whole.
fn clean(mp: &MultiPolygon<f64>) -> MultiPolygon<f64> {
    let ring = |r: &LineString<f64>| {
        let v: Vec<Coord<f64>> = r.0.iter().copied().filter(|c| usable((c.x, c.y))).collect();
        (v.len() >= 3).then_some(LineString(v))
    };
    MultiPolygon(
        mp.0.iter()
            .filter_map(|p| {
                let ext = ring(p.exterior())?;
                Some(Polygon::new(
                    ext,
                    p.interiors().iter().filter_map(ring).collect(),
                ))
            })
            .collect(),
    )
}

/// Every ring of a cleaned shape as (lon, lat) vertices.
fn rings(mp: &MultiPolygon<f64>) -> Vec<Vec<(f64, f64)>> {
    mp.0.iter()
        .flat_map(|p| std::iter::once(p.exterior()).chain(p.interiors()))
        .map(|r| r.0.iter().map(|c| (c.x, c.y)).collect())
        .collect()
}

/// Draw the map. Input with no usable coordinate gives a "no data" SVG.
/// Events and zones whose shapes have no usable polygon are left out.
pub fn render_map(input: &MapInput) -> String {
    let d = Drawable::of(input);
    let Some(f) = Frame::fit(&d.all_points()) else {
        return svg::no_data(&input.title, &input.words.no_data);
    };
    let priorities: Vec<bool> = d.zones.iter().map(|z| z.0.priority).collect();
    let has_route = d.route.len() >= 2;
    let legend_top = MAP_Y0 + f.height + 24.0;
    let rows = legend_rows(&priorities, has_route, d.start.is_some());
    let footer = legend_top + rows as f64 * 20.0 + 16.0;
    svg::render_with(&input.title, |out| {
        svg::open(out, W, footer + 30.0, &input.title)?;
        svg::heading(out, &input.title)?;
        map_frame(out, &f)?;
        for (z, shape) in &d.zones {
            zone(out, &f, z, shape)?;
        }
        footprints(out, &f, &d.events, &input.words)?;
        if has_route {
            route_line(out, &f, &d.route)?;
        }
        if let Some(p) = d.start {
            start_marker(out, &f, p, &input.words.start)?;
        }
        for (z, shape) in &d.zones {
            zone_label(out, &f, &z.name, shape)?;
        }
        north_arrow(out, MAP_X0 + MAP_W - 22.0, MAP_Y0 + 12.0, &input.words)?;
        let drawn = (has_route, d.start.is_some());
        legend(out, legend_top, &priorities, drawn, &input.words)?;
        scale_bar(out, &f, footer, &input.words)?;
        svg::close(out)
    })
}

/// What of the input can be drawn: shapes cleaned (those left empty
/// dropped), the start and route points usable.
struct Drawable<'a> {
    zones: Vec<(&'a MapZone, MultiPolygon<f64>)>,
    events: Vec<(&'a MapEvent, MultiPolygon<f64>)>,
    start: Option<(f64, f64)>,
    route: Vec<(f64, f64)>,
}

impl<'a> Drawable<'a> {
    fn of(input: &'a MapInput) -> Self {
        let zones: Vec<(&MapZone, MultiPolygon<f64>)> = input
            .zones
            .iter()
            .map(|z| (z, clean(&z.shape)))
            .filter(|z| !z.1.0.is_empty())
            .collect();
        let events: Vec<(&MapEvent, MultiPolygon<f64>)> = input
            .events
            .iter()
            .map(|e| (e, clean(&e.footprint)))
            .filter(|e| !e.1.0.is_empty())
            .collect();
        let start = input.start.filter(|&p| usable(p));
        let route: Vec<(f64, f64)> = input.route.iter().copied().filter(|&p| usable(p)).collect();
        Drawable {
            zones,
            events,
            start,
            route,
        }
    }

    /// Every point the map is fitted to.
    fn all_points(&self) -> Vec<(f64, f64)> {
        let shapes = self
            .zones
            .iter()
            .map(|z| &z.1)
            .chain(self.events.iter().map(|e| &e.1));
        let mut all: Vec<(f64, f64)> = shapes.flat_map(rings).flatten().collect();
        all.extend(self.start);
        all.extend(self.route.iter().copied());
        all
    }
}

/// Rows of the legend: one entry per status, plus the zone kinds present,
/// the route and the start.
fn legend_rows(priorities: &[bool], has_route: bool, has_start: bool) -> usize {
    let extras = usize::from(priorities.iter().any(|p| !p))
        + usize::from(priorities.iter().any(|p| *p))
        + usize::from(has_route)
        + usize::from(has_start);
    (EventStatus::ALL.len() + extras).div_ceil(LEGEND_COLS)
}

fn map_frame(out: &mut String, f: &Frame) -> fmt::Result {
    write!(
        out,
        "<rect class=\"map-frame\" x=\"{MAP_X0}\" y=\"{MAP_Y0}\" width=\"{MAP_W}\" height=\"{}\" \
         fill=\"#ffffff\" stroke=\"{}\"/>",
        px(f.height),
        AXIS.hex()
    )
}

/// The event footprints, largest first, so small footprints stay on top.
fn footprints(
    out: &mut String,
    f: &Frame,
    events: &[(&MapEvent, MultiPolygon<f64>)],
    words: &ChartWords,
) -> fmt::Result {
    let mut drawn: Vec<_> = events
        .iter()
        .map(|(e, s)| (*e, rings(s)))
        .map(|(e, r)| (e, extent(f, &r), r))
        .collect();
    drawn.sort_by(|a, b| (b.1.2 * b.1.3).total_cmp(&(a.1.2 * a.1.3)));
    for (e, ext, r) in &drawn {
        event(out, f, e, (*ext, r), words)?;
    }
    Ok(())
}

/// The trip's route as a dashed line.
fn route_line(out: &mut String, f: &Frame, route: &[(f64, f64)]) -> fmt::Result {
    let pts: Vec<String> = route
        .iter()
        .map(|&p| f.project(p))
        .map(|(x, y)| format!("{},{}", px(x), px(y)))
        .collect();
    write!(
        out,
        "<polyline class=\"route\" points=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"2\" \
         stroke-dasharray=\"5 3\"/>",
        pts.join(" "),
        BLACK.hex()
    )
}

/// The trip's start.
fn start_marker(out: &mut String, f: &Frame, p: (f64, f64), label: &str) -> fmt::Result {
    let (x, y) = f.project(p);
    write!(
        out,
        "<circle class=\"start\" cx=\"{}\" cy=\"{}\" r=\"6\" fill=\"{}\" stroke=\"{}\" \
         stroke-width=\"1.5\"><title>{}</title></circle>",
        px(x),
        px(y),
        ORANGE.hex(),
        BLACK.hex(),
        escape(label)
    )
}

/// A zone outline; priority zones get a heavy dashed black outline.
fn zone(out: &mut String, f: &Frame, z: &MapZone, shape: &MultiPolygon<f64>) -> fmt::Result {
    let (class, stroke, width, dash) = if z.priority {
        ("zone priority", BLACK, 2.5, "7 4")
    } else {
        ("zone", AXIS, 1.0, "none")
    };
    write!(
        out,
        "<path class=\"{class}\" d=\"{}\" fill=\"{}\" fill-rule=\"evenodd\" stroke=\"{}\" \
         stroke-width=\"{width}\" stroke-dasharray=\"{dash}\"><title>{}</title></path>",
        path_d(f, &rings(shape)),
        ZONE_FILL.hex(),
        stroke.hex(),
        escape(&z.name)
    )
}

/// The zone's name at a point inside it, with a white halo.
fn zone_label(out: &mut String, f: &Frame, name: &str, shape: &MultiPolygon<f64>) -> fmt::Result {
    let Some(p) = shape
        .interior_point()
        .map(|p| (p.x(), p.y()))
        .filter(|&p| usable(p))
    else {
        return Ok(());
    };
    let (x, y) = f.project(p);
    write!(
        out,
        "<text class=\"zone-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\" font-weight=\"bold\" \
         fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"3\" paint-order=\"stroke\">{}</text>",
        px(x),
        px(y),
        TEXT.hex(),
        escape(name)
    )
}

/// A footprint's drawn extent: centre x, centre y, width, height (px).
type Extent = (f64, f64, f64, f64);

/// One event: a link holding a tooltip and one shape, a path or, when the
/// footprint is under 3 px both ways, a marker.
fn event(
    out: &mut String,
    f: &Frame,
    e: &MapEvent,
    ((cx, cy, w, h), rings): (Extent, &[Vec<(f64, f64)>]),
    words: &ChartWords,
) -> fmt::Result {
    let area = if e.area_ha.is_finite() {
        format_number(e.area_ha, if e.area_ha.abs() < 1.0 { 0.01 } else { 0.1 })
    } else {
        "?".into()
    };
    write!(
        out,
        "<a class=\"event\" href=\"/events/{}\"><title>{}, {area} ha, {}</title>",
        e.id,
        escape(&e.code),
        escape(&words.status(e.status))
    )?;
    let (fill, status, edge) = (status_colour(e.status).hex(), e.status.as_str(), TEXT.hex());
    if w < MIN_PX && h < MIN_PX {
        write!(
            out,
            "<circle class=\"footprint marker status-{status}\" data-status=\"{status}\" cx=\"{}\" cy=\"{}\" r=\"{MARKER_R}\" \
             fill=\"{fill}\" stroke=\"{edge}\" stroke-width=\"1\"/>",
            px(cx),
            px(cy)
        )?;
    } else {
        write!(
            out,
            "<path class=\"footprint status-{status}\" data-status=\"{status}\" d=\"{}\" fill=\"{fill}\" fill-rule=\"evenodd\" \
             stroke=\"{edge}\" stroke-width=\"0.8\"/>",
            path_d(f, rings)
        )?;
    }
    out.write_str("</a>")
}

/// A path through every ring (closed with Z), in pixels.
fn path_d(f: &Frame, rings: &[Vec<(f64, f64)>]) -> String {
    let mut parts = Vec::new();
    for r in rings {
        let pts: Vec<String> = r
            .iter()
            .map(|&p| f.project(p))
            .map(|(x, y)| format!("{} {}", px(x), px(y)))
            .collect();
        parts.push(format!("M {} Z", pts.join(" L ")));
    }
    parts.join(" ")
}

/// Centre and size (px) of the projected bounding box of the rings.
fn extent(f: &Frame, rings: &[Vec<(f64, f64)>]) -> (f64, f64, f64, f64) {
    let (mut lo, mut hi) = ((f64::MAX, f64::MAX), (f64::MIN, f64::MIN));
    for &p in rings.iter().flatten() {
        let (x, y) = f.project(p);
        lo = (lo.0.min(x), lo.1.min(y));
        hi = (hi.0.max(x), hi.1.max(y));
    }
    (
        (lo.0 + hi.0) / 2.0,
        (lo.1 + hi.1) / 2.0,
        hi.0 - lo.0,
        hi.1 - lo.1,
    )
}

#[cfg(test)]
mod tests;
