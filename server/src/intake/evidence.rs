//! Evidence checks: pure functions that say whether a report's position and
//! its photos support it. A failed check adds a flag to the report; it never
//! rejects it (a coordinator looks at flagged reports).
//!
//! # Distance to a footprint
//!
//! Distances are geodesic on the WGS 84 ellipsoid (Karney's algorithms,
//! `geographiclib-rs` `Geodesic::wgs84`). A point inside the footprint (a
//! polygon of the event, not in a hole) is at 0 m. Otherwise the distance is
//! the smallest distance to any edge of any ring (exterior and holes): for
//! each edge A→B the point on the geodesic from A to B nearest to P is found
//! by a golden-section search over the distance along the edge (60 steps,
//! so the step is below 1e-12 of the edge length), and compared with both
//! vertices. The distance along one edge is unimodal when the edge is much
//! shorter than the Earth's radius, which holds for clearing footprints
//! (pixel edges of 10 to 30 m). The inside test is planar in longitude and
//! latitude, exact for the straight lon/lat edges the footprints are made of.
//! A control point's "footprint" is its point.
//!
//! # Checks and flags
//!
//! | flag | when |
//! |---|---|
//! | `position_missing` | an event or control report without a position |
//! | `position_far_from_target` | the reported position is more than the tolerance from the footprint (not raised for `not_reached`: far is what it means) |
//! | `photo_no_gps:<sha>` | the photo carries no GPS position |
//! | `photo_far_from_target:<sha>` | the photo's GPS position is more than the tolerance from the footprint |
//! | `photo_no_time:<sha>` | the photo carries no time |
//! | `photo_before_detection:<sha>` | taken on a day before the event's first detection |
//! | `photo_outside_window:<sha>` | taken before the bundle was issued or after it expired |
//! | `photo_reused:<sha>` | the same photo is stored under another report (other than the report it supersedes or that supersedes it) |
//! | `observed_after_receipt` | the report says it was observed more than [`CLOCK_SKEW_MINUTES`] after the server received it: the device's clock is wrong, so its times (and the photos' times) cannot be trusted |
//!
//! The tolerance defaults to [`DEFAULT_TOLERANCE_M`] = 100 m (common
//! practice: consumer GPS under canopy errs by tens of metres, and a team
//! photographs a clearing from its edge).

use chrono::{DateTime, NaiveDate, Utc};
use geo::{Contains, MultiPolygon, Point};
use geographiclib_rs::{DirectGeodesic, Geodesic, InverseGeodesic};

pub use crate::platform::settings::DEFAULT_TOLERANCE_M;

/// How far ahead of the server's clock a device's clock may run before its
/// report is flagged, in minutes (our choice: phones that set their clock
/// from the network are within seconds; one set by hand drifts by minutes).
pub const CLOCK_SKEW_MINUTES: i64 = 10;

/// Golden-section steps per edge.
const SEARCH_STEPS: usize = 60;

/// What a report is checked against.
#[derive(Debug, Clone, PartialEq)]
pub enum Footprint {
    /// An event's footprint (lon/lat polygons).
    Area(MultiPolygon<f64>),
    /// A control point (lon, lat).
    Point(f64, f64),
}

/// Geodesic distance in metres between two (lat, lon) points.
pub fn geodesic_m(lat1: f64, lon1: f64, lat2: f64, lon2: f64) -> f64 {
    let s: f64 = Geodesic::wgs84().inverse(lat1, lon1, lat2, lon2);
    s
}

/// Geodesic distance in metres from (lat, lon) to the geodesic segment
/// from `a` to `b` (each (lon, lat)); see the module docs for the method.
pub fn point_segment_m(lat: f64, lon: f64, a: (f64, f64), b: (f64, f64)) -> f64 {
    let g = Geodesic::wgs84();
    let (len, azi, _, _): (f64, f64, f64, f64) = g.inverse(a.1, a.0, b.1, b.0);
    let da = geodesic_m(lat, lon, a.1, a.0);
    let db = geodesic_m(lat, lon, b.1, b.0);
    if len.is_nan() || len <= 0.0 {
        return da.min(db);
    }
    let at = |t: f64| {
        let (la, lo): (f64, f64) = g.direct(a.1, a.0, azi, t);
        geodesic_m(lat, lon, la, lo)
    };
    let phi = (5f64.sqrt() - 1.0) / 2.0;
    let (mut lo, mut hi) = (0.0, len);
    let mut x1 = hi - phi * (hi - lo);
    let mut x2 = lo + phi * (hi - lo);
    let (mut f1, mut f2) = (at(x1), at(x2));
    for _ in 0..SEARCH_STEPS {
        if f1 <= f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - phi * (hi - lo);
            f1 = at(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + phi * (hi - lo);
            f2 = at(x2);
        }
    }
    da.min(db).min(f1).min(f2)
}

