//! Robustness of the return opener (`open_return`): returns damaged from
//! the committed seeds in `tests/corpus/return/` give an opened return or a
//! clear error, never a panic. Besides byte damage to the whole file, the
//! damage is made to reach past the signature: a damaged `reports.json` or
//! photo is listed again in the manifest and the manifest signed again with
//! the bundle's key, and a damaged manifest is signed as it is, the way a
//! sender holding the key (a buggy field app) could send it.

mod common;

use chrono::{DateTime, TimeZone, Utc};
use groundproof_sync::SyncError;
use groundproof_sync::bundle::UploadKey;
use groundproof_sync::returns::{
    OpenedReturn, Position, PositionSource, REPORTS, RETURN_MANIFEST, Report, ReportPhoto,
    ReturnHeader, ReturnLimits, SIGNATURE, Target, open_return, pack_return, sign_manifest,
};
use mock_patrols::damage::{damage_bytes, damage_json};
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use proptest::prelude::*;
use uuid::Uuid;

const KEY: [u8; 32] = [0x5a; 32];
const KEY_ID: &str = "uk-0001";
const BUNDLE: Uuid = Uuid::from_u128(0x0b5e_55ed_0000_4000_8000_0000_0000_0001);

fn t(h: u32) -> DateTime<Utc> {
    Utc.with_ymd_and_hms(2026, 9, 3, h, 0, 0)
        .single()
        .expect("time")
}

fn lookup(b: &Uuid, k: &str) -> Option<[u8; 32]> {
    (*b == BUNDLE && k == KEY_ID).then_some(KEY)
}

fn photo(seed: u64) -> Vec<u8> {
    make_photo(
        seed,
        64,
        48,
        &PhotoMetaIn {
            taken_at_rfc3339: "2026-09-03T09:00:00Z".into(),
            lat: -1.23,
            lon: 23.41,
            direction_deg: 90.0,
        },
    )
}

fn report(id: u128, code: &str, photos: &[&[u8]]) -> Report {
    Report {
        report_id: Uuid::from_u128(id),
        bundle_id: BUNDLE,
        target: Target::Event {
            code: code.into(),
            event_id: 9001,
        },
        supersedes: None,
        outcome: "confirmed".into(),
        reason: None,
        cause: Some("smallholder_clearing".into()),
        position: Some(Position {
            lat: -1.2301,
            lon: 23.4102,
            accuracy_m: Some(4.0),
            source: PositionSource::Manual,
        }),
        observed_at: t(9),
        recorded_at: t(10),
        area_ha: Some(3.5),
        notes: "fresh stumps".into(),
        photos: photos
            .iter()
            .map(|b| ReportPhoto {
                sha256: groundproof_sync::bundle::sha256_hex(b),
                original_name: "IMG_0001.jpg".into(),
                taken_at: Some(t(9)),
                lat: Some(-1.23),
                lon: Some(23.41),
                direction_deg: Some(90.0),
            })
            .collect(),
    }
}

/// A valid return of two reports sharing two real JPEGs.
fn valid_return() -> Vec<u8> {
    let dir = tempfile::tempdir().expect("dir");
    let photos = [photo(1), photo(2)];
    let paths: Vec<_> = photos
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let path = dir.path().join(format!("p{i}.jpg"));
            std::fs::write(&path, p).expect("photo");
            path
        })
        .collect();
    let reports = [
        report(1, "K0411", &[&photos[0], &photos[1]]),
        report(2, "K0412", &[&photos[1]]),
    ];
    let header = ReturnHeader {
        bundle_id: BUNDLE,
        team: "Team Kestrel".into(),
        checklist_version: 1,
        created_at: t(12),
        camera_zone: None,
    };
    let key = UploadKey {
        key_id: KEY_ID.into(),
        key: KEY,
    };
    let mut out = std::io::Cursor::new(Vec::new());
    pack_return(&mut out, &header, &key, &reports, &paths).expect("pack");
    out.into_inner()
}

fn open(bytes: &[u8]) -> Result<OpenedReturn, SyncError> {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("return.zip");
    std::fs::write(&path, bytes).expect("write");
    open_return(&path, lookup, &ReturnLimits::default())
}

/// Either outcome is fine; an error, and each rejected report, must say
/// why; the process never held more than [`common::PEAK_RSS_LIMIT`].
fn judged(r: Result<OpenedReturn, SyncError>) -> Result<(), TestCaseError> {
    let peak = common::peak_rss_bytes().unwrap_or(0);
    prop_assert!(
        peak < common::PEAK_RSS_LIMIT,
        "peak resident size {peak} bytes"
    );
    match r {
        Ok(opened) => {
            for rej in &opened.rejected {
                prop_assert!(
                    !rej.reason.trim().is_empty(),
                    "a rejection without a reason"
                );
            }
        }
        Err(e) => prop_assert!(
            !e.to_string().trim().is_empty(),
            "an error without a message"
        ),
    }
    Ok(())
}

