//! Robustness of the JPEG header reader, the EXIF reader and the photo
//! check intake runs (`read_jpeg_header`, `read_photo_meta`,
//! `inspect_jpeg`): photos damaged from the committed seeds in
//! `tests/corpus/photo/` (byte damage anywhere; bit flips kept inside the
//! EXIF segment or inside the marker segments before the scan) give an
//! answer or a clear error, never a panic, and nothing past the limits is
//! decoded.

mod common;

use groundproof_sync::photo::{PhotoLimits, inspect_jpeg, read_jpeg_header, read_photo_meta};
use mock_patrols::damage::damage_bytes;
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use proptest::prelude::*;

fn meta() -> PhotoMetaIn {
    PhotoMetaIn {
        taken_at_rfc3339: "2026-03-14T09:26:53-04:00".into(),
        lat: -1.2345,
        lon: 23.4567,
        direction_deg: 123.45,
    }
}

/// The seeds: a small 4:2:0 photo with EXIF, and one wide enough (2600 px)
/// to take the 1/8-scale decoder.
fn seeds() -> [(&'static str, Vec<u8>); 2] {
    [
        ("valid-small-exif.jpg", make_photo(7, 64, 48, &meta())),
        ("valid-wide-eighth.jpg", make_photo(8, 2600, 16, &meta())),
    ]
}

/// Every reader on `bytes`: no panic, errors with a message, a photo that
/// passes is within the limits, and the process never held more than
/// [`common::PEAK_RSS_LIMIT`].
fn judged(bytes: &[u8]) -> Result<(), TestCaseError> {
    let limits = PhotoLimits::default();
    if let Err(e) = read_jpeg_header(bytes) {
        prop_assert!(!e.to_string().trim().is_empty());
    }
    if let Err(e) = read_photo_meta(bytes) {
        prop_assert!(!e.trim().is_empty());
    }
    match inspect_jpeg(bytes, &limits) {
        Ok(c) => {
            prop_assert!(c.width <= limits.max_width && c.height <= limits.max_height);
            prop_assert!(u64::from(c.width) * u64::from(c.height) <= limits.max_pixels);
            for v in [c.meta.lat, c.meta.lon, c.meta.direction_deg]
                .into_iter()
                .flatten()
            {
                prop_assert!(v.is_finite(), "a non-finite EXIF value {v}");
            }
        }
        Err(e) => prop_assert!(!e.to_string().trim().is_empty()),
    }
    let peak = common::peak_rss_bytes().unwrap_or(0);
    prop_assert!(
        peak < common::PEAK_RSS_LIMIT,
        "peak resident size {peak} bytes"
    );
    Ok(())
}

/// The byte range of the payload of the first APP1 (EXIF) segment.
fn exif_span(jpeg: &[u8]) -> std::ops::Range<usize> {
    let i = jpeg
        .windows(2)
        .position(|w| w == [0xFF, 0xE1])
        .expect("an APP1 segment");
    let len = usize::from(u16::from_be_bytes([jpeg[i + 2], jpeg[i + 3]]));
    i + 4..i + 2 + len
}

/// The byte range from SOI to the start of scan.
fn header_span(jpeg: &[u8]) -> std::ops::Range<usize> {
    let sos = jpeg
        .windows(2)
        .position(|w| w == [0xFF, 0xDA])
        .expect("a start of scan");
    2..sos + 4
}

/// `bytes` with each (place, mask) XORed in at a place inside `span`.
fn flipped(
    bytes: &[u8],
    span: std::ops::Range<usize>,
    flips: &[(prop::sample::Index, u8)],
) -> Vec<u8> {
    let mut b = bytes.to_vec();
    for (at, mask) in flips {
        b[span.start + at.index(span.len())] ^= mask;
    }
    b
}

#[test]
fn the_seed_photos_are_the_generated_ones_and_pass() {
    for (name, bytes) in seeds() {
        common::maybe_write_corpus("photo", name, &bytes);
    }
    let corpus = common::corpus("photo");
    for (name, bytes) in seeds() {
        let (_, seed) = corpus
            .iter()
            .find(|(n, _)| n == name)
            .unwrap_or_else(|| panic!("{name} in the corpus"));
        assert_eq!(
            seed, &bytes,
            "{name} differs from the generator: rerun with GROUNDPROOF_WRITE_CORPUS=1"
        );
        let c = inspect_jpeg(seed, &PhotoLimits::default()).expect("the seed passes");
        assert!(
            c.meta.lat.is_some() && c.meta.taken_at.is_some(),
            "{name}: {c:?}"
        );
        assert!(!exif_span(seed).is_empty() && !header_span(seed).is_empty());
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: mock_patrols::damage::cases(256), ..ProptestConfig::default() })]

    #[test]
    fn bytes_damaged_anywhere_give_a_clear_answer(pick in any::<prop::sample::Index>(), seed in any::<u64>()) {
        let corpus = common::corpus("photo");
        let (_, valid) = pick.get(&corpus);
        judged(&damage_bytes(valid, seed))?;
    }

    #[test]
    fn exif_bit_flips_give_a_clear_answer(
        pick in any::<prop::sample::Index>(),
        flips in prop::collection::vec((any::<prop::sample::Index>(), 1..=255u8), 1..12),
    ) {
        let corpus = common::corpus("photo");
        let (_, valid) = pick.get(&corpus);
        judged(&flipped(valid, exif_span(valid), &flips))?;
    }

    #[test]
    fn header_bit_flips_give_a_clear_answer(
        pick in any::<prop::sample::Index>(),
        flips in prop::collection::vec((any::<prop::sample::Index>(), 1..=255u8), 1..6),
    ) {
        let corpus = common::corpus("photo");
        let (_, valid) = pick.get(&corpus);
        judged(&flipped(valid, header_span(valid), &flips))?;
    }
}
