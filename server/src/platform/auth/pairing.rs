//! Pairing codes: how a phone gets one bundle at the station without
//! anyone typing a team token (issue 11).
//!
//! A coordinator makes a code for one bundle; it works once and for
//! [`PAIRING_LIFETIME_SECS`] (15 minutes: long enough to walk to the phones
//! at a station, short enough that a photographed screen is soon useless;
//! our choice). It is 10 characters of Crockford's base32 (50 random bits
//! from the OS), shown as `XXXXX-XXXXX` and inside the QR code's link;
//! only its SHA-256 is stored. Guessing is out of reach: 2^50 codes against
//! a handful live for 15 minutes would need about 10^12 requests a second.
//!
//! Redeeming hands the phone the bundle and a new team token for the
//! bundle's team (to send the return); the token stops working when that
//! bundle is cancelled (`Reader::team_token_by_hash`) and can be revoked
//! as any team token. Marking the code used and storing the token happen
//! in one transaction.

use super::tokens::{new_team_token, random_bytes, sha256_hex};
use crate::error::{Error, Result};
use crate::platform::storage::{BundleRecord, Db, PairingRecord};

/// How long a pairing code works, in seconds.
pub const PAIRING_LIFETIME_SECS: i64 = 15 * 60;
/// Characters of a code (without the dash).
pub const PAIRING_CODE_CHARS: usize = 10;
/// Crockford's base32 alphabet: no I, L, O or U.
const ALPHABET: &[u8; 32] = b"0123456789ABCDEFGHJKMNPQRSTVWXYZ";

/// Why a code was refused; each has words a field worker understands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PairingRefusal {
    /// Not 10 letters and digits.
    Malformed,
    /// No such code.
    Unknown,
    /// Used already (each code works once).
    Used,
    /// Older than its lifetime.
    Expired,
    /// The trip was cancelled by the office.
    TripCancelled,
    /// The trip itself has expired.
    TripExpired,
}

impl PairingRefusal {
    /// A stable word for the app's message catalogue.
    pub fn as_str(self) -> &'static str {
        match self {
            PairingRefusal::Malformed => "malformed",
            PairingRefusal::Unknown => "unknown",
            PairingRefusal::Used => "used",
            PairingRefusal::Expired => "expired",
            PairingRefusal::TripCancelled => "trip_cancelled",
            PairingRefusal::TripExpired => "trip_expired",
        }
    }

    /// The English message (the app shows its own catalogue's words).
    pub fn message(self) -> &'static str {
        match self {
            PairingRefusal::Malformed => {
                "A pairing code has 10 letters and digits, like 7KQ2M-9XH4D. Check what you typed."
            }
            PairingRefusal::Unknown => {
                "This pairing code is not known. Check the letters, or ask the coordinator for a new code."
            }
            PairingRefusal::Used => {
                "This pairing code was already used: each code works once. Ask the coordinator for a new one."
            }
            PairingRefusal::Expired => {
                "This pairing code has expired (codes work for 15 minutes). Ask the coordinator for a new one."
            }
            PairingRefusal::TripCancelled => {
                "The office cancelled this trip. Do not go: ask the coordinator."
            }
            PairingRefusal::TripExpired => {
                "This trip has expired. Ask the coordinator for a new trip."
            }
        }
    }
}

/// What redeeming gives the phone.
#[derive(Debug)]
pub enum Redemption {
    /// The bundle to load and the team token to send with (shown once).
    Paired {
        bundle: Box<BundleRecord>,
        team_token: String,
    },
    Refused(PairingRefusal),
}

/// The one bundle a phone's credential from pairing may touch: a request
/// extension the auth layer sets for such a token. The phone may download
/// that bundle and send and read returns for it, nothing else of its team.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PairedBundle(pub String);

/// What a team token is, as far as pairing goes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum TokenScope {
    /// A team token given by hand: the whole team's bundles.
    Team,
    /// A phone's token from pairing, its bundle live.
    Bundle(PairedBundle),
    /// A phone's token whose bundle was cancelled or has expired: dead.
    Dead,
}

/// The scope of team token `token_id` at `now` (Unix seconds).
pub fn token_scope(db: &Db, token_id: i64, now: i64) -> Result<TokenScope> {
    let Some(bundle_id) = db.read(|r| r.paired_bundle_of_token(token_id))? else {
        return Ok(TokenScope::Team);
    };
    let live = db
        .read(|r| r.bundle(&bundle_id))?
        .is_some_and(|b| b.cancelled_at.is_none() && !is_past(&b.expires_at, now));
    Ok(if live {
        TokenScope::Bundle(PairedBundle(bundle_id))
    } else {
        TokenScope::Dead
    })
}

/// A new code, 10 characters of the alphabet.
fn new_code() -> Result<String> {
    let bytes = random_bytes::<PAIRING_CODE_CHARS>()?;
    // 256 is a multiple of 32, so `b % 32` is uniform.
    Ok(bytes
        .iter()
        .map(|b| ALPHABET[(*b % 32) as usize] as char)
        .collect())
}

/// `ABCDEFGHJK` as `ABCDE-FGHJK`, for reading aloud and typing.
pub fn display_code(code: &str) -> String {
    let (a, b) = code.split_at(code.len() / 2);
    format!("{a}-{b}")
}

