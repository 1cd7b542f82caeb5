//! The field day clock: when each visit happens.

use chrono::{DateTime, Days, Duration, FixedOffset, NaiveDate, NaiveTime, Offset, TimeZone, Utc};

/// The nominal zone of a longitude: round(lon / 15) hours, in -12..=14 (common practice).
pub(super) fn zone_of(lon: f64) -> FixedOffset {
    let hours = if lon.is_finite() {
        (lon / 15.0).round().clamp(-12.0, 14.0) as i32
    } else {
        0
    };
    FixedOffset::east_opt(hours * 3600).unwrap_or_else(|| Utc.fix())
}

/// The field day clock: visits from 07:30 to 17:00 local time, before expiry.
#[derive(Debug, Clone)]
pub(super) struct Clock {
    tz: FixedOffset,
    next: DateTime<Utc>,
    expires: DateTime<Utc>,
}

pub(super) const DAY_START: (u32, u32) = (7, 30);
pub(super) const DAY_END: (u32, u32) = (17, 0);

impl Clock {
    pub(super) fn new(
        issued: DateTime<Utc>,
        expires: DateTime<Utc>,
        first_day_after_issue: u32,
        tz: FixedOffset,
    ) -> Self {
        let day = issued.with_timezone(&tz).date_naive() + Days::new(first_day_after_issue.into());
        let start = day_start(tz, day).unwrap_or(issued);
        let next = if start <= issued {
            issued + Duration::minutes(30)
        } else {
            start
        };
        Clock { tz, next, expires }
    }

    /// The time of the next visit; the one after follows `minutes` later, on the next
    /// morning if that is past the end of the field day.
    pub(super) fn visit(&mut self, minutes: i64) -> Result<DateTime<Utc>, String> {
        let t = self.next;
        if t + Duration::hours(1) >= self.expires {
            return Err(format!(
                "the trip does not fit before the bundle expires at {}",
                self.expires.to_rfc3339()
            ));
        }
        let next = t + Duration::minutes(minutes);
        let local = next.with_timezone(&self.tz);
        let end = NaiveTime::from_hms_opt(DAY_END.0, DAY_END.1, 0).unwrap_or_default();
        self.next =
            if local.time() > end || local.date_naive() != t.with_timezone(&self.tz).date_naive() {
                let day = t.with_timezone(&self.tz).date_naive() + Days::new(1);
                day_start(self.tz, day).unwrap_or(next)
            } else {
                next
            };
        Ok(t)
    }
}

pub(super) fn day_start(tz: FixedOffset, day: NaiveDate) -> Option<DateTime<Utc>> {
    let time = NaiveTime::from_hms_opt(DAY_START.0, DAY_START.1, 0)?;
    tz.from_local_datetime(&day.and_time(time))
        .single()
        .map(|t| t.with_timezone(&Utc))
}
