//! Reading the stored RFC 3339 times quickly.
//!
//! The statistics parse two times per stored report on every request. The
//! server writes them one way (`chrono`'s `to_rfc3339` in UTC:
//! `2026-03-01T08:15:00+00:00`, with 0 to 9 fraction digits); that shape is
//! read here directly, and anything else goes to `chrono`'s full parser, so
//! the result is the same as `DateTime::parse_from_rfc3339` for every input.

use chrono::{DateTime, NaiveDate, NaiveTime, Utc};

/// A stored time, or `None` when it is not RFC 3339.
pub fn parse_utc(s: &str) -> Option<DateTime<Utc>> {
    fast(s.as_bytes()).or_else(|| {
        DateTime::parse_from_rfc3339(s)
            .ok()
            .map(|t| t.with_timezone(&Utc))
    })
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
            assert_eq!(parse_utc(s), chrono_parse(s), "{s}");
        }
    }

    #[test]
    fn reads_what_the_server_writes() {
        let t = Utc::now();
        assert_eq!(fast(t.to_rfc3339().as_bytes()), Some(t));
    }
}
