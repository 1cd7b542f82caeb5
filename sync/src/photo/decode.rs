//! Safe intake of one uploaded JPEG photo: size checks, hash, EXIF and a
//! 320-pixel thumbnail.
//!
//! [`inspect_jpeg`] never guesses the format: the bytes must start with the
//! JPEG SOI marker and are decoded only by a JPEG decoder. The frame size
//! declared in the SOF header is checked against [`PhotoLimits`] before any
//! decoder is built, together with an estimate of the decoder's allocations.
//! The pixels are decoded at a reduced DCT scale (1/2, 1/4 or 1/8, T.81 IDCT
//! scaling as in jpeg-decoder's `scale()`), the smallest that still covers
//! the thumbnail, so a 12 MP photo is decoded to about 500 x 375 and never to
//! a full 36 MB bitmap (performance notes §1). At 1/8 (photos of 2560 px and
//! more on the long side) a sequential photo goes through the DC-only decoder
//! in `eighth.rs`, which was about twice as fast as jpeg-decoder and starts
//! no threads; every other JPEG, and any layout that decoder does not take,
//! goes through jpeg-decoder 0.3.
//! Decoder panics are caught and returned as [`PhotoError::DecoderPanic`]
//! (reliability notes §1.3: treat decoder panics as expected); this needs
//! `panic = "unwind"`, Rust's default.

use std::panic::{AssertUnwindSafe, catch_unwind};

use image::codecs::jpeg::JpegEncoder;
use image::{ExtendedColorType, RgbImage};
use jpeg_decoder::{Decoder, PixelFormat};
use sha2::{Digest, Sha256};

use super::PhotoError;
use super::eighth::decode_eighth;
use super::exif::{PhotoMeta, read_photo_meta};
use super::header::{JpegHeader, read_jpeg_header};

/// Longest side of the thumbnail, pixels.
pub const THUMBNAIL_MAX_SIDE: u32 = 320;
/// JPEG quality of the thumbnail (the performance notes measured q80).
pub const THUMBNAIL_QUALITY: u8 = 80;

/// Limits applied to every photo before and while it is decoded.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PhotoLimits {
    /// Widest accepted frame, pixels.
    pub max_width: u32,
    /// Tallest accepted frame, pixels.
    pub max_height: u32,
    /// Most pixels accepted (width x height).
    pub max_pixels: u64,
    /// Most bytes the decoder may allocate for coefficients and the scaled
    /// output together (estimated from the header before decoding, and
    /// passed to the decoder as its output-buffer limit).
    pub max_alloc_bytes: u64,
}

/// Default decoder memory per photo: 96 MiB (our choice). A sequential
/// JPEG of any accepted size needs far less (its 1/8-scale planes: 9 MB at
/// 12000 x 8000); a progressive one keeps every DCT coefficient, 2 bytes
/// per sample, so this admits progressive photos up to about 33 MP at 4:2:0
/// or 16 MP at 4:4:4 and refuses larger ones before decoding. The `image`
/// crate's 512 MiB default (reliability notes §1.3) let one progressive
/// 12000 x 8333 photo take about 330 MiB of the server.
pub const DEFAULT_MAX_DECODER_BYTES: u64 = 96 << 20;

impl Default for PhotoLimits {
    /// 12000 x 12000 and 100 megapixels (project choice; zenjpeg used 100 MP
    /// before raising it to 120 MP, reliability notes §1.3) and
    /// [`DEFAULT_MAX_DECODER_BYTES`] of decoder memory.
    fn default() -> Self {
        PhotoLimits {
            max_width: 12_000,
            max_height: 12_000,
            max_pixels: 100_000_000,
            max_alloc_bytes: DEFAULT_MAX_DECODER_BYTES,
        }
    }
}

/// What intake learned about one photo.
#[derive(Debug, Clone, PartialEq)]
pub struct PhotoCheck {
    /// SHA-256 of the original bytes, lower-case hex.
    pub sha256: String,
    /// Width the image data covers, pixels: the SOF header's, unless the
    /// data ran out before the frame was full (see `data_matches_header`).
    pub width: u32,
    /// Height the image data covers, pixels (likewise).
    pub height: u32,
    /// The entropy-coded data fills the frame the SOF header declares.
    /// When not, `width` x `height` is what it covers: exact for the
    /// 1/8-scale path; otherwise an upper bound from the data's size (every
    /// block needs at least one bit).
    pub data_matches_header: bool,
    /// Time, position and direction from EXIF (fields `None` when absent).
    pub meta: PhotoMeta,
    /// Thumbnail, longest side [`THUMBNAIL_MAX_SIDE`] (never enlarged),
    /// baseline JPEG at [`THUMBNAIL_QUALITY`]. EXIF orientation is not applied.
    pub thumbnail_jpeg: Vec<u8>,
}

