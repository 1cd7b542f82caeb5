//! Single linkage of alert pixels in space and time.
//!
//! Two alerts are linked when their pixel centres lie within
//! `factor × max(pixel_a, pixel_b)` metres (great-circle distance on the
//! mean-radius sphere) and their detection days differ by at most the time
//! window. Events are the connected components of that graph, so as alerts
//! arrive events only grow or merge.
//!
//! The search is a sorted grid: every point gets a cell whose sides are at
//! least the longest link distance, points are sorted by cell so memory is
//! read in order, and each cell is compared with itself and four of its
//! eight neighbours (the other four compare with it). Union-find joins the
//! pairs. An R-tree was measured ten times slower for this job.
//!
//! Longitudes are not wrapped at ±180°: a clearing that straddles the
//! antimeridian is split in two.

use super::UnionFind;
use crate::domain::geodesy::MEAN_RADIUS_M;

/// One alert as the linker sees it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkPoint {
    pub lon: f64,
    pub lat: f64,
    /// Detection day (days since 1970-01-01).
    pub day: i32,
    /// Pixel size of the alert's source, metres.
    pub pixel_m: f64,
}

/// When two alerts are linked.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkRule {
    /// Link distance as a multiple of the larger pixel size (default 1.5, so
    /// the 8 neighbours of a pixel join and pixels two apart do not).
    pub factor: f64,
    /// Largest difference in detection days; `None` links at any time.
    pub window_days: Option<i32>,
}

impl Default for LinkRule {
    fn default() -> Self {
        LinkRule {
            factor: 1.5,
            window_days: Some(90),
        }
    }
}

/// What the sweep needs of one point, stored in cell order.
struct Slot {
    /// Unit vector of the point on the sphere. The squared chord between
    /// two of them is 4·hav(θ) = 4·sin²(θ/2), the haversine of their central
    /// angle θ, so the link test is the haversine test with no trigonometry
    /// per pair.
    xyz: [f64; 3],
    day: i32,
    /// Squared chord of the point's own link distance, 4·sin²(d/2R).
    thr: f64,
}

/// Link the points; the returned sets are the events.
pub fn link(points: &[LinkPoint], rule: &LinkRule) -> UnionFind {
    let n = points.len();
    if n < 2 {
        return UnionFind::new(n);
    }
    let grid = Grid::new(points, rule);
    let (slot_point, slots) = sorted_slots(points, rule, &grid);
    let cells = cell_table(&slots);
    let sweep = Sweep {
        slots: slots.into_iter().map(|r| r.1).collect(),
        window: rule.window_days.map(i64::from).unwrap_or(i64::MAX),
    };
    let mut uf = UnionFind::new(n);
    sweep.run(&cells, &mut uf);
    over_points(&mut uf, &slot_point)
}

/// The cells of the sweep: sides at least the longest link distance, in
/// degrees, counted from the south-west corner of the points.
struct Grid {
    cell_lat: f64,
    cell_lon: f64,
    lon0: f64,
    lat0: f64,
}

impl Grid {
    fn new(points: &[LinkPoint], rule: &LinkRule) -> Self {
        let max_pixel = points.iter().map(|p| p.pixel_m).fold(0.0_f64, f64::max);
        let max_link = rule.factor * max_pixel;
        let ang = max_link / MEAN_RADIUS_M; // radians
        let max_abs_lat = points.iter().map(|p| p.lat.abs()).fold(0.0_f64, f64::max);
        let lat_top = (max_abs_lat + ang.to_degrees()).min(89.999).to_radians();
        // sin(Δλ/2) ≤ sin(d/2R) / cos φ for both points at |φ| ≤ φtop.
        let dlon_rad = 2.0 * ((ang / 2.0).sin() / lat_top.cos()).min(1.0).asin();
        let cell_lat = ang.to_degrees() * 1.000_001;
        Grid {
            cell_lat,
            cell_lon: (dlon_rad.to_degrees() * 1.000_001).max(cell_lat),
            lon0: points.iter().map(|p| p.lon).fold(f64::INFINITY, f64::min),
            lat0: points.iter().map(|p| p.lat).fold(f64::INFINITY, f64::min),
        }
    }

