//! The preview image of one event for the field sheet: a square PNG in a local
//! equirectangular projection around the event's centroid (east metres = Δλ·cos φ₀·R,
//! north metres = Δφ·R, R the mean Earth radius; plenty for a few kilometres), north up.
//!
//! Drawn in this order: white background and a thin frame; each alert pixel as a square of
//! its size, filled with its source's [`FillStyle`]; the footprint outline (dark grey, two
//! pixels; holes too); the centroid as a black cross with a white halo; a north arrow with an
//! `N` (top right); a scale bar of a round length (1-2-5 steps from 10 m) with its label
//! (bottom left). Drawing uses only the built-in 5×7 font, so no font file is needed; the
//! same input always gives the same PNG bytes.

use geo::LineString;
use groundproof_sync::bundle::BundleEvent;

use super::SheetError;
use super::font::{GLYPH_H, draw_text, text_width};
use super::palette::SourcePalette;
use super::raster::Canvas;

/// Mean Earth radius R₁ of GRS 80, metres (the one radius both sides share).
pub use groundproof_sync::geodesy::MEAN_RADIUS_M as EARTH_MEAN_RADIUS_M;
/// Smallest preview accepted, pixels per side.
pub const MIN_PREVIEW_PX: u32 = 64;
/// Largest preview accepted, pixels per side (our choice: 2048² RGB is 12 MiB in memory).
pub const MAX_PREVIEW_PX: u32 = 2048;
/// Most alert pixels drawn in one preview (our choice; a 1 000 ha event at 10 m is 100 000).
pub const MAX_PREVIEW_PIXELS: usize = 200_000;
/// The view is never narrower than this half-width around the centroid, metres (our
/// choice: keeps a one-pixel event readable and the scale bar at least 50 m).
pub const MIN_HALF_EXTENT_M: f64 = 100.0;
/// The view is never wider than this half-width, metres (our choice: anything farther is
/// clipped rather than shrinking the event to a dot).
pub const MAX_HALF_EXTENT_M: f64 = 50_000.0;
/// Share of the half-width left free around the drawn geometry (our choice: keeps the corners
/// free for the north arrow and the scale bar).
pub const MARGIN_FACTOR: f64 = 1.25;

/// Background colour.
pub const BACKGROUND: [u8; 3] = [255, 255, 255];
/// Colour of the centroid cross.
pub const MARKER: [u8; 3] = [0, 0, 0];
/// Colour of the footprint outline.
pub const OUTLINE: [u8; 3] = [85, 85, 85];
/// Colour of the frame, north arrow, scale bar and labels.
pub const INK: [u8; 3] = [34, 34, 34];
/// Colour of the frame.
pub const FRAME: [u8; 3] = [136, 136, 136];

/// One alert pixel to draw.
#[derive(Debug, Clone, PartialEq)]
pub struct PreviewPixel {
    /// Pixel centre longitude (WGS 84 degrees).
    pub lon: f64,
    /// Pixel centre latitude (WGS 84 degrees).
    pub lat: f64,
    /// Pixel side, metres.
    pub size_m: f64,
    /// Source name, e.g. `optical-10m`.
    pub source: String,
}

/// Local equirectangular projection around a centre, to image pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LocalView {
    lon0: f64,
    lat0: f64,
    cos_lat0: f64,
    metres_per_px: f64,
    centre_px: f64,
}

impl LocalView {
    /// Metres east and north of the centre (longitude difference wrapped to ±180°).
    pub fn metres(&self, lon: f64, lat: f64) -> (f64, f64) {
        let dlon = (lon - self.lon0 + 540.0).rem_euclid(360.0) - 180.0;
        let k = EARTH_MEAN_RADIUS_M * std::f64::consts::PI / 180.0;
        (dlon * self.cos_lat0 * k, (lat - self.lat0) * k)
    }

    /// Image position (pixel units, y down) of a longitude/latitude.
    pub fn to_px(&self, lon: f64, lat: f64) -> (f64, f64) {
        let (x, y) = self.metres(lon, lat);
        (
            self.centre_px + x / self.metres_per_px,
            self.centre_px - y / self.metres_per_px,
        )
    }