/// Checks a JPEG and makes its thumbnail; see the module docs for the order
/// of the checks.
pub fn inspect_jpeg(bytes: &[u8], limits: &PhotoLimits) -> Result<PhotoCheck, PhotoError> {
    let header = read_jpeg_header(bytes)?;
    check_limits(&header, limits)?;
    let (tw, th) = thumbnail_size(header.width, header.height);
    let (thumbnail_jpeg, covered) = guarded(|| thumbnail(bytes, &header, tw, th, limits))?;
    let covered = covered.or_else(|| covered_by_size(bytes.len(), &header));
    let sha256 = hex::encode(Sha256::digest(bytes));
    // EXIF never fails a JPEG that got this far (exif.rs refuses only non-JPEG).
    let meta = read_photo_meta(bytes).unwrap_or_default();
    let (width, height) = covered.unwrap_or((header.width, header.height));
    Ok(PhotoCheck {
        sha256,
        width,
        height,
        data_matches_header: covered.is_none(),
        meta,
        thumbnail_jpeg,
    })
}

/// `None` when a file of `len` bytes can fill the frame of `header`; else
/// the most of it that it can cover: whole rows, at least one bit per block.
fn covered_by_size(len: usize, header: &JpegHeader) -> Covered {
    let blocks = header.block_count();
    let bits = (len as u64).saturating_mul(8);
    if bits >= blocks {
        return None;
    }
    let h = u64::from(header.height) * bits / blocks.max(1);
    Some((
        header.width,
        u32::try_from(h).unwrap_or(header.height).max(1),
    ))
}

/// Refuses a frame whose declared size or decoder memory exceeds `limits`.
pub fn check_limits(header: &JpegHeader, limits: &PhotoLimits) -> Result<(), PhotoError> {
    let (w, h) = (header.width, header.height);
    let pixels = u64::from(w) * u64::from(h);
    if w > limits.max_width || h > limits.max_height || pixels > limits.max_pixels {
        return Err(PhotoError::TooLarge {
            width: w,
            height: h,
        });
    }
    let (tw, th) = thumbnail_size(w, h);
    let (sw, sh) = scaled_size(w, h, tw, th);
    let needed = header.coefficient_bytes() + decode_buffer_bytes(header, sw, sh);
    if needed > limits.max_alloc_bytes {
        return Err(PhotoError::TooMuchMemory {
            needed,
            limit: limits.max_alloc_bytes,
        });
    }
    Ok(())
}

/// Thumbnail size: longest side [`THUMBNAIL_MAX_SIDE`], aspect kept, never
/// enlarged, at least 1 pixel per side.
pub fn thumbnail_size(width: u32, height: u32) -> (u32, u32) {
    let long = width.max(height);
    if long <= THUMBNAIL_MAX_SIDE {
        return (width.max(1), height.max(1));
    }
    let fit = |side: u32| {
        let v = (u64::from(side) * u64::from(THUMBNAIL_MAX_SIDE) + u64::from(long) / 2)
            / u64::from(long);
        u32::try_from(v).unwrap_or(THUMBNAIL_MAX_SIDE).max(1)
    };
    (fit(width), fit(height))
}

/// The output size jpeg-decoder 0.3.2 picks for `scale(tw, th)`: the
/// smallest of 1/8, 1/4, 1/2, 1/1 whose width or height covers the request
/// (`idct::choose_idct_size`, sizes rounded up).
fn scaled_size(w: u32, h: u32, tw: u32, th: u32) -> (u32, u32) {
    let s = dct_scale(w, h, tw, th);
    (
        (u64::from(w) * u64::from(s)).div_ceil(8) as u32,
        (u64::from(h) * u64::from(s)).div_ceil(8) as u32,
    )
}

/// The numerator of that scale: 1, 2, 4 or 8 (eighths).
fn dct_scale(w: u32, h: u32, tw: u32, th: u32) -> u32 {
    let scaled = |len: u32, s: u32| (u64::from(len) * u64::from(s)).div_ceil(8);
    [1, 2, 4]
        .into_iter()
        .find(|&s| scaled(w, s) >= u64::from(tw) || scaled(h, s) >= u64::from(th))
        .unwrap_or(8)
}

