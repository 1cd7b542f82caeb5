//! Map furniture drawn around the data: the north arrow, the legend (one
//! entry per status, then zone kinds, route and start) and the scale bar
//! with a note on the projection.

use super::axis::format_number;
pub use super::palette::status_colour;
use super::palette::{AXIS, BLACK, ORANGE, Rgb, TEXT, TEXT_MUTED, ZONE_FILL};
use super::projection::{Frame, MAP_W, MAP_X0, scale_label, scale_length_m};
use super::svg::{escape, px, text};
use super::types::{ChartWords, EventStatus};
use std::fmt::{self, Write};

pub(crate) const LEGEND_COLS: usize = 4;

pub(crate) fn north_arrow(out: &mut String, x: f64, y: f64, words: &ChartWords) -> fmt::Result {
    write!(
        out,
        "<g class=\"north-arrow\"><path d=\"M {} {} L {} {} L {} {} L {} {} Z\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"1\"/>",
        px(x),
        px(y),
        px(x + 7.0),
        px(y + 22.0),
        px(x),
        px(y + 17.0),
        px(x - 7.0),
        px(y + 22.0),
        BLACK.hex()
    )?;
    text(out, x, y + 36.0, "middle", "north-label", &words.north)?;
    out.write_str("</g>")
}

/// One entry per status, then zone kinds, route and start when drawn.
pub(crate) fn legend(
    out: &mut String,
    top: f64,
    zone_priority: &[bool],
    (route, start): (bool, bool),
    words: &ChartWords,
) -> fmt::Result {
    let mut slots = LegendSlots {
        top,
        col_w: MAP_W / LEGEND_COLS as f64,
        n: 0,
    };
    for s in EventStatus::ALL {
        let c = status_colour(s);
        slots.entry(
            out,
            "legend-status",
            |x, y| status_swatch(s, c, x, y),
            &words.status(s),
        )?;
    }
    if zone_priority.iter().any(|p| !p) {
        let sw = |x, y| zone_swatch("none", 1.0, AXIS, x, y);
        slots.entry(out, "legend-zone", sw, &words.zone)?;
    }
    if zone_priority.iter().any(|p| *p) {
        let sw = |x, y| zone_swatch("7 4", 2.5, BLACK, x, y);
        slots.entry(out, "legend-zone", sw, &words.priority_zone)?;
    }
    if route {
        slots.entry(out, "legend-route", route_swatch, &words.route)?;
    }
    if start {
        slots.entry(out, "legend-start", start_swatch, &words.start)?;
    }
    Ok(())
}

/// The legend's entries, filled row by row in [`LEGEND_COLS`] columns.
struct LegendSlots {
    top: f64,
    col_w: f64,
    /// Entries written so far.
    n: usize,
}

impl LegendSlots {
    /// The next entry: its swatch (drawn at the given top left) and label.
    fn entry(
        &mut self,
        out: &mut String,
        class: &str,
        swatch: impl Fn(f64, f64) -> String,
        label: &str,
    ) -> fmt::Result {
        let x = MAP_X0 + (self.n % LEGEND_COLS) as f64 * self.col_w;
        let y = self.top + (self.n / LEGEND_COLS) as f64 * 20.0;
        self.n += 1;
        write!(
            out,
            "<g class=\"legend-entry {class}\">{}",
            swatch(x, y - 11.0)
        )?;
        text(out, x + 22.0, y, "start", "legend-label", label)?;
        out.write_str("</g>")
    }
}

fn status_swatch(s: EventStatus, colour: Rgb, x: f64, y: f64) -> String {
    let c = colour.hex();
    let status = s.as_str();
    format!(
        "<rect data-status=\"{status}\" x=\"{}\" y=\"{}\" width=\"14\" height=\"14\" fill=\"{c}\" stroke=\"{}\" stroke-width=\"0.8\"/>",
        px(x),
        px(y),
        TEXT.hex()
    )
}

fn zone_swatch(dash: &str, width: f64, colour: Rgb, x: f64, y: f64) -> String {
    format!(
        "<rect x=\"{}\" y=\"{}\" width=\"14\" height=\"14\" fill=\"{}\" stroke=\"{}\" stroke-width=\"{width}\" stroke-dasharray=\"{dash}\"/>",
        px(x),
        px(y),
        ZONE_FILL.hex(),
        colour.hex()
    )
}

fn route_swatch(x: f64, y: f64) -> String {
    format!(
        "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"2\" stroke-dasharray=\"5 3\"/>",
        px(x),
        px(y + 7.0),
        px(x + 16.0),
        px(y + 7.0),
        BLACK.hex()
    )
}

fn start_swatch(x: f64, y: f64) -> String {
    format!(
        "<circle cx=\"{}\" cy=\"{}\" r=\"6\" fill=\"{}\" stroke=\"{}\" stroke-width=\"1.5\"/>",
        px(x + 7.0),
        px(y + 7.0),
        ORANGE.hex(),
        BLACK.hex()
    )
}

/// A round-length scale bar at most 30% of the map width, and a note on
/// the projection.
pub(crate) fn scale_bar(out: &mut String, f: &Frame, y: f64, words: &ChartWords) -> fmt::Result {
    let m_per_px = f.metres_per_px();
    let len_m = scale_length_m(0.3 * MAP_W * m_per_px);
    if len_m > 0.0 && m_per_px > 0.0 {
        let (x0, x1) = (MAP_X0 + 10.0, MAP_X0 + 10.0 + len_m / m_per_px);
        write!(
            out,
            "<g class=\"scale-bar\"><line class=\"scale-line\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"3\"/>",
            px(x0),
            px(y),
            px(x1),
            px(y),
            BLACK.hex()
        )?;
        for x in [x0, x1] {
            write!(
                out,
                "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"1.5\"/>",
                px(x),
                px(y - 6.0),
                px(x),
                px(y + 6.0),
                BLACK.hex()
            )?;
        }
        text(
            out,
            x1 + 8.0,
            y + 4.0,
            "start",
            "scale-label",
            &scale_label(len_m),
        )?;
        out.write_str("</g>")?;
    }
    let lat = format_number(f.lat0, 0.01);
    let note = super::words::fill(&words.projection, &[("lat", &lat)]);
    write!(
        out,
        "<text class=\"projection-note\" x=\"{}\" y=\"{}\" text-anchor=\"end\" font-size=\"10\" fill=\"{}\">{}</text>",
        px(MAP_X0 + MAP_W),
        px(y + 4.0),
        TEXT_MUTED.hex(),
        escape(&note)
    )
}
