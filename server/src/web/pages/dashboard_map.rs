//! The dashboard's pan-and-zoom map (`templates/pages/live_map.html`): the
//! events the dashboard's figures count for its filter (period, zone, team,
//! source: the same selection), in their status colours with a legend, and
//! every zone outlined; the printable SVG beside it.
//!
//! At most [`MAX_MAP_EVENTS`] footprints are drawn, the largest first, and
//! the title says so when there are more: a page with every footprint of a
//! six-figure event count would carry tens of megabytes.

use super::PageError;
use super::live_map::LiveMap;
use super::views::{map_input, map_zones};
use crate::alerts::events::parse_multipolygon;
use crate::platform::i18n::Tr;
use crate::statistics::figures::EventFacts;
use crate::web::AppState;
use crate::web::charts::MapEvent;
use actix_web::web;

/// Most event footprints the dashboard's map draws.
pub const MAX_MAP_EVENTS: usize = 2_000;

/// The element id of the dashboard's map.
pub const MAP_ID: &str = "dashboard-map";

/// The largest `selected` events (at most [`MAX_MAP_EVENTS`]), by id, and
/// how many there are in all (new clearings found on the ground are events
/// too and count).
fn largest(selected: &[EventFacts]) -> Vec<&EventFacts> {
    let mut v: Vec<&EventFacts> = selected.iter().collect();
    v.sort_by(|a, b| {
        b.area_ha
            .total_cmp(&a.area_ha)
            .then(a.event_id.cmp(&b.event_id))
    });
    v.truncate(MAX_MAP_EVENTS);
    v
}

/// The map of `selected` (the dashboard's selection), framed on its events
/// when a zone is chosen, else on everything.
pub async fn dashboard_map(
    state: &AppState,
    selected: &[EventFacts],
    zone_chosen: bool,
    tr: &Tr,
) -> Result<LiveMap, PageError> {
    let chosen = largest(selected);
    let ids: Vec<i64> = chosen.iter().map(|e| e.event_id).collect();
    let db = state.db.clone();
    let (zones, footprints) =
        web::block(move || db.read(|r| Ok((r.zones()?, r.event_footprints(&ids)?)))).await??;
    let events: Vec<MapEvent> = chosen
        .iter()
        .zip(footprints_in_order(&chosen, footprints))
        .filter_map(|(e, fp)| {
            Some(MapEvent {
                id: e.event_id,
                code: crate::planning::codes::event_code(e.event_id),
                area_ha: e.area_ha,
                status: e.status,
                footprint: parse_multipolygon(&fp?)?,
            })
        })
        .collect();
    let title = if selected.len() > MAX_MAP_EVENTS {
        tr.t2(
            "dash-map-title-capped",
            "shown",
            MAX_MAP_EVENTS as u64,
            "total",
            selected.len() as u64,
        )
    } else {
        tr.t("dash-map-title")
    };
    let input = map_input(&title, map_zones(&zones), events);
    Ok(LiveMap::new(MAP_ID, &input, zone_chosen))
}

/// Each chosen event's footprint, `None` where none is stored.
fn footprints_in_order(chosen: &[&EventFacts], found: Vec<(i64, String)>) -> Vec<Option<String>> {
    let mut by_id: std::collections::HashMap<i64, String> = found.into_iter().collect();
    chosen.iter().map(|e| by_id.remove(&e.event_id)).collect()
}
