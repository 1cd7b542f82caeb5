//! The headline "share visited within the target", from detection and from
//! issue, as a plain binomial share with a Wilson 95% interval.
//!
//! # Why not 1 − Ŝ(T) with Greenwood
//!
//! The Kaplan–Meier share 1 − Ŝ(T) with a Greenwood (or log-log) interval
//! collapses to a point when no event, or every event, was visited within
//! T days: Greenwood's variance is then 0 and the page printed
//! "0.0% (95% CI 0.0%–0.0%)". Here the share is taken over the events whose
//! target window is over by the report date (origin + T ≤ `as_of`): for each
//! of them it is known whether it was visited within T days, so there is no
//! censoring, and the share is x/n with the Wilson score interval (Wilson
//! 1927; Newcombe 1998, "method 3"), which stays honest at 0 and at 1: 0 of
//! 20 gives 0%–16.1%. Events whose window is still open are left out (even
//! when already visited, which would bias the share upwards) and counted.

use chrono::{DateTime, Duration, Utc};
use serde::Serialize;

use super::FiguresError;
use super::facts::EventFacts;
use crate::statistics::estimators::{ProportionEstimate, wilson};

/// Where the target's clock starts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TargetFrom {
    /// Midnight UTC of the first detection day.
    Detection,
    /// When the first bundle holding the event was issued: a team cannot
    /// act before that.
    Issue,
}

impl TargetFrom {
    pub fn label(self) -> &'static str {
        match self {
            TargetFrom::Detection => "from detection",
            TargetFrom::Issue => "from issue",
        }
    }
}

/// Share of the issued events visited within T days of detection or issue.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TargetShare {
    pub from: TargetFrom,
    pub within_days: f64,
    /// Issued events whose window (origin + T) closed by `as_of`: the n.
    pub window_closed: u64,
    /// Of those, visited within T days (a visit before the origin counts):
    /// the x.
    pub visited_within: u64,
    /// Issued events whose window is still open, left out.
    pub window_open: u64,
    /// x/n with the Wilson 95% interval; `None` when n = 0.
    pub share: Option<ProportionEstimate>,
}

/// The counts of both target shares, gathered event by event.
#[derive(Debug, Clone)]
pub(crate) struct TargetTally {
    as_of: DateTime<Utc>,
    window: Option<Duration>,
    within_days: f64,
    /// (window closed, visited within, window open) from detection, from issue.
    counts: [(u64, u64, u64); 2],
}

impl TargetTally {
    pub(crate) fn new(as_of: DateTime<Utc>, within_days: f64) -> Self {
        let ms = within_days * 86_400_000.0;
        let window = (0.0..1e15)
            .contains(&ms)
            .then(|| Duration::milliseconds(ms.round() as i64));
        TargetTally {
            as_of,
            window,
            within_days,
            counts: [(0, 0, 0); 2],
        }
    }

    /// Adds one event; only issued alert events count (a clearing found
    /// on the ground is not an alert).
    pub(crate) fn add(&mut self, e: &EventFacts) {
        let (Some(issued), Some(window), false) = (e.issued_at, self.window, e.found_on_ground)
        else {
            return;
        };
        for (k, origin) in [e.detected_at(), issued].into_iter().enumerate() {
            let end = origin + window;
            let c = &mut self.counts[k];
            if end > self.as_of {
                c.2 += 1;
                continue;
            }
            c.0 += 1;
            if e.first_visit.is_some_and(|v| v <= end) {
                c.1 += 1;
            }
        }
    }

    pub(crate) fn finish(self) -> Result<Vec<TargetShare>, FiguresError> {
        [TargetFrom::Detection, TargetFrom::Issue]
            .into_iter()
            .zip(self.counts)
            .map(|(from, (n, x, open))| {
                Ok(TargetShare {
                    from,
                    within_days: self.within_days,
                    window_closed: n,
                    visited_within: x,
                    window_open: open,
                    share: wilson(x, n)?,
                })
            })
            .collect()
    }
}

/// [`TargetShare`] from detection and from issue over `events`.
pub fn target_shares(
    events: &[EventFacts],
    as_of: DateTime<Utc>,
    within_days: f64,
) -> Result<Vec<TargetShare>, FiguresError> {
    let mut t = TargetTally::new(as_of, within_days);
    events.iter().for_each(|e| t.add(e));
    t.finish()
}

/// Clearings the teams found on the ground that no alert flagged (what the
/// alerts miss). They are not an alert source: they stay out of every
/// alert figure (coverage, confirmation rates, time to visit, targets).
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct GroundFinds {
    pub clearings: u64,
    /// Summed area of their footprints, ha.
    pub area_ha: f64,
}

impl GroundFinds {
    pub(crate) fn add(&mut self, e: &EventFacts) {
        self.clearings += 1;
        if e.area_ha.is_finite() && e.area_ha > 0.0 {
            self.area_ha += e.area_ha;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::EventStatus;
    use crate::statistics::estimators::kaplan_meier;
    use chrono::{NaiveDate, TimeZone};

    fn at(m: u32, d: u32) -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2025, m, d, 0, 0, 0)
            .single()
            .expect("valid time")
    }

