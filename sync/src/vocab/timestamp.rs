//! A point in time as the office stores it: RFC 3339 text in UTC, written
//! the one way the server has always written it (`chrono`'s `to_rfc3339`:
//! `2026-03-01T08:15:00+00:00`, with 0, 3, 6 or 9 fraction digits), and
//! read back once, when the row is read, so that nothing past storage
//! parses times again.
//!
//! Reading is quick for that layout (the statistics read two times per
//! stored report on every request); any other RFC 3339 text goes to
//! `chrono`'s full parser, so the result is the same as
//! `DateTime::parse_from_rfc3339` for every input.

use chrono::{DateTime, NaiveDate, NaiveTime, Utc};
use serde::{Deserialize, Deserializer, Serialize, Serializer};
use std::fmt;
use std::str::FromStr;

/// A UTC time. Text, serde and SQLite all hold it as `to_rfc3339` writes
/// it (so a stored row shows in JSON exactly as the text it was stored
/// as), and read any RFC 3339 time.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Timestamp(DateTime<Utc>);

impl Timestamp {
    /// The current time.
    pub fn now() -> Self {
        Timestamp(Utc::now())
    }

    /// The time as `chrono` holds it.
    pub fn utc(self) -> DateTime<Utc> {
        self.0
    }

    /// Parses RFC 3339 text (any offset, converted to UTC); `None` when it
    /// is not RFC 3339.
    pub fn parse(s: &str) -> Option<Self> {
        fast(s.as_bytes())
            .or_else(|| {
                DateTime::parse_from_rfc3339(s)
                    .ok()
                    .map(|t| t.with_timezone(&Utc))
            })
            .map(Timestamp)
    }
}

impl From<DateTime<Utc>> for Timestamp {
    fn from(t: DateTime<Utc>) -> Self {
        Timestamp(t)
    }
}

impl From<Timestamp> for DateTime<Utc> {
    fn from(t: Timestamp) -> Self {
        t.0
    }
}

/// Text that is not an RFC 3339 time.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NotATime(pub String);

impl fmt::Display for NotATime {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "'{}' is not an RFC 3339 time", self.0)
    }
}

impl std::error::Error for NotATime {}

impl FromStr for Timestamp {
    type Err = NotATime;
    fn from_str(s: &str) -> Result<Self, NotATime> {
        Timestamp::parse(s).ok_or_else(|| NotATime(s.to_owned()))
    }
}

impl fmt::Display for Timestamp {
    /// The stored layout, `to_rfc3339`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0.to_rfc3339())
    }
}

impl Serialize for Timestamp {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

impl<'de> Deserialize<'de> for Timestamp {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = <std::borrow::Cow<'de, str>>::deserialize(d)?;
        s.parse().map_err(serde::de::Error::custom)
    }
}

impl rusqlite::types::ToSql for Timestamp {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        Ok(rusqlite::types::ToSqlOutput::from(self.0.to_rfc3339()))
    }
}

impl rusqlite::types::FromSql for Timestamp {
    /// Parses the borrowed text of the column, without copying it.
    fn column_result(value: rusqlite::types::ValueRef<'_>) -> rusqlite::types::FromSqlResult<Self> {
        let s = value.as_str()?;
        Timestamp::parse(s)
            .ok_or_else(|| rusqlite::types::FromSqlError::Other(Box::new(NotATime(s.to_owned()))))
    }
}

