//! Detection dates as whole days since 1970-01-01 (UTC), parsed from ISO
//! 8601 dates or date-times.

use chrono::{DateTime, NaiveDate, NaiveDateTime};
use serde::{Serialize, Serializer};
use std::fmt;

/// A calendar day (UTC), stored as days since the Unix epoch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Day(i32);

const EPOCH: NaiveDate = NaiveDate::from_ymd_opt(1970, 1, 1).expect("valid epoch");

impl Day {
    pub fn from_days(days: i32) -> Self {
        Day(days)
    }

    pub fn days(self) -> i32 {
        self.0
    }

    pub fn from_date(d: NaiveDate) -> Self {
        Day((d - EPOCH).num_days() as i32)
    }

    pub fn date(self) -> NaiveDate {
        EPOCH + chrono::Duration::days(i64::from(self.0))
    }

    /// Today (UTC).
    pub fn today() -> Self {
        Day::from_date(chrono::Utc::now().date_naive())
    }

    /// Parse `YYYY-MM-DD`, an RFC 3339 date-time (converted to UTC), or a
    /// date-time without offset (`YYYY-MM-DDTHH:MM:SS`, taken as UTC).
    /// Years outside 1970..=2200 are refused: no alert system is older.
    pub fn parse(raw: &str) -> Result<Self, String> {
        let s = raw.trim();
        let date = if let Ok(d) = NaiveDate::parse_from_str(s, "%Y-%m-%d") {
            d
        } else if let Ok(dt) = DateTime::parse_from_rfc3339(s) {
            dt.naive_utc().date()
        } else if let Ok(dt) = NaiveDateTime::parse_from_str(s, "%Y-%m-%dT%H:%M:%S%.f") {
            dt.date()
        } else if let Ok(dt) = NaiveDateTime::parse_from_str(s, "%Y-%m-%d %H:%M:%S%.f") {
            dt.date()
        } else {
            return Err(format!(
                "expected an ISO 8601 date (YYYY-MM-DD) or date-time, found '{s}'"
            ));
        };
        let year = chrono::Datelike::year(&date);
        if !(1970..=2200).contains(&year) {
            return Err(format!("date '{s}' is outside the years 1970 to 2200"));
        }
        Ok(Day::from_date(date))
    }
}

impl fmt::Display for Day {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.date().format("%Y-%m-%d"))
    }
}

impl Serialize for Day {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_iso_forms() {
        let d = Day::parse("2026-03-01").unwrap();
        assert_eq!(d.to_string(), "2026-03-01");
        // 2026-03-01 is 20513 days after 1970-01-01 (checked with Python's
        // datetime.date(2026,3,1).toordinal() - date(1970,1,1).toordinal()).
        assert_eq!(d.days(), 20513);
        assert_eq!(
            Day::parse("2026-03-01T23:30:00-02:00").unwrap().to_string(),
            "2026-03-02"
        );
        assert_eq!(Day::parse("2026-03-01T10:00:00").unwrap(), d);
        assert!(Day::parse("01/03/2026").unwrap_err().contains("ISO 8601"));
        assert!(Day::parse("2026-02-30").is_err());
        assert!(Day::parse("1900-01-01").unwrap_err().contains("outside"));
    }
}
