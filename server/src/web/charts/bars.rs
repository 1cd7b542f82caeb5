//! Bar charts: grouped vertical bars (categories such as months, one bar
//! per series in each group, 1-2-5 count ticks, legend) and horizontal
//! bars (one labelled bar per item with its value and unit, e.g. causes).

use super::axis::{self, Scale, format_number, nice_ticks};
use super::palette::{Rgb, TEXT, series_colour, series_hatch, status_colour};
use super::svg::{self, escape, px, text};
use super::types::{BarChart, HBarChart};
use std::fmt::{self, Write};

const W: f64 = 800.0;
const LEFT: f64 = 70.0;
const RIGHT: f64 = W - 20.0;
const TOP: f64 = 48.0;
const PLOT_H: f64 = 260.0;
/// Rough width of one character at the 12 px label size.
const CHAR_W: f64 = 6.5;
const LEGEND_COLS: usize = 4;

/// A drawable value: finite, and negative counts shown as zero.
fn usable(v: f64) -> Option<f64> {
    v.is_finite().then_some(v.max(0.0))
}

/// Label for a value: no decimals for whole numbers, else one.
fn value_text(v: f64) -> String {
    let step = if (v - v.round()).abs() < 1e-9 {
        1.0
    } else {
        0.1
    };
    format_number(v, step)
}

/// Upper end of a value axis: whole-number data get at least 0–5 so that
/// small counts do not get fractional ticks.
fn axis_ticks(max: f64, all_whole: bool) -> Vec<f64> {
    let top = if all_whole { max.max(5.0) } else { max };
    nice_ticks(0.0, top, 6)
}

/// Grouped vertical bars. Values past the last category are ignored;
/// non-finite values draw no bar. Empty input gives a "no data" SVG.
pub fn render_grouped_bars(input: &BarChart) -> String {
    let values = drawable_values(input);
    if values.is_empty() {
        return svg::no_data(&input.title, &input.words.no_data);
    }
    let l = GroupedLayout::of(input, &values);
    svg::render_with(&input.title, |out| {
        svg::open(out, W, l.h, &input.title)?;
        svg::heading(out, &input.title)?;
        axis::y_axis(out, l.y, &l.ticks, (LEFT, RIGHT), &input.y_label)?;
        let looks = series_looks(input);
        hatch_defs(out, &looks)?;
        draw_bars(out, input, &values, &l, &looks)?;
        axis::axis_line(out, (LEFT, l.y.r0), (RIGHT, l.y.r0))?;
        draw_categories(out, input, &l)?;
        text(
            out,
            (LEFT + RIGHT) / 2.0,
            l.axis_title_y,
            "middle",
            "axis-title",
            &input.x_label,
        )?;
        draw_series_legend(out, input, l.legend_top, &looks)?;
        svg::close(out)
    })
}

/// (series, category, value) of every bar to draw.
fn drawable_values(input: &BarChart) -> Vec<(usize, usize, f64)> {
    let n = input.categories.len();
    input
        .series
        .iter()
        .enumerate()
        .flat_map(|(s, ser)| {
            ser.values
                .iter()
                .take(n)
                .enumerate()
                .filter_map(move |(c, &v)| usable(v).map(|v| (s, c, v)))
        })
        .collect()
}

/// Where the parts of a grouped bar chart go.
struct GroupedLayout {
    ticks: Vec<f64>,
    y: Scale,
    group_w: f64,
    /// Category labels turned by 45° when they do not fit their group.
    rotate: bool,
    axis_title_y: f64,
    legend_top: f64,
    /// The height of the whole chart.
    h: f64,
    bar_w: f64,
}

impl GroupedLayout {
    fn of(input: &BarChart, values: &[(usize, usize, f64)]) -> Self {
        let n = input.categories.len();
        let max = values.iter().map(|v| v.2).fold(0.0, f64::max);
        let whole = values.iter().all(|v| (v.2 - v.2.round()).abs() < 1e-9);
        let ticks = axis_ticks(max, whole);
        let y = Scale {
            d0: 0.0,
            d1: ticks.last().copied().unwrap_or(1.0),
            r0: TOP + PLOT_H,
            r1: TOP,
        };
        let group_w = (RIGHT - LEFT) / n as f64;
        let longest = input
            .categories
            .iter()
            .map(|c| c.chars().count().min(40))
            .max()
            .unwrap_or(0) as f64;
        let rotate = longest * CHAR_W > group_w - 4.0;
        let label_h = if rotate {
            longest * CHAR_W * 0.71 + 16.0
        } else {
            20.0
        };
        let axis_title_y = TOP + PLOT_H + label_h + 18.0;
        let legend_top = axis_title_y + 26.0;
        let rows = input.series.len().div_ceil(LEGEND_COLS).max(1);
        let h = legend_top + rows as f64 * 20.0 + 6.0;
        let k = input.series.len().max(1) as f64;
        let bar_w = group_w * 0.8 / k;
        GroupedLayout {
            ticks,
            y,
            group_w,
            rotate,
            axis_title_y,
            legend_top,
            h,
            bar_w,
        }
    }
}