    /// An issued event detected on `detected`, issued `issue_lag` days
    /// later, visited `visit` days after detection (if ever).
    fn event(id: i64, detected: (u32, u32), issue_lag: i64, visit: Option<i64>) -> EventFacts {
        let day = NaiveDate::from_ymd_opt(2025, detected.0, detected.1).expect("date");
        let origin = at(detected.0, detected.1);
        EventFacts {
            event_id: id,
            zone_names: vec![],
            sources: vec!["optical-10m".into()],
            highest_confidence: "high".into(),
            corroborated: false,
            area_ha: 1.0,
            first_detected: day,
            issued_at: Some(origin + Duration::days(issue_lag)),
            status: if visit.is_some() {
                EventStatus::Confirmed
            } else {
                EventStatus::Unvisited
            },
            new_clearing: false,
            first_visit: visit.map(|v| origin + Duration::days(v)),
            first_received: None,
            cause: None,
            teams: vec![],
            sampled: None,
            found_on_ground: false,
        }
    }

    #[test]
    fn none_visited_in_time_gives_an_honest_interval_not_a_point() {
        // 20 issued events, all windows over, none visited: 0/20.
        let events: Vec<EventFacts> = (0..20).map(|i| event(i, (1, 1), 1, None)).collect();
        let as_of = at(6, 1);
        let t = target_shares(&events, as_of, 14.0).unwrap();
        let s = t[0].share.as_ref().unwrap();
        assert_eq!((t[0].visited_within, t[0].window_closed), (0, 20));
        assert_eq!(s.estimate, 0.0);
        assert_eq!(s.ci95.lower, 0.0);
        // Wilson 95% for 0/20: 0–0.1611 (Newcombe 1998, Stat Med 17:857,
        // Table II, recalled from memory); 0.161125 from statsmodels 0.15.0
        // proportion_confint(0, 20, method='wilson') (statistics.md §2.5).
        assert!((s.ci95.upper - 0.161125).abs() < 5e-7, "{}", s.ci95.upper);
        // The Kaplan–Meier share with its band, shown before, is a point.
        let km = kaplan_meier(&vec![(151.0, false); 20]).unwrap().unwrap();
        let old = km.share_with_event_within(14.0).unwrap();
        assert_eq!((old.ci95.lower, old.ci95.upper), (0.0, 0.0));
    }

    #[test]
    fn the_wilson_share_matches_newcombes_published_interval() {
        // 263 events with their windows over, 81 visited within 14 days of
        // issue: Wilson 0.2553–0.3662 (Newcombe 1998, as quoted by
        // m-Py/propint tests/testthat/test_Single_Proportion_CI.R).
        let events: Vec<EventFacts> = (0..263)
            .map(|i| event(i, (1, 1), 2, (i < 81).then_some(10)))
            .collect();
        let t = target_shares(&events, at(6, 1), 14.0).unwrap();
        let s = t[1].share.as_ref().unwrap();
        assert_eq!(t[1].from, TargetFrom::Issue);
        assert_eq!((s.successes, s.trials), (81, 263));
        assert!((s.ci95.lower - 0.2553).abs() < 5e-5, "{}", s.ci95.lower);
        assert!((s.ci95.upper - 0.3662).abs() < 5e-5, "{}", s.ci95.upper);
    }

    #[test]
    fn from_detection_and_from_issue_count_their_own_windows() {
        // as_of 2025-03-31, T = 14 days. Worked by hand:
        // 1: detected 03-01, issued 03-11, visited 03-20 (day 19 from
        //    detection, day 9 from issue): late from detection, in time from issue.
        // 2: detected 03-01, issued 03-02, visited 03-10: in time from both.
        // 3: detected 03-10, issued 03-20 (issue window ends 04-03, open),
        //    visited 03-22 (day 12 from detection): in time from detection,
        //    left out from issue (window open, even though visited).
        // 4: detected 03-25 (window open from both), unvisited.
        // 5: never issued: in neither.
        let mut e5 = event(5, (3, 1), 0, None);
        e5.issued_at = None;
        let events = vec![
            event(1, (3, 1), 10, Some(19)),
            event(2, (3, 1), 1, Some(9)),
            event(3, (3, 10), 10, Some(12)),
            event(4, (3, 25), 1, None),
            e5,
        ];
        let t = target_shares(&events, at(3, 31), 14.0).unwrap();
        let counts: Vec<(u64, u64, u64)> = t
            .iter()
            .map(|s| (s.visited_within, s.window_closed, s.window_open))
            .collect();
        // From detection: 2 (events 2, 3) of 3 closed (1, 2, 3); 4 open.
        // From issue: 2 (events 1, 2) of 2 closed; 3 and 4 open.
        assert_eq!(counts, vec![(2, 3, 1), (2, 2, 2)]);
        // 2/2: the upper bound is exactly 1, the lower Wilson's 0.342380
        // (hand formula of statistics.md §1.1, z = 1.959964).
        let s = t[1].share.as_ref().unwrap();
        assert_eq!(s.ci95.upper, 1.0);
        assert!((s.ci95.lower - 0.342380).abs() < 1e-6, "{}", s.ci95.lower);
    }
}
