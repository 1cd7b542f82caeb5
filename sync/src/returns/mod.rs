//! The return format, version 1: what a field team brings back — reports,
//! photos and an HMAC-SHA256 signature — as agreed in RETURN-SPEC. The field
//! kit writes it with [`pack_return`]; the server opens it with
//! [`open_return`] and checks each report with [`validate_report`] (or
//! [`OpenedReturn::apply_checklist`]).
//!
//! # Entries
//!
//! | name | content |
//! |---|---|
//! | `photos/<sha256>.jpg` | each photo once, named by the SHA-256 of its bytes (stored) |
//! | `reports.json` | JSON array of [`Report`], sorted by `report_id` |
//! | `return-manifest.json` | [`ReturnManifest`]: format, version, bundle, key id, counts, SHA-256 and size of every entry above |
//! | `signature.json` | [`Signature`]: HMAC-SHA256 under the bundle's upload key of the exact manifest bytes |
//!
//! No other name is accepted (see [`check_return_entry_name`]).
//!
//! # Limits ([`ReturnLimits::default`], reliability.md §3)
//!
//! | limit | value | anchor |
//! |---|---|---|
//! | return file (compressed) | 1 GiB | resumable upload `max-size` |
//! | ZIP entries | 5,000 | reliability.md §3 "ZIP max entries" |
//! | `return-manifest.json` | 2 MiB | JSON entry limit |
//! | `signature.json` | 4 KiB | our choice (about 200 bytes in practice) |
//! | `reports.json` | 8 MiB | our choice: 2,000 reports of up to 4 KiB |
//! | reports per return | 2,000 | our choice |
//! | one photo | 32 MiB | "Per-photo size" |
//! | all entries decompressed | 2 GiB | "ZIP total uncompressed" |
//! | ratio, JSON entries past 100 KB | 100:1 | Apache POI `MIN_INFLATE_RATIO` |
//! | ratio, photos past 100 KB | 10:1 | JPEG barely deflates |
//! | ratio, any entry | 1032:1 | DEFLATE maximum ([`crate::safezip::HARD_MAX_RATIO`]) |
//! | photos per report | 20 | [`MAX_PHOTOS_PER_REPORT`] |
//! | notes | 4,000 characters | [`MAX_NOTES_CHARS`] |
//!
//! Sizes are counted while decompressing ([`crate::safezip`]), never taken
//! from ZIP headers. Entries must be stored or deflated, regular files, not
//! encrypted, unique, consistent between local and central headers, and must
//! not overlap.
//!
//! # Order of checks in [`open_return`]
//!
//! ZIP structure → signature (constant-time compare, key looked up by bundle
//! id and key id) → manifest format, version and listing → size and SHA-256 of
//! every entry → each report on its own. A broken package is an error naming
//! the entry; a bad report lands in [`OpenedReturn::rejected`] with its reason
//! and the others are kept.

mod limits;
mod manifest;
mod names;
mod open;
mod pack;
mod report;
mod sign;
mod validate;

pub use limits::ReturnLimits;
pub use manifest::{RETURN_FORMAT, RETURN_FORMAT_VERSION, ReturnHeader, ReturnManifest};
pub use names::{
    PHOTO_PREFIX, REPORTS, RETURN_MANIFEST, SIGNATURE, check_return_entry_name, photo_entry_name,
    photo_sha_of,
};
pub use open::{OpenedReturn, RejectedReport, open_return};
pub use pack::pack_return;
pub use pack::sha256_file;
pub use report::{
    OUTCOME_CONFIRMED, OUTCOME_FALSE_ALARM, OUTCOME_INCONCLUSIVE, OUTCOME_NOT_REACHED, Position,
    PositionSource, Report, ReportPhoto, Target,
};
pub use sign::{SIGNATURE_ALGORITHM, Signature, hmac_sha256, sign_manifest, verify_manifest};
pub use validate::{
    MAX_AREA_HA, MAX_NOTES_CHARS, MAX_ORIGINAL_NAME_CHARS, MAX_PHOTOS_PER_REPORT,
    check_report_shape, validate_report,
};
