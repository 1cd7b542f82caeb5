//! Response times in days: plain median and p90 of each completed step, and
//! a Kaplan–Meier curve of detection → first visit in which events not yet
//! visited are censored at the report date.

use chrono::{DateTime, Utc};
use serde::Serialize;

use super::FiguresError;
use super::facts::{EventFacts, days_between};
use crate::stats::{
    CurveStep, DurationSummary, EventShare, KaplanMeier, duration_summary, kaplan_meier,
};

/// Median and p90 (Hyndman–Fan type 7) of each step, over the events where
/// both ends are known; `None` when no event has both. Days, fractional.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResponseTimes {
    /// `first_detected` (midnight UTC) → `issued_at`.
    pub detection_to_issue: Option<DurationSummary>,
    /// `issued_at` → `first_visit` (negative if visited before issue).
    pub issue_to_visit: Option<DurationSummary>,
    /// `first_detected` (midnight UTC) → `first_visit`.
    pub detection_to_visit: Option<DurationSummary>,
    /// `first_visit` → `first_received`.
    pub visit_to_received: Option<DurationSummary>,
}

/// The two ends of one step of one event, when both are known.
type Ends = Option<(DateTime<Utc>, DateTime<Utc>)>;

/// See [`ResponseTimes`].
pub fn response_times(events: &[EventFacts]) -> Result<ResponseTimes, FiguresError> {
    let collect = |f: &dyn Fn(&EventFacts) -> Ends| {
        let days: Vec<f64> = events
            .iter()
            .filter_map(f)
            .map(|(a, b)| days_between(a, b))
            .collect();
        duration_summary(&days)
    };
    Ok(ResponseTimes {
        detection_to_issue: collect(&|e| e.issued_at.map(|i| (e.detected_at(), i)))?,
        issue_to_visit: collect(&|e| e.issued_at.zip(e.first_visit))?,
        detection_to_visit: collect(&|e| e.first_visit.map(|v| (e.detected_at(), v)))?,
        visit_to_received: collect(&|e| e.first_visit.zip(e.first_received))?,
    })
}

/// One labelled time-to-visit curve.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct VisitCurve {
    pub label: String,
    /// `None` when no event is in the curve. Fitted on exact times; its
    /// steps are reported one per day ([`one_step_per_day`]). The median,
    /// its interval and `visited_within` come from the full curve.
    pub curve: Option<KaplanMeier>,
    /// 1 − Ŝ(T) for the target T days.
    pub visited_within: Option<EventShare>,
    /// Events detected after `as_of`, left out.
    pub detected_after_as_of: usize,
    /// Visits dated before the detection day, counted as visited at day 0.
    pub visit_before_detection: usize,
}

/// Time from detection to first visit over all events and over issued
/// events only.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TimeToVisit {
    pub as_of: DateTime<Utc>,
    pub within_days: f64,
    /// `[all events, issued events]`.
    pub curves: Vec<VisitCurve>,
}

/// Default target for "share visited within T days".
pub const DEFAULT_WITHIN_DAYS: f64 = 14.0;

/// Duration from detection (midnight UTC of `first_detected`) to the first
/// visit; a visit after `as_of` is not yet known, so that event, like every
/// unvisited one, is censored at `as_of − detection`. Events detected after
/// `as_of` are left out; a visit before the detection day counts as day 0.
pub fn time_to_visit(
    events: &[EventFacts],
    as_of: DateTime<Utc>,
    within_days: f64,
) -> Result<TimeToVisit, FiguresError> {
    let curve = |label: &str, filter: &dyn Fn(&EventFacts) -> bool| {
        let mut observations = Vec::new();
        let (mut future, mut early) = (0, 0);
        for e in events.iter().filter(|e| filter(e)) {
            let origin = e.detected_at();
            if origin > as_of {
                future += 1;
                continue;
            }
            match e.first_visit.filter(|v| *v <= as_of) {
                Some(v) => {
                    let d = days_between(origin, v);
                    if d < 0.0 {
                        early += 1;
                    }
                    observations.push((d.max(0.0), true));
                }
                None => observations.push((days_between(origin, as_of), false)),
            }
        }
        let curve = kaplan_meier(&observations)?;
        let visited_within = curve
            .as_ref()
            .map(|c| c.share_with_event_within(within_days))
            .transpose()?;
        let curve = curve.map(one_step_per_day);
        Ok::<_, FiguresError>(VisitCurve {
            label: label.to_string(),
            curve,
            visited_within,
            detected_after_as_of: future,
            visit_before_detection: early,
        })
    };
    Ok(TimeToVisit {
        as_of,
        within_days,
        curves: vec![
            curve("all events", &|_| true)?,
            curve("issued events", &|e| e.issued_at.is_some())?,
        ],
    })
}

/// The curve with one step per day of follow-up: visit times are exact to
/// the second, so over many events nearly every visit is a step of its own
/// (160,000 steps at 200,000 events), more than a chart or a manager can
/// use. Each day `[d, d + 1)` keeps its last step (its time, Ŝ, SE and
/// band, exact at that time), with the events and censorings of the whole
/// day and the number at risk when the day's first step began.
pub fn one_step_per_day(mut km: KaplanMeier) -> KaplanMeier {
    let mut kept: Vec<CurveStep> = Vec::new();
    let mut day = None;
    for s in std::mem::take(&mut km.steps) {
        let d = s.time.floor();
        match kept.last_mut() {
            Some(last) if day == Some(d) => {
                *last = CurveStep {
                    at_risk: last.at_risk,
                    events: last.events + s.events,
                    censored: last.censored + s.censored,
                    ..s
                };
            }
            _ => {
                kept.push(s);
                day = Some(d);
            }
        }
    }
    km.steps = kept;
    km
}

#[cfg(test)]
mod daily_tests {
    use super::*;

    #[test]
    fn one_step_per_day_keeps_the_last_step_of_each_day() {
        // Worked by hand: 5 subjects; visits at 0.2, 0.7 and 2.5 days, one
        // censored at 0.9 and one at 3.0. Full curve: S(0.2) = 4/5,
        // S(0.7) = 4/5 · 3/4 = 3/5, then S(2.5) = 3/5 · 1/2 = 3/10.
        let obs = [
            (0.2, true),
            (0.7, true),
            (0.9, false),
            (2.5, true),
            (3.0, false),
        ];
        let full = kaplan_meier(&obs).unwrap().unwrap();
        assert_eq!(full.steps.len(), 5);
        let daily = one_step_per_day(full.clone());
        let rows: Vec<(f64, usize, usize, usize)> = daily
            .steps
            .iter()
            .map(|s| (s.time, s.at_risk, s.events, s.censored))
            .collect();
        // Day 0 keeps its last row (0.9), with both visits and the one
        // censoring of that day and the 5 at risk when it began.
        assert_eq!(rows, vec![(0.9, 5, 2, 1), (2.5, 2, 1, 0), (3.0, 1, 0, 1)]);
        assert!((daily.steps[0].survival - 0.6).abs() < 1e-12);
        assert!((daily.steps[1].survival - 0.3).abs() < 1e-12);
        assert_eq!(daily.steps[0].se, full.steps[2].se);
        assert_eq!(daily.median, full.median, "the median is the full curve's");
        assert_eq!(
            daily.steps.iter().map(|s| s.events).sum::<usize>(),
            full.events
        );
    }
}
