//! Input rows of the figures (one per event, one per control point) and the
//! grouping keys. Plain data, filled by the storage layer and by
//! [`crate::reconcile`].

use std::collections::BTreeSet;

use chrono::{DateTime, Datelike, NaiveDate, NaiveTime, Utc};
use serde::Serialize;

use crate::reconcile::{Status, StatusOutcome};

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
    pub highest_confidence: String,
    pub corroborated: bool,
    pub area_ha: f64,
    pub first_detected: NaiveDate,
    /// When the first bundle holding the event was issued.
    pub issued_at: Option<DateTime<Utc>>,
    pub status: Status,
    pub new_clearing: bool,
    pub first_visit: Option<DateTime<Utc>>,
    pub first_received: Option<DateTime<Utc>>,
    pub cause: Option<String>,
    /// Teams the event was issued to or that reported on it.
    pub teams: Vec<String>,
    pub sampled: Option<SampleInfo>,
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
    /// `Some(found)` when the point was reached; `None` when not (non-response).
    pub found_clearing: Option<bool>,
    /// The area the point stands for (its plot), in ha.
    pub area_ha: f64,
    pub inclusion_probability: f64,
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
    format!("{:04}-{:02}", date.year(), date.month())
}

impl GroupKey {
    /// The groups `event` belongs to, sorted and distinct, never empty.
    pub fn groups(self, event: &EventFacts) -> Vec<String> {
        let values: Vec<String> = match self {
            GroupKey::All => vec!["all".to_string()],
            GroupKey::Zone => event.zone_names.clone(),
            GroupKey::Team => event.teams.clone(),
            GroupKey::DetectionMonth => vec![month_of(event.first_detected)],
            GroupKey::Source => event.sources.clone(),
            GroupKey::Confidence => vec![event.highest_confidence.clone()],
            GroupKey::Corroborated => vec![
                if event.corroborated {
                    "corroborated"
                } else {
                    "single source"
                }
                .to_string(),
            ],
            GroupKey::Cause => event.cause.iter().cloned().collect(),
            GroupKey::Stratum => vec![
                event
                    .sampled
                    .as_ref()
                    .map_or_else(|| "(not sampled)".to_string(), |s| s.stratum.clone()),
            ],
        };
        let set: BTreeSet<String> = values.into_iter().collect();
        if set.is_empty() {
            vec![NO_VALUE.to_string()]
        } else {
            set.into_iter().collect()
        }
    }
}

/// Days from `from` to `to` (fractional; negative when `to` is earlier).
pub fn days_between(from: DateTime<Utc>, to: DateTime<Utc>) -> f64 {
    (to - from).num_milliseconds() as f64 / 86_400_000.0
}
