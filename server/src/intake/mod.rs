//! Intake: taking field returns in. A return arrives either as a resumable
//! upload ([`uploads`]) or whole in one request body; its bytes are written
//! and fsynced under `DATA/returns/incoming/` before anything parses them.
//! Then [`pipeline::take_in`] checks the signature (a cancelled bundle's key
//! is refused), reads the ZIP safely, validates every report against the
//! bundle's checklist, inspects every photo under size limits, stores
//! evidence by content hash ([`layout`]), runs the evidence checks
//! ([`evidence`]) that flag (never reject) a report, and commits every row
//! of the package in one transaction after its files are durable.
//!
//! Receiving the same report id again changes nothing (`duplicate`); the
//! same package again answers its stored results. A report for an event not
//! in the bundle is rejected with a reason; a new clearing becomes a
//! field-found event (origin `field`, a square of the reported area around
//! the reported position). [`files::cleanup`] removes what a crash leaves
//! behind; call it at start.

pub mod error;
pub mod evidence;
pub mod files;
pub mod layout;
pub mod pipeline;
pub mod station;
pub mod uploads;

pub use error::IntakeError;
pub use evidence::DEFAULT_TOLERANCE_M;
pub use files::{CleanupSummary, cleanup, cleanup_after};
pub use pipeline::{ReportResult, ReturnDocument, UnreadableItem, return_document, take_in};

use groundproof_sync::photo::PhotoLimits;
use groundproof_sync::returns::ReturnLimits;

/// The knobs of intake; [`IntakeOptions::default`] is what the server uses.
#[derive(Debug, Clone, PartialEq)]
pub struct IntakeOptions {
    /// Distance tolerance of the evidence checks, metres (default 100 m).
    pub tolerance_m: f64,
    /// Limits of every photo (the sync crate's defaults).
    pub photo_limits: PhotoLimits,
    /// Limits of a return package (the sync crate's defaults).
    pub return_limits: ReturnLimits,
    /// When the return counts as received; `None` (always, but in the demo)
    /// is the moment intake runs. The demo replays a year of trips and
    /// gives each return the day its team came back.
    pub received_at: Option<chrono::DateTime<chrono::Utc>>,
}

impl IntakeOptions {
    /// The defaults with the data directory's evidence settings.
    pub fn from_settings(settings: &crate::platform::settings::Settings) -> Self {
        IntakeOptions {
            tolerance_m: settings.evidence.tolerance_m,
            ..IntakeOptions::default()
        }
    }
}

impl Default for IntakeOptions {
    fn default() -> Self {
        IntakeOptions {
            tolerance_m: DEFAULT_TOLERANCE_M,
            photo_limits: PhotoLimits::default(),
            return_limits: ReturnLimits::default(),
            received_at: None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::platform::settings::Settings;

    #[test]
    fn options_take_the_tolerance_from_the_settings() {
        assert_eq!(
            IntakeOptions::default().tolerance_m,
            Settings::default().evidence.tolerance_m
        );
        let mut s = Settings::default();
        s.evidence.tolerance_m = 150.0;
        assert_eq!(IntakeOptions::from_settings(&s).tolerance_m, 150.0);
    }
}
