//! Rules 1–3 of [`crate::reconcile`]: which reports count.
//!
//! The work is done on borrowed facts, because the statistics run these
//! rules over every stored report on each request (a million reports must
//! not be cloned two or three times). The public functions clone only the
//! result.

use super::facts::ReportFact;

/// Rule 1 on borrowed facts.
pub(crate) struct Distinct<'a> {
    /// One copy per `report_id` (the kept one), sorted by
    /// (`observed_at`, `report_id`).
    pub reports: Vec<&'a ReportFact>,
}

/// Rule 1: one copy per `report_id` (the first received; a full comparison
/// breaks a tie), sorted by (`observed_at`, `report_id`).
pub(crate) fn distinct(reports: &[ReportFact]) -> Distinct<'_> {
    let mut kept: Vec<&ReportFact> = rule_1(reports)
        .kept
        .into_iter()
        .map(|i| &reports[i as usize])
        .collect();
    // The keys are copied out once: sorting on them beats chasing a pointer
    // per comparison. Ids are distinct now, so the order is total.
    kept.sort_by_cached_key(|r| (r.observed_at, r.report_id));
    Distinct { reports: kept }
}

/// Rule 1 as positions in a slice of reports.
struct RuleOne {
    /// The kept copy of each `report_id`, in `report_id` order.
    kept: Vec<u32>,
    /// The copies dropped, in `report_id` order.
    dropped: Vec<u32>,
}

/// Rule 1 as positions in `reports`.
fn rule_1(reports: &[ReportFact]) -> RuleOne {
    // Storage reads reports in id order, without copies: one pass shows it.
    if reports
        .windows(2)
        .all(|w| w[0].report_id.as_u128() < w[1].report_id.as_u128())
    {
        return RuleOne {
            kept: (0..reports.len() as u32).collect(),
            dropped: Vec::new(),
        };
    }
    let mut by_id: Vec<u32> = (0..reports.len() as u32).collect();
    let at = |i: &u32| &reports[*i as usize];
    // Copies of one id become neighbours with the kept copy first.
    by_id.sort_by(|a, b| {
        let (a, b) = (at(a), at(b));
        a.report_id
            .cmp(&b.report_id)
            .then_with(|| (a.received_at, a).cmp(&(b.received_at, b)))
    });
    let first_of_its_id =
        |k: usize| k == 0 || at(&by_id[k - 1]).report_id != at(&by_id[k]).report_id;
    let (mut kept, mut dropped) = (Vec::with_capacity(by_id.len()), Vec::new());
    for (k, &i) in by_id.iter().enumerate() {
        if first_of_its_id(k) {
            kept.push(i);
        } else {
            dropped.push(i);
        }
    }
    RuleOne { kept, dropped }
}

/// Rules 1–3 over a slice of report facts, kept beside that slice: the
/// statistics decide once per request which reports count, and both the
/// event statuses and the team table read that one decision.
///
/// The distinct reports are given places grouped by event, each event's in
/// (`observed_at`, `report_id`) order: the order in which both readers take
/// them. A reader goes through the slice in memory order and puts what it
/// keeps of each report at its place, then reads the places in order.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct CountedIndex {
    /// For each report of the slice, its place; `None` for a copy rule 1
    /// dropped.
    places: Vec<Option<u32>>,
    /// The `event_id` of each place, in order.
    events: Vec<i64>,
    /// Whether the report at each place counts (rules 2–3).
    counts: Vec<bool>,
    /// Positions of the copies rule 1 dropped.
    dropped: Vec<u32>,
}

impl CountedIndex {
    /// Rules 1–3 over `reports`.
    pub fn of(reports: &[ReportFact]) -> Self {
        let RuleOne { kept, dropped } = rule_1(reports);
        // In `report_id` order, which `counts` uses to find superseded ids.
        let refs: Vec<&ReportFact> = kept.iter().map(|&i| &reports[i as usize]).collect();
        let counts = counts(&refs);
        let (order, events) = event_order(&refs);
        let mut places = vec![None; reports.len()];
        for (place, &k) in order.iter().enumerate() {
            places[kept[k as usize] as usize] = Some(place as u32);
        }
        CountedIndex {
            places,
            events,
            counts: order.iter().map(|&k| counts[k as usize]).collect(),
            dropped,
        }
    }

    /// True when this was computed from a slice of `reports`' length (the
    /// caller's promise is that it was computed from `reports` itself).
    pub fn fits(&self, reports: &[ReportFact]) -> bool {
        self.places.len() == reports.len()
            && self
                .places
                .iter()
                .flatten()
                .all(|&p| (p as usize) < self.events.len())
            && self.dropped.iter().all(|&i| (i as usize) < reports.len())
    }

    /// Positions of the copies rule 1 dropped.
    pub(crate) fn dropped(&self) -> &[u32] {
        &self.dropped
    }

