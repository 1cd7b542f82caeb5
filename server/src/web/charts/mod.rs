//! Pure SVG drawing for the Groundproof pages: a map of zones and clearing
//! events, a Kaplan–Meier step curve, and grouped and horizontal bar charts.
//!
//! Every function takes a plain input struct and returns a `String` holding
//! one `<svg>` element that works with no JavaScript and no internet tiles:
//! a `viewBox`, `width="100%"`, a `<title>`, `role="img"` and `aria-label`,
//! axis titles with units, colour-blind-safe fills (Okabe–Ito) and text
//! colours that pass WCAG AA on white, so the output prints well. All text
//! is escaped; non-finite numbers are dropped, never drawn; empty inputs
//! give a valid SVG saying "no data". The module is self-contained (it uses
//! nothing from the rest of the crate) so it can be tested on its own.

pub mod axis;
pub mod bars;
pub mod intervals;
pub mod line;
pub mod map;
mod map_parts;
pub mod palette;
pub mod projection;
pub mod svg;
pub mod types;
pub mod words;

#[cfg(test)]
mod testutil;

pub use axis::{format_number, nice_step, nice_ticks};
pub use bars::{render_grouped_bars, render_horizontal_bars};
pub use intervals::{IntervalChart, IntervalPoint, IntervalSeries, render_interval_chart};
pub use line::render_step_curve;
pub use map::render_map;
pub use map_parts::status_colour;
pub use palette::{Rgb, contrast_ratio};
pub use svg::escape;
pub use types::{
    BarChart, BarSeries, EventStatus, HBar, HBarChart, MapEvent, MapInput, MapZone, Step,
    StepChart, StepSeries,
};
pub use words::ChartWords;