/// Geodesic distance in metres from (lat, lon) to a footprint; 0 inside.
pub fn distance_to_footprint_m(lat: f64, lon: f64, footprint: &Footprint) -> f64 {
    match footprint {
        Footprint::Point(plon, plat) => geodesic_m(lat, lon, *plat, *plon),
        Footprint::Area(mp) => {
            if mp.contains(&Point::new(lon, lat)) {
                return 0.0;
            }
            let mut best = f64::INFINITY;
            for poly in mp {
                for ring in std::iter::once(poly.exterior()).chain(poly.interiors()) {
                    for line in ring.lines() {
                        let d = point_segment_m(
                            lat,
                            lon,
                            (line.start.x, line.start.y),
                            (line.end.x, line.end.y),
                        );
                        best = best.min(d);
                    }
                }
            }
            best
        }
    }
}

/// What a report is checked against.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckContext {
    /// The target's footprint, when known.
    pub footprint: Option<Footprint>,
    /// The day the event was first detected (events only).
    pub first_detection: Option<NaiveDate>,
    /// When the bundle was issued and when it expires.
    pub window: (DateTime<Utc>, DateTime<Utc>),
    /// Distance tolerance in metres.
    pub tolerance_m: f64,
}

/// The facts of one photo that the checks look at.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotoFacts {
    pub sha256: String,
    pub taken_at: Option<DateTime<Utc>>,
    /// (lat, lon) of the photo's GPS tags.
    pub position: Option<(f64, f64)>,
    /// The photo is already stored under another report.
    pub reused_elsewhere: bool,
}

/// The outcome of the checks of one photo.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotoVerdict {
    /// Distance to the footprint (`None` without GPS or footprint).
    pub distance_m: Option<f64>,
    /// Taken on or after the first detection day (`None` when not checkable).
    pub after_detection: Option<bool>,
    /// Taken inside the bundle's issue-to-expiry window (`None` without a time).
    pub inside_window: Option<bool>,
    pub reused_elsewhere: bool,
    /// The flags this photo adds to its report.
    pub flags: Vec<String>,
}

/// Runs the photo checks of the module docs.
pub fn check_photo(ctx: &CheckContext, p: &PhotoFacts) -> PhotoVerdict {
    let mut flags = Vec::new();
    let distance_m = match (&ctx.footprint, p.position) {
        (Some(f), Some((lat, lon))) => Some(distance_to_footprint_m(lat, lon, f)),
        _ => None,
    };
    if p.position.is_none() {
        flags.push(format!("photo_no_gps:{}", p.sha256));
    }
    if distance_m.is_some_and(|d| d > ctx.tolerance_m) {
        flags.push(format!("photo_far_from_target:{}", p.sha256));
    }
    let (after_detection, inside_window) = match p.taken_at {
        None => {
            flags.push(format!("photo_no_time:{}", p.sha256));
            (None, None)
        }
        Some(t) => (
            ctx.first_detection.map(|d| t.date_naive() >= d),
            Some(t >= ctx.window.0 && t <= ctx.window.1),
        ),
    };
    if after_detection == Some(false) {
        flags.push(format!("photo_before_detection:{}", p.sha256));
    }
    if inside_window == Some(false) {
        flags.push(format!("photo_outside_window:{}", p.sha256));
    }
    if p.reused_elsewhere {
        flags.push(format!("photo_reused:{}", p.sha256));
    }
    PhotoVerdict {
        distance_m,
        after_detection,
        inside_window,
        reused_elsewhere: p.reused_elsewhere,
        flags,
    }
}

/// Checks the reported (lat, lon): its distance to the footprint and the flags.
pub fn check_position(
    ctx: &CheckContext,
    position: Option<(f64, f64)>,
) -> (Option<f64>, Vec<String>) {
    let Some((lat, lon)) = position else {
        return (None, vec!["position_missing".into()]);
    };
    let d = ctx
        .footprint
        .as_ref()
        .map(|f| distance_to_footprint_m(lat, lon, f));
    let flags = if d.is_some_and(|d| d > ctx.tolerance_m) {
        vec!["position_far_from_target".into()]
    } else {
        Vec::new()
    };
    (d, flags)
}

