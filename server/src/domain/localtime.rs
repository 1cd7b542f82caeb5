//! Instants shown as the organisation's local time (invariant 9: every time
//! a person reads is in the organisation's zone; the API keeps RFC 3339).
//!
//! The zone is an IANA time-zone name, resolved with `chrono-tz` (the IANA
//! tz database compiled into the binary). Two shapes, chosen by the project:
//!
//! - for people: `2026-03-05 14:20 (UTC-04:00)`: date and time to the
//!   minute, then the offset in force at that instant. The offset, not a
//!   zone abbreviation: abbreviations are ambiguous and many zones have none
//!   (the tz database writes `-04`), and the offset tells apart the two
//!   readings of the repeated hour when clocks go back. ASCII hyphen-minus,
//!   so a copied time pastes into any tool.
//! - for files (CSV): RFC 3339 with the local offset,
//!   `2026-03-05T14:20:00-04:00`: one column that spreadsheets and scripts
//!   read as the same instant as the API's, and that a person reads as local.

use chrono::{DateTime, Offset, SecondsFormat, TimeZone, Utc};
use chrono_tz::Tz;

/// An organisation time zone (a valid IANA name).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct OrgZone(Tz);

impl OrgZone {
    /// UTC, the default zone.
    pub const UTC: OrgZone = OrgZone(Tz::UTC);

    /// Parse an IANA zone name (exact spelling, as in the tz database); the
    /// error names the value and what is expected.
    pub fn parse(name: &str) -> Result<OrgZone, String> {
        let t = name.trim();
        if t.is_empty() || t.len() > 64 {
            return Err(format!(
                "time zone '{}': expected an IANA time zone name such as Etc/GMT+4 or UTC",
                t.chars().take(64).collect::<String>()
            ));
        }
        t.parse::<Tz>().map(OrgZone).map_err(|_| {
            format!("time zone '{t}' is not in the IANA tz database: use a name such as Etc/GMT+4 or UTC")
        })
    }

    /// The zone's IANA name.
    pub fn name(self) -> &'static str {
        self.0.name()
    }

    /// `2026-03-05 14:20 (UTC-04:00)`: the instant as local time to the
    /// minute, with the offset in force then.
    pub fn show(self, instant: DateTime<Utc>) -> String {
        let local = instant.with_timezone(&self.0);
        format!(
            "{} (UTC{})",
            local.format("%Y-%m-%d %H:%M"),
            offset_text(local.offset().fix().local_minus_utc())
        )
    }

    /// RFC 3339 with the local offset, to the second (`…T14:20:00-04:00`;
    /// UTC itself is written `+00:00`).
    pub fn rfc3339(self, instant: DateTime<Utc>) -> String {
        let local = self
            .0
            .from_utc_datetime(&instant.naive_utc())
            .fixed_offset();
        local.to_rfc3339_opts(SecondsFormat::Secs, false)
    }
}

impl Default for OrgZone {
    fn default() -> Self {
        OrgZone::UTC
    }
}

/// `+05:30`, `-04:00`, `+00:00` from seconds east of UTC.
fn offset_text(east_secs: i32) -> String {
    let sign = if east_secs < 0 { '-' } else { '+' };
    let m = east_secs.unsigned_abs() / 60;
    format!("{sign}{:02}:{:02}", m / 60, m % 60)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(s: &str) -> DateTime<Utc> {
        DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
    }

    #[test]
    fn names_are_checked_against_the_tz_database() {
        assert_eq!(OrgZone::parse("UTC").unwrap(), OrgZone::UTC);
        assert_eq!(OrgZone::parse(" Etc/GMT+4 ").unwrap().name(), "Etc/GMT+4");
        let e = OrgZone::parse("Mars/Olympus").unwrap_err();
        assert!(
            e.contains("'Mars/Olympus' is not in the IANA tz database"),
            "{e}"
        );
        assert!(OrgZone::parse("").is_err());
        assert!(OrgZone::parse(&"x".repeat(500)).is_err());
    }

    // Etc/GMT+4 is four hours BEHIND UTC: the POSIX sign convention the
    // IANA tz database keeps for its Etc zones (tz database, file `etcetera`).
    #[test]
    fn a_fixed_zone_shows_its_offset() {
        let z = OrgZone::parse("Etc/GMT+4").unwrap();
        assert_eq!(
            z.show(at("2026-03-05T18:20:59Z")),
            "2026-03-05 14:20 (UTC-04:00)"
        );
        assert_eq!(
            z.rfc3339(at("2026-03-05T18:20:59Z")),
            "2026-03-05T14:20:59-04:00"
        );
        assert_eq!(
            OrgZone::UTC.show(at("2026-03-05T18:20:00Z")),
            "2026-03-05 18:20 (UTC+00:00)"
        );
        assert_eq!(
            OrgZone::UTC.rfc3339(at("2026-03-05T18:20:00Z")),
            "2026-03-05T18:20:00+00:00"
        );
    }

    // Check values: the IANA tz database, file `northamerica`, zone EST5EDT
    // with "Rule US 2007 max": daylight time from the second Sunday of March
    // at 2:00 local standard time to the first Sunday of November at 2:00
    // local daylight time. In 2026 those Sundays are 8 March and 1 November
    // (calendar), so the change happens at 07:00 UTC and 06:00 UTC. The same
    // values come from GNU date with the system's tzdata 2025b:
    // `TZ=EST5EDT date -d @1772953140 '+%F %R %:z'` → 2026-03-08 01:59 -05:00.
    #[test]
    fn daylight_saving_changes_the_offset_at_the_rule_instant() {
        let z = OrgZone::parse("EST5EDT").unwrap();
        assert_eq!(
            z.show(at("2026-03-08T06:59:00Z")),
            "2026-03-08 01:59 (UTC-05:00)"
        );
        assert_eq!(
            z.show(at("2026-03-08T07:00:00Z")),
            "2026-03-08 03:00 (UTC-04:00)"
        );
        // Clocks go back: the hour 01:00-01:59 happens twice; the offset
        // tells the two apart.
        assert_eq!(
            z.show(at("2026-11-01T05:30:00Z")),
            "2026-11-01 01:30 (UTC-04:00)"
        );
        assert_eq!(
            z.show(at("2026-11-01T06:30:00Z")),
            "2026-11-01 01:30 (UTC-05:00)"
        );
        assert_eq!(
            z.rfc3339(at("2026-11-01T06:30:00Z")),
            "2026-11-01T01:30:00-05:00"
        );
    }

    // Check values: IANA tz database, file `europe`, zone CET with "Rule EU
    // 1981 max": summer time from the last Sunday of March at 01:00 UTC
    // (29 March 2026), offset +01:00 → +02:00.
    #[test]
    fn a_zone_east_of_utc_changes_at_its_own_rule() {
        let z = OrgZone::parse("CET").unwrap();
        assert_eq!(
            z.show(at("2026-03-29T00:59:00Z")),
            "2026-03-29 01:59 (UTC+01:00)"
        );
        assert_eq!(
            z.show(at("2026-03-29T01:00:00Z")),
            "2026-03-29 03:00 (UTC+02:00)"
        );
    }

    #[test]
    fn offsets_are_written_with_sign_hours_and_minutes() {
        assert_eq!(offset_text(0), "+00:00");
        assert_eq!(offset_text(19_800), "+05:30");
        assert_eq!(offset_text(-16_200), "-04:30");
    }
}