    /// Row in the high 32 bits, column in the low 32, so keys sort by row.
    fn key(&self, p: &LinkPoint) -> u64 {
        let cy = ((p.lat - self.lat0) / self.cell_lat).floor() as u64;
        let cx = ((p.lon - self.lon0) / self.cell_lon).floor() as u64;
        (cy << 32) | (cx & 0xffff_ffff)
    }
}

/// Every point's slot with its cell key, sorted by cell, and the point
/// each slot came from.
///
/// Everything the sweep needs of a point is computed in one sequential
/// pass and sorted by cell together with it: gathering the points in cell
/// order afterwards was a cache miss per point, and measured as two thirds
/// of the time on a million points in random order.
fn sorted_slots(
    points: &[LinkPoint],
    rule: &LinkRule,
    grid: &Grid,
) -> (Vec<u32>, Vec<(u64, Slot)>) {
    let mut recs: Vec<(u64, u32, Slot)> = points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let (sp, cp) = p.lat.to_radians().sin_cos();
            let (sl, cl) = p.lon.to_radians().sin_cos();
            let d = rule.factor * p.pixel_m / MEAN_RADIUS_M;
            let slot = Slot {
                xyz: [cp * cl, cp * sl, sp],
                day: p.day,
                thr: 4.0 * (d / 2.0).sin().powi(2),
            };
            (grid.key(p), i as u32, slot)
        })
        .collect();
    recs.sort_unstable_by_key(|r| (r.0, r.1));
    let slot_point = recs.iter().map(|r| r.1).collect();
    let slots = recs.into_iter().map(|r| (r.0, r.2)).collect();
    (slot_point, slots)
}

/// Cell table: (key, start, end) over the sorted slots, in key order.
fn cell_table(slots: &[(u64, Slot)]) -> Vec<(u64, u32, u32)> {
    let n = slots.len();
    let mut cells: Vec<(u64, u32, u32)> = Vec::new();
    let mut start = 0usize;
    for s in 1..=n {
        if s == n || slots[s].0 != slots[start].0 {
            cells.push((slots[start].0, start as u32, s as u32));
            start = s;
        }
    }
    cells
}

/// The pair tests over slots in cell order.
struct Sweep {
    slots: Vec<Slot>,
    /// Largest difference in days (`i64::MAX` for no window).
    window: i64,
}

impl Sweep {
    /// Join slots `a` and `b` when they are close in time and in space.
    #[inline]
    fn linked(&self, uf: &mut UnionFind, a: usize, b: usize) {
        let (p, q) = (&self.slots[a], &self.slots[b]);
        if (i64::from(p.day) - i64::from(q.day)).abs() > self.window {
            return;
        }
        let (dx, dy, dz) = (
            p.xyz[0] - q.xyz[0],
            p.xyz[1] - q.xyz[1],
            p.xyz[2] - q.xyz[2],
        );
        if dx * dx + dy * dy + dz * dz <= p.thr.max(q.thr) {
            uf.union(a as u32, b as u32);
        }
    }

    /// Every pair between two cells' slot ranges.
    #[inline]
    fn pairs(&self, uf: &mut UnionFind, (s0, s1): (u32, u32), (t0, t1): (u32, u32)) {
        for a in s0..s1 {
            for b in t0..t1 {
                self.linked(uf, a as usize, b as usize);
            }
        }
    }

    /// Each cell is compared with itself and half of its eight neighbours:
    /// east, and the three cells of the row above. Cells are visited in key
    /// order, so the first candidate of the row above only moves forward:
    /// one pointer sweeps it instead of a search per neighbour.
    fn run(&self, cells: &[(u64, u32, u32)], uf: &mut UnionFind) {
        let mut up = 0usize;
        for (ci, &(k, s0, s1)) in cells.iter().enumerate() {
            let (cy, cx) = (k >> 32, k & 0xffff_ffff);
            for a in s0..s1 {
                for b in a + 1..s1 {
                    self.linked(uf, a as usize, b as usize);
                }
            }
            if let Some(&(nk, t0, t1)) = cells.get(ci + 1)
                && nk == (cy << 32) | (cx + 1)
            {
                self.pairs(uf, (s0, s1), (t0, t1));
            }
            let lo = ((cy + 1) << 32) | cx.saturating_sub(1);
            let hi = ((cy + 1) << 32) | (cx + 1);
            while up < cells.len() && cells[up].0 < lo {
                up += 1;
            }
            let mut j = up;
            while j < cells.len() && cells[j].0 <= hi {
                self.pairs(uf, (s0, s1), (cells[j].1, cells[j].2));
                j += 1;
            }
        }
    }
}

