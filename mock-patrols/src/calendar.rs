//! Civil calendar arithmetic for `YYYY-MM-DD` strings, without a date crate.
//!
//! Uses the proleptic Gregorian day-count algorithms published by Howard
//! Hinnant ("chrono-Compatible Low-Level Date Algorithms"), counting days
//! from 1970-01-01.

/// Days since 1970-01-01 for a civil date.
pub(crate) fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = i64::from((m + 9) % 12);
    let doy = (153 * mp + 2) / 5 + i64::from(d) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// Civil date (year, month, day) for a day count since 1970-01-01.
pub(crate) fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// Parses a strict `YYYY-MM-DD` date into days since 1970-01-01.
pub(crate) fn parse_date(s: &str) -> Option<i64> {
    let b = s.as_bytes();
    if b.len() != 10 || b[4] != b'-' || b[7] != b'-' {
        return None;
    }
    let y: i64 = s.get(0..4)?.parse().ok()?;
    let m: u32 = s.get(5..7)?.parse().ok()?;
    let d: u32 = s.get(8..10)?.parse().ok()?;
    if !(1..=12).contains(&m) || d == 0 || d > 31 {
        return None;
    }
    let days = days_from_civil(y, m, d);
    // Rejects dates such as 2025-02-30 that roll over into the next month.
    (civil_from_days(days) == (y, m, d)).then_some(days)
}

/// Formats days since 1970-01-01 as `YYYY-MM-DD`.
pub(crate) fn format_date(days: i64) -> String {
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_day_counts() {
        // 1970-01-01 is day 0 by definition of the Unix epoch (POSIX).
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        // 2000-03-01 = 11017 days after the epoch: 30 years of 365 days plus
        // 7 leap days (1972..1996) plus 31 + 29 days of 2000 (hand count).
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        // 2025-01-01: 55 years * 365 + 13 leap days (1972..2024) = 20089 (hand count).
        assert_eq!(parse_date("2025-01-01"), Some(20_089));
    }

    #[test]
    fn round_trips_every_day_of_a_leap_span() {
        for z in 19_000..21_000 {
            let s = format_date(z);
            assert_eq!(parse_date(&s), Some(z), "{s}");
        }
    }

    #[test]
    fn rejects_bad_dates() {
        for s in [
            "2025-02-29",
            "2025-13-01",
            "2025-1-01",
            "20250101",
            "2025-00-10",
            "abcd-ef-gh",
        ] {
            assert_eq!(parse_date(s), None, "{s}");
        }
        // 2024 is a leap year (divisible by 4, not by 100): Gregorian rule.
        assert!(parse_date("2024-02-29").is_some());
    }
}