/// How one bar series is drawn: a status series in its status colour
/// (with `data-status`), the others in the series colours, counted among
/// themselves, hatched past the third.
#[derive(Debug, Clone)]
struct Look {
    colour: Rgb,
    /// The attributes of a bar or swatch: fill, and data-status.
    attrs: String,
    /// The hatch pattern's id and angle.
    hatch: Option<(String, u32)>,
}

fn series_looks(input: &BarChart) -> Vec<Look> {
    let mut plain = 0;
    input
        .series
        .iter()
        .map(|s| match s.status {
            Some(st) => {
                let colour = status_colour(st);
                Look {
                    colour,
                    attrs: format!("fill=\"{}\" data-status=\"{}\"", colour.hex(), st.as_str()),
                    hatch: None,
                }
            }
            None => {
                let (colour, hatch) = (series_colour(plain), series_hatch(plain));
                plain += 1;
                let hatch = hatch.map(|a| {
                    (
                        format!(
                            "gp-hatch-{}-{a}",
                            colour.hex().to_string().trim_start_matches('#')
                        ),
                        a,
                    )
                });
                let fill = match &hatch {
                    Some((id, _)) => format!("url(#{id})"),
                    None => colour.hex().to_string(),
                };
                Look {
                    colour,
                    attrs: format!("fill=\"{fill}\" data-series=\"{plain}\""),
                    hatch,
                }
            }
        })
        .collect()
}

/// The hatch patterns the series need (an id names its colour and angle,
/// so two charts on one page that share an id share its drawing too).
fn hatch_defs(out: &mut String, looks: &[Look]) -> fmt::Result {
    let hatched: Vec<&Look> = looks.iter().filter(|l| l.hatch.is_some()).collect();
    if hatched.is_empty() {
        return Ok(());
    }
    out.write_str("<defs>")?;
    for l in hatched {
        if let Some((id, angle)) = &l.hatch {
            write!(
                out,
                "<pattern id=\"{id}\" patternUnits=\"userSpaceOnUse\" width=\"6\" height=\"6\" patternTransform=\"rotate({angle})\"><rect width=\"6\" height=\"6\" fill=\"#ffffff\"/><rect width=\"3\" height=\"6\" fill=\"{}\"/></pattern>",
                l.colour.hex()
            )?;
        }
    }
    out.write_str("</defs>")
}

fn draw_bars(
    out: &mut String,
    input: &BarChart,
    values: &[(usize, usize, f64)],
    l: &GroupedLayout,
    looks: &[Look],
) -> fmt::Result {
    let y = l.y;
    for &(s, c, v) in values {
        let bx = LEFT + c as f64 * l.group_w + l.group_w * 0.1 + s as f64 * l.bar_w;
        let top = y.map(v);
        write!(
            out,
            "<rect class=\"bar\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" {} stroke=\"{}\" stroke-width=\"0.5\"><title>{}, {}: {}</title></rect>",
            px(bx),
            px(top),
            px(l.bar_w),
            px(y.r0 - top),
            looks[s].attrs,
            TEXT.hex(),
            escape(&input.categories[c]),
            escape(&input.series[s].label),
            value_text(v)
        )?;
    }
    Ok(())
}

/// The category labels under the groups, turned when they do not fit.
fn draw_categories(out: &mut String, input: &BarChart, l: &GroupedLayout) -> fmt::Result {
    for (c, cat) in input.categories.iter().enumerate() {
        let cx = LEFT + (c as f64 + 0.5) * l.group_w;
        let ly = l.y.r0 + 16.0;
        if l.rotate {
            write!(out, "<g transform=\"rotate(-45 {} {})\">", px(cx), px(ly))?;
            text(out, cx, ly, "end", "category", cat)?;
            out.write_str("</g>")?;
        } else {
            text(out, cx, ly, "middle", "category", cat)?;
        }
    }
    Ok(())
}

