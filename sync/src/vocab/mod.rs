//! The words that cross between office and field, each defined once: its
//! wire name (serde), its text form (`FromStr`/`Display`) and its SQLite
//! column (`ToSql`/`FromSql`) are the same string, so a stored row, a
//! bundle and a return all spell a word alike.
//!
//! The SQLite conversions live here, not in the server: this crate already
//! uses SQLite (the GeoPackage and the field kit's outbox), so the server's
//! storage binds and reads these types directly instead of converting each
//! one by hand at every query.

mod digest;
mod timestamp;

pub use digest::Sha256Digest;
pub use timestamp::Timestamp;

use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// A word that is not one of its type's names.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnknownWord {
    /// What was expected (`outcome`, `mode`, ...).
    pub what: &'static str,
    /// What was found.
    pub found: String,
    /// Every accepted name, in order.
    pub expected: &'static [&'static str],
}

impl fmt::Display for UnknownWord {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} '{}': expected ", self.what, self.found)?;
        let n = self.expected.len();
        for (i, name) in self.expected.iter().enumerate() {
            let sep = match i {
                0 => "",
                _ if i + 1 == n => " or ",
                _ => ", ",
            };
            write!(f, "{sep}{name}")?;
        }
        Ok(())
    }
}

impl std::error::Error for UnknownWord {}

