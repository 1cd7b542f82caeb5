//! The report: one visit's findings, exactly the JSON of the return contract
//! (RETURN-SPEC "Report"). Reports are immutable; a correction is a new report
//! naming the one it `supersedes`. Every optional field is written as `null`.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

use crate::vocab::{Outcome, TargetKind};

/// The name of [`Outcome::Confirmed`] (forest loss is there).
pub const OUTCOME_CONFIRMED: &str = Outcome::Confirmed.as_str();
/// The name of [`Outcome::FalseAlarm`] (needs a reason).
pub const OUTCOME_FALSE_ALARM: &str = Outcome::FalseAlarm.as_str();
/// The name of [`Outcome::Inconclusive`].
pub const OUTCOME_INCONCLUSIVE: &str = Outcome::Inconclusive.as_str();
/// The name of [`Outcome::NotReached`] (needs a reason).
pub const OUTCOME_NOT_REACHED: &str = Outcome::NotReached.as_str();

/// What a report is about.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Target {
    /// A clearing event of the bundle.
    Event {
        /// Event code, e.g. `K0417`.
        code: String,
        /// Server id of the event.
        event_id: i64,
    },
    /// A control point of the bundle.
    Control {
        /// Control point code, e.g. `C0001`.
        code: String,
    },
    /// A clearing found on the way, not in the bundle.
    NewClearing,
}

impl Target {
    /// The event or control code, `None` for a new clearing.
    pub fn code(&self) -> Option<&str> {
        match self {
            Target::Event { code, .. } | Target::Control { code } => Some(code),
            Target::NewClearing => None,
        }
    }

    /// Which kind of target this is (the `kind` tag on the wire).
    pub fn kind(&self) -> TargetKind {
        match self {
            Target::Event { .. } => TargetKind::Event,
            Target::Control { .. } => TargetKind::Control,
            Target::NewClearing => TargetKind::NewClearing,
        }
    }
}

/// Where a position came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PositionSource {
    /// Typed in or taken from the device's GPS by the team.
    Manual,
    /// Taken from the GPS tags of the report's photos.
    PhotoGps,
}

/// A WGS 84 position.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Position {
    /// Latitude, degrees.
    pub lat: f64,
    /// Longitude, degrees.
    pub lon: f64,
    /// Horizontal accuracy in metres, if known.
    pub accuracy_m: Option<f64>,
    /// Where it came from.
    pub source: PositionSource,
}

/// One photo of a report, named by the SHA-256 of its bytes.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReportPhoto {
    /// SHA-256 of the JPEG bytes, lowercase hex.
    pub sha256: String,
    /// File name on the device (informative only, never used as a path).
    pub original_name: String,
    /// EXIF time the photo was taken, if any.
    pub taken_at: Option<DateTime<Utc>>,
    /// EXIF GPS latitude, if any.
    pub lat: Option<f64>,
    /// EXIF GPS longitude, if any.
    pub lon: Option<f64>,
    /// EXIF image direction in degrees from north, if any.
    pub direction_deg: Option<f64>,
}

/// One visit's findings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// UUID v4 made on the device.
    pub report_id: Uuid,
    /// Bundle the visit belongs to.
    pub bundle_id: Uuid,
    /// What was visited.
    pub target: Target,
    /// The report this one replaces (amend).
    pub supersedes: Option<Uuid>,
    /// `confirmed`, `false_alarm`, `inconclusive` or `not_reached`.
    pub outcome: String,
    /// Reason from the checklist's `false_alarm_reasons` or `not_reached_reasons`.
    pub reason: Option<String>,
    /// Cause from the checklist's `causes` (for `confirmed`).
    pub cause: Option<String>,
    /// Where the team stood.
    pub position: Option<Position>,
    /// When the team was there.
    pub observed_at: DateTime<Utc>,
    /// When the report was written on the device.
    pub recorded_at: DateTime<Utc>,
    /// Estimated cleared area in hectares (required for a new clearing).
    pub area_ha: Option<f64>,
    /// Free text, at most [`crate::returns::MAX_NOTES_CHARS`] characters.
    pub notes: String,
    /// Photos, each also in the package as `photos/<sha256>.jpg`.
    pub photos: Vec<ReportPhoto>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_shape_matches_the_contract() {
        // Field names and tags as in RETURN-SPEC.md "Report".
        let t = DateTime::parse_from_rfc3339("2026-09-03T10:15:00Z")
            .expect("time")
            .with_timezone(&Utc);
        let r = Report {
            report_id: Uuid::from_u128(1),
            bundle_id: Uuid::from_u128(2),
            target: Target::Event {
                code: "K0417".into(),
                event_id: 123,
            },
            supersedes: None,
            outcome: OUTCOME_CONFIRMED.into(),
            reason: None,
            cause: Some("mining".into()),
            position: Some(Position {
                lat: -1.5,
                lon: 23.25,
                accuracy_m: None,
                source: PositionSource::PhotoGps,
            }),
            observed_at: t,
            recorded_at: t,
            area_ha: None,
            notes: String::new(),
            photos: vec![],
        };
        let v = serde_json::to_value(&r).expect("json");
        assert_eq!(
            v["target"],
            serde_json::json!({"kind": "event", "code": "K0417", "event_id": 123})
        );
        assert_eq!(v["position"]["source"], "photo_gps");
        assert_eq!(v["observed_at"], "2026-09-03T10:15:00Z");
        assert!(v["supersedes"].is_null() && v["area_ha"].is_null());
        assert_eq!(v["target"]["kind"], r.target.kind().as_str());
        let nc = serde_json::to_value(Target::NewClearing).expect("json");
        assert_eq!(nc, serde_json::json!({"kind": "new_clearing"}));
        assert_eq!(Target::NewClearing.kind(), TargetKind::NewClearing);
        let back: Report = serde_json::from_value(v).expect("back");
        assert_eq!(back, r);
    }
}
