//! What the statistics derive from the facts, kept while the facts stay
//! the same.
//!
//! Invariant 2 holds: nothing here is stored, and nothing is counted up
//! beside the facts. Every entry is what [`super::read_facts`] and
//! [`super::prepare`] computed from the facts at one [`FactStamp`]; the
//! first request after any committed change (the stamp moves after every
//! fact-changing commit, in this process or another) computes anew, reading
//! only the reports added since ([`super::read_facts_after`]: reports are
//! never changed) and everything else in full. A request never sees figures
//! older than the last commit it could see.
//!
//! Only the report date (`as_of`) and T of "visited within T days" change
//! from request to request on the same facts; those curves and the target
//! shares are computed per request from the kept events
//! ([`Prepared::figures`]).

use super::load::{Facts, Loaded, StatsFilter, prepare, read_facts_after};
use super::ranked::RankedKept;
use super::served::{PerStamp, Served};
use crate::domain::Day;
use crate::error::{Error, Result};
use crate::platform::storage::{Db, FactStamp};
use crate::statistics::figures::{FigureOptions, Figures, target_shares, time_to_visit};
use std::collections::VecDeque;
use std::sync::{Arc, Mutex};

/// Selections kept per stamp, most recently used last. A dashboard user
/// moves between a handful of filters; each entry holds one selection's
/// events (about 100 MB at 200,000 events).
const KEPT_SELECTIONS: usize = 8;

/// One selection of the facts, reconciled, with every figure that does not
/// depend on the report date.
#[derive(Debug)]
pub struct Prepared {
    pub loaded: Loaded,
    /// Figures computed at some `as_of`; [`Prepared::figures`] redoes the
    /// part that depends on it.
    base: Figures,
}

impl Prepared {
    fn new(facts: &Facts, filter: &StatsFilter) -> Result<Prepared> {
        let loaded = prepare(facts, filter);
        let base = super::figures_of(&loaded, &FigureOptions::new(chrono::Utc::now()))?;
        Ok(Prepared { loaded, base })
    }

    /// Every figure of this selection at `options`.
    pub fn figures(&self, options: &FigureOptions) -> Result<Figures> {
        let mut f = self.base.clone();
        f.as_of = options.as_of;
        let invalid = |e| Error::Invalid(format!("statistics: {e}"));
        let events = &self.loaded.events;
        f.time_to_visit =
            time_to_visit(events, options.as_of, options.within_days).map_err(invalid)?;
        f.target = target_shares(events, options.as_of, options.within_days).map_err(invalid)?;
        Ok(f)
    }
}

#[derive(Default)]
struct Kept {
    stamp: Option<FactStamp>,
    facts: Option<Arc<Facts>>,
    selections: VecDeque<(StatsFilter, Arc<Prepared>)>,
}

impl Kept {
    fn find(&mut self, stamp: FactStamp, filter: &StatsFilter) -> Option<Arc<Prepared>> {
        if self.stamp != Some(stamp) {
            return None;
        }
        let i = self.selections.iter().position(|(f, _)| f == filter)?;
        let entry = self.selections.remove(i)?;
        let found = Arc::clone(&entry.1);
        self.selections.push_back(entry);
        Some(found)
    }
}

/// Answers of every figure kept as bytes per stamp.
const KEPT_ANSWERS: usize = 32;

/// How long an answer made without a report date (`as_of` = the moment it
/// was made) is served on the same facts: its censoring times are then at
/// most this much behind the clock, a small fraction of the day steps of
/// the time-to-visit curves.
pub const NOW_FRESH_FOR: std::time::Duration = std::time::Duration::from_secs(60);

/// What an answer of every figure is kept for, besides the facts.
#[derive(Debug, Clone, PartialEq)]
pub struct FiguresAsked {
    pub filter: StatsFilter,
    /// The report date (end of that day, UTC); `None`: now.
    pub as_of: Option<Day>,
    /// T of "visited within T days".
    pub within_days: f64,
}

impl FiguresAsked {
    /// The figure options of this question, now.
    pub fn options(&self) -> FigureOptions {
        let as_of = self
            .as_of
            .and_then(|d| d.date().and_hms_opt(23, 59, 59))
            .map(|t| t.and_utc())
            .unwrap_or_else(chrono::Utc::now);
        FigureOptions {
            as_of,
            within_days: self.within_days,
        }
    }
}

