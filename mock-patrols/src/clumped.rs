//! Large synthetic alert point sets for clustering benchmarks.
//!
//! Follows the generator described in the project's performance notes
//! (section 2): points on a square pixel grid with its south-west corner at
//! (-60, -3); 90% of them in random-walk blobs of 5-500 pixels (log-uniform
//! sizes) with 10% of each blob's pixels dropped; 70% of the blobs around
//! hotspots (Gaussian, sigma 500 pixels); 10% scattered single pixels; each
//! blob gets a base day in a two-year span and each pixel base + Exp(mean 7
//! days), capped at 60 days; the point order is shuffled. The square grows
//! with the point count (20,000 pixels a side at 1M points, about 200 km at
//! 10 m), so the density stays about the same.

use rand::seq::SliceRandom;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::fasthash::GridSet;

const ORIGIN: (f64, f64) = (-60.0, -3.0);
/// Side in pixels at one million points.
const SIDE_AT_1M: f64 = 20_000.0;
/// Hotspots at one million points; scaled with the area.
const HOTSPOTS_AT_1M: f64 = 60.0;
const HOTSPOT_SIGMA_PX: f64 = 500.0;
const DAYS_SPAN: i32 = 730;

/// One standard normal deviate (Box-Muller transform).
fn normal(rng: &mut ChaCha8Rng) -> f64 {
    let u1 = 1.0 - rng.random::<f64>(); // in (0, 1]
    let u2: f64 = rng.random();
    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
}

/// `n` points (lon, lat, day) in clumped blobs on a grid of `pixel_deg`
/// degrees. Returns an empty set when `n` is 0 or `pixel_deg` is not a
/// positive finite number. Same seed, same points.
pub fn clumped_points(seed: u64, n: usize, pixel_deg: f64) -> Vec<(f64, f64, i32)> {
    if n == 0 || !(pixel_deg.is_finite() && pixel_deg > 0.0) {
        return Vec::new();
    }
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let scale = n as f64 / 1e6;
    let side = (SIDE_AT_1M * scale.sqrt()).max(100.0);
    let sigma = HOTSPOT_SIGMA_PX.min(side / 4.0);
    let hotspots: Vec<(f64, f64)> = (0..((HOTSPOTS_AT_1M * scale).round() as usize).max(1))
        .map(|_| (rng.random::<f64>() * side, rng.random::<f64>() * side))
        .collect();
    let in_blobs = n - n / 10;
    let mut cells: Vec<(i64, i64, i32)> = Vec::with_capacity(n);
    let mut seen: GridSet<(i64, i64)> = GridSet::default();
    let (ln_min, ln_max) = (5f64.ln(), 500f64.ln());
    while cells.len() < in_blobs {
        let size = rng.random_range(ln_min..ln_max).exp().round() as usize;
        let (cx, cy) = if rng.random_bool(0.7) {
            let h = hotspots[rng.random_range(0..hotspots.len())];
            (
                h.0 + sigma * normal(&mut rng),
                h.1 + sigma * normal(&mut rng),
            )
        } else {
            (rng.random::<f64>() * side, rng.random::<f64>() * side)
        };
        let mut at = (
            cx.clamp(0.0, side - 1.0) as i64,
            cy.clamp(0.0, side - 1.0) as i64,
        );
        let base = rng.random_range(0..DAYS_SPAN);
        seen.clear();
        let mut visited = 0;
        let mut steps = 0;
        while visited < size && steps < size * 60 {
            if seen.insert(at) {
                visited += 1;
                if !rng.random_bool(0.1) && cells.len() < in_blobs {
                    let lag = (-7.0 * (1.0 - rng.random::<f64>()).ln()).min(60.0) as i32;
                    cells.push((at.0, at.1, base + lag));
                }
            }
            steps += 1;
            at = match rng.random_range(0..4u8) {
                0 => (at.0 + 1, at.1),
                1 => (at.0 - 1, at.1),
                2 => (at.0, at.1 + 1),
                _ => (at.0, at.1 - 1),
            };
        }
    }
    let side_px = side as i64;
    while cells.len() < n {
        cells.push((
            rng.random_range(0..side_px),
            rng.random_range(0..side_px),
            rng.random_range(0..DAYS_SPAN),
        ));
    }
    cells.shuffle(&mut rng);
    cells
        .into_iter()
        .map(|(x, y, d)| {
            (
                ORIGIN.0 + x as f64 * pixel_deg,
                ORIGIN.1 + y as f64 * pixel_deg,
                d,
            )
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn deterministic_and_sized() {
        let a = clumped_points(9, 20_000, 0.00009);
        assert_eq!(a.len(), 20_000);
        assert_eq!(a, clumped_points(9, 20_000, 0.00009));
        assert_ne!(a, clumped_points(10, 20_000, 0.00009));
        assert!(clumped_points(1, 0, 0.00009).is_empty());
        assert!(clumped_points(1, 10, f64::NAN).is_empty());
        assert!(clumped_points(1, 10, -1.0).is_empty());
    }

    #[test]
    fn points_on_grid_days_in_range() {
        let px = 0.00009;
        for &(lon, lat, d) in &clumped_points(3, 50_000, px) {
            let gx = (lon - ORIGIN.0) / px;
            let gy = (lat - ORIGIN.1) / px;
            assert!((gx - gx.round()).abs() < 1e-6 && (gy - gy.round()).abs() < 1e-6);
            // Base day < 730, lag capped at 60 (performance.md section 2).
            assert!((0..DAYS_SPAN + 60).contains(&d));
        }
    }

    #[test]
    fn points_are_clumped() {
        // Most points have a 4-neighbour pixel in the set; uniform points at
        // this density (2.5e-3 per pixel) almost never would.
        let px = 0.00009;
        let pts = clumped_points(4, 100_000, px);
        let set: std::collections::HashSet<(i64, i64)> = pts
            .iter()
            .map(|p| {
                (
                    ((p.0 - ORIGIN.0) / px).round() as i64,
                    ((p.1 - ORIGIN.1) / px).round() as i64,
                )
            })
            .collect();
        let with_neighbour = set
            .iter()
            .filter(|&&(x, y)| {
                [(1, 0), (-1, 0), (0, 1), (0, -1)]
                    .iter()
                    .any(|(dx, dy)| set.contains(&(x + dx, y + dy)))
            })
            .count();
        assert!(
            with_neighbour as f64 > 0.8 * set.len() as f64,
            "{with_neighbour} of {}",
            set.len()
        );
    }

    #[test]
    fn density_stays_about_constant() {
        let px = 0.00009;
        let extent = |n| {
            let pts = clumped_points(5, n, px);
            let max_lon = pts.iter().map(|p| p.0).fold(f64::MIN, f64::max);
            (max_lon - ORIGIN.0) / px
        };
        let (a, b) = (extent(10_000), extent(40_000));
        // Four times the points, twice the side.
        assert!((b / a - 2.0).abs() < 0.3, "{a} {b}");
    }
}
