//! The map's projection: equirectangular with x scaled by the cosine of the
//! centre latitude, fitted into the map area with a margin, plus the
//! haversine width behind the scale bar and the round scale lengths.

use super::axis::format_number;

pub(crate) const MAP_X0: f64 = 10.0;
pub(crate) const MAP_Y0: f64 = 36.0;
pub(crate) const MAP_W: f64 = 800.0 - 2.0 * MAP_X0;
/// Share of the data extent added on every side.
const MARGIN: f64 = 0.08;
/// The haversine width behind the scale bar (the one both sides share).
pub use groundproof_sync::geodesy::haversine_m;

/// A coordinate the map can draw: finite, on the globe, off the poles.
pub(crate) fn usable(p: (f64, f64)) -> bool {
    p.0.is_finite() && p.1.is_finite() && p.0.abs() <= 180.0 && p.1.abs() <= 85.0
}

/// The fitted equirectangular projection.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Frame {
    k: f64,
    x_min: f64,
    y_max: f64,
    s: f64,
    ox: f64,
    oy: f64,
    pub lat0: f64,
    pub height: f64,
}

impl Frame {
    /// Fit the points into the map area, keeping their shape.
    pub(crate) fn fit(points: &[(f64, f64)]) -> Option<Frame> {
        let first = points.first()?;
        let (mut lo, mut hi) = (*first, *first);
        for p in points {
            lo = (lo.0.min(p.0), lo.1.min(p.1));
            hi = (hi.0.max(p.0), hi.1.max(p.1));
        }
        let lat0 = (lo.1 + hi.1) / 2.0;
        let k = lat0.to_radians().cos().max(0.05);
        // At least about 200 m across, so one point still gives a sensible map.
        let min_extent = 0.002;
        let (mut dx, mut dy) = ((hi.0 - lo.0) * k, hi.1 - lo.1);
        let (cx, cy) = ((lo.0 + hi.0) / 2.0 * k, lat0);
        dx = dx.max(min_extent).max(dy * 0.05) * (1.0 + 2.0 * MARGIN);
        dy = dy.max(min_extent).max(dx * 0.05) * (1.0 + 2.0 * MARGIN);
        let height = (MAP_W * dy / dx).clamp(240.0, 760.0);
        let s = (MAP_W / dx).min(height / dy);
        Some(Frame {
            k,
            x_min: cx - dx / 2.0,
            y_max: cy + dy / 2.0,
            s,
            ox: MAP_X0 + (MAP_W - dx * s) / 2.0,
            oy: MAP_Y0 + (height - dy * s) / 2.0,
            lat0,
            height,
        })
    }

    pub(crate) fn project(&self, (lon, lat): (f64, f64)) -> (f64, f64) {
        (
            self.ox + (lon * self.k - self.x_min) * self.s,
            self.oy + (self.y_max - lat) * self.s,
        )
    }

    pub(crate) fn lon_at(&self, x: f64) -> f64 {
        ((x - self.ox) / self.s + self.x_min) / self.k
    }

    /// Metres per pixel along the centre parallel, from the haversine
    /// width of the map area at the centre latitude.
    pub(crate) fn metres_per_px(&self) -> f64 {
        let (a, b) = (self.lon_at(MAP_X0), self.lon_at(MAP_X0 + MAP_W));
        haversine_m((a, self.lat0), (b, self.lat0)) / MAP_W
    }
}

/// The largest 1-2-5 length in metres not longer than `max_m`.
pub fn scale_length_m(max_m: f64) -> f64 {
    if !max_m.is_finite() || max_m <= 0.0 {
        return 0.0;
    }
    let mag = 10f64.powf(max_m.log10().floor());
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|m| m * mag)
        .find(|v| *v <= max_m * (1.0 + 1e-9))
        .unwrap_or(mag)
}

/// "500 m", "2 km", "0.5 m".
pub fn scale_label(m: f64) -> String {
    if m >= 1000.0 {
        format!("{} km", format_number(m / 1000.0, m / 1000.0))
    } else {
        format!("{} m", format_number(m, m))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scale_lengths_and_labels() {
        // Worked by hand from the 1-2-5 rule (common practice for scale bars).
        assert_eq!(scale_length_m(2345.0), 2000.0);
        assert_eq!(scale_length_m(999.0), 500.0);
        assert_eq!(scale_length_m(1000.0), 1000.0);
        assert_eq!(scale_length_m(0.7), 0.5);
        assert_eq!(scale_length_m(f64::NAN), 0.0);
        assert_eq!(scale_label(2000.0), "2 km");
        assert_eq!(scale_label(500.0), "500 m");
        assert_eq!(scale_label(0.5), "0.5 m");
        // One degree of longitude on the equator of the IUGG mean sphere:
        // 2 * pi * 6371008.8 / 360 = 111195.08 m (hand computation).
        assert!((haversine_m((0.0, 0.0), (1.0, 0.0)) - 111_195.08).abs() < 0.01);
    }

    #[test]
    fn fit_keeps_points_inside_the_map_area() {
        let pts = [(20.0, 60.0), (20.3, 60.1), (19.9, 59.95)];
        let f = Frame::fit(&pts).expect("frame");
        for p in pts {
            let (x, y) = f.project(p);
            assert!((MAP_X0..=MAP_X0 + MAP_W).contains(&x));
            assert!((MAP_Y0..=MAP_Y0 + f.height).contains(&y));
        }
        assert!(Frame::fit(&[]).is_none());
    }
}