    /// Ground metres per image pixel.
    pub fn metres_per_px(&self) -> f64 {
        self.metres_per_px
    }
}

/// The view that fits the footprint and the pixels of `event` into `size_px`, centred on the
/// centroid, with [`MARGIN_FACTOR`] to spare, clamped to
/// [[`MIN_HALF_EXTENT_M`], [`MAX_HALF_EXTENT_M`]].
pub fn fit_view(event: &BundleEvent, pixels: &[PreviewPixel], size_px: u32) -> LocalView {
    let (lon0, lat0) = (event.centroid.x(), event.centroid.y());
    let mut view = LocalView {
        lon0,
        lat0,
        cos_lat0: lat0.to_radians().cos().abs(),
        metres_per_px: 1.0,
        centre_px: f64::from(size_px) / 2.0,
    };
    let mut reach: f64 = 0.0;
    let mut grow = |(x, y): (f64, f64), pad: f64| {
        let r = x.abs().max(y.abs()) + pad;
        if r.is_finite() {
            reach = reach.max(r);
        }
    };
    for ring in rings(event) {
        for c in &ring.0 {
            grow(view.metres(c.x, c.y), 0.0);
        }
    }
    for p in pixels {
        let pad = if p.size_m.is_finite() {
            p.size_m.max(0.0) / 2.0
        } else {
            0.0
        };
        grow(view.metres(p.lon, p.lat), pad);
    }
    let half = (reach * MARGIN_FACTOR).clamp(MIN_HALF_EXTENT_M, MAX_HALF_EXTENT_M);
    view.metres_per_px = 2.0 * half / f64::from(size_px.max(1));
    view
}

fn rings(event: &BundleEvent) -> impl Iterator<Item = &LineString<f64>> {
    event
        .footprint
        .0
        .iter()
        .flat_map(|p| std::iter::once(p.exterior()).chain(p.interiors()))
}

/// The longest round length (10, 20, 50, 100, 200, 500 m, 1 km, 2 km, ...) that is at most
/// `max_m`; 10 m when `max_m` is smaller.
pub fn round_scale_length(max_m: f64) -> f64 {
    let mut best = 10.0;
    let mut decade = 10.0;
    while decade <= 1e7 {
        for step in [1.0, 2.0, 5.0] {
            let len = decade * step;
            if len <= max_m {
                best = len;
            }
        }
        decade *= 10.0;
    }
    best
}

/// Label of a scale length: `500 m`, `1 km`, `2 km`.
pub fn scale_label(length_m: f64) -> String {
    if length_m >= 1000.0 {
        format!("{} km", (length_m / 1000.0).round())
    } else {
        format!("{} m", length_m.round())
    }
}

/// Renders the preview of `event` with one colour per source taken from the event's own
/// sources (see [`render_preview_with_palette`] to share one palette across a sheet).
pub fn render_preview(
    event: &BundleEvent,
    pixels: &[PreviewPixel],
    size_px: u32,
) -> Result<Vec<u8>, SheetError> {
    render_preview_with_palette(event, pixels, size_px, &SourcePalette::new(&event.sources))
}

