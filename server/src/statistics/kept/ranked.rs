//! The events list, ranked once per fact change and day.
//!
//! An event's priority depends on its stored attributes, the weights (fixed
//! for a running server) and the day (recency). So the ranking of one
//! selection (zone, detection dates, source, least area) is the same for
//! every request on the same facts and day: it is computed once and kept,
//! and each `limit` cut of it is kept as bytes ([`Served`]).

use super::served::{PerStamp, Served};
use crate::alerts::cluster::priority::PriorityWeights;
use crate::alerts::events::{RankedEvent, events_collection, ranked_events};
use crate::domain::Day;
use crate::error::{Error, Result};
use crate::platform::storage::{Db, EventFilter, FactStamp};
use std::sync::Arc;

/// Selections whose ranking is kept per stamp and day.
const KEPT_RANKINGS: usize = 8;
/// Answers (selection and limit) kept as bytes per stamp and day.
const KEPT_ANSWERS: usize = 32;

/// What a ranking or an answer is kept for: the facts and the day.
type Stamp = (FactStamp, Day);

/// The selection without its limit, as a key (`f64` by its bits).
#[derive(Debug, Clone, PartialEq)]
struct Selection {
    zone: Option<String>,
    from: Option<Day>,
    to: Option<Day>,
    source: Option<String>,
    min_area_bits: Option<u64>,
}

impl Selection {
    fn of(f: &EventFilter) -> Selection {
        Selection {
            zone: f.zone.clone(),
            from: f.from,
            to: f.to,
            source: f.source.clone(),
            min_area_bits: f.min_area_ha.map(f64::to_bits),
        }
    }
}

/// The rankings and answers of the events list for the current facts.
pub struct RankedKept {
    rankings: PerStamp<Stamp, Selection, Arc<Vec<RankedEvent>>>,
    answers: PerStamp<Stamp, (Selection, Option<usize>), Arc<Served>>,
}

impl Default for RankedKept {
    fn default() -> Self {
        RankedKept {
            rankings: PerStamp::new(KEPT_RANKINGS),
            answers: PerStamp::new(KEPT_ANSWERS),
        }
    }
}

impl RankedKept {
    /// The answer kept for `filter` on day `as_of`, if the facts have not
    /// changed since it was made (no database read beyond the stamp).
    pub fn kept(&self, db: &Db, filter: &EventFilter, as_of: Day) -> Option<Arc<Served>> {
        let key = (Selection::of(filter), filter.limit);
        self.answers.get((db.fact_stamp(), as_of), &key)
    }

    /// The events of `filter` ranked on day `as_of`, highest priority first
    /// (as [`ranked_events`] ranks them), ranked once per stamp and day.
    pub fn ranked(
        &self,
        db: &Db,
        filter: &EventFilter,
        weights: &PriorityWeights,
        as_of: Day,
    ) -> Result<Arc<Vec<RankedEvent>>> {
        // Taken before reading: what is read is at least this new.
        let stamp = (db.fact_stamp(), as_of);
        let selection = Selection::of(filter);
        if let Some(r) = self.rankings.get(stamp, &selection) {
            return Ok(r);
        }
        let all = EventFilter {
            limit: None,
            ..filter.clone()
        };
        let r = Arc::new(ranked_events(db, &all, weights, as_of)?);
        self.rankings.put(stamp, selection, Arc::clone(&r));
        Ok(r)
    }

    /// The GeoJSON FeatureCollection of the first `filter.limit` ranked
    /// events, as bytes kept per stamp and day.
    pub fn served(
        &self,
        db: &Db,
        filter: &EventFilter,
        weights: &PriorityWeights,
        as_of: Day,
    ) -> Result<Arc<Served>> {
        let stamp = (db.fact_stamp(), as_of);
        let key = (Selection::of(filter), filter.limit);
        if let Some(s) = self.answers.get(stamp, &key) {
            return Ok(s);
        }
        let ranked = self.ranked(db, filter, weights, as_of)?;
        let n = filter.limit.unwrap_or(usize::MAX).min(ranked.len());
        let json = serde_json::to_vec(&events_collection(&ranked[..n]))
            .map_err(|e| Error::Internal(format!("events list as JSON: {e}")))?;
        let s = Arc::new(Served::new(json));
        self.answers.put(stamp, key, Arc::clone(&s));
        Ok(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_ranking_is_kept_per_stamp_and_day_and_limits_cut_it() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let kept = RankedKept::default();
        let w = PriorityWeights::default();
        let day = Day::from_days(20_000);
        let f = EventFilter::default();
        let a = kept.ranked(&db, &f, &w, day).unwrap();
        assert!(Arc::ptr_eq(&a, &kept.ranked(&db, &f, &w, day).unwrap()));
        let limited = EventFilter {
            limit: Some(3),
            ..Default::default()
        };
        assert!(
            Arc::ptr_eq(&a, &kept.ranked(&db, &limited, &w, day).unwrap()),
            "a limit cuts the same ranking"
        );
        let next_day = kept.ranked(&db, &f, &w, Day::from_days(20_001)).unwrap();
        assert!(!Arc::ptr_eq(&a, &next_day), "another day ranks again");
        let s = kept.served(&db, &f, &w, day).unwrap();
        assert!(Arc::ptr_eq(&s, &kept.kept(&db, &f, day).unwrap()));
        assert!(kept.kept(&db, &limited, day).is_none());
        db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        assert!(
            kept.kept(&db, &f, day).is_none(),
            "a write drops the answer"
        );
        let b = kept.ranked(&db, &f, &w, day).unwrap();
        assert!(!Arc::ptr_eq(&a, &b), "a write makes the ranking stale");
    }
}
