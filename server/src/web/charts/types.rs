//! Input types of the charts: plain structs the pages fill from stored
//! facts. Coordinates are (longitude, latitude) in WGS 84 degrees.

use geo::MultiPolygon;

pub use super::words::ChartWords;

pub use crate::domain::EventStatus;

/// A named zone polygon.
#[derive(Debug, Clone)]
pub struct MapZone {
    pub name: String,
    pub shape: MultiPolygon<f64>,
    /// Priority zones get a heavy dashed outline.
    pub priority: bool,
}

/// One clearing event on the map.
#[derive(Debug, Clone)]
pub struct MapEvent {
    /// Linked as `/events/{id}`.
    pub id: i64,
    /// Short code shown in the tooltip.
    pub code: String,
    pub area_ha: f64,
    pub status: EventStatus,
    pub footprint: MultiPolygon<f64>,
}

/// Everything the map draws.
#[derive(Debug, Clone, Default)]
pub struct MapInput {
    pub title: String,
    pub zones: Vec<MapZone>,
    pub events: Vec<MapEvent>,
    /// Start of a trip, (lon, lat).
    pub start: Option<(f64, f64)>,
    /// Route as (lon, lat) vertices in order; fewer than two draws nothing.
    pub route: Vec<(f64, f64)>,
    /// The legend's and notes' words, in the page's language.
    pub words: ChartWords,
}

/// One step of a step curve: from `x_days` on, the curve is at `y`
/// (a proportion, 0 to 1) until the next step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    pub x_days: f64,
    pub y: f64,
    /// Optional confidence band (lower, upper) over the same interval.
    pub band: Option<(f64, f64)>,
}

/// A labelled step curve (for example one Kaplan–Meier estimate).
#[derive(Debug, Clone, Default)]
pub struct StepSeries {
    pub label: String,
    /// Steps in increasing `x_days`; a curve usually starts at (0, 1).
    pub steps: Vec<Step>,
    /// Days at which an observation was censored, drawn as '+' on the curve.
    pub censored: Vec<f64>,
}

/// A step chart with a marker at a target day.
#[derive(Debug, Clone)]
pub struct StepChart {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub series: Vec<StepSeries>,
    /// A vertical marker (e.g. 14 days) with its label.
    pub target_day: Option<f64>,
    pub target_label: String,
    /// The notes' words, in the page's language.
    pub words: ChartWords,
}

impl StepChart {
    /// A Kaplan–Meier time-to-visit chart with the usual axis titles.
    pub fn time_to_visit(title: &str, series: Vec<StepSeries>, target_day: Option<f64>) -> Self {
        let target_label = match target_day {
            Some(d) => format!("target: {} days", super::axis::format_number(d, 1.0)),
            None => String::new(),
        };
        StepChart {
            title: title.to_string(),
            x_label: "days since detection (days)".to_string(),
            y_label: "share not yet visited (0–1)".to_string(),
            series,
            target_day,
            target_label,
            words: ChartWords::default(),
        }
    }
}

/// One series of a grouped bar chart; `values[i]` belongs to category `i`.
#[derive(Debug, Clone, Default)]
pub struct BarSeries {
    pub label: String,
    pub values: Vec<f64>,
    /// The series counts events of this status: it is drawn in the
    /// status's colour. `None`: a series colour.
    pub status: Option<EventStatus>,
}

/// Grouped vertical bars: categories along x, one bar per series in each.
#[derive(Debug, Clone, Default)]
pub struct BarChart {
    pub title: String,
    pub categories: Vec<String>,
    /// Category axis title, e.g. "month".
    pub x_label: String,
    pub series: Vec<BarSeries>,
    /// Value axis title with its unit, e.g. "events (count)".
    pub y_label: String,
    /// The chart's own words ("no data"), in the page's language.
    pub words: ChartWords,
}

/// One horizontal bar.
#[derive(Debug, Clone, Default)]
pub struct HBar {
    pub label: String,
    pub value: f64,
}

/// Horizontal bars, e.g. causes of confirmed clearing.
#[derive(Debug, Clone, Default)]
pub struct HBarChart {
    pub title: String,
    /// What the value is, e.g. "cleared area".
    pub value_label: String,
    /// Unit shown on the axis and after each value, e.g. "ha" or "events".
    pub unit: String,
    pub bars: Vec<HBar>,
    /// The chart's own words ("no data"), in the page's language.
    pub words: ChartWords,
}
