//! What an event says about its alerts.

use super::footprint::{Footprint, Pixel, footprint};
use crate::domain::{Confidence, Day};
use std::collections::BTreeMap;

/// One stored alert, as the event summary needs it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AlertFact {
    pub source_id: i64,
    pub lon: f64,
    pub lat: f64,
    pub day: Day,
    pub confidence: Confidence,
    pub pixel_m: f64,
}

/// Derived attributes of one event.
#[derive(Debug, Clone, PartialEq)]
pub struct EventSummary {
    pub footprint: Footprint,
    pub first: Day,
    pub last: Day,
    pub alert_count: u32,
    /// Alerts per source id.
    pub per_source: BTreeMap<i64, u32>,
    pub highest_confidence: Confidence,
    /// Two or more sources whose pixel squares overlap or touch.
    pub corroborated: bool,
    /// Bounding box (west, south, east, north) of the footprint.
    pub bbox: (f64, f64, f64, f64),
}

/// Summarise a non-empty set of alerts; `None` when empty.
pub fn summarize(alerts: &[AlertFact]) -> Option<EventSummary> {
    let first = alerts.iter().map(|a| a.day).min()?;
    let last = alerts.iter().map(|a| a.day).max()?;
    let mut per_source = BTreeMap::new();
    for a in alerts {
        *per_source.entry(a.source_id).or_insert(0u32) += 1;
    }
    let highest_confidence = alerts
        .iter()
        .map(|a| a.confidence)
        .max()
        .unwrap_or(Confidence::Tentative);
    let pixels: Vec<Pixel> = alerts
        .iter()
        .map(|a| Pixel {
            lon: a.lon,
            lat: a.lat,
            size_m: a.pixel_m,
        })
        .collect();
    let footprint = footprint(&pixels);
    let bbox = bbox_of(&footprint);
    Some(EventSummary {
        corroborated: per_source.len() >= 2 && sources_touch(alerts),
        footprint,
        first,
        last,
        alert_count: alerts.len() as u32,
        per_source,
        highest_confidence,
        bbox,
    })
}

fn bbox_of(f: &Footprint) -> (f64, f64, f64, f64) {
    use geo::BoundingRect;
    match f.shape.bounding_rect() {
        Some(r) => (r.min().x, r.min().y, r.max().x, r.max().y),
        None => (f.centroid.0, f.centroid.1, f.centroid.0, f.centroid.1),
    }
}

/// Whether pixel squares of two different sources overlap or touch. The
/// squares are compared as boxes in degrees; edges closer than 1% of the
/// smaller pixel side touch (the tolerance the footprint snaps edges with);
/// pairs are swept in longitude order.
fn sources_touch(alerts: &[AlertFact]) -> bool {
    let min_pixel = alerts
        .iter()
        .map(|a| a.pixel_m)
        .fold(f64::INFINITY, f64::min);
    let max_abs_lat = alerts.iter().map(|a| a.lat.abs()).fold(0.0, f64::max);
    let (dlon, dlat) = crate::domain::geodesy::pixel_half_extent_deg(max_abs_lat, min_pixel);
    let touch = 2.0 * dlon.min(dlat) * super::footprint::EDGE_SNAP_SHARE;
    let mut boxes: Vec<(f64, f64, f64, f64, i64)> = alerts
        .iter()
        .map(|a| {
            let (dlon, dlat) = crate::domain::geodesy::pixel_half_extent_deg(a.lat, a.pixel_m);
            (
                a.lon - dlon,
                a.lon + dlon,
                a.lat - dlat,
                a.lat + dlat,
                a.source_id,
            )
        })
        .collect();
    boxes.sort_by(|a, b| a.0.total_cmp(&b.0));
    for i in 0..boxes.len() {
        let a = boxes[i];
        for b in &boxes[i + 1..] {
            if b.0 > a.1 + touch {
                break;
            }
            if b.4 != a.4 && b.2 <= a.3 + touch && a.2 <= b.3 + touch {
                return true;
            }
        }
    }
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fact(source_id: i64, lon: f64, day: i32, c: Confidence) -> AlertFact {
        AlertFact {
            source_id,
            lon,
            lat: 0.0,
            day: Day::from_days(day),
            confidence: c,
            pixel_m: 10.0,
        }
    }

    #[test]
    fn summary_fields() {
        let g = 10.0 / 111_319.49; // 10 m of longitude at the equator
        let alerts = vec![
            fact(1, 0.0, 100, Confidence::Tentative),
            fact(1, g, 104, Confidence::Tentative),
            fact(2, 2.0 * g, 110, Confidence::Confirmed),
        ];
        let s = summarize(&alerts).unwrap();
        assert_eq!(
            (s.first.days(), s.last.days(), s.alert_count),
            (100, 110, 3)
        );
        assert_eq!(s.per_source.get(&1), Some(&2));
        assert_eq!(s.highest_confidence, Confidence::Confirmed);
        assert!(s.corroborated, "source 2 touches source 1's second pixel");
        assert!(((s.footprint.area_ha - 0.03) / 0.03).abs() < 0.001);
    }

    #[test]
    fn two_sources_apart_are_not_corroborated() {
        let alerts = vec![
            fact(1, 0.0, 100, Confidence::Tentative),
            fact(2, 0.0003, 100, Confidence::Tentative),
        ];
        assert!(!summarize(&alerts).unwrap().corroborated);
        assert!(summarize(&[]).is_none());
    }
}