/// One legend entry per series, in rows of [`LEGEND_COLS`].
fn draw_series_legend(
    out: &mut String,
    input: &BarChart,
    legend_top: f64,
    looks: &[Look],
) -> fmt::Result {
    let col_w = (RIGHT - LEFT) / LEGEND_COLS as f64;
    for (s, ser) in input.series.iter().enumerate() {
        let lx = LEFT + (s % LEGEND_COLS) as f64 * col_w;
        let ly = legend_top + (s / LEGEND_COLS) as f64 * 20.0;
        write!(
            out,
            "<g class=\"legend-entry\"><rect x=\"{}\" y=\"{}\" width=\"14\" height=\"14\" {} stroke=\"{}\" stroke-width=\"0.5\"/>",
            px(lx),
            px(ly - 11.0),
            looks[s].attrs,
            TEXT.hex()
        )?;
        text(out, lx + 20.0, ly, "start", "legend-label", &ser.label)?;
        out.write_str("</g>")?;
    }
    Ok(())
}

const ROW_H: f64 = 26.0;
const BAR_H: f64 = 16.0;
/// Room right of the longest bar for its value label.
const VALUE_ROOM: f64 = 110.0;

/// Horizontal bars with the value and unit after each bar. Non-finite
/// values are left out. Empty input gives a "no data" SVG.
pub fn render_horizontal_bars(input: &HBarChart) -> String {
    let bars: Vec<(&str, f64)> = input
        .bars
        .iter()
        .filter_map(|b| usable(b.value).map(|v| (b.label.as_str(), v)))
        .collect();
    if bars.is_empty() {
        return svg::no_data(&input.title, &input.words.no_data);
    }
    let longest = bars.iter().map(|b| b.0.chars().count()).max().unwrap_or(0) as f64;
    let left = (longest * CHAR_W + 20.0).clamp(80.0, 280.0);
    let right = W - VALUE_ROOM;
    let max = bars.iter().map(|b| b.1).fold(0.0, f64::max);
    let whole = bars.iter().all(|b| (b.1 - b.1.round()).abs() < 1e-9);
    let ticks = axis_ticks(max, whole);
    let x = Scale {
        d0: 0.0,
        d1: ticks.last().copied().unwrap_or(1.0),
        r0: left,
        r1: right,
    };
    let plot_bottom = TOP + bars.len() as f64 * ROW_H;
    let h = plot_bottom + 74.0;
    let unit = input.unit.trim();
    let title = if unit.is_empty() {
        input.value_label.clone()
    } else {
        format!("{} ({unit})", input.value_label)
    };

    svg::render_with(&input.title, |out| -> fmt::Result {
        svg::open(out, W, h, &input.title)?;
        svg::heading(out, &input.title)?;
        axis::x_axis(out, x, &ticks, (plot_bottom, TOP), &title)?;
        for (i, &(label, v)) in bars.iter().enumerate() {
            let top = TOP + i as f64 * ROW_H + (ROW_H - BAR_H) / 2.0;
            let end = x.map(v);
            let shown = if unit.is_empty() {
                value_text(v)
            } else {
                format!("{} {unit}", value_text(v))
            };
            // Long labels are cut so they cannot run into the bars.
            let max_chars = ((left - 14.0) / CHAR_W).max(4.0) as usize;
            let cut: String = if label.chars().count() > max_chars {
                label
                    .chars()
                    .take(max_chars.saturating_sub(1))
                    .chain(std::iter::once('…'))
                    .collect()
            } else {
                label.to_string()
            };
            text(out, left - 8.0, top + BAR_H - 3.0, "end", "bar-label", &cut)?;
            write!(
                out,
                "<rect class=\"bar\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"><title>{}: {}</title></rect>",
                px(left),
                px(top),
                px(end - left),
                px(BAR_H),
                HBAR_COLOUR.hex(),
                escape(label),
                escape(&shown)
            )?;
            text(
                out,
                end + 6.0,
                top + BAR_H - 3.0,
                "start",
                "bar-value",
                &shown,
            )?;
        }
        axis::axis_line(out, (left, TOP), (left, plot_bottom))?;
        hbar_legend(out, left, plot_bottom + 62.0, &title)?;
        svg::close(out)
    })
}

/// The one series of a horizontal bar chart: a series colour, not a status.
const HBAR_COLOUR: Rgb = super::palette::SKY_BLUE;

/// The legend of a horizontal bar chart: its one series.
fn hbar_legend(out: &mut String, x: f64, y: f64, label: &str) -> fmt::Result {
    write!(
        out,
        "<g class=\"legend-entry\"><rect x=\"{}\" y=\"{}\" width=\"14\" height=\"14\" fill=\"{}\" stroke=\"{}\" stroke-width=\"0.5\"/>",
        px(x),
        px(y - 11.0),
        HBAR_COLOUR.hex(),
        TEXT.hex()
    )?;
    text(out, x + 20.0, y, "start", "legend-label", label)?;
    out.write_str("</g>")
}

#[cfg(test)]
mod tests;
