//! Which stop each camera photo belongs to: a proposal the operator at the
//! station checks and corrects. Pure.
//!
//! 1. A photo with an EXIF position goes to the stop nearest to it, if that
//!    stop's footprint (or control point) is within the evidence tolerance
//!    (the distance of [`super::super::evidence::distance_to_footprint_m`],
//!    the one the evidence checks use). A photo whose position is farther
//!    from every stop is not placed: its position says it was taken
//!    elsewhere (on the way), so its time does not place it either.
//! 2. A photo without a position but with a time goes to a stop when the
//!    nearest earlier and the nearest later photo placed by position (step 1)
//!    both belong to that stop: it was taken between two photos of the same
//!    visit. A photo at the start or end of the day, or between photos of
//!    two different stops, is not placed.
//! 3. Everything else is listed for the operator, with the reason.

use super::super::evidence::{Footprint, distance_to_footprint_m};
use chrono::{DateTime, Utc};

/// A stop of the trip, where photos may belong.
#[derive(Debug, Clone, PartialEq)]
pub struct StopPlace {
    pub code: String,
    pub footprint: Footprint,
}

/// What a photo tells about where and when it was taken.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhotoFix {
    pub taken_at: Option<DateTime<Utc>>,
    /// (lat, lon), WGS 84.
    pub position: Option<(f64, f64)>,
}

/// Why a photo was placed where it was, or why not.
#[derive(Debug, Clone, PartialEq)]
pub enum Basis {
    /// Its position is `distance_m` from the stop.
    Position { distance_m: f64 },
    /// Taken between photos `before` and `after` (indexes into the photos),
    /// both placed at the stop by their positions.
    Between { before: usize, after: usize },
    /// Its position is `distance_m` from the nearest stop (index
    /// `nearest`), beyond the tolerance.
    Far { nearest: usize, distance_m: f64 },
    /// No position; its time is not between two photos of the same stop.
    NoNeighbours,
    /// Neither a position nor a time.
    NoPositionNoTime,
    /// The trip has no stops.
    NoStops,
}

/// The proposal for one photo: the stop (index into the stops), if any.
#[derive(Debug, Clone, PartialEq)]
pub struct Placement {
    pub stop: Option<usize>,
    pub basis: Basis,
}

/// The proposal for every photo, in the order given.
pub fn propose(stops: &[StopPlace], photos: &[PhotoFix], tolerance_m: f64) -> Vec<Placement> {
    let mut out: Vec<Placement> = photos
        .iter()
        .map(|p| by_position(stops, p, tolerance_m))
        .collect();
    let anchors = anchors(photos, &out);
    for (i, p) in photos.iter().enumerate() {
        if out[i].basis == Basis::NoNeighbours
            && let Some(t) = p.taken_at
        {
            out[i] = by_time(&anchors, t);
        }
    }
    out
}

/// Step 1; a photo without a position is `NoNeighbours` (with a time) or
/// `NoPositionNoTime` until step 2 looks at it.
fn by_position(stops: &[StopPlace], p: &PhotoFix, tolerance_m: f64) -> Placement {
    let Some((lat, lon)) = p.position else {
        let basis = if p.taken_at.is_some() {
            Basis::NoNeighbours
        } else {
            Basis::NoPositionNoTime
        };
        return Placement { stop: None, basis };
    };
    let nearest = stops
        .iter()
        .enumerate()
        .map(|(i, s)| (i, distance_to_footprint_m(lat, lon, &s.footprint)))
        .filter(|(_, d)| d.is_finite())
        .min_by(|a, b| a.1.total_cmp(&b.1));
    match nearest {
        None => Placement {
            stop: None,
            basis: Basis::NoStops,
        },
        Some((i, d)) if d <= tolerance_m => Placement {
            stop: Some(i),
            basis: Basis::Position { distance_m: d },
        },
        Some((i, d)) => Placement {
            stop: None,
            basis: Basis::Far {
                nearest: i,
                distance_m: d,
            },
        },
    }
}

/// A photo placed by its position, with a time: (time, photo, stop),
/// sorted by time (ties by photo index, so the result does not depend on
/// the sort).
fn anchors(photos: &[PhotoFix], placed: &[Placement]) -> Vec<(DateTime<Utc>, usize, usize)> {
    let mut a: Vec<_> = photos
        .iter()
        .zip(placed)
        .enumerate()
        .filter_map(|(i, (p, pl))| match (p.taken_at, pl.stop, &pl.basis) {
            (Some(t), Some(s), Basis::Position { .. }) => Some((t, i, s)),
            _ => None,
        })
        .collect();
    a.sort();
    a
}

