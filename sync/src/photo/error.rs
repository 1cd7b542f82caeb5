//! The precise error of the photo module (pure): a verdict on one photo.
//! It never fails a whole package: intake keeps its message as that photo's
//! rejection reason. The crate's one error type is [`crate::SyncError`].

/// Why a photo was refused.
#[derive(Debug, thiserror::Error)]
pub enum PhotoError {
    /// The bytes do not start with the JPEG SOI marker (FF D8).
    #[error("not a JPEG file")]
    NotJpeg,
    /// The marker segments before the frame header are broken.
    #[error("bad JPEG header: {0}")]
    BadHeader(String),
    /// A JPEG variant this intake does not decode.
    #[error("unsupported JPEG: {0}")]
    Unsupported(String),
    /// The declared frame exceeds the width, height or pixel limit.
    #[error("photo of {width}x{height} pixels exceeds the size limits")]
    TooLarge {
        /// Declared width.
        width: u32,
        /// Declared height.
        height: u32,
    },
    /// Decoding would need more memory than allowed.
    #[error("decoding would need {needed} bytes, limit {limit}")]
    TooMuchMemory {
        /// Estimated bytes.
        needed: u64,
        /// The limit.
        limit: u64,
    },
    /// The decoder reported an error (truncated or corrupt data).
    #[error("cannot decode JPEG: {0}")]
    Decode(String),
    /// The decoder panicked; the panic was caught.
    #[error("JPEG decoder panicked: {0}")]
    DecoderPanic(String),
    /// Encoding the thumbnail failed.
    #[error("cannot encode thumbnail: {0}")]
    Encode(String),
}
