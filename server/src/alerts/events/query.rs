//! Reading events for people: priority computed for the day asked, ordered
//! by priority, and written as RFC 7946 GeoJSON.

use crate::alerts::cluster::priority::{PriorityInput, PriorityWeights, score};
use crate::domain::Day;
use crate::error::Result;
use crate::platform::storage::{Db, EventFilter, EventRecord};
use serde_json::{Value, json};

/// An event with its priority for a given day.
#[derive(Debug, Clone, PartialEq)]
pub struct RankedEvent {
    pub record: EventRecord,
    pub priority: f64,
}

/// The priority of one stored event on day `as_of`.
pub fn priority_of(e: &EventRecord, w: &PriorityWeights, as_of: Day) -> f64 {
    score(
        w,
        &PriorityInput {
            area_ha: e.attrs.area_ha,
            age_days: f64::from(as_of.days() - e.attrs.last.days()),
            corroborated: e.attrs.corroborated,
            confirmed: e.attrs.highest_confidence == crate::domain::Confidence::Confirmed,
            in_priority_zone: e.in_priority_zone,
        },
    )
}

/// Events matching `filter`, highest priority first (ties: larger, then
/// older id); `filter.limit` applies after ranking.
pub fn ranked_events(
    db: &Db,
    filter: &EventFilter,
    w: &PriorityWeights,
    as_of: Day,
) -> Result<Vec<RankedEvent>> {
    let limit = filter.limit;
    let unlimited = EventFilter {
        limit: None,
        ..filter.clone()
    };
    let mut v: Vec<RankedEvent> = db
        .read(|r| r.events(&unlimited))?
        .into_iter()
        .map(|record| RankedEvent {
            priority: priority_of(&record, w, as_of),
            record,
        })
        .collect();
    v.sort_by(|a, b| {
        b.priority
            .total_cmp(&a.priority)
            .then(b.record.attrs.area_ha.total_cmp(&a.record.attrs.area_ha))
            .then(a.record.id.cmp(&b.record.id))
    });
    if let Some(l) = limit {
        v.truncate(l);
    }
    Ok(v)
}

/// One event as a GeoJSON Feature (footprint geometry).
pub fn event_feature(e: &RankedEvent) -> Value {
    let a = &e.record.attrs;
    let geometry: Value = serde_json::from_str(&a.footprint).unwrap_or(Value::Null);
    json!({
        "type": "Feature",
        "id": e.record.id,
        "geometry": geometry,
        "properties": {
            "id": e.record.id,
            "area_ha": (a.area_ha * 10_000.0).round() / 10_000.0,
            "centroid": [a.centroid.0, a.centroid.1],
            "first_detected": a.first.to_string(),
            "last_detected": a.last.to_string(),
            "alert_count": a.alert_count,
            "alerts_per_source": a.per_source,
            "sources": a.per_source.keys().collect::<Vec<_>>(),
            "highest_confidence": a.highest_confidence,
            "confidence_level": a.highest_confidence.level(),
            "corroborated": a.corroborated,
            "zones": e.record.zones,
            "in_priority_zone": e.record.in_priority_zone,
            "priority": (e.priority * 1000.0).round() / 1000.0,
            "origin": e.record.origin,
            "merged_into": e.record.merged_into,
        }
    })
}

/// A FeatureCollection of events.
pub fn events_collection(events: &[RankedEvent]) -> Value {
    json!({
        "type": "FeatureCollection",
        "features": events.iter().map(event_feature).collect::<Vec<_>>(),
    })
}