/// A typed code in its stored form: case, spaces and dashes ignored, and
/// the letters Crockford's base32 reads as digits (O → 0, I and L → 1).
/// `None` when it is not 10 characters of the alphabet.
pub fn normalize_code(typed: &str) -> Option<String> {
    let code: String = typed
        .chars()
        .filter(|c| !matches!(c, ' ' | '-' | '\t'))
        .map(|c| match c.to_ascii_uppercase() {
            'O' => '0',
            'I' | 'L' => '1',
            u => u,
        })
        .collect();
    (code.len() == PAIRING_CODE_CHARS && code.bytes().all(|b| ALPHABET.contains(&b)))
        .then_some(code)
}

/// Whether an RFC 3339 time is at or before `now` (Unix seconds); an
/// unreadable time counts as past (fail closed).
fn is_past(rfc3339: &str, now: i64) -> bool {
    chrono::DateTime::parse_from_rfc3339(rfc3339).map_or(true, |t| t.timestamp() <= now)
}

/// Make a pairing code for `bundle_id`, by `created_by` (the user's name).
/// Returns the code (shown once) and its record.
pub fn issue_pairing(
    db: &Db,
    bundle_id: &str,
    created_by: &str,
    now: i64,
) -> Result<(String, PairingRecord)> {
    let bundle = db
        .read(|r| r.bundle(bundle_id))?
        .ok_or_else(|| Error::NotFound(format!("no bundle {bundle_id}")))?;
    if bundle.cancelled_at.is_some() {
        return Err(Error::Conflict(format!(
            "bundle {bundle_id} was cancelled; a phone cannot be paired to it"
        )));
    }
    if is_past(&bundle.expires_at, now) {
        return Err(Error::Conflict(format!(
            "bundle {bundle_id} expired at {}; issue a new trip",
            bundle.expires_at
        )));
    }
    let code = new_code()?;
    let rec = db.write_bookkeeping(|tx| {
        tx.insert_pairing(
            &sha256_hex(&code),
            bundle_id,
            created_by,
            now,
            now + PAIRING_LIFETIME_SECS,
        )
    })?;
    Ok((code, rec))
}

/// Why a stored pairing (and its bundle) cannot be redeemed at `now`.
fn refusal(p: &PairingRecord, b: &BundleRecord, now: i64) -> Option<PairingRefusal> {
    if p.used_at.is_some() {
        Some(PairingRefusal::Used)
    } else if b.cancelled_at.is_some() {
        Some(PairingRefusal::TripCancelled)
    } else if now >= p.expires_at {
        Some(PairingRefusal::Expired)
    } else if is_past(&b.expires_at, now) {
        Some(PairingRefusal::TripExpired)
    } else {
        None
    }
}

/// Redeem a typed code at `now`: checked and marked used in one write
/// transaction, with a new team token for the bundle's team.
pub fn redeem_pairing(db: &Db, typed: &str, now: i64) -> Result<Redemption> {
    let Some(code) = normalize_code(typed) else {
        return Ok(Redemption::Refused(PairingRefusal::Malformed));
    };
    let hash = sha256_hex(&code);
    let token = new_team_token()?;
    db.write_bookkeeping(|tx| {
        let r = tx.reader();
        let Some(p) = r.pairing_by_hash(&hash)? else {
            return Ok(Redemption::Refused(PairingRefusal::Unknown));
        };
        let b = r
            .bundle(&p.bundle_id)?
            .ok_or_else(|| Error::Internal(format!("pairing {} has no bundle", p.id)))?;
        if let Some(why) = refusal(&p, &b, now) {
            return Ok(Redemption::Refused(why));
        }
        let t = tx.insert_team_token(&sha256_hex(&token), &b.team, now)?;
        if !tx.use_pairing(p.id, t.id, now)? {
            return Err(Error::Internal(format!(
                "pairing {} changed under its lock",
                p.id
            )));
        }
        Ok(Redemption::Paired {
            bundle: Box::new(b),
            team_token: token,
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes_have_their_shape_and_differ() {
        let a = new_code().unwrap();
        let b = new_code().unwrap();
        assert_eq!(a.len(), PAIRING_CODE_CHARS);
        assert_ne!(a, b);
        assert_eq!(normalize_code(&a).as_deref(), Some(a.as_str()));
        assert_eq!(display_code("ABCDEFGHJK"), "ABCDE-FGHJK");
    }

    #[test]
    fn typing_slips_are_forgiven_and_junk_refused() {
        assert_eq!(
            normalize_code(" abcde-fghjk ").as_deref(),
            Some("ABCDEFGHJK")
        );
        // Crockford's base32 reads O as 0 and I, L as 1.
        assert_eq!(normalize_code("O1LI2-34567").as_deref(), Some("0111234567"));
        assert_eq!(normalize_code("ABCDE-FGHJ"), None, "too short");
        assert_eq!(normalize_code("ABCDE-FGHJKX"), None, "too long");
        assert_eq!(
            normalize_code("ABCDE-FGHJU"),
            None,
            "U is not in the alphabet"
        );
        assert_eq!(normalize_code("ABCDE-FGHJ!"), None);
        assert_eq!(normalize_code("ÀBCDE-FGHJK"), None);
    }

    #[test]
    fn past_times_and_junk_count_as_past() {
        assert!(is_past("2020-01-01T00:00:00Z", 1_700_000_000));
        assert!(!is_past("2099-01-01T00:00:00Z", 1_700_000_000));
        assert!(is_past("soon", 0));
    }
}
