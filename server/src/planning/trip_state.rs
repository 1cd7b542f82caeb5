//! Pure: the state of a trip (one issued bundle) from its stored facts and
//! the clock. Nothing about a trip's state is stored; the trips list, the
//! trip page and their filters all ask [`trip_state`].
//!
//! | state | when |
//! |---|---|
//! | `cancelled` | the bundle was cancelled (whatever came back before) |
//! | `returned` | every stop has at least one stored report |
//! | `partly_returned` | some report (or a return) came back, not for every stop |
//! | `expired` | nothing came back and the bundle's expiry has passed |
//! | `overdue` | nothing came back and the due time has passed (not yet expired) |
//! | `issued` | nothing came back yet and it is not due yet |
//!
//! A trip that came back in part stays `partly_returned` after its expiry:
//! what it brought is worth more to the coordinator than the date.

use chrono::{DateTime, Utc};

/// A trip's state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum TripState {
    Issued,
    Overdue,
    PartlyReturned,
    Returned,
    Cancelled,
    Expired,
}

impl TripState {
    /// Every state, in the order the trips list offers them.
    pub const ALL: [TripState; 6] = [
        TripState::Issued,
        TripState::Overdue,
        TripState::PartlyReturned,
        TripState::Returned,
        TripState::Cancelled,
        TripState::Expired,
    ];

    /// The name used in URLs and CSS classes.
    pub const fn as_str(self) -> &'static str {
        match self {
            TripState::Issued => "issued",
            TripState::Overdue => "overdue",
            TripState::PartlyReturned => "partly_returned",
            TripState::Returned => "returned",
            TripState::Cancelled => "cancelled",
            TripState::Expired => "expired",
        }
    }

    /// The words shown to a user.
    pub const fn label(self) -> &'static str {
        match self {
            TripState::Issued => "issued",
            TripState::Overdue => "overdue",
            TripState::PartlyReturned => "partly returned",
            TripState::Returned => "returned",
            TripState::Cancelled => "cancelled",
            TripState::Expired => "expired",
        }
    }

    /// The state of a name; `None` for anything else.
    pub fn parse(s: &str) -> Option<TripState> {
        TripState::ALL.into_iter().find(|t| t.as_str() == s)
    }
}

/// What a trip's state is computed from.
#[derive(Debug, Clone, PartialEq)]
pub struct TripFacts {
    pub due_at: DateTime<Utc>,
    pub expires_at: DateTime<Utc>,
    pub cancelled: bool,
    /// Return packages received for the bundle.
    pub returns: u64,
    /// Stops (events and control points) the bundle holds.
    pub stops: u64,
    /// Stops with at least one stored report.
    pub stops_reported: u64,
}

/// The state of a trip at `now` (see the module's table).
pub fn trip_state(f: &TripFacts, now: DateTime<Utc>) -> TripState {
    if f.cancelled {
        return TripState::Cancelled;
    }
    if f.stops > 0 && f.stops_reported >= f.stops {
        return TripState::Returned;
    }
    if f.returns > 0 || f.stops_reported > 0 {
        return TripState::PartlyReturned;
    }
    if now >= f.expires_at {
        return TripState::Expired;
    }
    if now >= f.due_at {
        return TripState::Overdue;
    }
    TripState::Issued
}

#[cfg(test)]
mod tests {
    use super::*;

    fn t(s: &str) -> DateTime<Utc> {
        DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
    }

    fn facts() -> TripFacts {
        TripFacts {
            due_at: t("2026-03-08T00:00:00Z"),
            expires_at: t("2026-03-31T00:00:00Z"),
            cancelled: false,
            returns: 0,
            stops: 3,
            stops_reported: 0,
        }
    }

    #[test]
    fn a_trip_walks_through_its_states() {
        let f = facts();
        assert_eq!(trip_state(&f, t("2026-03-07T23:59:59Z")), TripState::Issued);
        // Due is the boundary: at the due time it is overdue.
        assert_eq!(
            trip_state(&f, t("2026-03-08T00:00:00Z")),
            TripState::Overdue
        );
        assert_eq!(
            trip_state(&f, t("2026-03-31T00:00:00Z")),
            TripState::Expired
        );
        let part = TripFacts {
            returns: 1,
            stops_reported: 2,
            ..f.clone()
        };
        assert_eq!(
            trip_state(&part, t("2026-03-09T00:00:00Z")),
            TripState::PartlyReturned
        );
        // A partial return stays partial after the expiry.
        assert_eq!(
            trip_state(&part, t("2026-04-09T00:00:00Z")),
            TripState::PartlyReturned
        );
        let all = TripFacts {
            returns: 2,
            stops_reported: 3,
            ..f.clone()
        };
        assert_eq!(
            trip_state(&all, t("2026-03-02T00:00:00Z")),
            TripState::Returned
        );
    }

    #[test]
    fn a_return_without_a_stored_report_is_partial_and_cancelling_wins() {
        let f = TripFacts {
            returns: 1,
            ..facts()
        };
        assert_eq!(
            trip_state(&f, t("2026-03-01T00:00:00Z")),
            TripState::PartlyReturned
        );
        let c = TripFacts {
            cancelled: true,
            stops_reported: 3,
            returns: 1,
            ..facts()
        };
        assert_eq!(
            trip_state(&c, t("2026-03-01T00:00:00Z")),
            TripState::Cancelled
        );
        // A bundle with no stops is never "returned" by counting nothing.
        let empty = TripFacts {
            stops: 0,
            ..facts()
        };
        assert_eq!(
            trip_state(&empty, t("2026-03-01T00:00:00Z")),
            TripState::Issued
        );
    }

    #[test]
    fn names_round_trip() {
        for s in TripState::ALL {
            assert_eq!(TripState::parse(s.as_str()), Some(s));
        }
        assert_eq!(TripState::parse("lost"), None);
    }
}