/// Output bytes plus the per-component planes jpeg-decoder keeps while
/// decoding at the scaled size (one byte per sample per component).
fn decode_buffer_bytes(header: &JpegHeader, sw: u32, sh: u32) -> u64 {
    let n = header.sampling.len() as u64;
    let per_sample = if header.precision > 8 { 2 } else { 1 };
    2 * n * per_sample * u64::from(sw) * u64::from(sh)
}

/// Width and height the image data covered, when it did not fill the frame.
type Covered = Option<(u32, u32)>;

/// The thumbnail, and what the data covered when it did not fill the
/// frame (known exactly on the 1/8-scale path only).
fn thumbnail(
    bytes: &[u8],
    header: &JpegHeader,
    tw: u32,
    th: u32,
    limits: &PhotoLimits,
) -> Result<(Vec<u8>, Covered), PhotoError> {
    if dct_scale(header.width, header.height, tw, th) == 1
        && let Some(e) = decode_eighth(bytes, header.width, header.height)?
    {
        if (e.width, e.height) != scaled_size(header.width, header.height, tw, th) {
            return Err(PhotoError::Decode("1/8-scale size mismatch".into()));
        }
        let rgb = RgbImage::from_raw(e.width, e.height, e.rgb)
            .ok_or_else(|| PhotoError::Decode("1/8-scale buffer size".into()))?;
        return Ok((encode_thumbnail(rgb, tw, th)?, e.covered));
    }
    let mut dec = Decoder::new(bytes);
    dec.set_max_decoding_buffer_size(usize::try_from(limits.max_alloc_bytes).unwrap_or(usize::MAX));
    let req = |v: u32| u16::try_from(v).unwrap_or(u16::MAX);
    dec.scale(req(tw), req(th))
        .map_err(|e| PhotoError::Decode(e.to_string()))?;
    let pixels = dec
        .decode()
        .map_err(|e| PhotoError::Decode(e.to_string()))?;
    let info = dec
        .info()
        .ok_or_else(|| PhotoError::Decode("no frame decoded".into()))?;
    let (sw, sh) = (u32::from(info.width), u32::from(info.height));
    if sw == 0 || sh == 0 || sw > header.width || sh > header.height {
        return Err(PhotoError::Decode(format!("decoder returned {sw}x{sh}")));
    }
    let rgb = to_rgb(pixels, info.pixel_format, sw, sh)?;
    Ok((encode_thumbnail(rgb, tw, th)?, None))
}

/// Resizes a decoded (scaled) image to the thumbnail size and encodes it.
fn encode_thumbnail(rgb: RgbImage, tw: u32, th: u32) -> Result<Vec<u8>, PhotoError> {
    let small = if rgb.dimensions() == (tw, th) {
        rgb
    } else {
        image::imageops::thumbnail(&rgb, tw, th)
    };
    let mut out = Vec::with_capacity(32 * 1024);
    JpegEncoder::new_with_quality(&mut out, THUMBNAIL_QUALITY)
        .encode(small.as_raw(), tw, th, ExtendedColorType::Rgb8)
        .map_err(|e| PhotoError::Encode(e.to_string()))?;
    Ok(out)
}

/// Converts jpeg-decoder output to 8-bit RGB.
fn to_rgb(px: Vec<u8>, format: PixelFormat, w: u32, h: u32) -> Result<RgbImage, PhotoError> {
    let n = usize::try_from(u64::from(w) * u64::from(h))
        .map_err(|_| PhotoError::Decode("size".into()))?;
    let short = || PhotoError::Decode("decoder returned too few samples".into());
    let rgb: Vec<u8> = match format {
        PixelFormat::RGB24 => {
            if px.len() < 3 * n {
                return Err(short());
            }
            let mut px = px;
            px.truncate(3 * n);
            px
        }
        PixelFormat::L8 => px
            .get(..n)
            .ok_or_else(short)?
            .iter()
            .flat_map(|&l| [l, l, l])
            .collect(),
        // Big-endian 16-bit grey: keep the high byte.
        PixelFormat::L16 => px
            .get(..2 * n)
            .ok_or_else(short)?
            .chunks_exact(2)
            .flat_map(|c| [c[0]; 3])
            .collect(),
        // jpeg-decoder 0.3.2 gives CMYK already inverted (255 - stored value,
        // `color_convert_line_cmyk`), i.e. ink amounts; RGB = (1-C)(1-K).
        PixelFormat::CMYK32 => px
            .get(..4 * n)
            .ok_or_else(short)?
            .chunks_exact(4)
            .flat_map(|c| {
                let k = 255 - u32::from(c[3]);
                let ch = |x: u8| ((255 - u32::from(x)) * k / 255) as u8;
                [ch(c[0]), ch(c[1]), ch(c[2])]
            })
            .collect(),
    };
    RgbImage::from_raw(w, h, rgb).ok_or_else(short)
}

