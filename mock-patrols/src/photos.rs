//! Deterministic mock field photos: textured JPEGs with patrol EXIF.
//!
//! [`make_photo`] paints a picture that compresses like a real ground photo
//! (several octaves of bilinear value noise in foliage greens and soil
//! browns, a vertical light gradient and per-pixel sensor noise), encodes it
//! as a baseline JPEG at quality 90 with 4:2:0 chroma subsampling (what phone
//! cameras write, common practice; the performance notes' test photo too)
//! and embeds EXIF with DateTimeOriginal,
//! OffsetTimeOriginal (and SubSecTimeOriginal when the time has a fraction),
//! GPSLatitude/Ref, GPSLongitude/Ref, GPSImgDirection with Ref `T`, and the
//! matching UTC GPSDateStamp/GPSTimeStamp. Tags and types follow CIPA DC-008
//! (tag table as in kamadak-exif 0.6.2 `src/tag.rs`). The same seed, size and
//! metadata always give the same bytes.

use chrono::{DateTime, Datelike, FixedOffset, Timelike, Utc};
use exif::experimental::Writer;
use exif::{Field, In, Rational, Tag, Value};
use jpeg_encoder::{ColorType, Encoder, SamplingFactor};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// The metadata to write into a mock photo.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotoMetaIn {
    /// When the photo was taken, RFC 3339 with the camera's zone offset,
    /// e.g. `2026-03-14T09:26:53-04:00`. DateTimeOriginal gets the local
    /// time, OffsetTimeOriginal the offset.
    pub taken_at_rfc3339: String,
    /// WGS-84 latitude, decimal degrees, south negative.
    pub lat: f64,
    /// WGS-84 longitude, decimal degrees, west negative.
    pub lon: f64,
    /// View direction, degrees clockwise from true north.
    pub direction_deg: f64,
}

/// JPEG quality of the mock photos (the performance notes' test photo used 90).
pub const PHOTO_QUALITY: u8 = 90;
/// Denominator of the seconds rational in GPSLatitude/GPSLongitude:
/// 1/10000 s of arc is about 3 mm on the ground (1 s of latitude is about
/// 30.9 m, common practice), well inside the 1 cm asked for.
pub const GPS_SECONDS_DENOMINATOR: u32 = 10_000;
/// Denominator of GPSImgDirection (0.01 degree, the resolution CIPA DC-008's
/// range 0.00 to 359.99 implies).
pub const DIRECTION_DENOMINATOR: u32 = 100;

/// Makes a textured JPEG of `width` x `height` pixels with EXIF from `meta`.
///
/// Sizes are clamped to 1..=65535 (the JPEG limit). A time that does not
/// parse as RFC 3339 writes no time tags; a non-finite or out-of-range
/// latitude or longitude writes no GPS position; a non-finite direction
/// writes no direction. Returns an empty vector only if the JPEG encoder
/// fails, which it does not for these sizes.
pub fn make_photo(seed: u64, width: u32, height: u32, meta: &PhotoMetaIn) -> Vec<u8> {
    let (w, h) = (width.clamp(1, 65_535), height.clamp(1, 65_535));
    let pixels = paint(seed, w, h);
    let exif = exif_tiff(meta);
    let mut out = Vec::with_capacity(pixels.len() / 4 + 4096);
    let mut enc = Encoder::new(&mut out, PHOTO_QUALITY);
    enc.set_sampling_factor(SamplingFactor::R_4_2_0);
    if !exif.is_empty() && enc.add_exif_metadata(&exif).is_err() {
        return Vec::new();
    }
    // Sizes are clamped to u16 above.
    let (w16, h16) = (w as u16, h as u16);
    match enc.encode(&pixels, w16, h16, ColorType::Rgb) {
        Ok(()) => out,
        Err(_) => Vec::new(),
    }
}

/// One octave of value noise: a random grid of `cell`-pixel squares,
/// interpolated bilinearly.
struct Octave {
    cell: f32,
    cols: usize,
    grid: Vec<[f32; 3]>,
    weight: f32,
}

impl Octave {
    fn new(rng: &mut ChaCha8Rng, w: u32, h: u32, cell: u32, weight: f32) -> Octave {
        let cols = (w / cell) as usize + 2;
        let rows = (h / cell) as usize + 2;
        let grid = (0..cols * rows)
            .map(|_| {
                [
                    rng.random::<f32>() - 0.5,
                    rng.random::<f32>() - 0.5,
                    rng.random::<f32>() - 0.5,
                ]
            })
            .collect();
        Octave {
            cell: cell as f32,
            cols,
            grid,
            weight,
        }
    }

