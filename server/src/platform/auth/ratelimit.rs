//! Login throttling: a pure decision from the stored attempt times.
//!
//! Policy (defaults, [`LoginThrottle`]), three counts; any lock refuses:
//! - per (user name, client address): 5 failed logins within 15 minutes
//!   lock that name from that address for 15 minutes after the fifth. So a
//!   guesser behind a NAT or proxy does not shut out the others there, nor
//!   a guesser elsewhere the account's owner.
//! - per user name over all addresses (the global bound of one account):
//!   100 failures within an hour lock the name for 15 minutes, so guessing
//!   spread over many addresses stays at about 100 tries an hour.
//! - per client address over all names: 30 failures within 15 minutes lock
//!   the address for 15 minutes (one address trying many names; a NAT of
//!   people who mistype now and then stays well below).
//!
//! A successful login clears the counts of its name (the owner proved the
//! password) but not the per-address count (one working account must not
//! let a client go on guessing others).
//!
//! Source of the numbers: a project choice (common practice for web
//! logins). The anchors require anti-brute-force controls without fixing
//! numbers (ASVS 5.0 6.3.1; OWASP Authentication Cheat Sheet: temporary
//! lockout with a threshold and a duration). From memory, not re-checked:
//! NIST SP 800-63B 5.2.2 caps consecutive failures at 100; ASVS 4.0.3 2.2.1
//! at 100 failures per hour. 5 per 15 min stays well inside both and bounds
//! a guesser at about 20 tries an hour per account. Attempts refused while
//! locked are not verified and not stored, so they do not extend the lock.

/// The three throttling counts of a login (see the module text).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LoginThrottle {
    /// Per (name, address).
    pub pair: LockoutPolicy,
    /// Per name, over every address.
    pub name: LockoutPolicy,
    /// Per address, over every name.
    pub client: LockoutPolicy,
}

impl Default for LoginThrottle {
    fn default() -> Self {
        LoginThrottle {
            pair: LockoutPolicy::default(),
            name: LockoutPolicy {
                max_failures: 100,
                window_secs: 60 * 60,
                lockout_secs: 15 * 60,
            },
            client: LockoutPolicy {
                max_failures: 30,
                window_secs: 15 * 60,
                lockout_secs: 15 * 60,
            },
        }
    }
}

impl LoginThrottle {
    /// How far back attempts can matter to any of the three counts.
    pub fn lookback_secs(&self) -> i64 {
        [self.pair, self.name, self.client]
            .iter()
            .map(LockoutPolicy::lookback_secs)
            .max()
            .unwrap_or(0)
    }

    /// The decision from the attempts of the (name, address) pair, of the
    /// name and of the address.
    pub fn decide(
        &self,
        pair: &[Attempt],
        name: &[Attempt],
        client: &[Attempt],
        now: i64,
    ) -> Lockout {
        lockout(pair, true, now, &self.pair)
            .or(lockout(name, true, now, &self.name))
            .or(lockout(client, false, now, &self.client))
    }
}

/// One stored login attempt (the row storage reads back).
pub use crate::platform::storage::LoginAttempt as Attempt;

/// The throttling numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LockoutPolicy {
    /// Failures that lock (0 turns throttling off).
    pub max_failures: usize,
    /// The failures must fall within this many seconds.
    pub window_secs: i64,
    /// The lock lasts this long after the failure that set it.
    pub lockout_secs: i64,
}

impl Default for LockoutPolicy {
    fn default() -> Self {
        LockoutPolicy {
            max_failures: 5,
            window_secs: 15 * 60,
            lockout_secs: 15 * 60,
        }
    }
}

impl LockoutPolicy {
    /// How far back attempts can still matter at any moment: the caller
    /// loads attempts newer than `now - lookback_secs()`.
    pub fn lookback_secs(&self) -> i64 {
        self.window_secs.saturating_add(self.lockout_secs)
    }
}

/// The throttling decision.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Lockout {
    /// A login may be tried.
    Open,
    /// Refused until this Unix second.
    LockedUntil(i64),
}

impl Lockout {
    /// The later of two locks (used to join the per-name and per-client
    /// decisions).
    pub fn or(self, other: Lockout) -> Lockout {
        match (self, other) {
            (Lockout::LockedUntil(a), Lockout::LockedUntil(b)) => Lockout::LockedUntil(a.max(b)),
            (Lockout::LockedUntil(a), Lockout::Open) | (Lockout::Open, Lockout::LockedUntil(a)) => {
                Lockout::LockedUntil(a)
            }
            (Lockout::Open, Lockout::Open) => Lockout::Open,
        }
    }
}