/// Renders the preview of `event` as a `size_px`×`size_px` PNG, colouring the alert pixels
/// by `palette`. Fails on a size outside [[`MIN_PREVIEW_PX`], [`MAX_PREVIEW_PX`]], more than
/// [`MAX_PREVIEW_PIXELS`] pixels, or a centroid that is not a finite position. Alert pixels
/// and vertices that are not finite are skipped.
pub fn render_preview_with_palette(
    event: &BundleEvent,
    pixels: &[PreviewPixel],
    size_px: u32,
    palette: &SourcePalette,
) -> Result<Vec<u8>, SheetError> {
    if !(MIN_PREVIEW_PX..=MAX_PREVIEW_PX).contains(&size_px) {
        return Err(SheetError::InvalidInput(format!(
            "preview size {size_px} px is not in {MIN_PREVIEW_PX}..={MAX_PREVIEW_PX}"
        )));
    }
    if pixels.len() > MAX_PREVIEW_PIXELS {
        return Err(SheetError::InvalidInput(format!(
            "event {}: {} alert pixels, more than {MAX_PREVIEW_PIXELS}",
            event.code,
            pixels.len()
        )));
    }
    let (cx, cy) = (event.centroid.x(), event.centroid.y());
    if !(cx.is_finite() && cy.is_finite() && (-90.0..=90.0).contains(&cy)) {
        return Err(SheetError::InvalidInput(format!(
            "event {}: centroid ({cx}, {cy}) is not a position",
            event.code
        )));
    }
    let view = fit_view(event, pixels, size_px);
    let mut canvas = Canvas::new(size_px, size_px, BACKGROUND);
    let last = i64::from(size_px) - 1;
    // Thickness unit: 1 px up to 255 px, 2 px up to 511 px, ...
    let unit = (size_px / 256).max(1);

    draw_pixels(&mut canvas, &view, pixels, palette);
    for ring in rings(event) {
        for seg in ring.0.windows(2) {
            let a = view.to_px(seg[0].x, seg[0].y);
            let b = view.to_px(seg[1].x, seg[1].y);
            canvas.thick_line(a, b, 2 * unit, OUTLINE);
        }
    }
    draw_centroid(&mut canvas, view.to_px(cx, cy), (size_px / 40).max(4), unit);
    draw_north_arrow(&mut canvas, unit);
    draw_scale_bar(&mut canvas, &view, unit);
    for (x0, y0, x1, y1) in [(0, 0, last, 0), (0, last, last, last), (0, 0, 0, last)] {
        canvas.fill_rect(x0, y0, x1, y1, FRAME);
    }
    canvas.fill_rect(last, 0, last, last, FRAME);
    canvas.to_png()
}

fn draw_pixels(
    canvas: &mut Canvas,
    view: &LocalView,
    pixels: &[PreviewPixel],
    palette: &SourcePalette,
) {
    // Draw in palette order (unknown sources first) so that overlaps do not depend on the
    // input order; the sort is stable.
    let mut order: Vec<&PreviewPixel> = pixels
        .iter()
        .filter(|p| p.lon.is_finite() && p.lat.is_finite())
        .collect();
    order.sort_by_key(|p| palette.index(&p.source).map_or(0, |i| i + 1));
    for p in order {
        let style = palette.style(&p.source);
        let (x, y) = view.to_px(p.lon, p.lat);
        let size = if p.size_m.is_finite() {
            p.size_m.max(0.0)
        } else {
            0.0
        };
        let half = size / view.metres_per_px() / 2.0;
        let lim = |v: f64| v.clamp(-1e6, 1e6).floor() as i64;
        let (x0, x1) = (lim(x - half), lim(x + half - 1e-9).max(lim(x - half)));
        let (y0, y1) = (lim(y - half), lim(y + half - 1e-9).max(lim(y - half)));
        canvas.fill_rect_with(x0, y0, x1, y1, |px, py| style.paint(px, py));
    }
}

fn draw_centroid(canvas: &mut Canvas, (x, y): (f64, f64), arm: u32, unit: u32) {
    let (x, y) = (
        x.clamp(-1e6, 1e6).floor() as i64,
        y.clamp(-1e6, 1e6).floor() as i64,
    );
    let u = i64::from(unit);
    let (arm, half) = (i64::from(arm), u);
    // White halo one unit around the cross, then the cross.
    canvas.fill_rect(
        x - arm - u,
        y - half - u,
        x + arm + u,
        y + half + u,
        BACKGROUND,
    );
    canvas.fill_rect(
        x - half - u,
        y - arm - u,
        x + half + u,
        y + arm + u,
        BACKGROUND,
    );
    canvas.fill_rect(x - arm, y - half, x + arm, y + half, MARKER);
    canvas.fill_rect(x - half, y - arm, x + half, y + arm, MARKER);
}

