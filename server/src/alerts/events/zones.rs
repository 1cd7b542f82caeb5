//! Zone import and the links between events and the zones they intersect.

use crate::alerts::import::ParsedAlert;
use crate::alerts::import::parse_zones;
use crate::error::{Error, Result};
use crate::platform::storage::{Db, Tx};
use geo::{BoundingRect, Intersects, MultiPolygon, Point};
use serde::Serialize;

/// A zone ready for intersection tests.
pub(crate) struct ZoneShape {
    pub id: i64,
    pub shape: MultiPolygon<f64>,
    pub bbox: (f64, f64, f64, f64),
}

/// Load the stored zones as shapes.
pub(crate) fn load_zone_shapes(tx: &Tx<'_>) -> Result<Vec<ZoneShape>> {
    let mut out = Vec::new();
    for z in tx.reader().zones()? {
        let Some(shape) = parse_multipolygon(&z.geometry) else {
            continue;
        };
        let Some(r) = shape.bounding_rect() else {
            continue;
        };
        out.push(ZoneShape {
            id: z.id,
            bbox: (r.min().x, r.min().y, r.max().x, r.max().y),
            shape,
        });
    }
    Ok(out)
}

/// A GeoJSON Polygon/MultiPolygon geometry as a MultiPolygon.
pub fn parse_multipolygon(geometry: &str) -> Option<MultiPolygon<f64>> {
    let g: geojson::Geometry = geometry.parse().ok()?;
    crate::alerts::import::to_multipolygon(g).ok()
}

/// Ids of the zones a footprint intersects.
pub(crate) fn zones_hit(
    zones: &[ZoneShape],
    shape: &MultiPolygon<f64>,
    bbox: (f64, f64, f64, f64),
) -> Vec<i64> {
    zones
        .iter()
        .filter(|z| {
            bbox.0 <= z.bbox.2 && z.bbox.0 <= bbox.2 && bbox.1 <= z.bbox.3 && z.bbox.1 <= bbox.3
        })
        .filter(|z| z.shape.intersects(shape))
        .map(|z| z.id)
        .collect()
}

/// Most points of a file looked at for [`likely_swapped`] (evenly spaced), so that a large
/// file outside the zones costs a bounded number of point-in-polygon tests.
const SWAP_SAMPLE: usize = 10_000;

/// True when every alert (of an even sample of at most [`SWAP_SAMPLE`]) lies outside every
/// zone, while more than half of them would lie inside one with latitude and longitude
/// exchanged: the mark of a file whose columns are the other way round. False without zones.
pub(crate) fn likely_swapped(alerts: &[ParsedAlert], zones: &[ZoneShape]) -> bool {
    if alerts.is_empty() || zones.is_empty() {
        return false;
    }
    let step = alerts.len().div_ceil(SWAP_SAMPLE);
    let sample: Vec<(f64, f64)> = alerts
        .iter()
        .step_by(step)
        .map(|a| (a.at.lon(), a.at.lat()))
        .collect();
    let inside = |lon: f64, lat: f64| {
        zones.iter().any(|z| {
            let (w, s, e, n) = z.bbox;
            (w..=e).contains(&lon)
                && (s..=n).contains(&lat)
                && z.shape.intersects(&Point::new(lon, lat))
        })
    };
    if sample.iter().any(|&(lon, lat)| inside(lon, lat)) {
        return false;
    }
    let swapped = sample
        .iter()
        .filter(|&&(lon, lat)| inside(lat, lon))
        .count();
    swapped * 2 > sample.len()
}

/// What a zone import did.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ZoneOutcome {
    pub zones: Vec<String>,
    pub events_relinked: usize,
}

/// Import a zone file (all or nothing) and relink every live event.
pub fn import_zones(db: &Db, file: &str, bytes: &[u8]) -> Result<ZoneOutcome> {
    let parsed = parse_zones(file, bytes).map_err(|errs| Error::Invalid(errs.join("\n")))?;
    if parsed.is_empty() {
        return Err(Error::Invalid(format!("{file}: the file holds no zones")));
    }
    db.write(|tx| {
        for z in &parsed {
            tx.upsert_zone(z.name.as_str(), z.priority, &z.geometry, z.bbox)?;
        }
        let shapes = load_zone_shapes(tx)?;
        let events = tx.reader().events(&Default::default())?;
        for e in &events {
            let hit = parse_multipolygon(&e.attrs.footprint)
                .map(|fp| zones_hit(&shapes, &fp, e.attrs.bbox))
                .unwrap_or_default();
            tx.set_event_zones(e.id, &hit)?;
        }
        Ok(ZoneOutcome {
            zones: parsed.iter().map(|z| z.name.to_string()).collect(),
            events_relinked: events.len(),
        })
    })
}
