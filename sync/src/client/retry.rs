//! Exponential backoff with a bounded number of failures and a bounded total
//! time (common practice: double the wait from a base up to a cap).

use std::time::{Duration, Instant};

/// Tracks failures of one push and says how long to wait before the next try.
#[derive(Debug)]
pub struct Backoff {
    started: Instant,
    failures: u32,
    max_failures: u32,
    initial: Duration,
    max_wait: Duration,
    max_total: Duration,
}

impl Backoff {
    /// A fresh tracker.
    pub fn new(
        max_failures: u32,
        initial: Duration,
        max_wait: Duration,
        max_total: Duration,
    ) -> Self {
        Backoff {
            started: Instant::now(),
            failures: 0,
            max_failures,
            initial,
            max_wait,
            max_total,
        }
    }

    /// Failures so far.
    pub fn failures(&self) -> u32 {
        self.failures
    }

    /// The wait before retry number `n` (0-based): `initial * 2^n`, capped.
    pub fn wait_for(&self, n: u32) -> Duration {
        let factor = 1u32.checked_shl(n.min(20)).unwrap_or(u32::MAX);
        self.initial.saturating_mul(factor).min(self.max_wait)
    }

    /// Records a failure; returns the wait before the next try, or `None` when
    /// the failure budget or the time budget is spent.
    pub fn fail(&mut self) -> Option<Duration> {
        self.failures += 1;
        if self.failures > self.max_failures {
            return None;
        }
        let wait = self.wait_for(self.failures - 1);
        if self.started.elapsed() + wait > self.max_total {
            return None;
        }
        Some(wait)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn doubles_caps_and_stops() {
        let ms = Duration::from_millis;
        let mut b = Backoff::new(4, ms(100), ms(350), Duration::from_secs(60));
        assert_eq!(b.fail(), Some(ms(100)));
        assert_eq!(b.fail(), Some(ms(200)));
        assert_eq!(b.fail(), Some(ms(350)));
        assert_eq!(b.fail(), Some(ms(350)));
        assert_eq!(b.fail(), None);
        let mut short = Backoff::new(10, ms(100), ms(100), ms(50));
        assert_eq!(short.fail(), None, "time budget");
    }
}
