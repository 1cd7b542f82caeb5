//! Keeping clearing events in step with the stored alerts and zones.
//!
//! An alert import runs in one write transaction: stored alerts near the
//! new ones are loaded (coarse 0.01° cells around them), new and nearby
//! alerts are linked with [`crate::alerts::cluster::link`], alerts already in one
//! event are kept together, and each linked set that holds a new alert
//! becomes a new event, grows an event, or merges several. A merge keeps
//! the oldest (smallest) id; the absorbed events record `merged_into`.
//! Then the touched events' attributes are derived again from all of their
//! alerts, so an event never depends on the order alerts arrived in.

mod apply;
mod query;
mod zones;
pub use zones::parse_multipolygon;

pub use apply::{ImportOutcome, ImportRequest, import_alerts};
pub use query::{RankedEvent, event_feature, events_collection, priority_of, ranked_events};
pub use zones::{ZoneOutcome, import_zones};

use crate::alerts::cluster::LinkRule;
pub use crate::platform::settings::ClusterSettings;

/// The link rule of the clustering settings (the settings own their
/// defaults; the rule is read here, above them).
impl ClusterSettings {
    pub fn rule(&self) -> LinkRule {
        LinkRule {
            factor: self.link_factor,
            window_days: (self.window_days > 0).then_some(self.window_days),
        }
    }
}

/// Check a source's pixel size and revisit interval.
pub fn validate_source(pixel_size_m: f64, revisit_days: i64) -> crate::Result<()> {
    use crate::error::{Error, Fault};
    if !(pixel_size_m.is_finite() && pixel_size_m > 0.0 && pixel_size_m <= 1000.0) {
        let english =
            format!("pixel size {pixel_size_m} m: expected a number of metres in (0, 1000]");
        let args: [(&str, &dyn std::fmt::Display); 1] = [("size", &pixel_size_m)];
        return Err(Error::said(
            Fault::Invalid,
            "why-pixel-size",
            &args,
            english,
        ));
    }
    if !(1..=366).contains(&revisit_days) {
        let english = format!("revisit interval {revisit_days} days: expected 1 to 366");
        let args: [(&str, &dyn std::fmt::Display); 1] = [("days", &revisit_days)];
        return Err(Error::said(Fault::Invalid, "why-revisit", &args, english));
    }
    Ok(())
}
