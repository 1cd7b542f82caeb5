//! Input rows of the figures (one per event, one per control point) and the
//! grouping keys. Plain data, filled by the storage layer and by
//! [`crate::reconcile`].

use std::collections::BTreeSet;
use std::fmt;

use chrono::{DateTime, Datelike, NaiveDate, NaiveTime, Utc};
use serde::Serialize;

use crate::domain::{EventStatus, Outcome};
use crate::reconcile::StatusOutcome;

/// How a sampled event was drawn for an assessment trip.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SampleInfo {
    pub stratum: String,
    /// π = n_h / N_h of the draw.
    pub inclusion_probability: f64,
    /// N_h: events in the stratum when the sample was drawn.
    pub stratum_population: u64,
}

/// One clearing event with its reconciled status.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EventFacts {
    pub event_id: i64,
    pub zone_names: Vec<String>,
    pub sources: Vec<String>,
    /// The alert confidence level, "high" or "low" (never "confirmed":
    /// that word is a visit's outcome).
    pub highest_confidence: String,
    pub corroborated: bool,
    pub area_ha: f64,
    pub first_detected: NaiveDate,
    /// When the first bundle holding the event was issued.
    pub issued_at: Option<DateTime<Utc>>,
    pub status: EventStatus,
    pub new_clearing: bool,
    pub first_visit: Option<DateTime<Utc>>,
    pub first_received: Option<DateTime<Utc>>,
    pub cause: Option<String>,
    /// Teams the event was issued to or that reported on it.
    pub teams: Vec<String>,
    pub sampled: Option<SampleInfo>,
    /// A clearing a team found on the ground that no alert flagged: not an
    /// alert, so out of every alert figure (see [`super::GroundFinds`]).
    pub found_on_ground: bool,
}

impl EventFacts {
    /// Copies the reconciled fields in; `teams` becomes the sorted union of
    /// the teams already there and the reporting teams.
    pub fn apply_status(&mut self, outcome: &StatusOutcome) {
        self.status = outcome.status;
        self.new_clearing = outcome.new_clearing;
        self.first_visit = outcome.first_visit;
        self.first_received = outcome.first_received;
        self.cause = outcome.cause.clone();
        let teams: BTreeSet<String> = self.teams.iter().chain(&outcome.teams).cloned().collect();
        self.teams = teams.into_iter().collect();
    }

    /// Midnight UTC of the first detection day: the origin of every
    /// "detection → ..." duration.
    pub fn detected_at(&self) -> DateTime<Utc> {
        self.first_detected.and_time(NaiveTime::MIN).and_utc()
    }
}

/// A visited (or planned) control point: a random location without alert.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ControlFacts {
    /// The no-alert stratum, normally "control".
    pub stratum: String,
    /// What the latest counted report says about the point.
    pub finding: ControlFinding,
    /// The area the point stands for (its plot), in ha.
    pub area_ha: f64,
    pub inclusion_probability: f64,
}

/// What was found at a control point. Only `Clearing` and `NoClearing` are
/// observations of its stratum; the other three are non-response, each
/// counted apart.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ControlFinding {
    /// A clearing at the point, with the area the team estimated for it
    /// (checklist 2's `clearing_found`); `None` when no area was recorded
    /// (checklist 1's `confirmed`).
    Clearing {
        area_ha: Option<f64>,
    },
    NoClearing,
    /// The team was there but could not tell.
    Inconclusive,
    /// The team reported that it could not reach the point.
    NotReached,
    /// No report on the point yet.
    Unvisited,
}

impl ControlFinding {
    /// The finding of a report with `outcome` (either checklist's words, read
    /// through [`Outcome::control_finding`]) and estimated `area_ha`;
    /// [`ControlFinding::Unvisited`] without a report.
    pub fn of_report(report: Option<(Outcome, Option<f64>)>) -> Self {
        let Some((outcome, area_ha)) = report else {
            return ControlFinding::Unvisited;
        };
        match (outcome.control_finding(), outcome) {
            (Some(true), _) => ControlFinding::Clearing { area_ha },
            (Some(false), _) => ControlFinding::NoClearing,
            (None, Outcome::NotReached) => ControlFinding::NotReached,
            (None, _) => ControlFinding::Inconclusive,
        }
    }

