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
    /// More than one copy of some `report_id` was given.
    pub had_copies: bool,
}

/// Rule 1: one copy per `report_id` (the first received; a full comparison
/// breaks a tie), sorted by (`observed_at`, `report_id`).
pub(crate) fn distinct(reports: &[ReportFact]) -> Distinct<'_> {
    let mut by_id: Vec<&ReportFact> = reports.iter().collect();
    // Copies of one id become neighbours with the kept copy first. Storage
    // reads reports in id order, so this sort only checks the order.
    by_id.sort_by(|a, b| {
        a.report_id
            .cmp(&b.report_id)
            .then_with(|| (a.received_at, *a).cmp(&(b.received_at, *b)))
    });
    by_id.dedup_by_key(|r| r.report_id);
    let had_copies = by_id.len() < reports.len();
    let mut out = by_id;
    // The keys are copied out once: sorting on them beats chasing a pointer
    // per comparison. Ids are distinct now, so the order is total.
    out.sort_by_cached_key(|r| (r.observed_at, r.report_id));
    Distinct {
        reports: out,
        had_copies,
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