/// The statistics kept for the current facts (one per server).
pub struct StatsCache {
    kept: Mutex<Kept>,
    /// Held while computing, so that concurrent requests for facts that
    /// just changed compute once and the others wait for that result.
    computing: Mutex<()>,
    /// Every figure as JSON bytes, per question.
    answers: PerStamp<FactStamp, FiguresAsked, Arc<Served>>,
    /// The events list, ranked once per stamp and day.
    pub events: RankedKept,
}

impl Default for StatsCache {
    fn default() -> Self {
        StatsCache {
            kept: Mutex::default(),
            computing: Mutex::default(),
            answers: PerStamp::new(KEPT_ANSWERS),
            events: RankedKept::default(),
        }
    }
}

impl StatsCache {
    pub fn new() -> StatsCache {
        StatsCache::default()
    }

    fn kept(&self) -> std::sync::MutexGuard<'_, Kept> {
        self.kept.lock().unwrap_or_else(|p| p.into_inner())
    }

    /// The selection `filter` of the facts as they stand now.
    pub fn prepared(&self, db: &Db, filter: &StatsFilter) -> Result<Arc<Prepared>> {
        let stamp = db.fact_stamp();
        if let Some(p) = self.kept().find(stamp, filter) {
            return Ok(p);
        }
        let _one = self.computing.lock().unwrap_or_else(|p| p.into_inner());
        // Taken before reading: what is read is at least this new, so a
        // later request with the same stamp may use it.
        let stamp = db.fact_stamp();
        let (facts, stale) = {
            let mut kept = self.kept();
            if let Some(p) = kept.find(stamp, filter) {
                return Ok(p);
            }
            if kept.stamp == Some(stamp) {
                (kept.facts.clone(), None)
            } else {
                // The facts changed: nothing kept may be served again, but
                // the reports read so far need not be read again.
                let stale = kept.facts.take();
                *kept = Kept::default();
                (None, stale)
            }
        };
        let facts = match facts {
            Some(f) => f,
            None => {
                let previous = stale.and_then(|f| Arc::try_unwrap(f).ok());
                Arc::new(read_facts_after(db, super::DISPUTE_WINDOW_DAYS, previous)?)
            }
        };
        let p = Arc::new(Prepared::new(&facts, filter)?);
        let mut kept = self.kept();
        if kept.stamp != Some(stamp) {
            *kept = Kept {
                stamp: Some(stamp),
                facts: Some(facts),
                selections: VecDeque::new(),
            };
        }
        if kept.selections.len() >= KEPT_SELECTIONS {
            kept.selections.pop_front();
        }
        kept.selections.push_back((filter.clone(), Arc::clone(&p)));
        Ok(p)
    }

    /// Every figure of the selection `filter` at `options`.
    pub fn figures(
        &self,
        db: &Db,
        filter: &StatsFilter,
        options: &FigureOptions,
    ) -> Result<Figures> {
        self.prepared(db, filter)?.figures(options)
    }

    /// Every figure of `asked` as JSON bytes, if kept for the facts as they
    /// stand (and, without a report date, made less than
    /// [`NOW_FRESH_FOR`] ago); reads nothing but the stamp.
    pub fn served_kept(&self, db: &Db, asked: &FiguresAsked) -> Option<Arc<Served>> {
        self.answers
            .get(db.fact_stamp(), asked)
            .filter(|s| asked.as_of.is_some() || s.age() < NOW_FRESH_FOR)
    }

    /// Every figure of `asked` as JSON bytes, serialised once per stamp
    /// and question (see [`StatsCache::served_kept`]).
    pub fn served(&self, db: &Db, asked: &FiguresAsked) -> Result<Arc<Served>> {
        if let Some(s) = self.served_kept(db, asked) {
            return Ok(s);
        }
        // Taken before the figures: they are at least this new.
        let stamp = db.fact_stamp();
        let f = self.figures(db, &asked.filter, &asked.options())?;
        let json = serde_json::to_vec(&f)
            .map_err(|e| Error::Internal(format!("statistics as JSON: {e}")))?;
        let s = Arc::new(Served::new(json));
        self.answers.put(stamp, asked.clone(), Arc::clone(&s));
        Ok(s)
    }

    /// Compute the unfiltered selection now if the facts changed since it
    /// was last computed (the server calls this in the background, so the
    /// next dashboard request finds it ready).
    pub fn refresh(&self, db: &Db) -> Result<()> {
        self.prepared(db, &StatsFilter::default()).map(drop)
    }
}

/// How often the background refresher looks at the fact stamp.
pub const REFRESH_TICK: std::time::Duration = std::time::Duration::from_secs(1);

