//! Field photo intake: EXIF time and position, safe JPEG decoding with size
//! limits, SHA-256 and a small thumbnail.
//!
//! [`read_photo_meta`] reads what a photo's EXIF says about when, where and
//! which way it was taken; [`inspect_jpeg`] checks an uploaded JPEG (format,
//! declared size, decoder memory, panics) and returns its hash, size, EXIF
//! and a 320-pixel thumbnail. Every fallible function here returns
//! [`PhotoError`], except `read_photo_meta`, whose only failure ("not a
//! JPEG") is a `String`.

mod decode;
mod eighth;
mod error;
mod exif;
mod header;
#[cfg(test)]
mod reference_tests;

pub use decode::{
    DEFAULT_MAX_DECODER_BYTES, PhotoCheck, PhotoLimits, THUMBNAIL_MAX_SIDE, THUMBNAIL_QUALITY,
    check_limits, inspect_jpeg, thumbnail_size,
};
pub use error::PhotoError;
pub use exif::{North, PhotoMeta, TimeBasis, read_photo_meta, read_photo_meta_in};
pub use header::{JpegHeader, JpegProcess, read_jpeg_header};
