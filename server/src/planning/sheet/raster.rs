//! A small RGB canvas with the few drawing operations the preview images need: clipped
//! pixels, filled rectangles, Bresenham lines clipped to the canvas first (Liang–Barsky),
//! thick lines, filled triangles, and PNG encoding. Every operation clips, so drawing with
//! coordinates far outside the canvas is cheap and never panics.

use image::{ImageEncoder, RgbImage, codecs::png::PngEncoder};

use super::SheetError;

/// An RGB image being drawn.
#[derive(Debug, Clone)]
pub struct Canvas {
    img: RgbImage,
}

impl Canvas {
    /// A `width`×`height` canvas filled with `background`.
    pub fn new(width: u32, height: u32, background: [u8; 3]) -> Self {
        Canvas {
            img: RgbImage::from_pixel(width, height, image::Rgb(background)),
        }
    }

    /// Width in pixels.
    pub fn width(&self) -> u32 {
        self.img.width()
    }

    /// Height in pixels.
    pub fn height(&self) -> u32 {
        self.img.height()
    }

    /// Colour at (`x`, `y`), `None` outside the canvas.
    pub fn get(&self, x: i64, y: i64) -> Option<[u8; 3]> {
        let (x, y) = (u32::try_from(x).ok()?, u32::try_from(y).ok()?);
        self.img.get_pixel_checked(x, y).map(|p| p.0)
    }

    /// Sets one pixel; outside the canvas nothing happens.
    pub fn set(&mut self, x: i64, y: i64, colour: [u8; 3]) {
        if let (Ok(x), Ok(y)) = (u32::try_from(x), u32::try_from(y))
            && let Some(p) = self.img.get_pixel_mut_checked(x, y)
        {
            p.0 = colour;
        }
    }

    /// Fills the rectangle with corners (`x0`, `y0`) and (`x1`, `y1`), both inclusive.
    pub fn fill_rect(&mut self, x0: i64, y0: i64, x1: i64, y1: i64, colour: [u8; 3]) {
        self.fill_rect_with(x0, y0, x1, y1, |_, _| colour);
    }

    /// Fills the rectangle (corners inclusive) with a colour chosen per pixel by `paint(x, y)`.
    pub fn fill_rect_with(
        &mut self,
        x0: i64,
        y0: i64,
        x1: i64,
        y1: i64,
        paint: impl Fn(i64, i64) -> [u8; 3],
    ) {
        let (w, h) = (i64::from(self.width()), i64::from(self.height()));
        let (xa, xb) = (x0.min(x1).max(0), x0.max(x1).min(w - 1));
        let (ya, yb) = (y0.min(y1).max(0), y0.max(y1).min(h - 1));
        for y in ya..=yb {
            for x in xa..=xb {
                self.set(x, y, paint(x, y));
            }
        }
    }

    /// A one-pixel line between two points given in pixel units (pixel (i, j) covers
    /// [i, i+1) × [j, j+1)). The segment is first clipped to the canvas, then rasterised with
    /// Bresenham's algorithm.
    pub fn line(&mut self, a: (f64, f64), b: (f64, f64), colour: [u8; 3]) {
        let (w, h) = (f64::from(self.width()), f64::from(self.height()));
        let Some((a, b)) = clip_segment(a, b, (-1.0, -1.0), (w + 1.0, h + 1.0)) else {
            return;
        };
        // After clipping both ends lie within a few pixels of the canvas, so the casts are exact.
        let (mut x0, mut y0) = (a.0.floor() as i64, a.1.floor() as i64);
        let (x1, y1) = (b.0.floor() as i64, b.1.floor() as i64);
        let dx = (x1 - x0).abs();
        let dy = -(y1 - y0).abs();
        let sx = if x0 < x1 { 1 } else { -1 };
        let sy = if y0 < y1 { 1 } else { -1 };
        let mut err = dx + dy;
        loop {
            self.set(x0, y0, colour);
            if x0 == x1 && y0 == y1 {
                break;
            }
            let e2 = 2 * err;
            if e2 >= dy {
                err += dy;
                x0 += sx;
            }
            if e2 <= dx {
                err += dx;
                y0 += sy;
            }
        }
    }

    /// A line `width` pixels wide: the one-pixel line repeated at offsets across it.
    pub fn thick_line(&mut self, a: (f64, f64), b: (f64, f64), width: u32, colour: [u8; 3]) {
        let width = width.max(1);
        let half = f64::from(width - 1) / 2.0;
        let steep = (b.1 - a.1).abs() > (b.0 - a.0).abs();
        for k in 0..width {
            let off = f64::from(k) - half;
            let (ox, oy) = if steep { (off, 0.0) } else { (0.0, off) };
            self.line((a.0 + ox, a.1 + oy), (b.0 + ox, b.1 + oy), colour);
        }
    }

    /// Fills the triangle with the given corners (pixel units): every pixel whose centre lies
    /// inside or on the edges.
    pub fn fill_triangle(&mut self, p: [(f64, f64); 3], colour: [u8; 3]) {
        if p.iter().any(|(x, y)| !(x.is_finite() && y.is_finite())) {
            return;
        }
        let (w, h) = (f64::from(self.width()), f64::from(self.height()));
        let xmin = p.iter().map(|q| q.0).fold(f64::INFINITY, f64::min).max(0.0);
        let xmax = p
            .iter()
            .map(|q| q.0)
            .fold(f64::NEG_INFINITY, f64::max)
            .min(w);
        let ymin = p.iter().map(|q| q.1).fold(f64::INFINITY, f64::min).max(0.0);
        let ymax = p
            .iter()
            .map(|q| q.1)
            .fold(f64::NEG_INFINITY, f64::max)
            .min(h);
        if xmin > xmax || ymin > ymax {
            return;
        }
        let edge = |a: (f64, f64), b: (f64, f64), c: (f64, f64)| {
            (b.0 - a.0) * (c.1 - a.1) - (b.1 - a.1) * (c.0 - a.0)
        };
        let area = edge(p[0], p[1], p[2]);
        if area == 0.0 {
            return;
        }
        for y in (ymin.floor() as i64)..=(ymax.ceil() as i64) {
            for x in (xmin.floor() as i64)..=(xmax.ceil() as i64) {
                let c = (x as f64 + 0.5, y as f64 + 0.5);
                let w0 = edge(p[1], p[2], c) / area;
                let w1 = edge(p[2], p[0], c) / area;
                let w2 = edge(p[0], p[1], c) / area;
                if w0 >= 0.0 && w1 >= 0.0 && w2 >= 0.0 {
                    self.set(x, y, colour);
                }
            }
        }
    }

