//! Causes of the confirmed clearings: number of events and their area, by
//! cause and by cause and month of first detection.

use std::collections::BTreeMap;

use serde::Serialize;

use super::facts::{EventFacts, month_of};
use crate::reconcile::Status;

/// Label for a confirmed event whose reports name no cause.
pub const CAUSE_NOT_RECORDED: &str = "(not recorded)";

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CauseRow {
    pub cause: String,
    /// "YYYY-MM" of first detection; `None` in the all-months table.
    pub month: Option<String>,
    pub events: u64,
    pub area_ha: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CauseTable {
    /// Sorted by cause.
    pub by_cause: Vec<CauseRow>,
    /// Sorted by cause, then month.
    pub by_cause_and_month: Vec<CauseRow>,
}

/// Over the events with status `confirmed` (new clearings included); areas
/// are summed in the order of `events`.
pub fn causes(events: &[EventFacts]) -> CauseTable {
    let mut total: BTreeMap<String, (u64, f64)> = BTreeMap::new();
    let mut monthly: BTreeMap<(String, String), (u64, f64)> = BTreeMap::new();
    for e in events.iter().filter(|e| e.status == Status::Confirmed) {
        let cause = e
            .cause
            .clone()
            .unwrap_or_else(|| CAUSE_NOT_RECORDED.to_string());
        let t = total.entry(cause.clone()).or_default();
        t.0 += 1;
        t.1 += e.area_ha;
        let m = monthly
            .entry((cause, month_of(e.first_detected)))
            .or_default();
        m.0 += 1;
        m.1 += e.area_ha;
    }
    CauseTable {
        by_cause: total
            .into_iter()
            .map(|(cause, (events, area_ha))| CauseRow {
                cause,
                month: None,
                events,
                area_ha,
            })
            .collect(),
        by_cause_and_month: monthly
            .into_iter()
            .map(|((cause, month), (events, area_ha))| CauseRow {
                cause,
                month: Some(month),
                events,
                area_ha,
            })
            .collect(),
    }
}