/// Step 2: the stop of the neighbours in time at `t`, when both agree.
fn by_time(anchors: &[(DateTime<Utc>, usize, usize)], t: DateTime<Utc>) -> Placement {
    let before = anchors.iter().rev().find(|a| a.0 <= t);
    let after = anchors.iter().find(|a| a.0 >= t);
    match (before, after) {
        (Some(b), Some(a)) if b.2 == a.2 => Placement {
            stop: Some(b.2),
            basis: Basis::Between {
                before: b.1,
                after: a.1,
            },
        },
        _ => Placement {
            stop: None,
            basis: Basis::NoNeighbours,
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(min: i64) -> Option<DateTime<Utc>> {
        Some(DateTime::<Utc>::from_timestamp(1_790_000_000 + min * 60, 0).unwrap())
    }

    /// Two control points 0.01° of latitude apart (1,106 m at the equator:
    /// 0.01 × 110,574 m per degree of latitude on WGS 84 at 0°, from the
    /// meridian arc, common geodesy tables) and an event square between.
    fn stops() -> Vec<StopPlace> {
        let square = geo::MultiPolygon::new(vec![geo::Polygon::new(
            geo::LineString::from(vec![
                (-60.0010, -3.0010),
                (-59.9990, -3.0010),
                (-59.9990, -2.9990),
                (-60.0010, -2.9990),
                (-60.0010, -3.0010),
            ]),
            vec![],
        )]);
        vec![
            StopPlace {
                code: "C1".into(),
                footprint: Footprint::Point(-60.0, -3.02),
            },
            StopPlace {
                code: "E1".into(),
                footprint: Footprint::Area(square),
            },
            StopPlace {
                code: "C2".into(),
                footprint: Footprint::Point(-60.0, -3.04),
            },
        ]
    }

    fn fix(min: Option<i64>, pos: Option<(f64, f64)>) -> PhotoFix {
        PhotoFix {
            taken_at: min.and_then(at),
            position: pos,
        }
    }

    #[test]
    fn a_position_within_the_tolerance_places_a_photo_at_the_nearest_stop() {
        // 0.0005° of latitude from C1 is 55.3 m (0.0005 × 110,574 m): inside 100 m.
        let p = propose(&stops(), &[fix(Some(0), Some((-3.0205, -60.0)))], 100.0);
        assert_eq!(p[0].stop, Some(0));
        let Basis::Position { distance_m } = p[0].basis else {
            panic!("{:?}", p[0]);
        };
        assert!((distance_m - 55.3).abs() < 0.5, "{distance_m}");
        // Inside the event's square: 0 m.
        let p = propose(&stops(), &[fix(None, Some((-3.0, -60.0)))], 100.0);
        assert_eq!(
            p[0],
            Placement {
                stop: Some(1),
                basis: Basis::Position { distance_m: 0.0 }
            }
        );
    }

    #[test]
    fn a_position_beyond_the_tolerance_is_not_placed_even_with_a_time() {
        // 0.009° of latitude from E1's square (995 m), 0.010° from C1 (1,106 m).
        let photos = [
            fix(Some(0), Some((-3.0, -60.0))),
            fix(Some(5), Some((-3.0100, -60.0))),
            fix(Some(10), Some((-3.0, -60.0))),
        ];
        let p = propose(&stops(), &photos, 100.0);
        assert_eq!(p[1].stop, None);
        assert!(
            matches!(p[1].basis, Basis::Far { nearest: 1, distance_m } if (distance_m - 995.2).abs() < 1.0)
        );
        // With a tolerance of 1,050 m it is placed.
        let p = propose(&stops(), &photos, 1050.0);
        assert_eq!(p[1].stop, Some(1));
    }

    #[test]
    fn a_photo_without_position_goes_between_two_photos_of_the_same_stop() {
        let photos = [
            fix(Some(0), Some((-3.02, -60.0))), // C1
            fix(Some(3), None),                 // between C1 and C1
            fix(Some(6), Some((-3.02, -60.0))), // C1
            fix(Some(20), None),                // between C1 and E1: not placed
            fix(Some(40), Some((-3.0, -60.0))), // E1
            fix(Some(50), None),                // after the last: not placed
            fix(None, None),                    // nothing to go on
        ];
        let p = propose(&stops(), &photos, 100.0);
        let stops_of: Vec<Option<usize>> = p.iter().map(|x| x.stop).collect();
        assert_eq!(
            stops_of,
            vec![Some(0), Some(0), Some(0), None, Some(1), None, None]
        );
        assert_eq!(
            p[1].basis,
            Basis::Between {
                before: 0,
                after: 2
            }
        );
        assert_eq!(p[3].basis, Basis::NoNeighbours);
        assert_eq!(p[5].basis, Basis::NoNeighbours);
        assert_eq!(p[6].basis, Basis::NoPositionNoTime);
    }

    #[test]
    fn the_order_of_the_photos_does_not_change_the_proposal() {
        let photos = vec![
            fix(Some(6), Some((-3.02, -60.0))),
            fix(Some(3), None),
            fix(Some(0), Some((-3.02, -60.0))),
            fix(Some(70), Some((-3.04, -60.0))),
            fix(Some(65), None),
            fix(Some(60), Some((-3.04, -60.0))),
        ];
        let p = propose(&stops(), &photos, 100.0);
        let mut rev = photos.clone();
        rev.reverse();
        let mut q = propose(&stops(), &rev, 100.0);
        q.reverse();
        let s = |v: &[Placement]| v.iter().map(|x| x.stop).collect::<Vec<_>>();
        assert_eq!(s(&p), s(&q));
        assert_eq!(
            s(&p),
            vec![Some(0), Some(0), Some(0), Some(2), Some(2), Some(2)]
        );
    }

    #[test]
    fn no_stops_places_nothing() {
        let p = propose(&[], &[fix(Some(0), Some((-3.0, -60.0)))], 100.0);
        assert_eq!(
            p[0],
            Placement {
                stop: None,
                basis: Basis::NoStops
            }
        );
    }
}