fn draw_north_arrow(canvas: &mut Canvas, unit: u32) {
    let size = i64::from(canvas.width());
    let u = i64::from(unit);
    let scale = text_scale(canvas.width()) + 1;
    let pad = 6 * u;
    let letter_h = i64::from(GLYPH_H * scale);
    let letter_w = i64::from(text_width("N", scale));
    let arrow_len = size / 10;
    let head = arrow_len * 2 / 5;
    let head_half = (head / 2).max(3);
    let box_w = letter_w.max(2 * head_half) + 4 * u;
    let (x1, y0) = (size - pad, pad);
    let x0 = x1 - box_w;
    let y1 = y0 + letter_h + 3 * u + arrow_len + 2 * u;
    canvas.fill_rect(x0, y0, x1, y1, BACKGROUND);
    let mid = (x0 + x1) / 2;
    draw_text(canvas, mid - letter_w / 2, y0 + u, "N", scale, INK);
    let tip = y0 + letter_h + 3 * u;
    let (midf, tipf, headf) = (mid as f64 + 0.5, tip as f64, (tip + head) as f64);
    let hh = head_half as f64;
    canvas.fill_triangle([(midf, tipf), (midf - hh, headf), (midf + hh, headf)], INK);
    canvas.thick_line(
        (midf, headf),
        (midf, (tip + arrow_len) as f64),
        2 * unit,
        INK,
    );
}

/// Font scale of labels: 1 below 320 px, 2 from 320 px, 3 from 480 px, ...
fn text_scale(size_px: u32) -> u32 {
    (size_px / 160).max(1)
}

fn draw_scale_bar(canvas: &mut Canvas, view: &LocalView, unit: u32) {
    let size = i64::from(canvas.width());
    let u = i64::from(unit);
    let pad = 6 * u;
    let max_len_px = (size as f64) * 0.3;
    let length_m = round_scale_length(max_len_px * view.metres_per_px());
    let len_px = (length_m / view.metres_per_px()).round() as i64;
    let label = scale_label(length_m);
    let scale = text_scale(canvas.width());
    let label_h = i64::from(GLYPH_H * scale);
    let label_w = i64::from(text_width(&label, scale));
    let x0 = pad + 2 * u;
    let bar_y = size - pad - 2 * u;
    let top = bar_y - 4 * u - label_h - 3 * u;
    canvas.fill_rect(
        pad,
        top - u,
        x0 + len_px.max(label_w) + 2 * u,
        size - pad,
        BACKGROUND,
    );
    draw_text(canvas, x0, top, &label, scale, INK);
    canvas.fill_rect(x0, bar_y - u + 1, x0 + len_px, bar_y, INK);
    for x in [x0, x0 + len_px] {
        canvas.fill_rect(x - u + 1, bar_y - 4 * u, x, bar_y, INK);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_lengths() {
        // The 1-2-5 series of map scale bars (common practice).
        assert_eq!(round_scale_length(5.0), 10.0);
        assert_eq!(round_scale_length(19.9), 10.0);
        assert_eq!(round_scale_length(20.0), 20.0);
        assert_eq!(round_scale_length(99.0), 50.0);
        assert_eq!(round_scale_length(480.0), 200.0);
        assert_eq!(round_scale_length(1999.0), 1000.0);
        assert_eq!(round_scale_length(7500.0), 5000.0);
        assert_eq!(scale_label(50.0), "50 m");
        assert_eq!(scale_label(500.0), "500 m");
        assert_eq!(scale_label(1000.0), "1 km");
        assert_eq!(scale_label(20000.0), "20 km");
    }

    #[test]
    fn projection_metres() {
        // One degree of latitude on a sphere of radius R is R·π/180 = 111 195.08 m
        // (6 371 008.8 × 0.017453293); one degree of longitude at 60° is half of that.
        let view = LocalView {
            lon0: 10.0,
            lat0: 60.0,
            cos_lat0: 60f64.to_radians().cos(),
            metres_per_px: 10.0,
            centre_px: 50.0,
        };
        let (x, y) = view.metres(11.0, 61.0);
        assert!((y - 111_195.08).abs() < 0.01, "{y}");
        assert!((x - 55_597.54).abs() < 0.01, "{x}");
        // Across the antimeridian: 179.9 -> -179.9 is +0.2° east.
        let view = LocalView {
            lon0: 179.9,
            lat0: 0.0,
            cos_lat0: 1.0,
            ..view
        };
        let (x, _) = view.metres(-179.9, 0.0);
        assert!((x - 0.2 * 111_195.08).abs() < 0.01, "{x}");
        // North is up: a point north of the centre has a smaller row.
        assert!(view.to_px(179.9, 0.001).1 < 50.0);
    }
}
