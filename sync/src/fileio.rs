//! File helpers both sides use: reading a stream while hashing it under a
//! size bound, and the folder fsync that makes a rename durable.

use std::io::{self, Read};
use std::path::Path;

use sha2::{Digest, Sha256};

/// What [`hash_read`] read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Hashed {
    /// SHA-256 of the bytes, lowercase hex.
    pub sha256: String,
    /// Number of bytes.
    pub size: u64,
}

/// Why [`hash_read`] stopped.
#[derive(Debug)]
pub enum HashReadError {
    /// Reading the stream failed.
    Read(io::Error),
    /// The sink refused a chunk.
    Sink(io::Error),
    /// More than the bound came out.
    TooLarge,
}

impl From<HashReadError> for io::Error {
    fn from(e: HashReadError) -> io::Error {
        match e {
            HashReadError::Read(e) | HashReadError::Sink(e) => e,
            HashReadError::TooLarge => {
                io::Error::new(io::ErrorKind::InvalidData, "more bytes than the bound")
            }
        }
    }
}

/// Reads `reader` to its end in 64 KiB chunks, hashing every chunk and
/// handing it to `sink`. Stops with [`HashReadError::TooLarge`] as soon as
/// more than `max` bytes came out (the chunk that crossed the bound is
/// neither hashed nor handed on); at most `max + 1` bytes are read.
pub fn hash_read(
    reader: impl Read,
    max: u64,
    mut sink: impl FnMut(&[u8]) -> io::Result<()>,
) -> Result<Hashed, HashReadError> {
    let mut reader = reader.take(max.saturating_add(1));
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 64 * 1024];
    let mut size = 0u64;
    loop {
        let n = reader.read(&mut buf).map_err(HashReadError::Read)?;
        if n == 0 {
            break;
        }
        size += n as u64;
        if size > max {
            return Err(HashReadError::TooLarge);
        }
        hasher.update(&buf[..n]);
        sink(&buf[..n]).map_err(HashReadError::Sink)?;
    }
    Ok(Hashed {
        sha256: hex::encode(hasher.finalize()),
        size,
    })
}

/// Fsyncs the folder `dir` so that a rename inside it is durable (a no-op
/// where folders cannot be opened, as on Windows).
pub fn fsync_dir(dir: &Path) -> io::Result<()> {
    #[cfg(unix)]
    std::fs::File::open(dir)?.sync_all()?;
    #[cfg(not(unix))]
    let _ = dir;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hashes_what_it_hands_on() {
        let data: Vec<u8> = (0..200_000u32).map(|i| (i % 251) as u8).collect();
        let mut copy = Vec::new();
        let h = hash_read(&data[..], data.len() as u64, |c| {
            copy.extend_from_slice(c);
            Ok(())
        })
        .expect("within the bound");
        assert_eq!(copy, data);
        assert_eq!(h.size, 200_000);
        assert_eq!(h.sha256, hex::encode(Sha256::digest(&data)));
        let empty = hash_read(&b""[..], 0, |_| Ok(())).expect("empty");
        assert_eq!(
            empty.sha256,
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }

    #[test]
    fn stops_past_the_bound_and_passes_sink_errors() {
        let data = [7u8; 1000];
        assert!(matches!(
            hash_read(&data[..], 999, |_| Ok(())),
            Err(HashReadError::TooLarge)
        ));
        assert!(hash_read(&data[..], 1000, |_| Ok(())).is_ok());
        assert!(matches!(
            hash_read(&data[..], 1000, |_| Err(io::Error::other("full"))),
            Err(HashReadError::Sink(_))
        ));
    }

    #[test]
    fn fsyncs_a_folder() {
        let dir = tempfile::tempdir().expect("temp dir");
        fsync_dir(dir.path()).expect("fsync");
        #[cfg(unix)]
        assert!(fsync_dir(&dir.path().join("missing")).is_err());
    }
}