/// Runs `f`, turning a panic inside it into [`PhotoError::DecoderPanic`].
fn guarded<T>(f: impl FnOnce() -> Result<T, PhotoError>) -> Result<T, PhotoError> {
    catch_unwind(AssertUnwindSafe(f))
        .map_err(|p| PhotoError::DecoderPanic(panic_text(p.as_ref())))?
}

fn panic_text(p: &(dyn std::any::Any + Send)) -> String {
    if let Some(s) = p.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = p.downcast_ref::<String>() {
        s.clone()
    } else {
        "decoder panicked".to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::super::header::tests::crafted_sof;
    use super::*;

    /// A real 64x48 JPEG made by the `image` crate's encoder from a gradient.
    fn small_jpeg(w: u32, h: u32) -> Vec<u8> {
        let img = RgbImage::from_fn(w, h, |x, y| image::Rgb([(x * 4) as u8, (y * 5) as u8, 128]));
        let mut out = Vec::new();
        JpegEncoder::new_with_quality(&mut out, 90)
            .encode(img.as_raw(), w, h, ExtendedColorType::Rgb8)
            .expect("encode");
        out
    }

    #[test]
    fn sha256_of_abc_matches_fips_180_2() {
        // FIPS 180-2, Appendix B.1: SHA-256("abc").
        let d = hex::encode(Sha256::digest(b"abc"));
        assert_eq!(
            d,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn huge_declared_frame_is_refused_before_decoding() {
        // SOF stores 16-bit sizes (T.81 B.2.2), so 100000 x 100000 cannot be
        // declared; 65535 x 65535 is the largest a JPEG can claim. The
        // crafted file has no scan data, so reaching the decoder would give
        // Decode, not TooLarge: the error proves the refusal came first.
        let bomb = crafted_sof(0xC2, 65_535, 65_535);
        assert!(bomb.len() < 40);
        let r = inspect_jpeg(&bomb, &PhotoLimits::default());
        assert!(
            matches!(
                r,
                Err(PhotoError::TooLarge {
                    width: 65_535,
                    height: 65_535
                })
            ),
            "{r:?}"
        );
        // 12000 x 9000 = 108 MP: within each side, above the pixel limit.
        let r = inspect_jpeg(&crafted_sof(0xC0, 12_000, 9_000), &PhotoLimits::default());
        assert!(matches!(r, Err(PhotoError::TooLarge { .. })), "{r:?}");
        // Within the limits the same crafted file reaches the decoder and fails there.
        let r = inspect_jpeg(&crafted_sof(0xC0, 4_000, 3_000), &PhotoLimits::default());
        assert!(matches!(r, Err(PhotoError::Decode(_))), "{r:?}");
    }

    #[test]
    fn progressive_memory_estimate_is_enforced() {
        // 10000 x 10000 progressive 4:2:0 keeps 10000^2 * 1.5 * 2 bytes
        // (about 300 MB) of coefficients: refused by default (96 MiB),
        // admitted only with a limit that large.
        let h = read_jpeg_header(&crafted_sof(0xC2, 10_000, 10_000)).expect("header");
        assert!(matches!(
            check_limits(&h, &PhotoLimits::default()),
            Err(PhotoError::TooMuchMemory { .. })
        ));
        let roomy = PhotoLimits {
            max_alloc_bytes: 512 << 20,
            ..PhotoLimits::default()
        };
        assert!(check_limits(&h, &roomy).is_ok());
    }

    // Issue 12 item 4: one progressive 12000 x 8333 photo took about 330 MiB
    // of the server. Failed before the fix (the default admitted 512 MiB).
    #[test]
    fn decoder_memory_is_bounded_for_every_layout() {
        let limits = PhotoLimits::default();
        let need = |marker: u8, w: u16, h: u16, sampling: u8| {
            let mut b = crafted_sof(marker, w, h);
            // The luma sampling byte of the crafted SOF (after SOI, the
            // filler segment, FF FF, the marker, length, precision, sizes,
            // component count and luma id).
            b[20] = sampling;
            let hd = read_jpeg_header(&b).expect("header");
            (check_limits(&hd, &limits), hd)
        };
        // The photo: progressive 4:2:0 at 12000 x 8333.
        let (r, _) = need(0xC2, 12_000, 8_333, 0x22);
        assert!(matches!(r, Err(PhotoError::TooMuchMemory { .. })), "{r:?}");
        // Every layout that is admitted stays within the bound: baseline
        // and progressive, 4:4:4 (0x11), 4:2:2 (0x21), 4:2:0 (0x22), 4:1:1 (0x41).
        for marker in [0xC0, 0xC1, 0xC2] {
            for sampling in [0x11, 0x21, 0x22, 0x41] {
                for (w, h) in [(4000, 3000), (6000, 4000), (12_000, 8_000), (12_000, 8_333)] {
                    let (r, hd) = need(marker, w, h, sampling);
                    let (tw, th) = thumbnail_size(hd.width, hd.height);
                    let (sw, sh) = scaled_size(hd.width, hd.height, tw, th);
                    let estimate = hd.coefficient_bytes() + decode_buffer_bytes(&hd, sw, sh);
                    match r {
                        Ok(()) => assert!(estimate <= DEFAULT_MAX_DECODER_BYTES),
                        Err(PhotoError::TooMuchMemory { .. }) => {
                            assert!(estimate > DEFAULT_MAX_DECODER_BYTES)
                        }
                        Err(e) => panic!("{marker:x} {sampling:x} {w}x{h}: {e:?}"),
                    }
                }
            }
        }
        // A 12 MP progressive 4:2:0 photo (36 MB of coefficients) is fine;
        // so is any baseline photo within the pixel limits.
        assert!(need(0xC2, 4000, 3000, 0x22).0.is_ok());
        assert!(need(0xC0, 12_000, 8_333, 0x11).0.is_ok());
    }

    // Issue 12 item 5: a JPEG whose header claims far more than its data
    // holds. Failed before the fix: the claimed size was returned.
    #[test]
    fn data_short_of_the_header_is_reported_with_what_it_covers() {
        // 1/8-scale path: a 320 x 240 photo whose SOF says 12000 x 8000.
        let mut b = small_jpeg(320, 240);
        let i = b.windows(2).position(|w| w == [0xFF, 0xC0]).expect("sof");
        b[i + 5..i + 9].copy_from_slice(&[0x1F, 0x40, 0x2E, 0xE0]);
        let c = inspect_jpeg(&b, &PhotoLimits::default()).expect("inspect");
        assert!(!c.data_matches_header);
        // The data holds 40 x 30 = 1200 MCUs of 8 x 8 (the image crate's
        // encoder writes 4:4:4): less than one 1500-MCU row of the claimed
        // frame, so 9600 x 8 pixels.
        assert_eq!((c.width, c.height), (9600, 8));
        // jpeg-decoder path (1/4 scale): 64 x 48 claiming 2000 x 1500.
        let mut b = small_jpeg(64, 48);
        let i = b.windows(2).position(|w| w == [0xFF, 0xC0]).expect("sof");
        b[i + 5..i + 9].copy_from_slice(&[0x05, 0xDC, 0x07, 0xD0]);
        let c = inspect_jpeg(&b, &PhotoLimits::default()).expect("inspect");
        assert!(!c.data_matches_header);
        assert_eq!(c.width, 2000);
        assert!(c.height < 1500, "{}", c.height);
        // Sound photos on both paths.
        for (w, h) in [(64, 48), (2600, 1950)] {
            let c = inspect_jpeg(&small_jpeg(w, h), &PhotoLimits::default()).expect("inspect");
            assert!(c.data_matches_header, "{w}x{h}");
            assert_eq!((c.width, c.height), (w, h));
        }
    }

    #[test]
    fn truncated_and_garbled_jpegs_are_errors() {
        let good = small_jpeg(64, 48);
        // jpeg-decoder 0.3.2 reports "failed to fill whole buffer" for the
        // cut scans; the 30-byte cut ends inside a header segment.
        for cut in [good.len() / 2, good.len() - 10, 200, 30] {
            let r = inspect_jpeg(&good[..cut], &PhotoLimits::default());
            assert!(
                matches!(r, Err(PhotoError::Decode(_) | PhotoError::BadHeader(_))),
                "{cut}: {r:?}"
            );
        }
        // Overwrite the entropy-coded data and the tables after the header.
        let mut garbled = good.clone();
        let sos = garbled
            .windows(2)
            .position(|w| w == [0xFF, 0xDA])
            .expect("sos");
        for b in garbled.iter_mut().skip(sos - 40).take(60) {
            *b = 0xFF;
        }
        assert!(inspect_jpeg(&garbled, &PhotoLimits::default()).is_err());
        let header_only = &good[..sos];
        assert!(inspect_jpeg(header_only, &PhotoLimits::default()).is_err());
    }

    #[test]
    fn panics_become_errors() {
        let r: Result<(), _> = guarded(|| panic!("index out of bounds"));
        assert!(matches!(r, Err(PhotoError::DecoderPanic(m)) if m == "index out of bounds"));
        assert!(matches!(guarded(|| Ok(5)), Ok(5)));
    }

    #[test]
    fn random_byte_damage_never_panics() {
        // 300 copies of a good JPEG with 1..8 bytes overwritten after SOI
        // (xorshift64, fixed seed): each must return, Ok or Err, and any
        // decoder panic must come back as an error (common practice in
        // decoder fuzzing, reliability notes §1.3).
        let good = small_jpeg(64, 48);
        let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
        let mut next = || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s
        };
        let mut errors = 0;
        for _ in 0..300 {
            let mut bad = good.clone();
            for _ in 0..1 + next() % 8 {
                let at = 2 + (next() as usize) % (bad.len() - 2);
                bad[at] = next() as u8;
            }
            if inspect_jpeg(&bad, &PhotoLimits::default()).is_err() {
                errors += 1;
            }
        }
        // Damage to headers and tables must be noticed in some copies.
        assert!(errors > 0);
    }

    #[test]
    fn png_is_refused() {
        let img = RgbImage::from_pixel(8, 8, image::Rgb([1, 2, 3]));
        let mut png = Vec::new();
        img.write_to(&mut std::io::Cursor::new(&mut png), image::ImageFormat::Png)
            .expect("png");
        assert!(matches!(
            inspect_jpeg(&png, &PhotoLimits::default()),
            Err(PhotoError::NotJpeg)
        ));
    }

    #[test]
    fn good_jpeg_gives_hash_size_and_thumbnail() {
        let good = small_jpeg(64, 48);
        let c = inspect_jpeg(&good, &PhotoLimits::default()).expect("inspect");
        assert_eq!((c.width, c.height), (64, 48));
        assert_eq!(c.sha256, hex::encode(Sha256::digest(&good)));
        assert_eq!(c.meta, PhotoMeta::default());
        let h = read_jpeg_header(&c.thumbnail_jpeg).expect("thumb is a jpeg");
        assert_eq!((h.width, h.height), (64, 48));
    }

    #[test]
    fn large_photo_is_scaled_to_320() {
        let big = small_jpeg(1000, 750);
        let c = inspect_jpeg(&big, &PhotoLimits::default()).expect("inspect");
        let h = read_jpeg_header(&c.thumbnail_jpeg).expect("thumb");
        assert_eq!((h.width, h.height), (320, 240));
    }

    #[test]
    fn photo_scaled_by_an_eighth_takes_the_dc_path() {
        // 2600 x 1950: 1/8 gives 325 x 244, which covers 320 x 240.
        assert_eq!(dct_scale(2600, 1950, 320, 240), 1);
        let big = small_jpeg(2600, 1950);
        let h = read_jpeg_header(&big).expect("header");
        assert!(
            decode_eighth(&big, h.width, h.height)
                .expect("decode")
                .is_some()
        );
        let c = inspect_jpeg(&big, &PhotoLimits::default()).expect("inspect");
        let t = read_jpeg_header(&c.thumbnail_jpeg).expect("thumb");
        assert_eq!((t.width, t.height), (320, 240));
    }

    #[test]
    fn thumbnail_and_scaled_sizes() {
        assert_eq!(thumbnail_size(4000, 3000), (320, 240));
        assert_eq!(thumbnail_size(3000, 4000), (240, 320));
        assert_eq!(thumbnail_size(100, 50), (100, 50));
        assert_eq!(thumbnail_size(65_535, 1), (320, 1));
        // jpeg-decoder 0.3.2's own test: 5472x3648 asked for 200x200 -> 1/8.
        assert_eq!(scaled_size(5472, 3648, 200, 200), (684, 456));
        assert_eq!(scaled_size(4000, 3000, 320, 240), (500, 375));
        assert_eq!(scaled_size(640, 480, 320, 240), (320, 240));
    }
}
