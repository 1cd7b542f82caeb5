//! Estimates with their 95% intervals over categories (months): one marker
//! per estimate with a whisker from the lower to the upper bound, the
//! markers of a series joined by a thin line, a marker shape per series
//! (circle, square, triangle, diamond) beside its colour and dash, and a
//! legend. Used for trends: a rate by month, a median time by month, teams
//! over time.

use super::axis::{self, Scale, nice_ticks};
use super::palette::{TEXT_MUTED, series_colour, series_dash};
use super::svg::{self, escape, px, text};
use std::fmt::{self, Write};

const W: f64 = 800.0;
const LEFT: f64 = 70.0;
const RIGHT: f64 = W - 20.0;
const TOP: f64 = 48.0;
const PLOT_H: f64 = 240.0;
const LEGEND_COLS: usize = 3;

/// One estimate: (estimate, lower, upper); a bound may be unknown (`None`
/// draws the whisker to the edge of the plot, marked "open").
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IntervalPoint {
    pub estimate: f64,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

/// A labelled series; `points[i]` belongs to category `i` (`None`: no estimate).
#[derive(Debug, Clone, Default)]
pub struct IntervalSeries {
    pub label: String,
    pub points: Vec<Option<IntervalPoint>>,
}

/// The chart: categories along x, estimates on a value axis from 0.
#[derive(Debug, Clone, Default)]
pub struct IntervalChart {
    pub title: String,
    pub categories: Vec<String>,
    pub x_label: String,
    pub y_label: String,
    /// Top of the value axis (1 for a share); `None`: from the data.
    pub y_max: Option<f64>,
    pub series: Vec<IntervalSeries>,
    /// The key, tooltips and "no data", in the page's language.
    pub words: super::words::ChartWords,
}

/// The estimates that can be drawn: (series, category, point).
fn drawable(c: &IntervalChart) -> Vec<(usize, usize, IntervalPoint)> {
    let n = c.categories.len();
    let ok = |v: Option<f64>| v.filter(|x| x.is_finite());
    c.series
        .iter()
        .enumerate()
        .flat_map(|(s, ser)| {
            ser.points
                .iter()
                .take(n)
                .enumerate()
                .filter_map(move |(k, p)| {
                    let p = (*p)?;
                    p.estimate.is_finite().then_some((
                        s,
                        k,
                        IntervalPoint {
                            estimate: p.estimate.max(0.0),
                            lower: ok(p.lower),
                            upper: ok(p.upper),
                        },
                    ))
                })
        })
        .collect()
}

/// Draw the chart. Empty input gives a "no data" SVG.
pub fn render_interval_chart(c: &IntervalChart) -> String {
    let points = drawable(c);
    if points.is_empty() {
        return svg::no_data(&c.title, &c.words.no_data);
    }
    let data_max = points
        .iter()
        .map(|(_, _, p)| p.upper.unwrap_or(p.estimate).max(p.estimate))
        .fold(0.0, f64::max);
    let top = c
        .y_max
        .filter(|m| m.is_finite() && *m > 0.0)
        .unwrap_or(data_max.max(1.0));
    let ticks = nice_ticks(0.0, top, 6);
    let y = Scale {
        d0: 0.0,
        d1: ticks.last().copied().unwrap_or(1.0),
        r0: TOP + PLOT_H,
        r1: TOP,
    };
    let group_w = (RIGHT - LEFT) / c.categories.len().max(1) as f64;
    let legend_top = TOP + PLOT_H + 64.0;
    let h = legend_top + c.series.len().div_ceil(LEGEND_COLS) as f64 * 20.0 + 28.0;
    svg::render_with(&c.title, |out| {
        svg::open(out, W, h, &c.title)?;
        svg::heading(out, &c.title)?;
        axis::y_axis(out, y, &ticks, (LEFT, RIGHT), &c.y_label)?;
        axis::axis_line(out, (LEFT, y.r0), (RIGHT, y.r0))?;
        let cx = |s: usize, k: usize| {
            let spread = group_w * 0.5 / c.series.len().max(1) as f64;
            LEFT + (k as f64 + 0.5) * group_w
                + (s as f64 - (c.series.len() as f64 - 1.0) / 2.0) * spread
        };
        for s in 0..c.series.len() {
            joins(out, s, &points, y, cx)?;
        }
        for &(s, k, p) in &points {
            one_point(out, c, s, k, p, y, cx(s, k))?;
        }
        for (k, cat) in c.categories.iter().enumerate() {
            let x = LEFT + (k as f64 + 0.5) * group_w;
            text(out, x, y.r0 + 16.0, "middle", "category", cat)?;
        }
        text(
            out,
            (LEFT + RIGHT) / 2.0,
            y.r0 + 40.0,
            "middle",
            "axis-title",
            &c.x_label,
        )?;
        legend(out, c, legend_top)?;
        svg::close(out)
    })
}

/// The thin line joining the estimates of series `s` in category order.
fn joins(
    out: &mut String,
    s: usize,
    points: &[(usize, usize, IntervalPoint)],
    y: Scale,
    cx: impl Fn(usize, usize) -> f64,
) -> fmt::Result {
    let mine: Vec<String> = points
        .iter()
        .filter(|p| p.0 == s)
        .map(|&(_, k, p)| format!("{},{}", px(cx(s, k)), px(y.map(p.estimate))))
        .collect();
    if mine.len() < 2 {
        return Ok(());
    }
    write!(
        out,
        "<polyline class=\"join\" points=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.2\" stroke-dasharray=\"{}\"/>",
        mine.join(" "),
        series_colour(s).hex(),
        series_dash(s)
    )
}

/// The whisker and marker of one estimate.
fn one_point(
    out: &mut String,
    c: &IntervalChart,
    s: usize,
    k: usize,
    p: IntervalPoint,
    y: Scale,
    x: f64,
) -> fmt::Result {
    let colour = series_colour(s).hex();
    let lo = y.map(p.lower.unwrap_or(0.0));
    let hi = y.map(p.upper.unwrap_or(y.d1));
    let bounds =
        |v: Option<f64>| v.map_or_else(|| c.words.open.clone(), |v| axis::format_number(v, 0.001));
    let interval = super::words::fill(
        &c.words.interval_tip,
        &[("lower", &bounds(p.lower)), ("upper", &bounds(p.upper))],
    );
    write!(
        out,
        "<g class=\"estimate\"><title>{}, {}: {} ({})</title>\
         <line class=\"whisker\" x1=\"{x}\" y1=\"{}\" x2=\"{x}\" y2=\"{}\" stroke=\"{colour}\" stroke-width=\"1.5\"/>",
        escape(&c.series[s].label),
        escape(&c.categories[k]),
        axis::format_number(p.estimate, 0.001),
        escape(&interval),
        px(lo),
        px(hi),
        x = px(x)
    )?;
    out.push_str(&marker(s, x, y.map(p.estimate), "marker"));
    out.write_str("</g>")
}

/// The marker of series `s` at (x, y): its shape follows the series.
fn marker(s: usize, x: f64, y: f64, class: &str) -> String {
    let c = series_colour(s).hex();
    let r = 4.5;
    let shape = match s % 4 {
        0 => format!("<circle cx=\"{}\" cy=\"{}\" r=\"{r}\"", px(x), px(y)),
        1 => format!(
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"",
            px(x - r),
            px(y - r),
            2.0 * r,
            2.0 * r
        ),
        2 => format!(
            "<path d=\"M {} {} L {} {} L {} {} Z\"",
            px(x),
            px(y - r - 1.0),
            px(x + r + 1.0),
            px(y + r),
            px(x - r - 1.0),
            px(y + r)
        ),
        _ => format!(
            "<path d=\"M {} {} L {} {} L {} {} L {} {} Z\"",
            px(x),
            px(y - r - 1.0),
            px(x + r + 1.0),
            px(y),
            px(x),
            px(y + r + 1.0),
            px(x - r - 1.0),
            px(y)
        ),
    };
    format!("{shape} class=\"{class}\" fill=\"{c}\" stroke=\"#ffffff\" stroke-width=\"1\"/>")
}

/// One entry per series, then what the whiskers are.
fn legend(out: &mut String, c: &IntervalChart, top: f64) -> fmt::Result {
    let col_w = (RIGHT - LEFT) / LEGEND_COLS as f64;
    for (s, ser) in c.series.iter().enumerate() {
        let lx = LEFT + (s % LEGEND_COLS) as f64 * col_w;
        let ly = top + (s / LEGEND_COLS) as f64 * 20.0;
        write!(
            out,
            "<g class=\"legend-entry\">{}",
            marker(s, lx + 7.0, ly - 4.0, "legend-marker")
        )?;
        text(out, lx + 20.0, ly, "start", "legend-label", &ser.label)?;
        out.write_str("</g>")?;
    }
    let ny = top + c.series.len().div_ceil(LEGEND_COLS) as f64 * 20.0;
    write!(
        out,
        "<text class=\"legend-note\" x=\"{}\" y=\"{}\" fill=\"{}\">{}</text>",
        px(LEFT),
        px(ny),
        TEXT_MUTED.hex(),
        escape(&c.words.interval_key)
    )
}

#[cfg(test)]
mod tests {
    use super::super::testutil::{check_frame, colour_roles_hold, text_colours_pass, with_class};
    use super::*;

    fn chart() -> IntervalChart {
        let p = |e: f64, l: f64, u: f64| {
            Some(IntervalPoint {
                estimate: e,
                lower: Some(l),
                upper: Some(u),
            })
        };
        IntervalChart {
            title: "Confirmation rate by month".into(),
            words: Default::default(),
            categories: vec!["2025-01".into(), "2025-02".into(), "2025-03".into()],
            x_label: "month of first detection".into(),
            y_label: "confirmation rate (0–1)".into(),
            y_max: Some(1.0),
            series: vec![
                IntervalSeries {
                    label: "all events".into(),
                    points: vec![p(0.5, 0.25, 0.75), None, p(1.0, 0.6, 1.0)],
                },
                IntervalSeries {
                    label: "Team <A>".into(),
                    points: vec![p(0.2, 0.0, 0.4), p(f64::NAN, 0.0, 1.0), p(0.8, 0.5, 0.9)],
                },
            ],
        }
    }

    #[test]
    fn whiskers_span_the_interval_on_the_axis() {
        let svg = render_interval_chart(&chart());
        let doc = check_frame(&svg);
        text_colours_pass(&doc);
        colour_roles_hold(&doc);
        // Two drawable points in series 0, two in series 1 (NaN dropped).
        let whiskers = with_class(&doc, "whisker");
        assert_eq!(whiskers.len(), 4);
        // The axis maps 0..1 to 288..48 (TOP + PLOT_H .. TOP): 0.25 → 228, 0.75 → 108.
        let w = &whiskers[0];
        let y = |a: &str| w.attribute(a).unwrap().parse::<f64>().unwrap();
        assert_eq!((y("y1"), y("y2")), (228.0, 108.0));
        assert_eq!(with_class(&doc, "legend-entry").len(), 2);
        assert!(svg.contains("Team &lt;A&gt;"));
        // Distinct marker shapes per series.
        let shapes: Vec<&str> = with_class(&doc, "legend-marker")
            .iter()
            .map(|n| n.tag_name().name())
            .collect();
        assert_eq!(shapes, vec!["circle", "rect"]);
    }

    #[test]
    fn nothing_to_draw_says_no_data() {
        let mut c = chart();
        c.series.iter_mut().for_each(|s| s.points.clear());
        assert!(render_interval_chart(&c).contains("no data"));
    }
}
