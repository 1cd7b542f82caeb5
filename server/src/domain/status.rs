//! The reconciled status of an event: computed from the stored facts on
//! every read (invariant 2), shown on pages and maps, chosen from in trip
//! selection.

use groundproof_sync::{Outcome, UnknownWord};
use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// Where an event stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EventStatus {
    Unvisited,
    NotReached,
    Confirmed,
    FalseAlarm,
    Inconclusive,
    Disputed,
}

impl EventStatus {
    /// Every status, in legend order.
    pub const ALL: [EventStatus; 6] = [
        EventStatus::Unvisited,
        EventStatus::NotReached,
        EventStatus::Confirmed,
        EventStatus::FalseAlarm,
        EventStatus::Inconclusive,
        EventStatus::Disputed,
    ];
    /// Every name, in legend order.
    pub const NAMES: &'static [&'static str] = &[
        "unvisited",
        "not_reached",
        "confirmed",
        "false_alarm",
        "inconclusive",
        "disputed",
    ];

    /// The name: `unvisited`, `not_reached`, `confirmed`, `false_alarm`,
    /// `inconclusive`, `disputed`.
    pub const fn as_str(self) -> &'static str {
        match self {
            EventStatus::Unvisited => "unvisited",
            EventStatus::NotReached => "not_reached",
            EventStatus::Confirmed => "confirmed",
            EventStatus::FalseAlarm => "false_alarm",
            EventStatus::Inconclusive => "inconclusive",
            EventStatus::Disputed => "disputed",
        }
    }

    /// A name, or `None`.
    pub fn parse(s: &str) -> Option<EventStatus> {
        s.parse().ok()
    }

    /// The status one outcome gives. The control-point outcomes never reach
    /// an event (intake and the adjudication check refuse them there); they
    /// are read as their event words (clearing found: confirmed; no clearing
    /// found: false alarm) so that the mapping is total.
    pub fn of_outcome(outcome: Outcome) -> EventStatus {
        match outcome {
            Outcome::Confirmed | Outcome::ClearingFound => EventStatus::Confirmed,
            Outcome::FalseAlarm | Outcome::NoClearingFound => EventStatus::FalseAlarm,
            Outcome::Inconclusive => EventStatus::Inconclusive,
            Outcome::NotReached => EventStatus::NotReached,
        }
    }

    /// Words for the map legend.
    pub fn label(self) -> &'static str {
        match self {
            EventStatus::Unvisited => "not yet visited",
            EventStatus::NotReached => "not reached",
            EventStatus::Confirmed => "confirmed loss",
            EventStatus::FalseAlarm => "false alarm",
            EventStatus::Inconclusive => "inconclusive",
            EventStatus::Disputed => "disputed",
        }
    }
}

impl fmt::Display for EventStatus {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl FromStr for EventStatus {
    type Err = UnknownWord;
    fn from_str(s: &str) -> Result<Self, UnknownWord> {
        EventStatus::ALL
            .into_iter()
            .find(|st| st.as_str() == s)
            .ok_or_else(|| UnknownWord {
                what: "status",
                found: s.to_owned(),
                expected: EventStatus::NAMES,
            })
    }
}

impl rusqlite::types::ToSql for EventStatus {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        Ok(rusqlite::types::ToSqlOutput::Borrowed(
            rusqlite::types::ValueRef::Text(self.as_str().as_bytes()),
        ))
    }
}

impl rusqlite::types::FromSql for EventStatus {
    fn column_result(value: rusqlite::types::ValueRef<'_>) -> rusqlite::types::FromSqlResult<Self> {
        value
            .as_str()?
            .parse()
            .map_err(|e| rusqlite::types::FromSqlError::Other(Box::new(e)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_json_and_sqlite_round_trip() {
        let db = rusqlite::Connection::open_in_memory().unwrap();
        for (s, name) in EventStatus::ALL.into_iter().zip(EventStatus::NAMES) {
            assert_eq!(s.to_string(), *name);
            assert_eq!(name.parse::<EventStatus>(), Ok(s));
            assert_eq!(serde_json::to_string(&s).unwrap(), format!("\"{name}\""));
            assert_eq!(
                serde_json::from_str::<EventStatus>(&format!("\"{name}\"")).unwrap(),
                s
            );
            let stored: String = db.query_row("SELECT ?1", [s], |r| r.get(0)).unwrap();
            assert_eq!(stored, *name);
            let read: EventStatus = db.query_row("SELECT ?1", [name], |r| r.get(0)).unwrap();
            assert_eq!(read, s);
        }
        assert_eq!(EventStatus::parse("visited"), None);
        assert!(serde_json::from_str::<EventStatus>("\"visited\"").is_err());
        let bad: rusqlite::Result<EventStatus> = db.query_row("SELECT 'x'", [], |r| r.get(0));
        assert!(bad.is_err());
    }

    #[test]
    fn outcomes_give_their_status() {
        for o in Outcome::EVENT {
            assert_eq!(EventStatus::of_outcome(*o).as_str(), o.as_str());
        }
    }
}
