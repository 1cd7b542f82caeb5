//! Zone import and the links between events and the zones they intersect.

use crate::alerts::import::parse_zones;
use crate::error::{Error, Result};
use crate::platform::storage::{Db, Tx};
use geo::{BoundingRect, Intersects, MultiPolygon};
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
