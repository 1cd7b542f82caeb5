//! The bounds a return reader enforces on untrusted input (DESIGN.md
//! invariant 5). Values follow reliability.md §3 "Defaults to adopt"; see the
//! table in the [`crate::returns`] module docs.

use crate::safezip::EntryLimit;

/// Size limits for reading (and writing) a return.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ReturnLimits {
    /// Largest return file accepted (compressed, on disk): 1 GiB.
    pub max_file_bytes: u64,
    /// Most ZIP entries: 5,000.
    pub max_entries: usize,
    /// Largest decompressed `return-manifest.json`: 2 MiB.
    pub max_manifest_bytes: u64,
    /// Largest decompressed `signature.json`: 4 KiB.
    pub max_signature_bytes: u64,
    /// Largest decompressed `reports.json`: 8 MiB.
    pub max_reports_bytes: u64,
    /// Largest decompressed photo: 32 MiB.
    pub max_photo_bytes: u64,
    /// Largest total of all decompressed entries: 2 GiB.
    pub max_total_bytes: u64,
    /// Most reports in one return: 2,000.
    pub max_reports: usize,
    /// Largest decompression ratio of a JSON entry past 100 KB: 100:1.
    pub max_json_ratio: u64,
    /// Largest decompression ratio of a photo past 100 KB: 10:1.
    pub max_photo_ratio: u64,
}

impl Default for ReturnLimits {
    fn default() -> Self {
        ReturnLimits {
            max_file_bytes: 1 << 30,
            max_entries: 5_000,
            max_manifest_bytes: 2 << 20,
            max_signature_bytes: 4 << 10,
            max_reports_bytes: 8 << 20,
            max_photo_bytes: 32 << 20,
            max_total_bytes: 2 << 30,
            max_reports: 2_000,
            max_json_ratio: 100,
            max_photo_ratio: 10,
        }
    }
}

impl ReturnLimits {
    pub(crate) fn json(&self, max_bytes: u64) -> EntryLimit {
        EntryLimit {
            max_bytes,
            max_ratio: self.max_json_ratio,
        }
    }

    pub(crate) fn photo(&self, max_bytes: u64) -> EntryLimit {
        EntryLimit {
            max_bytes,
            max_ratio: self.max_photo_ratio,
        }
    }
}
