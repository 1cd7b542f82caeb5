//! From stored facts to the figures managers read.
//!
//! Loads events, reports, bundles, controls and adjudications from
//! storage, reconciles each event's status with [`crate::reconcile`], and
//! computes every figure with [`crate::statistics::figures`]. Nothing here is stored
//! (invariant 2): [`StatsCache`] keeps what was computed only while the
//! facts stay the same.

mod cache;
mod csv_tables;
mod load;
mod ranked;
mod served;

pub use cache::{FiguresAsked, NOW_FRESH_FOR, Prepared, REFRESH_TICK, StatsCache, keep_fresh};
pub use csv_tables::{TABLES, table};
pub use load::{
    CONTROL_PLOT_HA, Facts, Loaded, StatsFilter, load, prepare, read_facts, read_facts_after,
};
pub use ranked::RankedKept;
pub use served::Served;

use crate::error::{Error, Result};
use crate::platform::storage::Db;
use crate::statistics::figures::{FigureOptions, Figures, all_figures_counted};

/// Settle-window of disagreeing reports, days (DESIGN: default 30).
pub const DISPUTE_WINDOW_DAYS: u32 = crate::reconcile::DEFAULT_WINDOW_DAYS;

/// The reconciled status of every event that has one, by event id: what a
/// trip's status filter reads ([`crate::planning::TripRequest::reconciled`]).
pub fn event_statuses(
    db: &Db,
) -> Result<std::collections::BTreeMap<i64, crate::domain::EventStatus>> {
    Ok(load(db, &StatsFilter::default(), DISPUTE_WINDOW_DAYS)?
        .statuses
        .iter()
        .map(|(id, s)| (*id, s.status))
        .collect())
}

/// Every figure for the selection.
pub fn figures(db: &Db, filter: &StatsFilter, options: &FigureOptions) -> Result<Figures> {
    figures_of(&load(db, filter, DISPUTE_WINDOW_DAYS)?, options)
}

/// Every figure from facts already loaded and reconciled.
pub fn figures_of(l: &Loaded, options: &FigureOptions) -> Result<Figures> {
    all_figures_counted(
        &l.events,
        &l.reports,
        &l.counted,
        &l.bundle_issued_at,
        &l.controls,
        options,
    )
    .map_err(|e| Error::Invalid(format!("statistics: {e}")))
}

/// Every live event as a GeoJSON Feature with its reconciled status and an
/// evidence summary (reports counted, reports with evidence that passes).
pub fn events_with_status(
    db: &Db,
    l: &Loaded,
    weights: &crate::alerts::cluster::priority::PriorityWeights,
) -> Result<serde_json::Value> {
    let events = crate::alerts::events::ranked_events(
        db,
        &Default::default(),
        weights,
        crate::domain::Day::today(),
    )?;
    // Reports whose evidence passes, by id (copies included, as counted
    // before): one pass, not a scan of every report per event.
    let mut evidence_ok: std::collections::HashMap<uuid::Uuid, usize> =
        std::collections::HashMap::new();
    for r in l.reports.iter().filter(|r| r.evidence_ok) {
        *evidence_ok.entry(r.report_id).or_default() += 1;
    }
    let features: Vec<serde_json::Value> = events
        .iter()
        .map(|e| {
            let mut f = crate::alerts::events::event_feature(e);
            let s = l.statuses.get(&e.record.id);
            let counted = s.map_or(&[][..], |s| &s.counted_reports[..]);
            let ok: usize = counted.iter().filter_map(|id| evidence_ok.get(id)).sum();
            f["properties"]["status"] =
                serde_json::json!(s.map_or("unvisited", |s| s.status.as_str()));
            f["properties"]["new_clearing"] = serde_json::json!(s.is_some_and(|s| s.new_clearing));
            f["properties"]["cause"] = serde_json::json!(s.and_then(|s| s.cause.clone()));
            f["properties"]["reports_counted"] = serde_json::json!(counted.len());
            f["properties"]["reports_evidence_ok"] = serde_json::json!(ok);
            f
        })
        .collect();
    Ok(serde_json::json!({"type": "FeatureCollection", "features": features}))
}