/// `YYYY-MM-DDTHH:MM:SS[.f{1,9}](+00:00|Z)`; `None` for any other shape, a
/// leap second, or an invalid date (the full parser decides those).
fn fast(b: &[u8]) -> Option<DateTime<Utc>> {
    if b.len() < 20 {
        return None;
    }
    let num = |from: usize, to: usize| -> Option<u32> {
        b[from..to].iter().try_fold(0u32, |acc, &c| {
            c.is_ascii_digit().then(|| acc * 10 + u32::from(c - b'0'))
        })
    };
    if b[4] != b'-' || b[7] != b'-' || b[10] != b'T' || b[13] != b':' || b[16] != b':' {
        return None;
    }
    let (year, month, day) = (num(0, 4)?, num(5, 7)?, num(8, 10)?);
    let (hour, minute, second) = (num(11, 13)?, num(14, 16)?, num(17, 19)?);
    let mut rest = &b[19..];
    let mut nanos = 0u32;
    if let [b'.', tail @ ..] = rest {
        let digits = tail.iter().take_while(|c| c.is_ascii_digit()).count();
        if !(1..=9).contains(&digits) {
            return None;
        }
        nanos = num(20, 20 + digits)? * 10u32.pow(9 - digits as u32);
        rest = &tail[digits..];
    }
    if rest != b"+00:00" && rest != b"Z" {
        return None;
    }
    if second >= 60 {
        return None;
    }
    let date = NaiveDate::from_ymd_opt(i32::try_from(year).ok()?, month, day)?;
    let time = NaiveTime::from_hms_nano_opt(hour, minute, second, nanos)?;
    Some(date.and_time(time).and_utc())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The reference is chrono's own RFC 3339 parser (chrono 0.4).
    fn chrono_parse(s: &str) -> Option<DateTime<Utc>> {
        DateTime::parse_from_rfc3339(s)
            .ok()
            .map(|t| t.with_timezone(&Utc))
    }

    #[test]
    fn agrees_with_chrono() {
        for s in [
            "2026-03-01T08:15:00+00:00",
            "2026-03-01T08:15:00Z",
            "2026-03-01T08:15:00.5+00:00",
            "2026-03-01T08:15:00.123456789+00:00",
            "2026-12-31T23:59:59.000000001Z",
            "2024-02-29T00:00:00+00:00",
            "2025-02-29T00:00:00+00:00",
            "2026-03-01T08:15:00+02:00",
            "2026-03-01T08:15:00-05:30",
            "2026-03-01t08:15:00z",
            "2026-03-01 08:15:00+00:00",
            "2016-12-31T23:59:60+00:00",
            "2026-03-01T08:15:00.1234567891+00:00",
            "2026-03-01T08:15:00.+00:00",
            "2026-03-01T24:00:00+00:00",
            "2026-13-01T08:15:00+00:00",
            "2026-03-01T08:15:00",
            "not a time",
            "",
        ] {
            assert_eq!(
                Timestamp::parse(s).map(Timestamp::utc),
                chrono_parse(s),
                "{s}"
            );
        }
    }

    #[test]
    fn reads_what_the_server_writes() {
        let t = Utc::now();
        assert_eq!(fast(t.to_rfc3339().as_bytes()), Some(t));
    }

    #[test]
    fn text_json_and_sqlite_round_trip() {
        let t = Timestamp::from(
            DateTime::parse_from_rfc3339("2026-03-01T08:15:00.250Z")
                .expect("t")
                .with_timezone(&Utc),
        );
        let stored = "2026-03-01T08:15:00.250+00:00";
        assert_eq!(t.to_string(), stored);
        assert_eq!(stored.parse::<Timestamp>(), Ok(t));
        assert!("yesterday".parse::<Timestamp>().is_err());
        let json = serde_json::to_string(&t).expect("json");
        assert_eq!(json, format!("\"{stored}\""));
        assert_eq!(serde_json::from_str::<Timestamp>(&json).expect("back"), t);
        let z: Timestamp = serde_json::from_str("\"2026-03-01T08:15:00.25Z\"").expect("z");
        assert_eq!(z, t);
        assert!(serde_json::from_str::<Timestamp>("\"soon\"").is_err());
        let db = rusqlite::Connection::open_in_memory().expect("db");
        let text: String = db.query_row("SELECT ?1", [t], |r| r.get(0)).expect("text");
        assert_eq!(text, stored);
        let read: Timestamp = db
            .query_row("SELECT ?1", [stored], |r| r.get(0))
            .expect("read");
        assert_eq!(read, t);
        let other: Timestamp = db
            .query_row("SELECT '2026-03-01T10:15:00.25+02:00'", [], |r| r.get(0))
            .expect("offset");
        assert_eq!(other, t);
        let bad: rusqlite::Result<Timestamp> = db.query_row("SELECT 'soon'", [], |r| r.get(0));
        assert!(bad.is_err());
    }
}
