//! The bounds a bundle reader enforces on untrusted input (DESIGN.md
//! invariant 5). The writer refuses to produce a bundle that a reader with
//! the default limits would refuse. Sizes are counted while decompressing,
//! never taken from ZIP headers.

/// Size limits for reading a bundle.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BundleLimits {
    /// Largest bundle file accepted (compressed, on disk).
    pub max_bundle_bytes: u64,
    /// Most ZIP entries accepted.
    pub max_entries: usize,
    /// Largest decompressed entry accepted.
    pub max_entry_bytes: u64,
    /// Largest `manifest.json` accepted.
    pub max_manifest_bytes: u64,
    /// Largest total of all decompressed entries.
    pub max_total_bytes: u64,
}

impl Default for BundleLimits {
    /// 512 MiB file, 2,100 entries (a preview per event for up to 2,000 events, plus the
    /// fixed entries), 128 MiB per entry, 1 MiB manifest, 512 MiB in total. Our choice.
    fn default() -> Self {
        BundleLimits {
            max_bundle_bytes: 512 << 20,
            max_entries: 2_100,
            max_entry_bytes: 128 << 20,
            max_manifest_bytes: 1 << 20,
            max_total_bytes: 512 << 20,
        }
    }
}