/// Keep the unfiltered statistics ready in the background: after the facts
/// change and then stay the same for one tick (a burst of writes is waited
/// out), compute them, so the manager's next page finds them done. Ends
/// when the server drops `db` or `cache`.
pub fn keep_fresh(db: std::sync::Weak<Db>, cache: std::sync::Weak<StatsCache>) {
    let spawned = std::thread::Builder::new()
        .name("stats-refresh".into())
        .spawn(move || {
            let mut last_seen = None;
            let mut refreshed = None;
            loop {
                std::thread::sleep(REFRESH_TICK);
                let (Some(db), Some(cache)) = (db.upgrade(), cache.upgrade()) else {
                    return;
                };
                let stamp = db.fact_stamp();
                if last_seen != Some(stamp) {
                    last_seen = Some(stamp);
                    continue;
                }
                if refreshed == Some(stamp) {
                    continue;
                }
                // Tried once per stamp: a failure is logged, and the next
                // request reports it; retrying every tick would only burn.
                if let Err(e) = cache.refresh(&db) {
                    tracing::warn!("statistics refresh failed: {e}");
                }
                refreshed = Some(stamp);
            }
        });
    if let Err(e) = spawned {
        tracing::warn!("no background statistics refresh: {e}");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kept_while_the_facts_stay_and_recomputed_after_a_write() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let cache = StatsCache::new();
        let all = StatsFilter::default();
        let zone = StatsFilter {
            zone: Some("North".into()),
            ..Default::default()
        };
        let a = cache.prepared(&db, &all).unwrap();
        assert!(Arc::ptr_eq(&a, &cache.prepared(&db, &all).unwrap()));
        let z = cache.prepared(&db, &zone).unwrap();
        assert!(!Arc::ptr_eq(&a, &z), "each selection has its own entry");
        assert!(Arc::ptr_eq(&a, &cache.prepared(&db, &all).unwrap()));
        db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        let b = cache.prepared(&db, &all).unwrap();
        assert!(!Arc::ptr_eq(&a, &b), "a write makes the kept figures stale");
        // The number of selections kept is bounded.
        for d in 0..(KEPT_SELECTIONS as i32 + 3) {
            let f = StatsFilter {
                from: Some(crate::domain::Day::from_days(d)),
                ..Default::default()
            };
            cache.prepared(&db, &f).unwrap();
        }
        assert_eq!(cache.kept().selections.len(), KEPT_SELECTIONS);
    }

    #[test]
    fn the_report_date_is_applied_per_request() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let cache = StatsCache::new();
        let t = |d: i32| {
            crate::domain::Day::from_days(d)
                .date()
                .and_hms_opt(12, 0, 0)
                .unwrap()
                .and_utc()
        };
        let f1 = cache
            .figures(&db, &StatsFilter::default(), &FigureOptions::new(t(20_000)))
            .unwrap();
        let f2 = cache
            .figures(&db, &StatsFilter::default(), &FigureOptions::new(t(20_100)))
            .unwrap();
        assert_eq!(f1.as_of, t(20_000));
        assert_eq!(f2.as_of, t(20_100));
        assert_eq!(f2.time_to_visit.as_of, t(20_100));
    }

    #[test]
    fn the_bytes_served_are_the_figures_and_are_kept_until_a_write() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let cache = StatsCache::new();
        let asked = FiguresAsked {
            filter: StatsFilter::default(),
            as_of: Some(Day::from_days(20_000)),
            within_days: 14.0,
        };
        assert!(cache.served_kept(&db, &asked).is_none());
        let s = cache.served(&db, &asked).unwrap();
        let fresh = super::super::figures(&db, &asked.filter, &asked.options()).unwrap();
        assert_eq!(&s.json[..], &serde_json::to_vec(&fresh).unwrap()[..]);
        assert!(Arc::ptr_eq(&s, &cache.served_kept(&db, &asked).unwrap()));
        let other = FiguresAsked {
            within_days: 30.0,
            ..asked.clone()
        };
        assert!(
            cache.served_kept(&db, &other).is_none(),
            "T is part of the question"
        );
        db.write(|tx| tx.add_source("optical-10m", 10.0, 5))
            .unwrap();
        assert!(
            cache.served_kept(&db, &asked).is_none(),
            "a write drops the bytes"
        );
        let now = FiguresAsked {
            as_of: None,
            ..asked
        };
        let made = cache.served(&db, &now).unwrap();
        assert!(Arc::ptr_eq(&made, &cache.served_kept(&db, &now).unwrap()));
    }
}
