//! Axes: "nice" tick steps (1, 2 or 5 times a power of ten, after Heckbert,
//! "Nice numbers for graph labels", Graphics Gems, 1990), number labels,
//! a linear scale, and the drawing of gridded value axes shared by the
//! line and bar charts.

use super::palette::{AXIS, GRID};
use super::svg::{px, text};
use std::fmt::{self, Write};

/// Most ticks any axis will carry, whatever the caller asks.
const MAX_TICKS: usize = 50;

/// The smallest step of the form {1, 2, 5} x 10^k that covers `span` in at
/// most `max_ticks` intervals. Returns 1 for an empty or non-finite span.
pub fn nice_step(span: f64, max_ticks: usize) -> f64 {
    let n = max_ticks.clamp(1, MAX_TICKS) as f64;
    if !span.is_finite() || span <= 0.0 {
        return 1.0;
    }
    let raw = span / n;
    let mag = 10f64.powf(raw.log10().floor());
    for m in [1.0, 2.0, 5.0, 10.0] {
        let step = m * mag;
        // Small tolerance so 100 / 5 gives 20, not 50, under rounding.
        if step * n >= span * (1.0 - 1e-9) {
            return step;
        }
    }
    10.0 * mag
}

/// Tick values covering `[min, max]`: multiples of `nice_step` from at or
/// below `min` to at or above `max`. A zero span is widened to one unit.
pub fn nice_ticks(min: f64, max: f64, max_ticks: usize) -> Vec<f64> {
    let (mut lo, mut hi) = match (min.is_finite(), max.is_finite()) {
        (true, true) if min <= max => (min, max),
        (true, true) => (max, min),
        _ => (0.0, 1.0),
    };
    if hi - lo <= f64::EPSILON * hi.abs().max(1.0) {
        // A single value: show it against zero (or 0 to 1 for zero itself).
        (lo, hi) = (lo.min(0.0), hi.max(0.0));
        if hi - lo <= f64::EPSILON {
            hi = lo + 1.0;
        }
    }
    let step = nice_step(hi - lo, max_ticks);
    let first = (lo / step + 1e-9).floor() as i64;
    let last = (hi / step - 1e-9).ceil() as i64;
    let count = (last - first).clamp(0, MAX_TICKS as i64 * 2);
    // Round to the step's decimals to kill residue such as 0.6000000000000001.
    let decimals = if step < 1.0 {
        (-step.log10().floor()).min(300.0)
    } else {
        0.0
    };
    let unit = 10f64.powf(decimals);
    (0..=count)
        .map(|i| {
            let r = ((first + i) as f64 * step * unit).round() / unit;
            if r == 0.0 { 0.0 } else { r }
        })
        .collect()
}

/// A number for a label with as many decimals as `step` needs (none for
/// steps of 1 and up), never printing "-0".
pub fn format_number(v: f64, step: f64) -> String {
    if !v.is_finite() {
        return String::from("–");
    }
    let decimals = if step.is_finite() && step > 0.0 && step < 1.0 {
        (-step.log10().floor()).clamp(0.0, 6.0) as usize
    } else {
        0
    };
    let s = format!("{v:.decimals$}");
    if s.trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        s.trim_start_matches('-').to_string()
    } else {
        s
    }
}

/// A linear map from a data domain to a pixel range.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Scale {
    pub d0: f64,
    pub d1: f64,
    pub r0: f64,
    pub r1: f64,
}

impl Scale {
    pub fn map(&self, v: f64) -> f64 {
        let span = self.d1 - self.d0;
        if span.abs() < f64::MIN_POSITIVE || !v.is_finite() {
            return self.r0;
        }
        let t = ((v - self.d0) / span).clamp(0.0, 1.0);
        self.r0 + t * (self.r1 - self.r0)
    }
}

/// Ticks step (difference of the first two ticks, or 1).
pub(crate) fn step_of(ticks: &[f64]) -> f64 {
    match ticks {
        [a, b, ..] => b - a,
        _ => 1.0,
    }
}