/// Re-express the sets over the caller's point indices: every point
/// points at the point of its slot's root (a forest of depth one).
fn over_points(uf: &mut UnionFind, slot_point: &[u32]) -> UnionFind {
    let mut parent = vec![0u32; slot_point.len()];
    for (slot, &p) in slot_point.iter().enumerate() {
        let root = uf.find(slot as u32);
        parent[p as usize] = slot_point[root as usize];
    }
    UnionFind::from_parents(parent)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::geodesy::haversine_m;

    fn pt(lon: f64, lat: f64, day: i32) -> LinkPoint {
        LinkPoint {
            lon,
            lat,
            day,
            pixel_m: 10.0,
        }
    }

    /// Brute force over all pairs: the reference for the grid.
    fn brute(points: &[LinkPoint], rule: &LinkRule) -> Vec<u32> {
        let mut uf = UnionFind::new(points.len());
        for i in 0..points.len() {
            for j in i + 1..points.len() {
                let (a, b) = (points[i], points[j]);
                let d = haversine_m((a.lon, a.lat), (b.lon, b.lat));
                let ok_t = rule.window_days.is_none_or(|w| (a.day - b.day).abs() <= w);
                if ok_t && d <= rule.factor * a.pixel_m.max(b.pixel_m) {
                    uf.union(i as u32, j as u32);
                }
            }
        }
        uf.labels()
    }

    #[test]
    fn eight_neighbours_join_two_apart_do_not() {
        let g = 0.00009; // about 10 m at the equator
        let pts = vec![pt(0.0, 0.0, 0), pt(g, g, 0), pt(3.0 * g, g, 0)];
        let labels = link(&pts, &LinkRule::default()).labels();
        assert_eq!(labels, vec![0, 0, 1]);
    }

    #[test]
    fn time_window_splits() {
        let g = 0.00009;
        let pts = vec![pt(0.0, 0.0, 0), pt(g, 0.0, 91), pt(2.0 * g, 0.0, 100)];
        let labels = link(&pts, &LinkRule::default()).labels();
        assert_eq!(labels, vec![0, 1, 1]);
        let none = LinkRule {
            window_days: None,
            ..LinkRule::default()
        };
        assert_eq!(link(&pts, &none).labels(), vec![0, 0, 0]);
    }

    #[test]
    fn mixed_pixel_sizes_use_the_larger() {
        // A 30 m pixel links a 10 m pixel 40 m away (1.5 × 30 = 45 m).
        let d = 40.0 / 111_195.0;
        let mut pts = vec![pt(0.0, 0.0, 0), pt(d, 0.0, 0)];
        assert_eq!(link(&pts, &LinkRule::default()).labels(), vec![0, 1]);
        pts[0].pixel_m = 30.0;
        assert_eq!(link(&pts, &LinkRule::default()).labels(), vec![0, 0]);
    }

    #[test]
    fn grid_equals_brute_force_on_random_clumps() {
        use rand::{RngExt, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        for &lat0 in &[0.0, 60.0, -45.0] {
            let mut pts = Vec::new();
            for _ in 0..600 {
                let lon = 20.0 + rng.random_range(0.0..0.004);
                let lat = lat0 + rng.random_range(0.0..0.004);
                let pixel = if rng.random_bool(0.3) { 30.0 } else { 10.0 };
                pts.push(LinkPoint {
                    lon,
                    lat,
                    day: rng.random_range(0..200),
                    pixel_m: pixel,
                });
            }
            let rule = LinkRule::default();
            assert_eq!(link(&pts, &rule).labels(), brute(&pts, &rule), "lat {lat0}");
        }
    }
}
