//! Robustness of the bundle reader (`open_bundle`): bundles damaged from
//! the committed seeds in `tests/corpus/bundle/` (byte damage to the whole
//! file; structured damage to one entry with the manifest's checksums made
//! to fit again, so the damage reaches the JSON and GeoJSON readers) give a
//! bundle or a clear error, never a panic.

mod common;

use chrono::{DateTime, Utc};
use groundproof_sync::SyncError;
use groundproof_sync::bundle::{MANIFEST, OpenedBundle, open_bundle};
use mock_patrols::damage::{damage_bytes, damage_json};
use proptest::prelude::*;

/// Before the fixture bundle expires (2026-09-30).
fn now() -> DateTime<Utc> {
    common::t(2026, 9, 2, 0)
}

fn open(bytes: &[u8]) -> Result<OpenedBundle, SyncError> {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("bundle.zip");
    std::fs::write(&path, bytes).expect("write");
    open_bundle(&path, now())
}

/// Either outcome is fine; an error must say what is wrong; the process
/// never held more than [`common::PEAK_RSS_LIMIT`].
fn judged(r: Result<OpenedBundle, SyncError>) -> Result<(), TestCaseError> {
    let peak = common::peak_rss_bytes().unwrap_or(0);
    prop_assert!(
        peak < common::PEAK_RSS_LIMIT,
        "peak resident size {peak} bytes"
    );
    if let Err(e) = r {
        prop_assert!(
            !e.to_string().trim().is_empty(),
            "an error without a message"
        );
    }
    Ok(())
}

/// The seed bundle with entry `k` damaged by `damage`; the manifest lists
/// the damaged entry's new size and checksum (unless the manifest itself is
/// the one damaged).
fn with_damaged_entry(seed: &[u8], k: usize, damage: impl Fn(&[u8]) -> Vec<u8>) -> Vec<u8> {
    let Some(mut entries) = common::zip_entries(seed) else {
        return damage(seed);
    };
    let k = k % entries.len();
    let damaged = damage(&entries[k].1);
    let name = entries[k].0.clone();
    if name != MANIFEST
        && let Some(m) = entries.iter_mut().find(|(n, _)| n == MANIFEST)
    {
        m.1 = common::relist(&m.1, &name, &damaged);
    }
    entries[k].1 = damaged;
    common::zip_of(&entries)
}

#[test]
fn the_seed_bundle_opens_and_matches_the_fixture() {
    let (bytes, _) = common::bundle_bytes();
    common::maybe_write_corpus("bundle", "valid-fixture.zip", &bytes);
    let seeds = common::corpus("bundle");
    let (_, seed) = seeds
        .iter()
        .find(|(n, _)| n == "valid-fixture.zip")
        .expect("valid-fixture.zip in the corpus");
    assert_eq!(
        seed, &bytes,
        "the committed seed differs from the fixture: rerun with GROUNDPROOF_WRITE_CORPUS=1"
    );
    let opened = open(seed).expect("the seed opens");
    assert_eq!(opened.events.len(), common::events().len());
}

#[test]
fn a_bundle_written_before_confidence_level_still_opens() {
    // The seed committed before `confidence_level` was written (the old
    // `valid-fixture.zip`): its events carry only the words
    // confirmed/tentative, read as high/low.
    let seeds = common::corpus("bundle");
    let (_, old) = seeds
        .iter()
        .find(|(n, _)| n == "valid-before-confidence-level.zip")
        .expect("the older seed in the corpus");
    let entry = |zip: &[u8]| -> String {
        let entries = common::zip_entries(zip).expect("a ZIP");
        let (_, bytes) = entries
            .into_iter()
            .find(|(n, _)| n == "events.geojson")
            .expect("events.geojson");
        String::from_utf8(bytes).expect("UTF-8")
    };
    let events = entry(old);
    assert!(!events.contains("confidence_level"));
    let opened = open(old).expect("an older bundle opens");
    let levels: Vec<(&str, Option<&str>)> = opened
        .events
        .iter()
        .map(|e| (e.confidence.as_str(), e.confidence_level()))
        .collect();
    assert!(levels.iter().all(|(w, l)| match *w {
        "confirmed" => *l == Some("high"),
        "tentative" => *l == Some("low"),
        _ => false,
    }));
    assert!(levels.iter().any(|(_, l)| *l == Some("low")), "{levels:?}");
    // The new fixture writes the level beside the word.
    let (bytes, _) = common::bundle_bytes();
    assert!(entry(&bytes).contains("\"confidence_level\":\"low\""));
}

#[test]
fn the_entry_helper_keeps_an_undamaged_bundle_valid() {
    let (bytes, _) = common::bundle_bytes();
    for k in 0..12 {
        let same = with_damaged_entry(&bytes, k, <[u8]>::to_vec);
        open(&same).unwrap_or_else(|e| panic!("entry {k} rewritten unchanged: {e}"));
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: mock_patrols::damage::cases(192), ..ProptestConfig::default() })]

    #[test]
    fn bytes_damaged_anywhere_give_a_clear_answer(pick in any::<prop::sample::Index>(), seed in any::<u64>()) {
        let seeds = common::corpus("bundle");
        let (_, valid) = pick.get(&seeds);
        judged(open(&damage_bytes(valid, seed)))?;
    }

    #[test]
    fn a_damaged_entry_with_fitting_checksums_gives_a_clear_answer(
        pick in any::<prop::sample::Index>(),
        entry in any::<usize>(),
        seed in any::<u64>(),
        json in any::<bool>(),
    ) {
        let seeds = common::corpus("bundle");
        let (_, valid) = pick.get(&seeds);
        let bytes = with_damaged_entry(valid, entry, |b| {
            if json { damage_json(b, seed) } else { damage_bytes(b, seed) }
        });
        judged(open(&bytes))?;
    }
}
