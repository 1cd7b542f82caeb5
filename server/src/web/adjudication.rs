//! Recording an adjudication: one check of the ruling and one storage call,
//! shared by the JSON API (`POST /api/v1/events/{id}/adjudications`) and the
//! disputes page (`POST /disputes/{id}/adjudicate`). Each face words a
//! refused field its own way (the API names the JSON field, the page the
//! form's label); what is refused is decided here.

use crate::domain::localtime::OrgZone;
use crate::domain::{EventStatus, Outcome};
use crate::error::{Error, Result};
use crate::platform::storage::{AdjudicationRow, Db};
use chrono::{DateTime, Utc};

/// The outcomes that settle a dispute, (stored word, label): a decision
/// says what the ground shows. "Not reached" settles nothing (nobody saw
/// the place), so a decision cannot be it.
pub const SETTLING_OUTCOMES: [(&str, &str); 3] = [
    ("confirmed", "confirmed loss"),
    ("false_alarm", "false alarm"),
    ("inconclusive", "inconclusive"),
];

/// Longest reason, characters.
pub const MAX_REASON_CHARS: usize = 2000;
/// Longest decider name, characters.
pub const MAX_BY_CHARS: usize = 100;

/// The field of a ruling that was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BadField {
    /// Not one of [`SETTLING_OUTCOMES`] (confirmed, false_alarm,
    /// inconclusive).
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
        if !SETTLING_OUTCOMES
            .iter()
            .any(|(word, _)| *word == outcome.as_str())
        {
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

/// A time as people read it: the local date and time to the minute, with
/// its offset ("2026-12-04 15:02 (UTC+00:00)"), in the organisation's zone.
pub fn local_time(zone: OrgZone, t: DateTime<Utc>) -> String {
    zone.show(t)
}

/// A status note as people read it. Reconciliation writes an adjudication
/// as "adjudicated false_alarm by Ana at 2026-12-04T15:02:03.123456789+00:00:
/// reason (reports gave disputed: …)"; this gives "Decided false alarm by
/// Ana on 2026-12-04 15:02 (UTC+00:00): reason (reports gave disputed: …)",
/// and every stored status word becomes its label.
pub fn readable_note(note: &str, zone: OrgZone) -> String {
    let decided = note
        .strip_prefix("adjudicated ")
        .and_then(decision_parts)
        .map(|(outcome, by, at, rest)| {
            format!(
                "Decided {outcome} by {by} on {}: {rest}",
                local_time(zone, at)
            )
        });
    let mut out = decided.unwrap_or_else(|| note.to_string());
    for s in EventStatus::ALL {
        if s.as_str().contains('_') {
            out = out.replace(s.as_str(), &s.as_str().replace('_', " "));
        }
    }
    out
}

/// (outcome, by, time, the rest) of "{outcome} by {by} at {RFC 3339}: {rest}".
pub(crate) fn decision_parts(s: &str) -> Option<(&str, &str, DateTime<Utc>, &str)> {
    let (outcome, after) = s.split_once(" by ")?;
    // The decider's name may hold " at ": the time is the first RFC 3339
    // word after one.
    after.match_indices(" at ").find_map(|(i, _)| {
        let tail = &after[i + 4..];
        let (word, rest) = tail.split_once(": ")?;
        let at = DateTime::parse_from_rfc3339(word).ok()?.with_timezone(&Utc);
        Some((outcome, &after[..i], at, rest))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_decision_note_reads_with_labels_and_local_time() {
        // Issue 14: notes showed raw words and nanosecond timestamps.
        let at = DateTime::parse_from_rfc3339("2026-12-04T15:02:03.123456789+00:00")
            .unwrap()
            .with_timezone(&Utc);
        let note = format!(
            "adjudicated false_alarm by Ana at the station at {}: standing forest (reports gave disputed: confirmed and false_alarm within 30 days)",
            at.to_rfc3339()
        );
        let zone = OrgZone::default();
        let r = readable_note(&note, zone);
        assert_eq!(
            r,
            format!(
                "Decided false alarm by Ana at the station on {}: standing forest (reports gave disputed: confirmed and false alarm within 30 days)",
                local_time(zone, at)
            )
        );
        assert!(!r.contains(".123456789"));
        assert!(
            local_time(zone, at).starts_with("2026-12-0"),
            "{}",
            local_time(zone, at)
        );
        assert_eq!(
            readable_note("2 visit(s), all not_reached", zone),
            "2 visit(s), all not reached"
        );
    }

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
        assert!(Ruling::check("inconclusive", &"x".repeat(MAX_REASON_CHARS), "m").is_ok());
    }

    #[test]
    fn not_reached_does_not_settle_a_dispute() {
        // Issue 14: a decision offered "not reached", which settles nothing.
        assert_eq!(
            Ruling::check("not_reached", "nobody went", "m"),
            Err(BadField::Outcome)
        );
        let words: Vec<&str> = SETTLING_OUTCOMES.iter().map(|o| o.0).collect();
        assert_eq!(words, vec!["confirmed", "false_alarm", "inconclusive"]);
    }
}
