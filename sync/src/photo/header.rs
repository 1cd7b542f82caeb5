//! JPEG frame header (SOF) reader used to refuse oversized photos before any
//! decoder sees them.
//!
//! [`read_jpeg_header`] walks the marker segments of ITU-T T.81 (Annex B.1:
//! markers `FF xx`, fill bytes `FF FF`, segment length big-endian including
//! itself) from SOI up to the first SOF marker and returns the declared frame
//! size, coding process and component sampling factors. It reads only the
//! segment headers, so a 333-byte file that declares 65500 x 65500 pixels
//! costs nothing to check (reliability notes §1.3). Only Huffman-coded DCT
//! frames are admitted: SOF0 (baseline), SOF1 (extended sequential) and SOF2
//! (progressive), which is what cameras and phones write (common practice).

use super::PhotoError;

/// How the frame is entropy-coded, from its SOF marker (T.81 Table B.1).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JpegProcess {
    /// SOF0, baseline DCT.
    Baseline,
    /// SOF1, extended sequential DCT, Huffman.
    Extended,
    /// SOF2, progressive DCT, Huffman.
    Progressive,
}

/// What the SOF segment of a JPEG declares.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct JpegHeader {
    /// Samples per line (X in T.81 B.2.2).
    pub width: u32,
    /// Number of lines (Y in T.81 B.2.2).
    pub height: u32,
    /// Sample precision in bits.
    pub precision: u8,
    /// The SOF marker's coding process.
    pub process: JpegProcess,
    /// (horizontal, vertical) sampling factors per component.
    pub sampling: Vec<(u8, u8)>,
}

impl JpegHeader {
    /// Bytes the decoder must hold for DCT coefficients of the whole frame:
    /// a progressive decode keeps all of them (i16 per coefficient, 64 per
    /// block, blocks padded to whole MCUs, T.81 A.2.4); a sequential one
    /// decodes row by row and keeps none.
    pub fn coefficient_bytes(&self) -> u64 {
        if self.process != JpegProcess::Progressive {
            return 0;
        }
        self.block_count() * 64 * 2
    }

    /// 8x8 blocks of the frame over all components, padded to whole MCUs
    /// (T.81 A.2.4). Each block costs at least one bit of entropy-coded
    /// data (every Huffman code is at least one bit long, T.81 C), so a
    /// file of fewer than `block_count() / 8` bytes cannot fill its frame.
    pub fn block_count(&self) -> u64 {
        let hmax = u64::from(self.sampling.iter().map(|s| s.0).max().unwrap_or(1).max(1));
        let vmax = u64::from(self.sampling.iter().map(|s| s.1).max().unwrap_or(1).max(1));
        let mcu_x = u64::from(self.width).div_ceil(8 * hmax);
        let mcu_y = u64::from(self.height).div_ceil(8 * vmax);
        self.sampling
            .iter()
            .map(|&(h, v)| mcu_x * u64::from(h) * mcu_y * u64::from(v))
            .sum()
    }
}

/// Reads the SOF header of a JPEG without decoding anything.
pub fn read_jpeg_header(bytes: &[u8]) -> Result<JpegHeader, PhotoError> {
    if !super::exif::is_jpeg(bytes) {
        return Err(PhotoError::NotJpeg);
    }
    let bad = |why: &str| PhotoError::BadHeader(why.to_string());
    let mut i = 2usize;
    loop {
        // Skip to the next marker; T.81 B.1.1.2 allows any number of FF fill bytes.
        if *bytes
            .get(i)
            .ok_or_else(|| bad("ended before a frame header"))?
            != 0xFF
        {
            return Err(bad("expected a marker"));
        }
        while bytes.get(i) == Some(&0xFF) {
            i += 1;
        }
        let marker = *bytes.get(i).ok_or_else(|| bad("ended inside a marker"))?;
        i += 1;
        match marker {
            // Markers without a length: TEM, RSTn, SOI.
            0x01 | 0xD0..=0xD8 => continue,
            0xD9 | 0xDA => return Err(bad("no frame header before the image data")),
            _ => {}
        }
        let len_bytes = bytes
            .get(i..i + 2)
            .ok_or_else(|| bad("truncated segment length"))?;
        let len = usize::from(u16::from_be_bytes([len_bytes[0], len_bytes[1]]));
        if len < 2 {
            return Err(bad("segment length below 2"));
        }
        let seg = bytes
            .get(i + 2..i + len)
            .ok_or_else(|| bad("truncated segment"))?;
        let process = match marker {
            0xC0 => Some(JpegProcess::Baseline),
            0xC1 => Some(JpegProcess::Extended),
            0xC2 => Some(JpegProcess::Progressive),
            // DHT, JPG (reserved), DAC are not frame headers.
            0xC4 | 0xC8 | 0xCC => None,
            0xC3 | 0xC5..=0xC7 | 0xC9..=0xCB | 0xCD..=0xCF => {
                return Err(PhotoError::Unsupported(format!(
                    "JPEG coding process SOF{} (only baseline, extended and progressive Huffman)",
                    marker - 0xC0
                )));
            }
            _ => None,
        };
        if let Some(process) = process {
            return parse_sof(seg, process);
        }
        i += len;
    }
}

