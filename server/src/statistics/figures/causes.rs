//! Causes of the confirmed clearings: number of events and their area, by
//! cause and by cause and month of first detection.

use serde::Serialize;

use super::facts::{EventFacts, Month};
use super::groups::Interner;
use crate::domain::EventStatus;

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
    let mut sums = CauseSums::default();
    events.iter().for_each(|e| sums.add(e));
    sums.finish()
}

/// The sums of [`causes`], gathered event by event.
#[derive(Debug, Default)]
pub(crate) struct CauseSums<'a> {
    causes: Interner<&'a str>,
    pairs: Interner<(&'a str, Month)>,
    /// (events, area) by id of `causes`, and of `pairs`.
    total: Vec<(u64, f64)>,
    monthly: Vec<(u64, f64)>,
}

impl<'a> CauseSums<'a> {
    pub(crate) fn add(&mut self, e: &'a EventFacts) {
        if e.status != EventStatus::Confirmed {
            return;
        }
        let cause = e.cause.as_deref().unwrap_or(CAUSE_NOT_RECORDED);
        add(&mut self.total, self.causes.id(cause), e.area_ha);
        let month = Month::of(e.first_detected);
        add(&mut self.monthly, self.pairs.id((cause, month)), e.area_ha);
    }

    pub(crate) fn finish(self) -> CauseTable {
        let by_cause =
            self.causes
                .values()
                .iter()
                .zip(self.total)
                .map(|(cause, (events, area_ha))| CauseRow {
                    cause: cause.to_string(),
                    month: None,
                    events,
                    area_ha,
                });
        let by_cause_and_month = self.pairs.values().iter().zip(self.monthly).map(
            |((cause, month), (events, area_ha))| CauseRow {
                cause: cause.to_string(),
                month: Some(month.to_string()),
                events,
                area_ha,
            },
        );
        CauseTable {
            by_cause: sorted(by_cause),
            by_cause_and_month: sorted(by_cause_and_month),
        }
    }
}

/// Adds an event of `area_ha` to the sums of group `id` (ids come in order
/// of first appearance).
fn add(sums: &mut Vec<(u64, f64)>, id: u32, area_ha: f64) {
    if id as usize == sums.len() {
        sums.push((0, 0.0));
    }
    let sum = &mut sums[id as usize];
    sum.0 += 1;
    sum.1 += area_ha;
}

/// Rows sorted by cause, then month (the groups are distinct).
fn sorted(rows: impl Iterator<Item = CauseRow>) -> Vec<CauseRow> {
    let mut rows: Vec<CauseRow> = rows.collect();
    rows.sort_unstable_by(|a, b| (&a.cause, &a.month).cmp(&(&b.cause, &b.month)));
    rows
}
