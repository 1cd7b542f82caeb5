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
    let (order, _) = distinct_positions(reports);
    Distinct {
        reports: order.into_iter().map(|i| &reports[i as usize]).collect(),
    }
}

/// Rule 1 as positions in `reports`: one per `report_id` (the kept copy),
/// sorted by (`observed_at`, `report_id`); and whether copies were dropped.
fn distinct_positions(reports: &[ReportFact]) -> (Vec<u32>, bool) {
    let mut by_id: Vec<u32> = (0..reports.len() as u32).collect();
    let at = |i: &u32| &reports[*i as usize];
    // Copies of one id become neighbours with the kept copy first. Storage
    // reads reports in id order, so this sort only checks the order.
    by_id.sort_by(|a, b| {
        let (a, b) = (at(a), at(b));
        a.report_id
            .cmp(&b.report_id)
            .then_with(|| (a.received_at, a).cmp(&(b.received_at, b)))
    });
    by_id.dedup_by_key(|i| at(i).report_id);
    let had_copies = by_id.len() < reports.len();
    let mut out = by_id;
    // The keys are copied out once: sorting on them beats chasing a pointer
    // per comparison. Ids are distinct now, so the order is total.
    out.sort_by_cached_key(|i| (at(i).observed_at, at(i).report_id));
    (out, had_copies)
}

/// Rules 1–3 over a slice of report facts, kept as positions in that slice
/// so that the result can travel beside it: the statistics decide once per
/// request which reports count, and both the event statuses and the team
/// table read that one decision.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct CountedIndex {
    /// Length of the slice this was computed from.
    len: usize,
    /// Position of each distinct report (the kept copy), sorted by
    /// (`observed_at`, `report_id`).
    distinct: Vec<u32>,
    /// Whether each of `distinct` counts (rules 2–3).
    counts: Vec<bool>,
    /// Rule 1 dropped some copy.
    had_copies: bool,
}

impl CountedIndex {
    /// Rules 1–3 over `reports`.
    pub fn of(reports: &[ReportFact]) -> Self {
        let (distinct, had_copies) = distinct_positions(reports);
        let refs: Vec<&ReportFact> = distinct.iter().map(|&i| &reports[i as usize]).collect();
        let counts = counts(&refs);
        CountedIndex {
            len: reports.len(),
            distinct,
            counts,
            had_copies,
        }
    }

    /// True when this was computed from a slice of `reports`' length (the
    /// caller's promise is that it was computed from `reports` itself).
    pub fn fits(&self, reports: &[ReportFact]) -> bool {
        self.len == reports.len() && self.distinct.iter().all(|&i| (i as usize) < self.len)
    }

    /// Rule 1 dropped some copy.
    pub(crate) fn had_copies(&self) -> bool {
        self.had_copies
    }

    /// For each report of the slice, in slice order: `None` for a copy rule 1
    /// dropped, else whether it counts.
    pub(crate) fn by_position(&self) -> Vec<Option<bool>> {
        let mut out = vec![None; self.len];
        for (&i, &c) in self.distinct.iter().zip(&self.counts) {
            out[i as usize] = Some(c);
        }
        out
    }

    /// The distinct reports in (`observed_at`, `report_id`) order, each
    /// with whether it counts.
    pub(crate) fn iter<'a>(
        &'a self,
        reports: &'a [ReportFact],
    ) -> impl Iterator<Item = (&'a ReportFact, bool)> + 'a {
        self.distinct
            .iter()
            .zip(&self.counts)
            .map(move |(&i, &c)| (&reports[i as usize], c))
    }
}

/// Rules 2–3 on the output of [`distinct`]: for each report (same order),
/// whether it counts.
pub(crate) fn counts(distinct: &[&ReportFact]) -> Vec<bool> {
    let n = distinct.len();
    // The report each one supersedes, when that one is known and not itself.
    let mut target: Vec<Option<usize>> = vec![None; n];
    if distinct.iter().any(|r| r.supersedes.is_some()) {
        let mut by_id: Vec<(uuid::Uuid, usize)> = distinct
            .iter()
            .enumerate()
            .map(|(i, r)| (r.report_id, i))
            .collect();
        by_id.sort_unstable();
        for (i, r) in distinct.iter().enumerate() {
            target[i] = r
                .supersedes
                .filter(|id| *id != r.report_id)
                .and_then(|id| by_id.binary_search_by_key(&id, |&(k, _)| k).ok())
                .map(|k| by_id[k].1);
        }
    }
    // How many reports name each one.
    let mut named = vec![0u32; n];
    for t in target.iter().flatten() {
        named[*t] = named[*t].saturating_add(1);
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
        if seen[start] {
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
            at = target[i];
        }
        if let Some(i) = at
            && !seen[i]
            && on_path[i] == start
        {
            let cycle = path.iter().copied().skip_while(|&p| p != i);
            let named_from_outside = cycle.clone().any(|m| named[m] > 1);
            if !named_from_outside && let Some(last) = cycle.max() {
                // `distinct` is sorted by (observed_at, report_id): the largest
                // index sorts last.
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