/// Decide from `attempts` (any order) whether a login may be tried at
/// `now`. With `reset_on_success`, only failures after the latest success
/// count.
pub fn lockout(
    attempts: &[Attempt],
    reset_on_success: bool,
    now: i64,
    policy: &LockoutPolicy,
) -> Lockout {
    let n = policy.max_failures;
    if n == 0 {
        return Lockout::Open;
    }
    let last_ok = attempts
        .iter()
        .filter(|a| a.ok)
        .map(|a| a.at)
        .max()
        .filter(|_| reset_on_success);
    let mut failures: Vec<i64> = attempts
        .iter()
        .filter(|a| !a.ok && last_ok.is_none_or(|ok| a.at > ok))
        .map(|a| a.at)
        .collect();
    failures.sort_unstable();
    let until = failures
        .windows(n)
        .filter(|w| w[n - 1] - w[0] <= policy.window_secs)
        .map(|w| w[n - 1].saturating_add(policy.lockout_secs))
        .max();
    match until {
        Some(u) if now < u => Lockout::LockedUntil(u),
        _ => Lockout::Open,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Policy numbers are this module's defaults (5 failures / 900 s window
    // / 900 s lock; project choice, see the module text).
    const T0: i64 = 1_750_000_000;

    fn fail(at: i64) -> Attempt {
        Attempt { at, ok: false }
    }

    #[test]
    fn fifth_failure_in_the_window_locks_for_fifteen_minutes() {
        let p = LockoutPolicy::default();
        let mut seen = Vec::new();
        for i in 0..4 {
            seen.push(fail(T0 + 60 * i));
            assert_eq!(lockout(&seen, true, T0 + 60 * i + 1, &p), Lockout::Open);
        }
        seen.push(fail(T0 + 240));
        let until = T0 + 240 + 900;
        assert_eq!(
            lockout(&seen, true, T0 + 241, &p),
            Lockout::LockedUntil(until)
        );
        assert_eq!(
            lockout(&seen, true, until - 1, &p),
            Lockout::LockedUntil(until)
        );
        assert_eq!(lockout(&seen, true, until, &p), Lockout::Open);
        // After the lock: the next failure alone does not lock again,
        // because the other four are now outside its 15-minute window.
        seen.push(fail(until + 1));
        assert_eq!(lockout(&seen, true, until + 2, &p), Lockout::Open);
    }

    #[test]
    fn spread_out_failures_never_lock() {
        let p = LockoutPolicy::default();
        // One failure every 4 minutes: any five span 16 minutes > 15.
        let seen: Vec<_> = (0..20).map(|i| fail(T0 + 240 * i)).collect();
        assert_eq!(lockout(&seen, false, T0 + 240 * 19 + 1, &p), Lockout::Open);
        // Every 3 minutes 45 s: five span exactly 15 minutes, which locks.
        let seen: Vec<_> = (0..5).map(|i| fail(T0 + 225 * i)).collect();
        assert_eq!(
            lockout(&seen, false, T0 + 901, &p),
            Lockout::LockedUntil(T0 + 900 + 900)
        );
    }

    #[test]
    fn success_resets_the_name_count_but_not_the_client_count() {
        let p = LockoutPolicy::default();
        let mut seen: Vec<_> = (0..4).map(|i| fail(T0 + i)).collect();
        seen.push(Attempt {
            at: T0 + 10,
            ok: true,
        });
        seen.push(fail(T0 + 20));
        assert_eq!(lockout(&seen, true, T0 + 21, &p), Lockout::Open);
        assert_eq!(
            lockout(&seen, false, T0 + 21, &p),
            Lockout::LockedUntil(T0 + 20 + 900)
        );
        // Order of the input does not matter.
        seen.reverse();
        assert_eq!(
            lockout(&seen, false, T0 + 21, &p),
            Lockout::LockedUntil(T0 + 920)
        );
    }

    #[test]
    fn one_address_guessing_one_name_does_not_lock_its_neighbours() {
        let t = LoginThrottle::default();
        let five: Vec<_> = (0..5).map(|i| fail(T0 + i)).collect();
        // The pair is locked; the name over all addresses and the address
        // over all names are not (5 is far below 100 and 30).
        assert!(matches!(
            t.decide(&five, &five, &five, T0 + 10),
            Lockout::LockedUntil(_)
        ));
        assert_eq!(t.decide(&[], &five, &five, T0 + 10), Lockout::Open);
        // 100 failures on one name within the hour, from many addresses.
        let spread: Vec<_> = (0..100).map(|i| fail(T0 + 30 * i)).collect();
        assert_eq!(
            t.decide(&[], &spread, &[], T0 + 3000),
            Lockout::LockedUntil(T0 + 30 * 99 + 900)
        );
        // 30 failures from one address over many names.
        let many: Vec<_> = (0..30).map(|i| fail(T0 + i)).collect();
        assert!(matches!(
            t.decide(&[], &[], &many, T0 + 40),
            Lockout::LockedUntil(_)
        ));
        assert_eq!(t.lookback_secs(), 4500);
    }

    #[test]
    fn locks_join_to_the_later_one() {
        use Lockout::*;
        assert_eq!(Open.or(Open), Open);
        assert_eq!(Open.or(LockedUntil(5)), LockedUntil(5));
        assert_eq!(LockedUntil(9).or(LockedUntil(5)), LockedUntil(9));
        let off = LockoutPolicy {
            max_failures: 0,
            ..LockoutPolicy::default()
        };
        assert_eq!(lockout(&[fail(T0); 10], false, T0, &off), Open);
        assert_eq!(LockoutPolicy::default().lookback_secs(), 1800);
    }
}