/// `entries` zipped with `manifest` signed by the bundle's key.
fn signed(mut entries: Vec<(String, Vec<u8>)>, manifest: Vec<u8>) -> Vec<u8> {
    let sig = serde_json::to_vec(&sign_manifest(KEY_ID, &KEY, &manifest)).expect("signature");
    for (name, bytes) in &mut entries {
        if name == RETURN_MANIFEST {
            *bytes = manifest.clone();
        } else if name == SIGNATURE {
            *bytes = sig.clone();
        }
    }
    common::zip_of(&entries)
}

/// Where the damage goes.
#[derive(Debug, Clone, Copy)]
enum Part {
    /// `reports.json` or a photo (chosen by the number), listed again and signed.
    Entry(usize),
    /// The manifest, then signed.
    Manifest,
    /// `signature.json`, not signed again.
    Signature,
}

fn damaged(valid: &[u8], part: Part, seed: u64) -> Vec<u8> {
    let Some(mut entries) = common::zip_entries(valid) else {
        return damage_bytes(valid, seed);
    };
    let manifest = entries
        .iter()
        .find(|(n, _)| n == RETURN_MANIFEST)
        .map(|(_, b)| b.clone())
        .unwrap_or_default();
    match part {
        Part::Entry(k) => {
            let content: Vec<usize> = (0..entries.len())
                .filter(|&i| entries[i].0 != RETURN_MANIFEST && entries[i].0 != SIGNATURE)
                .collect();
            let Some(&i) = content.get(k % content.len().max(1)) else {
                return damage_bytes(valid, seed);
            };
            let new = if entries[i].0 == REPORTS {
                damage_json(&entries[i].1, seed)
            } else {
                damage_bytes(&entries[i].1, seed)
            };
            let manifest = common::relist(&manifest, &entries[i].0, &new);
            entries[i].1 = new;
            signed(entries, manifest)
        }
        Part::Manifest => signed(entries, damage_json(&manifest, seed)),
        Part::Signature => {
            for (name, bytes) in &mut entries {
                if name == SIGNATURE {
                    *bytes = damage_json(bytes, seed);
                }
            }
            common::zip_of(&entries)
        }
    }
}

fn part() -> impl Strategy<Value = Part> {
    prop_oneof![
        3 => any::<usize>().prop_map(Part::Entry),
        2 => Just(Part::Manifest),
        1 => Just(Part::Signature),
    ]
}

#[test]
fn the_seed_return_opens_and_matches_the_fixture() {
    let bytes = valid_return();
    common::maybe_write_corpus("return", "valid-two-reports.zip", &bytes);
    let seeds = common::corpus("return");
    let (_, seed) = seeds
        .iter()
        .find(|(n, _)| n == "valid-two-reports.zip")
        .expect("valid-two-reports.zip in the corpus");
    assert_eq!(
        seed, &bytes,
        "the committed seed differs from the fixture: rerun with GROUNDPROOF_WRITE_CORPUS=1"
    );
    let opened = open(seed).expect("the seed opens");
    assert_eq!(opened.reports.len(), 2);
    assert!(opened.rejected.is_empty(), "{:?}", opened.rejected);
}

#[test]
fn resigning_an_undamaged_return_keeps_it_valid() {
    let valid = valid_return();
    let entries = common::zip_entries(&valid).expect("entries");
    let manifest = entries
        .iter()
        .find(|(n, _)| n == RETURN_MANIFEST)
        .map(|(_, b)| b.clone())
        .expect("manifest");
    let again = signed(entries, manifest);
    assert_eq!(open(&again).expect("re-signed opens").reports.len(), 2);
}

proptest! {
    #![proptest_config(ProptestConfig { cases: mock_patrols::damage::cases(192), ..ProptestConfig::default() })]

    #[test]
    fn bytes_damaged_anywhere_give_a_clear_answer(pick in any::<prop::sample::Index>(), seed in any::<u64>()) {
        let seeds = common::corpus("return");
        let (_, valid) = pick.get(&seeds);
        judged(open(&damage_bytes(valid, seed)))?;
    }

    #[test]
    fn signed_damage_gives_a_clear_answer(
        pick in any::<prop::sample::Index>(),
        part in part(),
        seed in any::<u64>(),
    ) {
        let seeds = common::corpus("return");
        let (_, valid) = pick.get(&seeds);
        judged(open(&damaged(valid, part, seed)))?;
    }
}