    /// For each report of the slice, in slice order: its place, `None` for
    /// a copy rule 1 dropped.
    pub(crate) fn places(&self) -> &[Option<u32>] {
        &self.places
    }

    /// Whether the report at `place` counts.
    pub(crate) fn counts_at(&self, place: u32) -> bool {
        self.counts[place as usize]
    }

    /// The `event_id` of each place, in order: grouped by event.
    pub(crate) fn events(&self) -> &[i64] {
        &self.events
    }
}

/// Indices into `distinct` sorted by (`event_id`, `observed_at`,
/// `report_id`), for `distinct` in `report_id` order, and the `event_id` of
/// each.
fn event_order(distinct: &[&ReportFact]) -> (Vec<u32>, Vec<i64>) {
    // Plain integer keys sort faster than the fields: a time orders as its
    // (seconds, nanoseconds) since the epoch, and the index orders as the
    // `report_id` (the slice is in id order and ids are distinct).
    let mut keys: Vec<(i64, i64, u32, u32)> = distinct
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let t = r.observed_at;
            (
                r.event_id,
                t.timestamp(),
                t.timestamp_subsec_nanos(),
                k as u32,
            )
        })
        .collect();
    keys.sort_unstable();
    keys.into_iter().map(|(e, .., k)| (k, e)).unzip()
}

/// For each of `distinct` (one report per id, any order), the position of
/// the report it supersedes, when that one is among them and not itself.
fn superseded(distinct: &[&ReportFact]) -> Vec<Option<u32>> {
    if distinct.iter().all(|r| r.supersedes.is_none()) {
        return vec![None; distinct.len()];
    }
    let mut by_id: Vec<(u128, u32)> = distinct
        .iter()
        .enumerate()
        .map(|(i, r)| (r.report_id.as_u128(), i as u32))
        .collect();
    // Cheap when `distinct` is in id order already (one pass to check).
    by_id.sort_unstable();
    distinct
        .iter()
        .map(|r| {
            let id = r.supersedes.filter(|id| *id != r.report_id)?.as_u128();
            let k = by_id.binary_search_by_key(&id, |&(k, _)| k).ok()?;
            Some(by_id[k].1)
        })
        .collect()
}

/// Rules 2–3 on distinct reports (one per `report_id`, any order): for
/// each report (same order), whether it counts.
pub(crate) fn counts(distinct: &[&ReportFact]) -> Vec<bool> {
    let n = distinct.len();
    let target = superseded(distinct);
    // How many reports name each one.
    let mut named = vec![0u32; n];
    for t in target.iter().flatten() {
        named[*t as usize] = named[*t as usize].saturating_add(1);
    }
    let mut counts: Vec<bool> = named.iter().map(|&k| k == 0).collect();
    // Cycles: every member is named; keep the last member unless an outside
    // report names one of them. Each member is named by exactly one other
    // member (its predecessor on the cycle), so it is named from outside
    // exactly when it is named more than once.
    const NOT_YET: usize = usize::MAX;
    let mut seen = vec![false; n];
    // The walk that put a report on its path (a stamp instead of a set per walk).
    let mut on_path = vec![NOT_YET; n];
    let mut path = Vec::new();
    for start in 0..n {
        // A walk from a report that names none ends there, outside any cycle.
        if seen[start] || target[start].is_none() {
            continue;
        }
        path.clear();
        let mut at = Some(start);
        while let Some(i) = at {
            if seen[i] || on_path[i] == start {
                break;
            }
            on_path[i] = start;
            path.push(i);
            at = target[i].map(|t| t as usize);
        }
        if let Some(i) = at
            && !seen[i]
            && on_path[i] == start
        {
            let cycle = path.iter().copied().skip_while(|&p| p != i);
            let named_from_outside = cycle.clone().any(|m| named[m] > 1);
            let last = cycle.max_by_key(|&m| (distinct[m].observed_at, distinct[m].report_id));
            if !named_from_outside && let Some(last) = last {
                counts[last] = true;
            }
        }
        for &i in &path {
            seen[i] = true;
        }
    }
    counts
}

/// Rule 1: one copy per `report_id` (the first received), sorted by
/// (`observed_at`, `report_id`).
pub fn distinct_reports(reports: &[ReportFact]) -> Vec<ReportFact> {
    distinct(reports).reports.into_iter().cloned().collect()
}

/// Rules 1–3: the reports that count, sorted by (`observed_at`, `report_id`).
pub fn counted_reports(reports: &[ReportFact]) -> Vec<ReportFact> {
    counted_refs(reports).into_iter().cloned().collect()
}

/// Rules 1–3 on borrowed facts, sorted by (`observed_at`, `report_id`).
pub(crate) fn counted_refs(reports: &[ReportFact]) -> Vec<&ReportFact> {
    let d = distinct(reports);
    let c = counts(&d.reports);
    d.reports
        .into_iter()
        .zip(c)
        .filter_map(|(r, c)| c.then_some(r))
        .collect()
}