    /// Adds this octave's contribution along row `y` into `acc`.
    fn add_row(&self, y: u32, acc: &mut [[f32; 3]]) {
        let gy = y as f32 / self.cell;
        let (r0, fy) = (gy as usize, gy.fract());
        let top = &self.grid[r0 * self.cols..(r0 + 1) * self.cols];
        let bottom = &self.grid[(r0 + 1) * self.cols..(r0 + 2) * self.cols];
        // Blend the two grid rows once, then interpolate along x.
        let line: Vec<[f32; 3]> = top
            .iter()
            .zip(bottom)
            .map(|(a, b)| [0, 1, 2].map(|c| a[c] + (b[c] - a[c]) * fy))
            .collect();
        let step = 1.0 / self.cell;
        for (x, px) in acc.iter_mut().enumerate() {
            let gx = x as f32 * step;
            let (c0, fx) = (gx as usize, gx.fract());
            let (a, b) = (line[c0], line[c0 + 1]);
            for c in 0..3 {
                px[c] += self.weight * (a[c] + (b[c] - a[c]) * fx);
            }
        }
    }
}

/// Paints the RGB pixels.
fn paint(seed: u64, w: u32, h: u32) -> Vec<u8> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    // Cell sizes in pixels, coarse to fine, with falling weights; the 3 px
    // octave gives leaf-scale detail that costs bits like real foliage.
    let octaves: Vec<Octave> = [(384, 1.0), (96, 0.6), (24, 0.4), (7, 0.3), (3, 0.18)]
        .into_iter()
        .map(|(cell, wt)| Octave::new(&mut rng, w, h, cell, wt))
        .collect();
    let foliage = [0.20f32, 0.42, 0.16];
    let soil = [0.45f32, 0.33, 0.20];
    let mut state = rng.random::<u64>() | 1;
    let mut out = Vec::with_capacity(w as usize * h as usize * 3);
    let mut acc = vec![[0.0f32; 3]; w as usize];
    for y in 0..h {
        acc.iter_mut().for_each(|p| *p = [0.0; 3]);
        for o in &octaves {
            o.add_row(y, &mut acc);
        }
        // More soil and more light towards the bottom of the frame.
        let t = y as f32 / h.max(2) as f32;
        for px in &acc {
            let mask = (0.5 + 1.6 * px[0] + 0.8 * (t - 0.5)).clamp(0.0, 1.0);
            let light = 0.55 + 0.35 * t + 0.9 * px[1];
            for c in 0..3 {
                let base = foliage[c] + (soil[c] - foliage[c]) * mask;
                let tint = 0.25 * px[2] * if c == 1 { -1.0 } else { 1.0 };
                let noise = gauss_ish(&mut state) * 0.024;
                let v = (base * light + tint * base + noise) * 255.0;
                out.push(v.clamp(0.0, 255.0) as u8);
            }
        }
    }
    out
}

/// Approximately normal noise with unit variance: the sum of four uniform
/// samples from xorshift64 (Irwin-Hall, common practice).
fn gauss_ish(state: &mut u64) -> f32 {
    let mut sum = 0.0f32;
    for _ in 0..2 {
        *state ^= *state << 13;
        *state ^= *state >> 7;
        *state ^= *state << 17;
        let v = *state;
        sum += (v & 0xFFFF_FFFF) as f32 / 4_294_967_296.0 + (v >> 32) as f32 / 4_294_967_296.0;
    }
    // Four U(0,1): mean 2, variance 4/12.
    (sum - 2.0) * 1.732_050_8
}

fn ascii(tag: Tag, s: &str) -> Field {
    Field {
        tag,
        ifd_num: In::PRIMARY,
        value: Value::Ascii(vec![s.as_bytes().to_vec()]),
    }
}

fn rationals(tag: Tag, v: &[(u32, u32)]) -> Field {
    let value = Value::Rational(
        v.iter()
            .map(|&(num, denom)| Rational { num, denom })
            .collect(),
    );
    Field {
        tag,
        ifd_num: In::PRIMARY,
        value,
    }
}