    /// The canvas as PNG bytes (default compression and filter; the same pixels always give
    /// the same bytes with the same `image` version).
    pub fn to_png(&self) -> Result<Vec<u8>, SheetError> {
        let mut out = Vec::new();
        PngEncoder::new(&mut out).write_image(
            self.img.as_raw(),
            self.width(),
            self.height(),
            image::ExtendedColorType::Rgb8,
        )?;
        Ok(out)
    }
}

/// Clips segment `a`–`b` to the box [`lo`, `hi`] (Liang–Barsky); `None` when it lies
/// outside or has a non-finite end.
pub fn clip_segment(
    a: (f64, f64),
    b: (f64, f64),
    lo: (f64, f64),
    hi: (f64, f64),
) -> Option<((f64, f64), (f64, f64))> {
    if ![a.0, a.1, b.0, b.1].iter().all(|v| v.is_finite()) {
        return None;
    }
    let (dx, dy) = (b.0 - a.0, b.1 - a.1);
    let (mut t0, mut t1) = (0.0_f64, 1.0_f64);
    for (p, q) in [
        (-dx, a.0 - lo.0),
        (dx, hi.0 - a.0),
        (-dy, a.1 - lo.1),
        (dy, hi.1 - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                t0 = t0.max(r);
            } else {
                t1 = t1.min(r);
            }
            if t0 > t1 {
                return None;
            }
        }
    }
    Some((
        (a.0 + t0 * dx, a.1 + t0 * dy),
        (a.0 + t1 * dx, a.1 + t1 * dy),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    const W: [u8; 3] = [255, 255, 255];
    const K: [u8; 3] = [0, 0, 0];

    fn count(c: &Canvas, colour: [u8; 3]) -> usize {
        let mut n = 0;
        for y in 0..i64::from(c.height()) {
            for x in 0..i64::from(c.width()) {
                if c.get(x, y) == Some(colour) {
                    n += 1;
                }
            }
        }
        n
    }

    #[test]
    fn bresenham_lines() {
        // A horizontal line from pixel 2 to pixel 7 sets 6 pixels; a 45° diagonal from
        // (0,0) to (4,4) sets 5 pixels (one per column; Bresenham 1965).
        let mut c = Canvas::new(10, 10, W);
        c.line((2.5, 3.5), (7.5, 3.5), K);
        assert_eq!(count(&c, K), 6);
        assert_eq!(c.get(2, 3), Some(K));
        assert_eq!(c.get(7, 3), Some(K));
        let mut c = Canvas::new(10, 10, W);
        c.line((0.5, 0.5), (4.5, 4.5), K);
        assert_eq!(count(&c, K), 5);
        assert!((0..5).all(|i| c.get(i, i) == Some(K)));
    }

    #[test]
    fn far_away_lines_are_clipped_cheaply() {
        let mut c = Canvas::new(10, 10, W);
        c.line((-1e12, 5.5), (1e12, 5.5), K);
        assert_eq!(count(&c, K), 10);
        c.line((-1e12, -1e12), (-1e11, -5.0), K);
        c.line((f64::NAN, 0.0), (3.0, 3.0), K);
        assert_eq!(count(&c, K), 10);
    }

    #[test]
    fn liang_barsky_clip() {
        // Segment (-5,5)-(15,5) clipped to [0,10]^2 gives (0,5)-(10,5) (worked by hand).
        let (a, b) = clip_segment((-5.0, 5.0), (15.0, 5.0), (0.0, 0.0), (10.0, 10.0))
            .expect("crosses the box");
        assert_eq!((a, b), ((0.0, 5.0), (10.0, 5.0)));
        assert!(clip_segment((-5.0, -5.0), (-1.0, 20.0), (0.0, 0.0), (10.0, 10.0)).is_none());
    }

    #[test]
    fn rectangles_and_triangles() {
        let mut c = Canvas::new(10, 10, W);
        c.fill_rect(8, 8, 20, 20, K);
        assert_eq!(count(&c, K), 4);
        let mut c = Canvas::new(10, 10, W);
        // Right triangle with legs of 4 px: the pixel centres strictly inside or on the
        // hypotenuse number 4+3+2+1 = 10 (worked by hand).
        c.fill_triangle([(0.0, 0.0), (4.0, 0.0), (0.0, 4.0)], K);
        assert_eq!(count(&c, K), 10);
    }

    #[test]
    fn png_round_trip() {
        let mut c = Canvas::new(7, 5, W);
        c.set(3, 2, K);
        let png = c.to_png().expect("encodes");
        let img = image::load_from_memory(&png).expect("decodes").to_rgb8();
        assert_eq!(img.dimensions(), (7, 5));
        assert_eq!(img.get_pixel(3, 2).0, K);
        assert_eq!(img.get_pixel(0, 0).0, W);
        assert_eq!(png, c.to_png().expect("encodes"), "deterministic bytes");
    }
}