/// Defines a closed set of words: the enum, its names, `Display`,
/// `FromStr`, serde and the SQLite conversion, all from one list.
macro_rules! words {
    (
        $(#[$meta:meta])*
        $name:ident, $what:literal {
            $( $(#[$vmeta:meta])* $variant:ident = $text:literal, )+
        }
    ) => {
        $(#[$meta])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
        pub enum $name {
            $( $(#[$vmeta])* #[serde(rename = $text)] $variant, )+
        }

        impl $name {
            /// Every value, in declaration order.
            pub const ALL: &'static [$name] = &[$($name::$variant),+];
            /// Every name, in declaration order.
            pub const NAMES: &'static [&'static str] = &[$($text),+];

            /// The name written on the wire and stored.
            pub const fn as_str(self) -> &'static str {
                match self {
                    $( $name::$variant => $text, )+
                }
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(self.as_str())
            }
        }

        impl FromStr for $name {
            type Err = UnknownWord;
            fn from_str(s: &str) -> Result<Self, UnknownWord> {
                match s {
                    $( $text => Ok($name::$variant), )+
                    _ => Err(UnknownWord {
                        what: $what,
                        found: s.to_owned(),
                        expected: $name::NAMES,
                    }),
                }
            }
        }

        impl rusqlite::types::ToSql for $name {
            fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
                Ok(rusqlite::types::ToSqlOutput::Borrowed(
                    rusqlite::types::ValueRef::Text(self.as_str().as_bytes()),
                ))
            }
        }

        impl rusqlite::types::FromSql for $name {
            fn column_result(
                value: rusqlite::types::ValueRef<'_>,
            ) -> rusqlite::types::FromSqlResult<Self> {
                value
                    .as_str()?
                    .parse()
                    .map_err(|e| rusqlite::types::FromSqlError::Other(Box::new(e)))
            }
        }
    };
}

words! {
    /// Outcome of one visit (or of an adjudication).
    Outcome, "outcome" {
        /// Forest loss is there.
        Confirmed = "confirmed",
        /// No forest loss (needs a [`Reason`]).
        FalseAlarm = "false_alarm",
        /// The team could not tell.
        Inconclusive = "inconclusive",
        /// The team did not get there (needs a [`Reason`]).
        NotReached = "not_reached",
        /// Control points only (checklist 2): no clearing at the point.
        NoClearingFound = "no_clearing_found",
        /// Control points only (checklist 2): a clearing the alerts missed,
        /// with a [`Cause`] and the team's estimate of its area.
        ClearingFound = "clearing_found",
    }
}

impl Outcome {
    /// True when the team was at the place (every outcome but `not_reached`).
    pub fn reached(self) -> bool {
        self != Outcome::NotReached
    }

    /// True for `confirmed` and `false_alarm`, the outcomes that decide an
    /// event (the control outcomes decide no event).
    pub fn decisive(self) -> bool {
        matches!(self, Outcome::Confirmed | Outcome::FalseAlarm)
    }

    /// The outcomes of a visit to an event (or a new clearing).
    pub const EVENT: &'static [Outcome] = &[
        Outcome::Confirmed,
        Outcome::FalseAlarm,
        Outcome::Inconclusive,
        Outcome::NotReached,
    ];

    /// The outcomes of a visit to a control point (checklist 2 and later).
    pub const CONTROL: &'static [Outcome] = &[
        Outcome::NoClearingFound,
        Outcome::ClearingFound,
        Outcome::Inconclusive,
        Outcome::NotReached,
    ];

    /// True for the two outcomes only a control point has.
    pub fn control_only(self) -> bool {
        matches!(self, Outcome::NoClearingFound | Outcome::ClearingFound)
    }

    /// True for the outcomes that carry a cause (`confirmed`, `clearing_found`).
    pub fn has_cause(self) -> bool {
        matches!(self, Outcome::Confirmed | Outcome::ClearingFound)
    }

    /// What a report on a control point says about clearing at the point:
    /// `Some(true)` clearing, `Some(false)` none, `None` no finding
    /// (inconclusive, not reached).
    ///
    /// Returns made with checklist 1 answered a control point with the event
    /// words; they are read here, in this one place: `confirmed` (a clearing,
    /// with its cause) is a clearing found, and `false_alarm` is no clearing
    /// found whatever its reason, because every false-alarm reason (no change,
    /// cloud or shadow, seasonal water, cleared before the alert window, not
    /// forest) says there is no new clearing at the point in the period. The
    /// stored report keeps the words the team used (invariant 1).
    pub fn control_finding(self) -> Option<bool> {
        match self {
            Outcome::ClearingFound | Outcome::Confirmed => Some(true),
            Outcome::NoClearingFound | Outcome::FalseAlarm => Some(false),
            Outcome::Inconclusive | Outcome::NotReached => None,
        }
    }

    /// True for the outcomes that carry a reason (`false_alarm`, `not_reached`).
    pub fn needs_reason(self) -> bool {
        matches!(self, Outcome::FalseAlarm | Outcome::NotReached)
    }
}

words! {
    /// Why a report is a false alarm or why the place was not reached.
    Reason, "reason" {
        /// False alarm: nothing changed.
        NoChange = "no_change",
        /// False alarm: a cloud or shadow artefact.
        CloudOrShadow = "cloud_or_shadow",
        /// False alarm: seasonal water.
        SeasonalWater = "seasonal_water",
        /// False alarm: cleared before the alert window.
        ClearedBeforeWindow = "cleared_before_window",
        /// False alarm: not forest.
        NotForest = "not_forest",
        /// Not reached: no access.
        Access = "access",
        /// Not reached: the terrain.
        Terrain = "terrain",
        /// Not reached: safety.
        Safety = "safety",
    }
}

impl Reason {
    /// The outcome this reason goes with (`false_alarm` or `not_reached`).
    pub fn outcome(self) -> Outcome {
        match self {
            Reason::Access | Reason::Terrain | Reason::Safety => Outcome::NotReached,
            _ => Outcome::FalseAlarm,
        }
    }

    /// The reasons of `outcome`, in order (none for other outcomes).
    pub fn of(outcome: Outcome) -> impl Iterator<Item = Reason> {
        Reason::ALL
            .iter()
            .copied()
            .filter(move |r| r.outcome() == outcome)
    }
}

words! {
    /// What caused a confirmed clearing.
    Cause, "cause" {
        SmallholderClearing = "smallholder_clearing",
        PlantationOrPastureConversion = "plantation_or_pasture_conversion",
        LoggingRoad = "logging_road",
        SelectiveLogging = "selective_logging",
        Mining = "mining",
        Fire = "fire",
        InfrastructureOrSettlement = "infrastructure_or_settlement",
        NaturalDisturbance = "natural_disturbance",
        Other = "other",
    }
}

words! {
    /// What a bundle item or a report is about.
    TargetKind, "target kind" {
        /// A clearing event.
        Event = "event",
        /// A control point.
        Control = "control",
        /// A clearing found on the way, not in the bundle.
        NewClearing = "new_clearing",
    }
}

words! {
    /// How the events of a bundle were chosen.
    BundleMode, "mode" {
        /// The events that matter most now, in priority order.
        Response = "response",
        /// A stratified random sample, for unbiased statistics.
        Assessment = "assessment",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rusqlite::Connection;

    /// Every value of `T` goes through text, JSON and SQLite and comes back.
    fn round_trips<T>(all: &[T], names: &[&str])
    where
        T: Copy
            + PartialEq
            + fmt::Debug
            + fmt::Display
            + FromStr<Err = UnknownWord>
            + Serialize
            + for<'de> Deserialize<'de>
            + rusqlite::types::ToSql
            + rusqlite::types::FromSql,
    {
        let db = Connection::open_in_memory().expect("db");
        assert_eq!(all.len(), names.len());
        for (&v, &name) in all.iter().zip(names) {
            assert_eq!(v.to_string(), name);
            assert_eq!(name.parse::<T>(), Ok(v));
            assert_eq!(
                serde_json::to_string(&v).expect("json"),
                format!("\"{name}\"")
            );
            let back: T = serde_json::from_str(&format!("\"{name}\"")).expect("back");
            assert_eq!(back, v);
            let stored: String = db
                .query_row("SELECT ?1", [v], |r| r.get(0))
                .expect("stored");
            assert_eq!(stored, name, "stored text");
            let read: T = db
                .query_row("SELECT ?1", [name], |r| r.get(0))
                .expect("read");
            assert_eq!(read, v);
        }
        assert!("Confirmed ".parse::<T>().is_err());
        assert!(serde_json::from_str::<T>("\"nonsense\"").is_err());
        let bad: rusqlite::Result<T> = db.query_row("SELECT 'nonsense'", [], |r| r.get(0));
        assert!(bad.is_err());
    }

    #[test]
    fn every_word_round_trips() {
        round_trips(
            Outcome::ALL,
            &[
                "confirmed",
                "false_alarm",
                "inconclusive",
                "not_reached",
                "no_clearing_found",
                "clearing_found",
            ],
        );
        round_trips(
            Reason::ALL,
            &[
                "no_change",
                "cloud_or_shadow",
                "seasonal_water",
                "cleared_before_window",
                "not_forest",
                "access",
                "terrain",
                "safety",
            ],
        );
        round_trips(Cause::ALL, Cause::NAMES);
        round_trips(TargetKind::ALL, &["event", "control", "new_clearing"]);
        round_trips(BundleMode::ALL, &["response", "assessment"]);
    }

    #[test]
    fn reasons_belong_to_one_outcome() {
        let fa: Vec<&str> = Reason::of(Outcome::FalseAlarm)
            .map(Reason::as_str)
            .collect();
        assert_eq!(
            fa,
            [
                "no_change",
                "cloud_or_shadow",
                "seasonal_water",
                "cleared_before_window",
                "not_forest"
            ]
        );
        let nr: Vec<&str> = Reason::of(Outcome::NotReached)
            .map(Reason::as_str)
            .collect();
        assert_eq!(nr, ["access", "terrain", "safety"]);
        assert_eq!(Reason::of(Outcome::Confirmed).count(), 0);
    }

    #[test]
    fn unknown_words_say_what_was_expected() {
        let e = "survey".parse::<BundleMode>().expect_err("unknown");
        assert_eq!(
            e.to_string(),
            "mode 'survey': expected response or assessment"
        );
        let e = "maybe".parse::<Outcome>().expect_err("unknown");
        assert_eq!(
            e.to_string(),
            "outcome 'maybe': expected confirmed, false_alarm, inconclusive, not_reached, \
             no_clearing_found or clearing_found"
        );
    }

    #[test]
    fn control_findings_read_both_checklists() {
        // Checklist 2's words and checklist 1's event words at a control point.
        let found: Vec<(Outcome, Option<bool>)> = Outcome::ALL
            .iter()
            .map(|o| (*o, o.control_finding()))
            .collect();
        assert_eq!(
            found,
            [
                (Outcome::Confirmed, Some(true)),
                (Outcome::FalseAlarm, Some(false)),
                (Outcome::Inconclusive, None),
                (Outcome::NotReached, None),
                (Outcome::NoClearingFound, Some(false)),
                (Outcome::ClearingFound, Some(true)),
            ]
        );
        assert!(
            Outcome::CONTROL
                .iter()
                .all(|o| o.reached() == (*o != Outcome::NotReached))
        );
        assert!(Outcome::EVENT.iter().all(|o| !o.control_only()));
        assert!(!Outcome::ClearingFound.decisive() && !Outcome::ClearingFound.needs_reason());
        assert!(Outcome::ClearingFound.has_cause() && !Outcome::NoClearingFound.has_cause());
    }
}