/// Degrees as (d/1, m/1, s/GPS_SECONDS_DENOMINATOR), all unsigned (CIPA DC-008).
pub fn dms_rationals(deg: f64) -> [(u32, u32); 3] {
    let units = (deg.abs() * 3600.0 * f64::from(GPS_SECONDS_DENOMINATOR)).round() as u64;
    let per_deg = 3600 * u64::from(GPS_SECONDS_DENOMINATOR);
    let per_min = 60 * u64::from(GPS_SECONDS_DENOMINATOR);
    let d = units / per_deg;
    let m = (units % per_deg) / per_min;
    let s = units % per_min;
    [
        (d as u32, 1),
        (m as u32, 1),
        (s as u32, GPS_SECONDS_DENOMINATOR),
    ]
}

/// The EXIF fields for `meta`, in TIFF form (empty if there are none).
fn exif_fields(meta: &PhotoMetaIn) -> Vec<Field> {
    let mut f = Vec::new();
    if let Ok(t) = DateTime::<FixedOffset>::parse_from_rfc3339(&meta.taken_at_rfc3339) {
        f.push(ascii(
            Tag::DateTimeOriginal,
            &t.format("%Y:%m:%d %H:%M:%S").to_string(),
        ));
        f.push(ascii(Tag::OffsetTimeOriginal, &t.format("%:z").to_string()));
        let nanos = t.nanosecond() % 1_000_000_000;
        if nanos != 0 {
            let digits = format!("{nanos:09}");
            f.push(ascii(Tag::SubSecTimeOriginal, digits.trim_end_matches('0')));
        }
        let u = t.with_timezone(&Utc);
        f.push(ascii(Tag::GPSDateStamp, &u.format("%Y:%m:%d").to_string()));
        let ms = u.second() * 1000 + nanos / 1_000_000;
        f.push(rationals(
            Tag::GPSTimeStamp,
            &[(u.hour(), 1), (u.minute(), 1), (ms, 1000)],
        ));
        debug_assert!(u.year() > 0);
    }
    let lat_ok = meta.lat.is_finite() && meta.lat.abs() <= 90.0;
    let lon_ok = meta.lon.is_finite() && meta.lon.abs() <= 180.0;
    if lat_ok && lon_ok {
        f.push(Field {
            tag: Tag::GPSVersionID,
            ifd_num: In::PRIMARY,
            value: Value::Byte(vec![2, 3, 0, 0]),
        });
        f.push(ascii(
            Tag::GPSLatitudeRef,
            if meta.lat < 0.0 { "S" } else { "N" },
        ));
        f.push(rationals(Tag::GPSLatitude, &dms_rationals(meta.lat)));
        f.push(ascii(
            Tag::GPSLongitudeRef,
            if meta.lon < 0.0 { "W" } else { "E" },
        ));
        f.push(rationals(Tag::GPSLongitude, &dms_rationals(meta.lon)));
        f.push(ascii(Tag::GPSMapDatum, "WGS-84"));
    }
    if meta.direction_deg.is_finite() {
        let hundredths = (meta.direction_deg.rem_euclid(360.0) * f64::from(DIRECTION_DENOMINATOR))
            .round() as u32;
        // 359.995 rounds to 36000: wrap to north.
        let hundredths = hundredths % (360 * DIRECTION_DENOMINATOR);
        f.push(ascii(Tag::GPSImgDirectionRef, "T"));
        f.push(rationals(
            Tag::GPSImgDirection,
            &[(hundredths, DIRECTION_DENOMINATOR)],
        ));
    }
    f
}