/// A vertical value axis at `x0` with horizontal gridlines to `x1`, tick
/// labels and a rotated axis title.
pub(crate) fn y_axis(
    out: &mut String,
    y: Scale,
    ticks: &[f64],
    (x0, x1): (f64, f64),
    title: &str,
) -> fmt::Result {
    let step = step_of(ticks);
    for &t in ticks {
        let ty = y.map(t);
        write!(
            out,
            "<line class=\"grid\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\"/>",
            px(x0),
            px(ty),
            px(x1),
            px(ty),
            GRID.hex()
        )?;
        text(
            out,
            x0 - 6.0,
            ty + 4.0,
            "end",
            "tick",
            &format_number(t, step),
        )?;
    }
    axis_line(out, (x0, y.r0), (x0, y.r1))?;
    let mid = (y.r0 + y.r1) / 2.0;
    write!(out, "<g transform=\"rotate(-90 16 {m})\">", m = px(mid))?;
    text(out, 16.0, mid, "middle", "axis-title", title)?;
    out.write_str("</g>")
}

/// A horizontal value axis at `y0` with vertical gridlines up to `y1`, tick
/// labels and a title centred below.
pub(crate) fn x_axis(
    out: &mut String,
    x: Scale,
    ticks: &[f64],
    (y0, y1): (f64, f64),
    title: &str,
) -> fmt::Result {
    let step = step_of(ticks);
    for &t in ticks {
        let tx = x.map(t);
        write!(
            out,
            "<line class=\"grid\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\"/>",
            px(tx),
            px(y1),
            px(tx),
            px(y0),
            GRID.hex()
        )?;
        text(
            out,
            tx,
            y0 + 16.0,
            "middle",
            "tick",
            &format_number(t, step),
        )?;
    }
    axis_line(out, (x.r0, y0), (x.r1, y0))?;
    text(
        out,
        (x.r0 + x.r1) / 2.0,
        y0 + 34.0,
        "middle",
        "axis-title",
        title,
    )
}

/// A plain axis line.
pub(crate) fn axis_line(out: &mut String, a: (f64, f64), b: (f64, f64)) -> fmt::Result {
    write!(
        out,
        "<line class=\"axis\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{}\"/>",
        px(a.0),
        px(a.1),
        px(b.0),
        px(b.1),
        AXIS.hex()
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn steps_are_one_two_five() {
        // Expected steps worked by hand from Heckbert's 1-2-5 rule (Graphics Gems, 1990).
        assert_eq!(nice_step(97.0, 5), 20.0);
        assert_eq!(nice_step(100.0, 5), 20.0);
        assert_eq!(nice_step(101.0, 5), 50.0);
        assert_eq!(nice_step(1.0, 5), 0.2);
        assert_eq!(nice_step(7.0, 10), 1.0);
        assert_eq!(nice_step(0.0, 5), 1.0);
        assert_eq!(nice_step(f64::NAN, 5), 1.0);
    }

    #[test]
    fn ticks_cover_the_range() {
        assert_eq!(
            nice_ticks(0.0, 97.0, 5),
            vec![0.0, 20.0, 40.0, 60.0, 80.0, 100.0]
        );
        assert_eq!(nice_ticks(0.0, 1.0, 5), vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
        assert_eq!(nice_ticks(3.0, 3.0, 5), vec![0.0, 1.0, 2.0, 3.0]);
        assert_eq!(nice_ticks(0.0, 0.0, 5), vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
        assert_eq!(nice_ticks(f64::INFINITY, 2.0, 5).len(), 6);
        assert!(nice_ticks(0.0, 1e300, 1000).len() <= 2 * MAX_TICKS + 1);
    }

    #[test]
    fn numbers_use_needed_decimals() {
        assert_eq!(format_number(0.6000000001, 0.2), "0.6");
        assert_eq!(format_number(40.0, 20.0), "40");
        assert_eq!(format_number(-0.0, 0.1), "0.0");
        assert_eq!(format_number(0.05, 0.05), "0.05");
    }

    #[test]
    fn scale_maps_and_clamps() {
        let s = Scale {
            d0: 0.0,
            d1: 10.0,
            r0: 100.0,
            r1: 0.0,
        };
        assert_eq!(s.map(5.0), 50.0);
        assert_eq!(s.map(20.0), 0.0);
        assert_eq!(s.map(f64::NAN), 100.0);
    }
}
