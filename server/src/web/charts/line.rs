//! Step curves such as the Kaplan–Meier time-to-visit estimate: each series
//! a right-continuous step line, an optional light confidence band, '+'
//! censor marks on the curve, a 0–1 gridded y axis, a day axis, a legend,
//! and a dashed vertical marker at a target day.

use super::axis::{self, Scale, nice_ticks};
use super::palette::{AXIS, TEXT_MUTED, series_colour, series_dash};
use super::svg::{self, escape, px, text};
use super::types::{Step, StepChart};
use std::fmt::{self, Write};

const W: f64 = 800.0;
const LEFT: f64 = 70.0;
const RIGHT: f64 = W - 24.0;
const TOP: f64 = 48.0;
const PLOT_H: f64 = 260.0;
const LEGEND_COLS: usize = 3;
const LEGEND_ROW: f64 = 20.0;

/// Clean steps of one series: finite, clamped to 0–1, sorted by day.
fn clean(steps: &[Step]) -> Vec<Step> {
    let mut out: Vec<Step> = steps
        .iter()
        .filter(|s| s.x_days.is_finite() && s.y.is_finite())
        .map(|s| Step {
            x_days: s.x_days.max(0.0),
            y: s.y.clamp(0.0, 1.0),
            band: s.band.and_then(|(a, b)| {
                (a.is_finite() && b.is_finite())
                    .then(|| (a.min(b).clamp(0.0, 1.0), a.max(b).clamp(0.0, 1.0)))
            }),
        })
        .collect();
    out.sort_by(|a, b| a.x_days.total_cmp(&b.x_days));
    out
}

/// The curve's value at day `x`: the last step at or before it (1 before the first).
fn value_at(steps: &[Step], x: f64) -> f64 {
    steps
        .iter()
        .take_while(|s| s.x_days <= x)
        .last()
        .map_or(1.0, |s| s.y)
}

/// A drawable series: its index, label, clean steps and censoring days.
type Series<'a> = (usize, &'a str, Vec<Step>, Vec<f64>);

/// Draw a Kaplan–Meier style step chart. Empty input gives a "no data" SVG.
pub fn render_step_curve(input: &StepChart) -> String {
    let series = drawable_series(input);
    if series.is_empty() {
        return svg::no_data(&input.title, &input.words.no_data);
    }
    let target = input.target_day.filter(|d| d.is_finite() && *d >= 0.0);
    let x_ticks = nice_ticks(0.0, last_day(&series, target), 8);
    let x = Scale {
        d0: 0.0,
        d1: x_ticks.last().copied().unwrap_or(1.0),
        r0: LEFT,
        r1: RIGHT,
    };
    let y = Scale {
        d0: 0.0,
        d1: 1.0,
        r0: TOP + PLOT_H,
        r1: TOP,
    };
    let rows = series.len().div_ceil(LEGEND_COLS) + 1;
    let legend_top = TOP + PLOT_H + 64.0;
    let h = legend_top + rows as f64 * LEGEND_ROW + 8.0;

    svg::render_with(&input.title, |out| {
        svg::open(out, W, h, &input.title)?;
        svg::heading(out, &input.title)?;
        axis::y_axis(
            out,
            y,
            &nice_ticks(0.0, 1.0, 5),
            (LEFT, RIGHT),
            &input.y_label,
        )?;
        axis::x_axis(out, x, &x_ticks, (TOP + PLOT_H, TOP), &input.x_label)?;
        for s in &series {
            one_series(out, s, x, y)?;
        }
        if let Some(d) = target {
            marker(out, x.map(d), &input.target_label)?;
        }
        legend(out, &series, legend_top, &input.words)?;
        svg::close(out)
    })
}

/// The series with at least one clean step, each with its usable
/// censoring days.
fn drawable_series(input: &StepChart) -> Vec<Series<'_>> {
    input
        .series
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let cens: Vec<f64> = s
                .censored
                .iter()
                .copied()
                .filter(|c| c.is_finite() && *c >= 0.0)
                .collect();
            (i, s.label.as_str(), clean(&s.steps), cens)
        })
        .filter(|(_, _, steps, _)| !steps.is_empty())
        .collect()
}