fn parse_sof(seg: &[u8], process: JpegProcess) -> Result<JpegHeader, PhotoError> {
    let bad = |why: &str| PhotoError::BadHeader(why.to_string());
    let [precision, y0, y1, x0, x1, nf, rest @ ..] = seg else {
        return Err(bad("frame header too short"));
    };
    let height = u32::from(u16::from_be_bytes([*y0, *y1]));
    let width = u32::from(u16::from_be_bytes([*x0, *x1]));
    if width == 0 || height == 0 {
        // Height 0 means "defined later by DNL" (T.81 B.2.5); refused.
        return Err(bad("frame header declares a zero dimension"));
    }
    let nf = usize::from(*nf);
    if !matches!(nf, 1 | 3 | 4) {
        return Err(PhotoError::Unsupported(format!("{nf} colour components")));
    }
    let comps = rest
        .get(..3 * nf)
        .ok_or_else(|| bad("frame header components truncated"))?;
    let sampling: Vec<(u8, u8)> = comps
        .chunks_exact(3)
        .map(|c| (c[1] >> 4, c[1] & 0x0F))
        .collect();
    if sampling
        .iter()
        .any(|&(h, v)| !(1..=4).contains(&h) || !(1..=4).contains(&v))
    {
        return Err(bad("sampling factor outside 1..=4"));
    }
    Ok(JpegHeader {
        width,
        height,
        precision: *precision,
        process,
        sampling,
    })
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;

    /// A JPEG made of SOI, one APP0-like filler segment and a SOF with the
    /// given marker and size, three components at 4:2:0 (T.81 B.2.2 layout).
    pub(in super::super) fn crafted_sof(marker: u8, width: u16, height: u16) -> Vec<u8> {
        let mut v = vec![
            0xFF, 0xD8, 0xFF, 0xE0, 0x00, 0x04, 0x00, 0x00, 0xFF, 0xFF, marker,
        ];
        v.extend_from_slice(&[0x00, 17, 8]);
        v.extend_from_slice(&height.to_be_bytes());
        v.extend_from_slice(&width.to_be_bytes());
        v.extend_from_slice(&[3, 1, 0x22, 0, 2, 0x11, 1, 3, 0x11, 1]);
        v.extend_from_slice(&[0xFF, 0xD9]);
        v
    }

    #[test]
    fn reads_declared_size_and_sampling() {
        let h = read_jpeg_header(&crafted_sof(0xC0, 4000, 3000)).expect("header");
        assert_eq!((h.width, h.height, h.precision), (4000, 3000, 8));
        assert_eq!(h.process, JpegProcess::Baseline);
        assert_eq!(h.sampling, vec![(2, 2), (1, 1), (1, 1)]);
        assert_eq!(h.coefficient_bytes(), 0);
    }

    #[test]
    fn progressive_coefficients_are_counted() {
        let h = read_jpeg_header(&crafted_sof(0xC2, 4000, 3000)).expect("header");
        // 4:2:0 at 4000x3000: MCUs 250 x 188 (16 px each, 3000/16 rounded up);
        // luma 500x376 blocks, chroma 250x188 each; x 64 coefficients x 2 bytes.
        let blocks = 500 * 376 + 2 * 250 * 188;
        assert_eq!(h.coefficient_bytes(), blocks * 128);
    }

    #[test]
    fn refuses_other_processes_and_broken_headers() {
        assert!(matches!(
            read_jpeg_header(&crafted_sof(0xC3, 10, 10)),
            Err(PhotoError::Unsupported(_))
        ));
        assert!(matches!(
            read_jpeg_header(&crafted_sof(0xC0, 0, 10)),
            Err(PhotoError::BadHeader(_))
        ));
        let mut cut = crafted_sof(0xC0, 10, 10);
        cut.truncate(14);
        assert!(matches!(
            read_jpeg_header(&cut),
            Err(PhotoError::BadHeader(_))
        ));
        assert!(matches!(
            read_jpeg_header(&[0xFF, 0xD8, 0xFF, 0xDA]),
            Err(PhotoError::BadHeader(_))
        ));
        assert!(matches!(
            read_jpeg_header(b"GIF89a"),
            Err(PhotoError::NotJpeg)
        ));
    }
}