/// Checks the report's observation time against the time it was received.
pub fn check_report_time(observed_at: DateTime<Utc>, received_at: DateTime<Utc>) -> Vec<String> {
    if observed_at > received_at + chrono::Duration::minutes(CLOCK_SKEW_MINUTES) {
        vec!["observed_after_receipt".into()]
    } else {
        Vec::new()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{LineString, Polygon};

    fn square(w: f64, s: f64, e: f64, n: f64) -> Footprint {
        Footprint::Area(MultiPolygon::new(vec![Polygon::new(
            LineString::from(vec![(w, s), (e, s), (e, n), (w, n), (w, s)]),
            vec![],
        )]))
    }

    #[test]
    fn inside_is_zero_outside_is_the_distance_to_the_edge() {
        let f = square(10.0, -1.0, 10.01, -0.99);
        assert_eq!(distance_to_footprint_m(-0.995, 10.005, &f), 0.0);
        // Due east of the east edge at its middle latitude: the nearest point
        // is on the edge, and the distance equals the geodesic distance to
        // (lat -0.995, lon 10.01) to within a millimetre (the edge is a
        // meridian, so the perpendicular foot is on the same parallel up to
        // the ellipsoid's tiny convergence; geographiclib-rs 0.2.7 inverse).
        let d = distance_to_footprint_m(-0.995, 10.02, &f);
        let direct = geodesic_m(-0.995, 10.02, -0.995, 10.01);
        assert!((d - direct).abs() < 1e-3, "{d} vs {direct}");
        // 0.01 degree of longitude at the equator is about 1113 m
        // (WGS 84 a = 6378137 m: 2*pi*a/360*0.01 = 1113.19 m, textbook value).
        assert!((d - 1113.0).abs() < 2.0, "{d}");
        // Beyond a corner, the nearest point is the vertex.
        let c = distance_to_footprint_m(-1.01, 10.02, &f);
        let v = geodesic_m(-1.01, 10.02, -1.0, 10.01);
        assert!((c - v).abs() < 1e-3, "{c} vs {v}");
    }

    #[test]
    fn segment_search_finds_the_perpendicular_foot() {
        // A segment along the equator from lon 0 to lon 1; a point 0.001
        // degree north of its middle. The equator is a geodesic, so the foot
        // is (0, 0.5) and the distance equals the meridian arc of 0.001
        // degree, 110.57 m at the equator (WGS 84 meridional radius
        // 6335439 m: 6335439*pi/180*0.001 = 110.574 m, textbook value).
        let d = point_segment_m(0.001, 0.5, (0.0, 0.0), (1.0, 0.0));
        let foot = geodesic_m(0.001, 0.5, 0.0, 0.5);
        assert!((d - foot).abs() < 1e-4, "{d} vs {foot}");
        assert!((d - 110.574).abs() < 0.01, "{d}");
    }

    #[test]
    fn flags_follow_the_checks() {
        let t = |s: &str| DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc);
        let ctx = CheckContext {
            footprint: Some(square(10.0, -1.0, 10.001, -0.999)),
            first_detection: NaiveDate::from_ymd_opt(2026, 3, 10),
            window: (t("2026-03-12T00:00:00Z"), t("2026-04-12T00:00:00Z")),
            tolerance_m: DEFAULT_TOLERANCE_M,
        };
        let good = PhotoFacts {
            sha256: "aa".into(),
            taken_at: Some(t("2026-03-14T09:00:00Z")),
            position: Some((-0.9995, 10.0005)),
            reused_elsewhere: false,
        };
        let v = check_photo(&ctx, &good);
        assert_eq!(v.flags, Vec::<String>::new());
        assert_eq!(
            (v.distance_m, v.after_detection, v.inside_window),
            (Some(0.0), Some(true), Some(true))
        );
        let bad = PhotoFacts {
            sha256: "bb".into(),
            taken_at: Some(t("2026-03-01T09:00:00Z")),
            position: Some((-0.99, 10.0005)),
            reused_elsewhere: true,
        };
        let v = check_photo(&ctx, &bad);
        assert_eq!(
            v.flags,
            vec![
                "photo_far_from_target:bb",
                "photo_before_detection:bb",
                "photo_outside_window:bb",
                "photo_reused:bb"
            ]
        );
        let (d, f) = check_position(&ctx, Some((-0.9995, 10.0005)));
        assert_eq!((d, f.len()), (Some(0.0), 0));
        let (_, f) = check_position(&ctx, None);
        assert_eq!(f, vec!["position_missing"]);
    }

    #[test]
    fn a_report_from_the_future_is_flagged_beyond_the_skew() {
        let t = |s: &str| DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc);
        let received = t("2026-03-14T12:00:00Z");
        assert!(check_report_time(t("2026-03-14T09:00:00Z"), received).is_empty());
        assert!(check_report_time(t("2026-03-14T12:10:00Z"), received).is_empty());
        assert_eq!(
            check_report_time(t("2026-03-14T12:10:01Z"), received),
            vec!["observed_after_receipt"]
        );
    }
}
