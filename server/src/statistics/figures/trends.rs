//! Trends by month of first detection: the confirmation rate with its
//! Wilson interval, and the time to visit as a Kaplan–Meier median with its
//! 95% interval (unvisited events censored at the report date, so a month
//! whose events are still waiting does not look fast); and the same time per
//! team and month, from issue, to compare the teams over time.

use std::collections::BTreeMap;

use chrono::{DateTime, Utc};
use serde::Serialize;

use super::FiguresError;
use super::facts::{EventFacts, days_between, month_of};
use super::rates::RateCounts;
use crate::statistics::estimators::{ProportionEstimate, TimeBounds, kaplan_meier, wilson};

/// One month of one group.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendPoint {
    /// "all", or a team's name.
    pub group: String,
    /// "YYYY-MM" of first detection.
    pub month: String,
    /// Events in the time-to-visit curve of this month (detected, and for a
    /// team issued, by `as_of`).
    pub events: u64,
    /// confirmed / (confirmed + false alarm), Wilson 95%.
    pub confirmation: Option<ProportionEstimate>,
    /// Kaplan–Meier median days to the first visit; `None` when not reached.
    pub median_days: Option<f64>,
    pub median_ci95: TimeBounds,
}

/// Where a trend's clock starts.
#[derive(Debug, Clone, Copy)]
enum Origin {
    Detection,
    Issue,
}

/// The month's observations of one group.
#[derive(Debug, Default)]
struct Cell {
    rates: RateCounts,
    visits: Vec<(f64, bool)>,
}

impl Cell {
    fn add(&mut self, e: &EventFacts, as_of: DateTime<Utc>, origin: Origin) {
        self.rates += RateCounts::of(e);
        let start = match origin {
            Origin::Detection => Some(e.detected_at()),
            Origin::Issue => e.issued_at,
        };
        let Some(start) = start.filter(|s| *s <= as_of) else {
            return;
        };
        match e.first_visit.filter(|v| *v <= as_of) {
            Some(v) => self.visits.push((days_between(start, v).max(0.0), true)),
            None => self
                .visits
                .push((days_between(start, as_of).max(0.0), false)),
        }
    }

    fn point(self, group: String, month: String) -> Result<TrendPoint, FiguresError> {
        let (confirmed, decided) = self.rates.decided();
        let km = kaplan_meier(&self.visits)?;
        Ok(TrendPoint {
            group,
            month,
            events: self.visits.len() as u64,
            confirmation: wilson(confirmed, decided)?,
            median_days: km.as_ref().and_then(|k| k.median),
            median_ci95: km.map_or(
                TimeBounds {
                    lower: None,
                    upper: None,
                },
                |k| k.median_ci95,
            ),
        })
    }
}

fn points(cells: BTreeMap<(String, String), Cell>) -> Result<Vec<TrendPoint>, FiguresError> {
    cells
        .into_iter()
        .map(|((group, month), c)| c.point(group, month))
        .collect()
}

/// One point per month of first detection over all alert events (time
/// from detection). Clearings found on the ground are left out.
pub fn monthly_trends(
    events: &[EventFacts],
    as_of: DateTime<Utc>,
) -> Result<Vec<TrendPoint>, FiguresError> {
    let mut cells: BTreeMap<(String, String), Cell> = BTreeMap::new();
    for e in events.iter().filter(|e| !e.found_on_ground) {
        let key = ("all".to_string(), month_of(e.first_detected));
        cells
            .entry(key)
            .or_default()
            .add(e, as_of, Origin::Detection);
    }
    points(cells)
}

/// One point per team and month of first detection, time from issue, over
/// the issued alert events of each team.
pub fn team_trends(
    events: &[EventFacts],
    as_of: DateTime<Utc>,
) -> Result<Vec<TrendPoint>, FiguresError> {
    let mut cells: BTreeMap<(String, String), Cell> = BTreeMap::new();
    for e in events
        .iter()
        .filter(|e| !e.found_on_ground && e.issued_at.is_some())
    {
        let month = month_of(e.first_detected);
        for team in &e.teams {
            let key = (team.clone(), month.clone());
            cells.entry(key).or_default().add(e, as_of, Origin::Issue);
        }
    }
    points(cells)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::EventStatus;
    use chrono::{Duration, NaiveDate, TimeZone};

    fn at(m: u32, d: u32) -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2025, m, d, 0, 0, 0)
            .single()
            .expect("time")
    }

    fn event(id: i64, month: u32, visit_days: Option<i64>, status: EventStatus) -> EventFacts {
        let day = NaiveDate::from_ymd_opt(2025, month, 1).expect("date");
        EventFacts {
            event_id: id,
            zone_names: vec![],
            sources: vec![],
            highest_confidence: "high".into(),
            corroborated: false,
            area_ha: 1.0,
            first_detected: day,
            issued_at: Some(at(month, 1) + Duration::days(1)),
            status,
            new_clearing: false,
            first_visit: visit_days.map(|d| at(month, 1) + Duration::days(d)),
            first_received: None,
            cause: None,
            teams: vec!["Team A".into()],
            sampled: None,
            found_on_ground: false,
        }
    }

    #[test]
    fn each_month_has_its_rate_and_median_with_intervals() {
        use EventStatus::{Confirmed, FalseAlarm, Unvisited};
        // January: visits on days 2, 4, 6 (C, C, FA), one unvisited
        // (censored at as_of, day 89): KM S = 3/4, 2/4, 1/4 → median 4
        // (first S ≤ 0.5); rate 2/3. February: visits on 10 and 20 (C, C):
        // S = 1/2 at 10 → median 10; rate 2/2, Wilson upper exactly 1.
        let events = vec![
            event(1, 1, Some(2), Confirmed),
            event(2, 1, Some(4), Confirmed),
            event(3, 1, Some(6), FalseAlarm),
            event(4, 1, None, Unvisited),
            event(5, 2, Some(10), Confirmed),
            event(6, 2, Some(20), Confirmed),
        ];
        let t = monthly_trends(&events, at(3, 31)).unwrap();
        let months: Vec<(&str, u64, Option<f64>)> = t
            .iter()
            .map(|p| (p.month.as_str(), p.events, p.median_days))
            .collect();
        assert_eq!(
            months,
            vec![("2025-01", 4, Some(4.0)), ("2025-02", 2, Some(10.0))]
        );
        let jan = t[0].confirmation.as_ref().unwrap();
        assert_eq!((jan.successes, jan.trials), (2, 3));
        // Wilson 2/3 (statistics.md §1.1 by hand, as in figures/tests.rs): 0.207660–0.938508.
        assert!((jan.ci95.lower - 0.207_660).abs() < 1e-6);
        assert_eq!(t[1].confirmation.as_ref().unwrap().ci95.upper, 1.0);
        // Team trend: time from issue (a day after detection): January
        // visits at 1, 3, 5 days → median 3.
        let teams = team_trends(&events, at(3, 31)).unwrap();
        assert_eq!(teams[0].group, "Team A");
        assert_eq!(teams[0].median_days, Some(3.0));
    }
}