    /// y_u of the area estimate: the share of a plot of `plot_ha` that is
    /// cleared, min(area, plot)/plot; a clearing without a recorded area
    /// counts as the whole plot, no clearing as 0; `None` when the point is
    /// not an observation.
    pub fn cleared_share(self, plot_ha: f64) -> Option<f64> {
        match self {
            ControlFinding::Clearing { area_ha: Some(a) } if plot_ha > 0.0 => {
                Some((a / plot_ha).clamp(0.0, 1.0))
            }
            ControlFinding::Clearing { .. } => Some(1.0),
            ControlFinding::NoClearing => Some(0.0),
            _ => None,
        }
    }
}

/// Label of the group of events with no value for a key.
pub const NO_VALUE: &str = "(none)";

/// How to split events into groups. An event with several values (two zones,
/// two sources, two teams) counts once in each of its groups; an event with
/// none falls in [`NO_VALUE`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GroupKey {
    /// One group, "all".
    All,
    Zone,
    Team,
    /// "YYYY-MM" of `first_detected`.
    DetectionMonth,
    Source,
    /// `highest_confidence`.
    Confidence,
    /// "corroborated" or "single source".
    Corroborated,
    /// The cause (confirmed events only have one).
    Cause,
    /// The sample stratum, or "(not sampled)".
    Stratum,
}

/// "YYYY-MM" of a date.
pub fn month_of(date: NaiveDate) -> String {
    Month::of(date).to_string()
}

/// A month kept as numbers until its name ("YYYY-MM") is needed: the
/// figures split every event by month on each request.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub(crate) struct Month {
    year: i32,
    month: u32,
}

impl Month {
    /// The month of `date`.
    pub(crate) fn of(date: NaiveDate) -> Self {
        Month {
            year: date.year(),
            month: date.month(),
        }
    }
}

impl fmt::Display for Month {
    /// "YYYY-MM".
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:04}-{:02}", self.year, self.month)
    }
}

impl GroupKey {
    /// The groups `event` belongs to, sorted and distinct, never empty.
    pub fn groups(self, event: &EventFacts) -> Vec<String> {
        let mut out = Vec::new();
        self.each_group(event, |g| out.push(g.to_string()));
        out
    }

    /// Calls `f` with each group of `event`, in the order of
    /// [`GroupKey::groups`]. No list is built when the values already are
    /// sorted and distinct (as storage gives them).
    pub fn each_group(self, event: &EventFacts, mut f: impl FnMut(&str)) {
        match self.values(event) {
            Values::Name(name) => f(name),
            Values::Month(month) => f(&month.to_string()),
            Values::Many(list) => each_distinct(list, &mut f),
        }
    }

    /// The values of `event` for this key, as the event holds them.
    pub(crate) fn values(self, event: &EventFacts) -> Values<'_> {
        let name = Values::Name;
        match self {
            GroupKey::All => name("all"),
            GroupKey::Zone => Values::Many(&event.zone_names),
            GroupKey::Team => Values::Many(&event.teams),
            GroupKey::DetectionMonth => Values::Month(Month::of(event.first_detected)),
            GroupKey::Source => Values::Many(&event.sources),
            GroupKey::Confidence => name(&event.highest_confidence),
            GroupKey::Corroborated => name(if event.corroborated {
                "corroborated"
            } else {
                "single source"
            }),
            GroupKey::Cause => name(event.cause.as_deref().unwrap_or(NO_VALUE)),
            GroupKey::Stratum => name(
                event
                    .sampled
                    .as_ref()
                    .map_or("(not sampled)", |s| s.stratum.as_str()),
            ),
        }
    }
}

/// The values of one event for one key.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Values<'a> {
    /// The one group of a key with one group per event.
    Name(&'a str),
    /// The one group of [`GroupKey::DetectionMonth`].
    Month(Month),
    /// Zones, teams, sources: a group per distinct value, or [`NO_VALUE`]
    /// when the list is empty. Not necessarily sorted or distinct.
    Many(&'a [String]),
}

/// Each distinct value in sorted order, or [`NO_VALUE`] when there is none.
fn each_distinct(values: &[String], f: &mut impl FnMut(&str)) {
    if values.is_empty() {
        f(NO_VALUE);
    } else if values.windows(2).all(|w| w[0] < w[1]) {
        values.iter().for_each(|v| f(v));
    } else {
        let set: BTreeSet<&str> = values.iter().map(String::as_str).collect();
        set.into_iter().for_each(f);
    }
}

/// Days from `from` to `to` (fractional; negative when `to` is earlier).
pub fn days_between(from: DateTime<Utc>, to: DateTime<Utc>) -> f64 {
    (to - from).num_milliseconds() as f64 / 86_400_000.0
}