fn exif_tiff(meta: &PhotoMetaIn) -> Vec<u8> {
    let fields = exif_fields(meta);
    if fields.is_empty() {
        return Vec::new();
    }
    let mut w = Writer::new();
    for field in &fields {
        w.push_field(field);
    }
    let mut buf = std::io::Cursor::new(Vec::new());
    match w.write(&mut buf, false) {
        Ok(()) => buf.into_inner(),
        Err(_) => Vec::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn meta() -> PhotoMetaIn {
        PhotoMetaIn {
            taken_at_rfc3339: "2026-11-30T10:05:30.12-04:00".into(),
            lat: -3.1,
            lon: -60.025,
            direction_deg: 273.5,
        }
    }

    #[test]
    fn dms_splits_and_rounds() {
        // 3.1 deg = 3 deg 6 min 0 s; 60.025 deg = 60 deg 1 min 30 s (exact arithmetic).
        assert_eq!(dms_rationals(-3.1), [(3, 1), (6, 1), (0, 10_000)]);
        assert_eq!(dms_rationals(60.025), [(60, 1), (1, 1), (300_000, 10_000)]);
        // 59.99999999 s rounds up into the next minute, not to 60 s.
        assert_eq!(
            dms_rationals(0.999_999_999_9),
            [(1, 1), (0, 1), (0, 10_000)]
        );
    }

    #[test]
    fn same_seed_same_bytes_other_seed_other_bytes() {
        let a = make_photo(7, 64, 48, &meta());
        assert_eq!(a, make_photo(7, 64, 48, &meta()));
        assert_ne!(a, make_photo(8, 64, 48, &meta()));
        assert_eq!(&a[..2], &[0xFF, 0xD8]);
    }

    #[test]
    fn exif_round_trips_through_kamadak_exif() {
        let jpeg = make_photo(1, 320, 240, &meta());
        let exif = exif::Reader::new()
            .read_from_container(&mut std::io::Cursor::new(&jpeg))
            .expect("exif");
        let s = |t: Tag| {
            exif.get_field(t, In::PRIMARY)
                .map(|f| f.display_value().to_string())
        };
        assert_eq!(
            s(Tag::DateTimeOriginal).as_deref(),
            Some("2026-11-30 10:05:30")
        );
        assert_eq!(s(Tag::OffsetTimeOriginal).as_deref(), Some("\"-04:00\""));
        assert_eq!(s(Tag::SubSecTimeOriginal).as_deref(), Some("\"12\""));
        assert_eq!(s(Tag::GPSLatitudeRef).as_deref(), Some("S"));
        // kamadak-exif 0.6.2 displays Ref "T" as "true direction".
        assert_eq!(
            s(Tag::GPSImgDirectionRef).as_deref(),
            Some("true direction")
        );
        // UTC = local - offset: 14:05:30.12 (formats-and-crates.md §4 probe).
        assert_eq!(s(Tag::GPSTimeStamp).as_deref(), Some("14:05:30.12"));
    }

    #[test]
    fn bad_metadata_is_left_out_not_fatal() {
        let m = PhotoMetaIn {
            taken_at_rfc3339: "yesterday".into(),
            lat: f64::NAN,
            lon: 1.0,
            direction_deg: f64::INFINITY,
        };
        let jpeg = make_photo(2, 16, 16, &m);
        assert_eq!(&jpeg[..2], &[0xFF, 0xD8]);
        assert!(
            exif::Reader::new()
                .read_from_container(&mut std::io::Cursor::new(&jpeg))
                .is_err()
        );
    }

    #[test]
    fn photo_compresses_like_a_photo() {
        // The performance notes' 4000x3000 q90 4:2:0 test photo was
        // 3,710,202 bytes, 0.309 bytes per pixel; this texture should land
        // within 2x of that rate (1000x750 keeps the debug-build test short;
        // 4000x3000 gives 3,333,314 bytes on average in the photo_intake bench).
        let jpeg = make_photo(3, 1000, 750, &meta());
        let per_px = jpeg.len() as f64 / 750_000.0;
        assert!((0.155..0.62).contains(&per_px), "{} bytes", jpeg.len());
    }

    /// The APP1 "Exif" segment payload of a JPEG (empty if none is found
    /// among the segments before the first scan).
    fn exif_segment(jpeg: &[u8]) -> &[u8] {
        let mut i = 2;
        while i + 4 <= jpeg.len() && jpeg[i] == 0xFF && jpeg[i + 1] != 0xDA {
            let len = usize::from(u16::from_be_bytes([jpeg[i + 2], jpeg[i + 3]]));
            let seg = &jpeg[i + 4..(i + 2 + len).min(jpeg.len())];
            if jpeg[i + 1] == 0xE1 && seg.starts_with(b"Exif\0\0") {
                return seg;
            }
            i += 2 + len;
        }
        &[]
    }

    /// Inputs of the reference photos in tests/reference/photo/ (invented
    /// positions; times chosen to cross a UTC day and year boundary, a
    /// fractional second, a +05:45 offset and UTC itself).
    fn reference_cases() -> Vec<(&'static str, u64, u32, u32, PhotoMetaIn)> {
        let m = |t: &str, lat: f64, lon: f64, dir: f64| PhotoMetaIn {
            taken_at_rfc3339: t.to_string(),
            lat,
            lon,
            direction_deg: dir,
        };
        vec![
            (
                "ref-sw.jpg",
                11,
                320,
                240,
                m(
                    "2026-11-30T10:05:30-04:00",
                    -3.123_456_7,
                    -60.025_432_1,
                    273.5,
                ),
            ),
            (
                "ref-ne.jpg",
                12,
                320,
                240,
                m(
                    "2025-07-04T23:59:59.5+07:00",
                    0.456_789_1,
                    101.234_567_8,
                    12.34,
                ),
            ),
            (
                "ref-se.jpg",
                13,
                320,
                240,
                m("2026-01-01T00:30:00+02:00", -2.987_654_3, 29.876_543_2, 0.0),
            ),
            (
                "ref-nw.jpg",
                14,
                320,
                240,
                m("2026-06-15T12:00:00Z", 15.000_000_1, -179.999_999_9, 359.99),
            ),
            (
                "ref-portrait.jpg",
                15,
                240,
                320,
                m(
                    "2026-02-28T18:45:07.25+05:45",
                    27.712_345_6,
                    85.312_345_6,
                    181.25,
                ),
            ),
        ]
    }

    fn reference_dir() -> std::path::PathBuf {
        std::path::PathBuf::from(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../tests/reference/photo"
        ))
    }

    /// Writes the reference photos and photos.json; run by hand with
    /// `cargo test -p mock-patrols photos::tests::regenerate -- --ignored`,
    /// then run tests/reference/photo/read_with_tools.py.
    #[test]
    #[ignore]
    fn regenerate_reference_photos() {
        let dir = reference_dir();
        let mut list = Vec::new();
        for (name, seed, w, h, meta) in reference_cases() {
            std::fs::write(dir.join(name), make_photo(seed, w, h, &meta)).expect("write photo");
            list.push(serde_json::json!({
                "file": name, "seed": seed, "width": w, "height": h,
                "taken_at_rfc3339": meta.taken_at_rfc3339, "lat": meta.lat, "lon": meta.lon,
                "direction_deg": meta.direction_deg,
            }));
        }
        let text = serde_json::to_string_pretty(&list).expect("json");
        std::fs::write(dir.join("photos.json"), text + "\n").expect("write photos.json");
    }

    #[test]
    fn exiftool_reads_what_make_photo_wrote() {
        // tools_read.json holds what exiftool (`-n -json`) read from the
        // committed reference photos; the version is recorded in the file.
        let text =
            std::fs::read_to_string(reference_dir().join("tools_read.json")).expect("fixture");
        let fixture: serde_json::Value = serde_json::from_str(&text).expect("json");
        let photos = fixture["photos"].as_array().expect("photos");
        let cases = reference_cases();
        assert_eq!(photos.len(), cases.len());
        for (p, (name, seed, w, h, meta)) in photos.iter().zip(&cases) {
            assert_eq!(p["file"], *name);
            let e = &p["exiftool"];
            // Seconds are stored to 1/10000 s, i.e. within 1.4e-8 degree.
            let f = |k: &str| e[k].as_f64().expect(k);
            assert!((f("GPSLatitude") - meta.lat).abs() < 1.5e-8, "{name}");
            assert!((f("GPSLongitude") - meta.lon).abs() < 1.5e-8, "{name}");
            assert!(
                (f("GPSImgDirection") - meta.direction_deg).abs() < 0.005 + 1e-9,
                "{name}"
            );
            assert_eq!(e["GPSImgDirectionRef"], "T");
            assert_eq!((f("ImageWidth") as u32, f("ImageHeight") as u32), (*w, *h));
            let t = DateTime::parse_from_rfc3339(&meta.taken_at_rfc3339).expect("time");
            assert_eq!(
                e["DateTimeOriginal"],
                t.format("%Y:%m:%d %H:%M:%S").to_string()
            );
            assert_eq!(e["OffsetTimeOriginal"], t.format("%:z").to_string());
            // The committed EXIF segment is what make_photo writes today (the
            // pixels are not compared: jpeg-encoder's SIMD and scalar paths
            // need not give identical bytes on every CPU).
            let bytes = std::fs::read(reference_dir().join(name)).expect("photo");
            let now = make_photo(*seed, *w, *h, meta);
            assert!(exif_segment(&bytes).len() > 100, "{name}: no EXIF segment");
            assert_eq!(
                exif_segment(&bytes),
                exif_segment(&now),
                "{name}: regenerate"
            );
        }
    }
}
