//! Planar point-in-polygon test on (lon, lat) rings.
//!
//! Good enough for rings a few tens of kilometres across away from the poles
//! and the antimeridian, which is all the invented scenario needs.

/// True when `(lon, lat)` is inside the closed `ring` (even-odd rule; a point
/// exactly on an edge may fall either way).
pub fn ring_contains(ring: &[(f64, f64)], lon: f64, lat: f64) -> bool {
    let mut inside = false;
    let n = ring.len();
    if n < 3 {
        return false;
    }
    let mut j = n - 1;
    for i in 0..n {
        let (xi, yi) = ring[i];
        let (xj, yj) = ring[j];
        if (yi > lat) != (yj > lat) {
            let x_cross = xj + (lat - yj) * (xi - xj) / (yi - yj);
            if lon < x_cross {
                inside = !inside;
            }
        }
        j = i;
    }
    inside
}

#[cfg(test)]
/// Signed area (shoelace formula) in squared ring units; positive when
/// counter-clockwise.
pub(crate) fn signed_area(ring: &[(f64, f64)]) -> f64 {
    let mut a = 0.0;
    for w in ring.windows(2) {
        a += w[0].0 * w[1].1 - w[1].0 * w[0].1;
    }
    a / 2.0
}

#[cfg(test)]
mod tests {
    use super::*;

    const SQUARE: [(f64, f64); 5] = [(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0), (0.0, 0.0)];

    #[test]
    fn square_inside_and_outside() {
        assert!(ring_contains(&SQUARE, 1.0, 1.0));
        assert!(!ring_contains(&SQUARE, 3.0, 1.0));
        assert!(!ring_contains(&SQUARE, 1.0, -0.5));
        assert!(!ring_contains(&SQUARE[..2], 1.0, 1.0));
    }

    #[test]
    fn concave_notch_is_outside() {
        // A "U" shape: the notch between the arms is outside.
        let u = [
            (0.0, 0.0),
            (3.0, 0.0),
            (3.0, 3.0),
            (2.0, 3.0),
            (2.0, 1.0),
            (1.0, 1.0),
            (1.0, 3.0),
            (0.0, 3.0),
            (0.0, 0.0),
        ];
        assert!(!ring_contains(&u, 1.5, 2.0));
        assert!(ring_contains(&u, 0.5, 2.0));
        assert!(ring_contains(&u, 1.5, 0.5));
    }

    #[test]
    fn orientation_sign() {
        // Shoelace area of a 2x2 square is 4 (elementary geometry).
        assert_eq!(signed_area(&SQUARE), 4.0);
        let mut cw = SQUARE;
        cw.reverse();
        assert_eq!(signed_area(&cw), -4.0);
    }
}
