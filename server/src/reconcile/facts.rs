//! The facts reconciliation reads: one row per received report (already
//! checked by intake, with the verdict of the evidence checks) and one row
//! per adjudication a coordinator made. Plain data, no SQL.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

pub use crate::domain::Outcome;

/// One stored report, as reconciliation needs it.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct ReportFact {
    pub report_id: Uuid,
    /// The event the report resolves to (after following merged ids).
    pub event_id: i64,
    pub supersedes: Option<Uuid>,
    pub outcome: Outcome,
    pub reason: Option<String>,
    pub cause: Option<String>,
    /// When the team was there.
    pub observed_at: DateTime<Utc>,
    /// When the server took the return in.
    pub received_at: DateTime<Utc>,
    /// The evidence checks passed (photos present, positions near, times plausible).
    pub evidence_ok: bool,
    pub team: String,
    pub bundle_id: Uuid,
}

/// A coordinator's decision on an event.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct Adjudication {
    pub event_id: i64,
    pub outcome: Outcome,
    pub reason: String,
    pub by: String,
    pub at: DateTime<Utc>,
}