/// The last day the day axis must show: the target, a step or a censoring.
fn last_day(series: &[Series<'_>], target: Option<f64>) -> f64 {
    let mut x_max = target.unwrap_or(0.0);
    for (_, _, steps, cens) in series {
        for v in steps.iter().map(|s| s.x_days).chain(cens.iter().copied()) {
            x_max = x_max.max(v);
        }
    }
    x_max
}

/// One series: its band, its step line and its censor marks.
fn one_series(out: &mut String, series: &Series<'_>, x: Scale, y: Scale) -> fmt::Result {
    let (i, label, steps, cens) = series;
    let x_end = steps
        .last()
        .map_or(0.0, |s| s.x_days)
        .max(cens.iter().copied().fold(0.0, f64::max));
    band(out, *i, steps, x_end, x, y)?;
    curve(out, *i, label, steps, x_end, x, y)?;
    for &c in cens {
        let (cx, cy) = (x.map(c), y.map(value_at(steps, c)));
        write!(
            out,
            "<path class=\"censor\" d=\"M {} {} L {} {} M {} {} L {} {}\" stroke=\"{}\" stroke-width=\"1.5\"/>",
            px(cx - 4.0),
            px(cy),
            px(cx + 4.0),
            px(cy),
            px(cx),
            px(cy - 4.0),
            px(cx),
            px(cy + 4.0),
            series_colour(*i).hex()
        )?;
    }
    Ok(())
}

/// The step line of one series as a single path.
fn curve(
    out: &mut String,
    i: usize,
    label: &str,
    steps: &[Step],
    x_end: f64,
    x: Scale,
    y: Scale,
) -> fmt::Result {
    let mut d = String::new();
    for (k, s) in steps.iter().enumerate() {
        let (sx, sy) = (px(x.map(s.x_days)), px(y.map(s.y)));
        if k == 0 {
            write!(d, "M {sx} {sy}")?;
        } else {
            let prev = px(y.map(steps[k - 1].y));
            write!(d, " L {sx} {prev} L {sx} {sy}")?;
        }
    }
    if let Some(last) = steps.last() {
        write!(d, " L {} {}", px(x.map(x_end)), px(y.map(last.y)))?;
    }
    write!(
        out,
        "<path class=\"curve\" d=\"{d}\" fill=\"none\" stroke=\"{}\" stroke-width=\"2\" stroke-dasharray=\"{}\"><title>{}</title></path>",
        series_colour(i).hex(),
        series_dash(i),
        escape(label)
    )
}

/// Light areas for each run of consecutive steps that carry a band.
fn band(out: &mut String, i: usize, steps: &[Step], x_end: f64, x: Scale, y: Scale) -> fmt::Result {
    let next_x = |k: usize| steps.get(k + 1).map_or(x_end, |s| s.x_days);
    let mut k = 0;
    while k < steps.len() {
        if steps[k].band.is_none() {
            k += 1;
            continue;
        }
        let start = k;
        while k < steps.len() && steps[k].band.is_some() {
            k += 1;
        }
        let run = start..k;
        let mut d = String::new();
        for j in run.clone() {
            let (_, up) = steps[j].band.unwrap_or((0.0, 0.0));
            let cmd = if j == start { "M" } else { "L" };
            write!(
                d,
                "{cmd} {} {} L {} {} ",
                px(x.map(steps[j].x_days)),
                px(y.map(up)),
                px(x.map(next_x(j))),
                px(y.map(up))
            )?;
        }
        for j in run.rev() {
            let (lo, _) = steps[j].band.unwrap_or((0.0, 0.0));
            write!(
                d,
                "L {} {} L {} {} ",
                px(x.map(next_x(j))),
                px(y.map(lo)),
                px(x.map(steps[j].x_days)),
                px(y.map(lo))
            )?;
        }
        write!(
            out,
            "<path class=\"band\" d=\"{d}Z\" fill=\"{}\" fill-opacity=\"0.18\" stroke=\"none\"/>",
            series_colour(i).hex()
        )?;
    }
    Ok(())
}

/// The dashed target-day line with its label above the plot.
fn marker(out: &mut String, mx: f64, label: &str) -> fmt::Result {
    write!(
        out,
        "<line class=\"target\" x1=\"{m}\" y1=\"{}\" x2=\"{m}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"1.5\" stroke-dasharray=\"4 3\"/>",
        px(TOP - 6.0),
        px(TOP + PLOT_H),
        AXIS.hex(),
        m = px(mx)
    )?;
    let (lx, anchor) = if mx > RIGHT - 160.0 {
        (mx - 4.0, "end")
    } else {
        (mx + 4.0, "start")
    };
    text(out, lx, TOP - 10.0, anchor, "target-label", label)
}

/// One legend entry per series, then a note on the marks.
fn legend(
    out: &mut String,
    series: &[Series<'_>],
    top: f64,
    words: &super::words::ChartWords,
) -> fmt::Result {
    let col_w = (RIGHT - LEFT) / LEGEND_COLS as f64;
    for (n, (i, label, _, _)) in series.iter().enumerate() {
        let lx = LEFT + (n % LEGEND_COLS) as f64 * col_w;
        let ly = top + (n / LEGEND_COLS) as f64 * LEGEND_ROW;
        write!(
            out,
            "<g class=\"legend-entry\"><line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\" stroke-width=\"2\" stroke-dasharray=\"{}\"/>",
            px(lx),
            px(ly - 4.0),
            px(lx + 24.0),
            px(ly - 4.0),
            series_colour(*i).hex(),
            series_dash(*i)
        )?;
        text(out, lx + 30.0, ly, "start", "legend-label", label)?;
        out.write_str("</g>")?;
    }
    let any_band = series
        .iter()
        .any(|s| s.2.iter().any(|st| st.band.is_some()));
    let any_cens = series.iter().any(|s| !s.3.is_empty());
    let note = match (any_cens, any_band) {
        (true, true) => format!("{}; {}", words.censored, words.band),
        (true, false) => words.censored.clone(),
        (false, true) => words.band.clone(),
        (false, false) => return Ok(()),
    };
    let ny = top + series.len().div_ceil(LEGEND_COLS) as f64 * LEGEND_ROW;
    write!(
        out,
        "<text class=\"legend-note\" x=\"{}\" y=\"{}\" fill=\"{}\">{}</text>",
        px(LEFT),
        px(ny),
        TEXT_MUTED.hex(),
        escape(&note)
    )
}

#[cfg(test)]
mod tests;
