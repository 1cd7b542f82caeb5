//! Recording an adjudication: one check of the ruling and one storage call,
//! shared by the JSON API (`POST /api/v1/events/{id}/adjudications`) and the
//! disputes page (`POST /disputes/{id}/adjudicate`). Each face words a
//! refused field its own way (the API names the JSON field, the page the
//! form's label); what is refused is decided here.

use crate::domain::Outcome;
use crate::error::{Error, Result};
use crate::platform::storage::{AdjudicationRow, Db};

/// Longest reason, characters.
pub const MAX_REASON_CHARS: usize = 2000;
/// Longest decider name, characters.
pub const MAX_BY_CHARS: usize = 100;

/// The field of a ruling that was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BadField {
    /// Not one of confirmed, false_alarm, inconclusive, not_reached.
    Outcome,
    /// Blank, or longer than [`MAX_REASON_CHARS`].
    Reason,
    /// Blank, or longer than [`MAX_BY_CHARS`].
    By,
}

/// A checked ruling: the outcome, the reason and who decided, trimmed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Ruling {
    pub outcome: Outcome,
    pub reason: String,
    pub by: String,
}

impl Ruling {
    /// Check a ruling as sent (surrounding spaces are dropped first).
    pub fn check(outcome: &str, reason: &str, by: &str) -> Result<Ruling, BadField> {
        let outcome: Outcome = outcome.trim().parse().map_err(|_| BadField::Outcome)?;
        if outcome.control_only() {
            // A ruling settles an event; the control-point outcomes are not an event's.
            return Err(BadField::Outcome);
        }
        let reason = reason.trim();
        if reason.is_empty() || reason.chars().count() > MAX_REASON_CHARS {
            return Err(BadField::Reason);
        }
        let by = by.trim();
        if by.is_empty() || by.chars().count() > MAX_BY_CHARS {
            return Err(BadField::By);
        }
        Ok(Ruling {
            outcome,
            reason: reason.to_string(),
            by: by.to_string(),
        })
    }
}

/// Store `ruling` for event `id`, or for the event it was merged into
/// (blocking: call it inside `web::block`).
pub fn record(db: &Db, id: i64, ruling: &Ruling) -> Result<AdjudicationRow> {
    let ev = db
        .read(|r| r.event_resolved(id))?
        .ok_or_else(|| Error::NotFound(format!("no event {id}")))?;
    db.write(|tx| tx.add_adjudication(ev.id, ruling.outcome, &ruling.reason, &ruling.by))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_ruling_is_trimmed_and_each_field_is_checked() {
        let r = Ruling::check(" false_alarm ", " standing forest ", " Ana ").unwrap();
        assert_eq!(
            (r.outcome.as_str(), r.reason.as_str(), r.by.as_str()),
            ("false_alarm", "standing forest", "Ana")
        );
        assert_eq!(Ruling::check("maybe", "x", "m"), Err(BadField::Outcome));
        assert_eq!(
            Ruling::check("clearing_found", "x", "m"),
            Err(BadField::Outcome)
        );
        assert_eq!(Ruling::check("confirmed", "  ", "m"), Err(BadField::Reason));
        let long = "x".repeat(MAX_REASON_CHARS + 1);
        assert_eq!(
            Ruling::check("confirmed", &long, "m"),
            Err(BadField::Reason)
        );
        assert_eq!(Ruling::check("confirmed", "ok", " "), Err(BadField::By));
        let long = "y".repeat(MAX_BY_CHARS + 1);
        assert_eq!(Ruling::check("confirmed", "ok", &long), Err(BadField::By));
        assert!(Ruling::check("not_reached", &"x".repeat(MAX_REASON_CHARS), "m").is_ok());
    }
}
