//! Decoding a sequential Huffman JPEG at 1/8 scale from its DC coefficients.
//!
//! At 1/8 scale every 8x8 block becomes one pixel, and the 1x1 inverse DCT
//! of a block is its DC term alone: `(DC x Q[0] + 1024) / 8`, clamped to
//! 0..=255 (T.81 A.3.3 with only the (0,0) basis function; jpeg-decoder
//! 0.3.2's `dequantize_and_idct_block_1x1` and libjpeg's `jpeg_idct_1x1`
//! compute the same). The AC coefficients must still be entropy-decoded to
//! find where each block ends, but they need not be stored, dezigzagged,
//! dequantised or transformed, so this path only walks the Huffman codes with
//! a combined "code + extra bits" table (libjpeg-turbo does the same when
//! its 1x1 IDCT is selected: `ac_needed` in jdhuff.c). jpeg-decoder 0.3.2
//! decodes every coefficient and starts worker threads for each photo; in a
//! profile of the photo bench its entropy decoding was about 70% and the
//! thread hand-offs about 10% of the intake time. With this path the bench's
//! 12 MP photos went from about 70 to about 48 ms each (same session, 2-core
//! VM under load), the same order as Pillow's draft pipeline.
//!
//! Only the layout phones and cameras write is taken here: one interleaved
//! scan (all components, Ss=0, Se=63, Ah=Al=0) of an 8-bit baseline or
//! extended sequential frame with 1 (grey) or 3 (YCbCr) components whose
//! sampling factors divide the largest ones, restart intervals allowed.
//! Anything else (progressive, several scans, Adobe RGB, missing tables, ...)
//! returns `Ok(None)` and the caller decodes with jpeg-decoder, so the set of
//! accepted files does not shrink. Broken entropy data is an error.
//! Chroma is replicated to the luma grid (the thumbnail filter averages it
//! afterwards). Everything is bounds-checked safe Rust; the caller has
//! already checked the frame size against the limits.

use super::PhotoError;

/// A 1/8-scale RGB decode: `rgb.len() == 3 * width * height`.
#[derive(Debug)]
pub(super) struct Eighth {
    pub width: u32,
    pub height: u32,
    pub rgb: Vec<u8>,
    /// `None` when the entropy-coded data covered the whole frame; else the
    /// full-scale width and height of the MCUs decoded before it ran out
    /// (the rest was decoded from the zero bits fed after a marker).
    pub covered: Option<(u32, u32)>,
}

/// Bits looked up at once in the Huffman tables (a common choice: libjpeg
/// uses 8, stb_image 9; 10 covers nearly every AC code plus its extra bits).
const LOOKUP_BITS: u32 = 10;

/// A lookup indexed by the next LOOKUP_BITS bits (a fixed size, so indexing
/// with a peeked value needs no bounds check).
type Table = [(u8, u8); 1 << LOOKUP_BITS];

fn corrupt(why: &str) -> PhotoError {
    PhotoError::Decode(why.to_string())
}

/// One Huffman table (T.81 Annex C) with lookups for the fast paths.
struct Huffman {
    /// Code length and symbol for codes of at most LOOKUP_BITS bits (length 0: longer code).
    lookup: Box<Table>,
    /// For AC tables: bits to drop (code + extra bits, 0 if they do not fit)
    /// and how many coefficient positions the code advances (0 = end of block).
    skip: Box<Table>,
    /// Largest code of each length 1..=16 (-1 when none), T.81 F.2.2.3 MAXCODE.
    maxcode: [i32; 17],
    /// Offset from a code of each length to its symbol index (VALPTR - MINCODE).
    delta: [i32; 17],
    symbols: Vec<u8>,
}

impl Huffman {
    /// Builds the table from a DHT's 16 counts and its symbols (T.81 C.2).
    fn new(counts: &[u8; 16], symbols: &[u8], ac: bool) -> Result<Huffman, PhotoError> {
        let mut lookup = Box::new([(0u8, 0u8); 1 << LOOKUP_BITS]);
        let mut maxcode = [-1i32; 17];
        let mut delta = [0i32; 17];
        let mut code: u32 = 0;
        let mut k = 0usize;
        for len in 1..=16u32 {
            let n = usize::from(counts[len as usize - 1]);
            if n > 0 {
                delta[len as usize] = k as i32 - code as i32;
                for _ in 0..n {
                    let sym = *symbols
                        .get(k)
                        .ok_or_else(|| corrupt("short Huffman table"))?;
                    if len <= LOOKUP_BITS {
                        let shift = LOOKUP_BITS - len;
                        let first = (code << shift) as usize;
                        for e in lookup
                            .get_mut(first..first + (1 << shift))
                            .into_iter()
                            .flatten()
                        {
                            *e = (len as u8, sym);
                        }
                    }
                    code += 1;
                    k += 1;
                }
                maxcode[len as usize] = code as i32 - 1;
            }
            // More codes of this length than the length can hold (T.81 C.2).
            if code > 1 << len {
                return Err(corrupt("bad Huffman table"));
            }
            code <<= 1;
        }
        let mut skip = Box::new([(0u8, 0u8); 1 << LOOKUP_BITS]);
        for (i, e) in skip.iter_mut().enumerate().filter(|_| ac) {
            let (len, rs) = lookup[i];
            let (run, size) = (u32::from(rs >> 4), u32::from(rs & 15));
            if len == 0 || u32::from(len) + size > LOOKUP_BITS {
                continue;
            }
            *e = match (run, size) {
                (15, 0) => (len, 16),
                // End of block (T.81 F.1.2.2.1); other run/0 symbols are
                // undefined in sequential mode and end the block, as libjpeg does.
                (_, 0) => (len, 0),
                _ => (len + size as u8, run as u8 + 1),
            };
        }
        Ok(Huffman {
            lookup,
            skip,
            maxcode,
            delta,
            symbols: symbols.to_vec(),
        })
    }
}

/// Entropy-coded data reader: bytes MSB first, FF 00 unstuffed, zeros
/// after a marker (T.81 F.2.2.5 and B.1.1.5).
struct Bits<'a> {
    data: &'a [u8],
    pos: usize,
    acc: u64,
    n: u32,
    /// Stopped at a marker: `pos` is at its FF and zero bits are fed.
    at_marker: bool,
    /// Ran out of bytes without a marker: the file is truncated.
    ended: bool,
    /// Zero bits fed after a marker since the last restart.
    pad: u32,
}

impl<'a> Bits<'a> {
    fn new(data: &'a [u8]) -> Self {
        Bits {
            data,
            pos: 0,
            acc: 0,
            n: 0,
            at_marker: false,
            ended: false,
            pad: 0,
        }
    }

    /// Whether a code has used the zero bits fed after a marker: the scan's
    /// data ended before its blocks did (libjpeg warns "premature end of
    /// data segment" for the same).
    fn overran(&self) -> bool {
        self.pad > self.n
    }

    /// Fills the accumulator to more than 56 bits.
    #[inline(always)]
    fn refill(&mut self) {
        // Whole bytes at once when the next 8 hold no FF (the "has a zero
        // byte" bit trick applied to !w); FF needs the byte-wise path.
        if !self.at_marker
            && let Some(chunk) = self.data.get(self.pos..self.pos + 8)
        {
            let w = u64::from_be_bytes(chunk.try_into().unwrap_or([0xFF; 8]));
            if (!w).wrapping_sub(0x0101_0101_0101_0101) & w & 0x8080_8080_8080_8080 == 0 {
                let take = (64 - self.n) / 8;
                self.acc |= (w >> self.n) & (!0u64 << (64 - self.n - 8 * take));
                self.pos += take as usize;
                self.n += 8 * take;
                return;
            }
        }
        while self.n <= 56 {
            let mut byte = 0u8;
            if !self.at_marker {
                match self.data.get(self.pos) {
                    Some(0xFF) => match self.data.get(self.pos + 1) {
                        Some(0x00) => {
                            byte = 0xFF;
                            self.pos += 2;
                        }
                        Some(_) => self.at_marker = true,
                        None => self.ended = true,
                    },
                    Some(&b) => {
                        byte = b;
                        self.pos += 1;
                    }
                    None => self.ended = true,
                }
            }
            if self.at_marker {
                self.pad += 8;
            }
            self.acc |= u64::from(byte) << (56 - self.n);
            self.n += 8;
        }
    }

    #[inline(always)]
    fn peek(&self, bits: u32) -> usize {
        (self.acc >> (64 - bits)) as usize
    }

    /// The next LOOKUP_BITS bits, typed so that tables index without a check.
    #[inline(always)]
    fn peek_lookup(&self) -> usize {
        (self.acc >> (64 - LOOKUP_BITS)) as usize & ((1 << LOOKUP_BITS) - 1)
    }

    #[inline(always)]
    fn drop_bits(&mut self, bits: u32) {
        self.acc <<= bits;
        self.n -= bits;
    }

    /// Decodes one Huffman symbol; needs at least 16 bits in the accumulator.
    #[inline(always)]
    fn symbol(&mut self, t: &Huffman) -> Result<u8, PhotoError> {
        let (len, sym) = t.lookup[self.peek_lookup()];
        if len > 0 {
            self.drop_bits(u32::from(len));
            return Ok(sym);
        }
        let bits = self.peek(16) as i32;
        for len in LOOKUP_BITS + 1..=16 {
            let code = bits >> (16 - len);
            if code <= t.maxcode[len as usize] {
                self.drop_bits(len);
                let i = (code + t.delta[len as usize]) as usize;
                return t
                    .symbols
                    .get(i)
                    .copied()
                    .ok_or_else(|| corrupt("bad Huffman code"));
            }
        }
        Err(corrupt("bad Huffman code"))
    }

    /// Reads `size` (1..=16) extra bits as a signed value (T.81 F.2.2.1 EXTEND).
    #[inline(always)]
    fn extend(&mut self, size: u32) -> i32 {
        let v = self.peek(size) as i32;
        self.drop_bits(size);
        if v < 1 << (size - 1) {
            v - (1 << size) + 1
        } else {
            v
        }
    }

    /// Skips to the restart marker that must come next, checks its number
    /// and starts afresh after it (T.81 E.1.4: restart resets the bit
    /// buffer and the DC predictions). Bytes before the marker are skipped,
    /// as libjpeg does.
    fn restart(&mut self, expected: u8) -> Result<(), PhotoError> {
        self.acc = 0;
        self.n = 0;
        self.pad = 0;
        self.at_marker = false;
        loop {
            match self.data.get(self.pos..self.pos + 2) {
                Some([0xFF, 0x00]) => self.pos += 2,
                Some([0xFF, 0xFF]) => self.pos += 1,
                Some([0xFF, m]) if *m == 0xD0 + expected => {
                    self.pos += 2;
                    return Ok(());
                }
                Some([0xFF, _]) => return Err(corrupt("missing restart marker")),
                Some(_) => self.pos += 1,
                None => return Err(corrupt("JPEG data ends early")),
            }
        }
    }
}

/// A frame component as SOF declares it: id, sampling factors (h, v) and
/// quantisation table (T.81 B.2.2).
type FrameComponent = (u8, usize, usize, usize);

/// One frame component as the scan needs it.
struct Component {
    h: usize,
    v: usize,
    dc_quant: i32,
    dc: usize,
    ac: usize,
}

/// What the marker segments before the first scan say, when the frame is
/// one this path takes.
struct Plan<'a> {
    width: usize,
    height: usize,
    comps: Vec<Component>,
    dc_tables: [Option<Huffman>; 4],
    ac_tables: [Option<Huffman>; 4],
    restart_interval: usize,
    scan: &'a [u8],
}

/// Decodes `bytes` at 1/8 scale, or returns `None` when the file is not of
/// the kind this path takes (see the module docs) or its frame is not the
/// `width` x `height` that the limits were checked against.
pub(super) fn decode_eighth(
    bytes: &[u8],
    width: u32,
    height: u32,
) -> Result<Option<Eighth>, PhotoError> {
    let Some(plan) = plan(bytes)? else {
        return Ok(None);
    };
    if (plan.width as u64, plan.height as u64) != (u64::from(width), u64::from(height)) {
        return Ok(None);
    }
    decode_scan(&plan).map(Some)
}

/// A frame header's width, height and components.
type Frame = (usize, usize, Vec<FrameComponent>);

/// What the marker segments read so far define. The scan uses the tables in
/// force when it starts.
#[derive(Default)]
struct Headers {
    huff: [[Option<Huffman>; 4]; 2],
    quant: [Option<i32>; 4],
    frame: Option<Frame>,
    restart_interval: usize,
    adobe: bool,
}

/// Walks the marker segments from SOI to the first SOS (T.81 B.2).
fn plan(bytes: &[u8]) -> Result<Option<Plan<'_>>, PhotoError> {
    let mut headers = Headers::default();
    let mut i = 2usize;
    loop {
        let Some((marker, seg, next)) = next_segment(bytes, i) else {
            return Ok(None);
        };
        match marker {
            // A second frame header: left to jpeg-decoder, which refuses it.
            0xC0 | 0xC1 if headers.frame.is_some() => return Ok(None),
            0xC0 | 0xC1 => {
                let Some(frame) = parse_frame_header(seg) else {
                    return Ok(None);
                };
                headers.frame = Some(frame);
            }
            // Other frame types, arithmetic tables, DNL, SOF after SOF.
            0xC2..=0xC3 | 0xC5..=0xCF | 0xDC => return Ok(None),
            0xC4 => {
                let read = read_huffman_tables(seg, &mut headers.huff)?;
                if !read {
                    return Ok(None);
                }
            }
            0xDB => {
                let read = read_quant_tables(seg, &mut headers.quant);
                if !read {
                    return Ok(None);
                }
            }
            0xDD => {
                let [r0, r1, ..] = seg else {
                    return Ok(None);
                };
                headers.restart_interval = usize::from(u16::from_be_bytes([*r0, *r1]));
            }
            0xEE if seg.starts_with(b"Adobe") => headers.adobe = true,
            0xDA => {
                let scan = bytes.get(next..).unwrap_or_default();
                return Ok(plan_scan(headers, seg, scan));
            }
            _ => {}
        }
        i = next;
    }
}

/// The marker at `i` (after any fill bytes), its segment's payload and where
/// the next marker starts; `None` when the bytes there are not a marker
/// segment this path reads (a standalone marker, a short or truncated
/// segment).
fn next_segment(bytes: &[u8], mut i: usize) -> Option<(u8, &[u8], usize)> {
    if bytes.get(i) != Some(&0xFF) {
        return None;
    }
    while bytes.get(i) == Some(&0xFF) {
        i += 1;
    }
    let &marker = bytes.get(i)?;
    i += 1;
    if matches!(marker, 0x01 | 0xD0..=0xD9) {
        return None;
    }
    let &[l0, l1] = bytes.get(i..i + 2)? else {
        return None;
    };
    let len = usize::from(u16::from_be_bytes([l0, l1]));
    let (true, Some(seg)) = (len >= 2, bytes.get(i + 2..i + len)) else {
        return None;
    };
    Some((marker, seg, i + len))
}

/// Parses an SOF0/SOF1 segment: 8-bit precision, size and components.
fn parse_frame_header(seg: &[u8]) -> Option<Frame> {
    let [8, y0, y1, x0, x1, nf, rest @ ..] = seg else {
        return None;
    };
    let nf = usize::from(*nf);
    let c = rest.get(..3 * nf)?;
    let comps = c
        .chunks_exact(3)
        .map(|c| {
            let (h, v) = (usize::from(c[1] >> 4), usize::from(c[1] & 15));
            (c[0], h, v, usize::from(c[2]))
        })
        .collect();
    let h = usize::from(u16::from_be_bytes([*y0, *y1]));
    let w = usize::from(u16::from_be_bytes([*x0, *x1]));
    Some((w, h, comps))
}

/// Reads the Huffman tables of a DHT segment into `huff`; `false` when one
/// is out of range or truncated.
fn read_huffman_tables(
    seg: &[u8],
    huff: &mut [[Option<Huffman>; 4]; 2],
) -> Result<bool, PhotoError> {
    let mut s = seg;
    while let [tc_th, rest @ ..] = s {
        let (class, id) = (usize::from(tc_th >> 4), usize::from(tc_th & 15));
        let (Some(counts), true) = (rest.get(..16), class < 2 && id < 4) else {
            return Ok(false);
        };
        let counts: [u8; 16] = counts.try_into().unwrap_or([0; 16]);
        let total: usize = counts.iter().map(|&c| usize::from(c)).sum();
        let Some(symbols) = rest.get(16..16 + total) else {
            return Ok(false);
        };
        huff[class][id] = Some(Huffman::new(&counts, symbols, class == 1)?);
        s = &rest[16 + total..];
    }
    Ok(true)
}

/// Reads the DC step of each quantisation table of a DQT segment into
/// `quant`; `false` when one is out of range or truncated.
fn read_quant_tables(seg: &[u8], quant: &mut [Option<i32>; 4]) -> bool {
    let mut s = seg;
    while let [pq_tq, rest @ ..] = s {
        let (wide, id) = (pq_tq >> 4 == 1, usize::from(pq_tq & 15));
        let size = if wide { 128 } else { 64 };
        let (Some(t), true) = (rest.get(..size), id < 4 && pq_tq >> 4 <= 1) else {
            return false;
        };
        // Q[0], the DC step, comes first in zig-zag order (T.81 B.2.4.1).
        quant[id] = Some(if wide {
            i32::from(u16::from_be_bytes([t[0], t[1]]))
        } else {
            i32::from(t[0])
        });
        s = &rest[size..];
    }
    true
}

/// The plan for the first scan (SOS segment `seg`, entropy data `scan`),
/// when the headers before it define everything it uses.
fn plan_scan<'a>(headers: Headers, seg: &[u8], scan: &'a [u8]) -> Option<Plan<'a>> {
    let (width, height, fc) = headers.frame?;
    let comps = bind_scan(&fc, seg, &headers.quant, headers.adobe)?;
    // Every table the scan names must be defined (jpeg-decoder
    // fills in the Motion-JPEG defaults instead; it does that on the fallback).
    let [dc_tables, ac_tables] = headers.huff;
    if comps
        .iter()
        .any(|c| dc_tables[c.dc].is_none() || ac_tables[c.ac].is_none())
    {
        return None;
    }
    Some(Plan {
        width,
        height,
        comps,
        dc_tables,
        ac_tables,
        restart_interval: headers.restart_interval,
        scan,
    })
}

/// Matches the first scan against the frame; `None` when this path does not
/// take the pair (see the module docs).
fn bind_scan(
    frame: &[FrameComponent],
    sos: &[u8],
    quant: &[Option<i32>; 4],
    adobe: bool,
) -> Option<Vec<Component>> {
    let nf = frame.len();
    if nf == 3 {
        // How jpeg-decoder 0.3.2 and libjpeg tell YCbCr from RGB
        // (`determine_color_transform`): ids 1,2,3 are YCbCr; the others
        // this path takes only without an Adobe segment and unless they spell RGB.
        let ids = (frame[0].0, frame[1].0, frame[2].0);
        let special = matches!(ids, (1, 34, 35) | (82, 71, 66) | (114, 103, 98));
        if ids != (1, 2, 3) && (adobe || special) {
            return None;
        }
    } else if nf != 1 {
        return None;
    }
    let hmax = frame.iter().map(|c| c.1).max()?;
    let vmax = frame.iter().map(|c| c.2).max()?;
    let units: usize = frame.iter().map(|c| c.1 * c.2).sum();
    let ok_factors = frame.iter().all(|&(_, h, v, _)| {
        (1..=4).contains(&h) && (1..=4).contains(&v) && hmax % h == 0 && vmax % v == 0
    });
    // At most 10 blocks in an MCU (T.81 B.2.3).
    if !ok_factors || (nf > 1 && units > 10) {
        return None;
    }
    let [ns, rest @ ..] = sos else {
        return None;
    };
    let (sel, tail) = rest.split_at_checked(2 * usize::from(*ns))?;
    if usize::from(*ns) != nf || tail.get(..3)? != [0, 63, 0] {
        return None;
    }
    frame
        .iter()
        .zip(sel.chunks_exact(2))
        .map(|(&(id, h, v, tq), s)| {
            let (dc, ac) = (usize::from(s[1] >> 4), usize::from(s[1] & 15));
            // A single-component scan is not interleaved: one block per MCU (T.81 A.2.2).
            let (h, v) = if nf == 1 { (1, 1) } else { (h, v) };
            (s[0] == id && dc < 4 && ac < 4).then_some(Component {
                h,
                v,
                dc_quant: (*quant.get(tq)?)?,
                dc,
                ac,
            })
        })
        .collect()
}

/// Walks one block's Huffman codes and returns its DC prediction after it
/// (T.81 F.2.2.1 and F.2.2.2, the AC values themselves skipped).
#[inline(always)]
fn block(bits: &mut Bits, dc: &Huffman, ac: &Huffman, pred: &mut i16) -> Result<i16, PhotoError> {
    // A symbol takes at most 16 bits and its extra bits at most 15; one
    // refill leaves more than 56.
    if bits.n < 32 {
        bits.refill();
    }
    let size = bits.symbol(dc)?;
    match size {
        0 => {}
        1..=11 => *pred = pred.wrapping_add(bits.extend(u32::from(size)) as i16),
        // T.81 Table F.1: DC differences have at most 11 bits.
        _ => return Err(corrupt("bad DC difference size")),
    }
    let mut k = 1u32;
    while k < 64 {
        if bits.n < 32 {
            bits.refill();
        }
        let (drop, step) = ac.skip[bits.peek_lookup()];
        if drop > 0 {
            bits.drop_bits(u32::from(drop));
            if step == 0 {
                break;
            }
            k += u32::from(step);
            continue;
        }
        let rs = bits.symbol(ac)?;
        let (run, size) = (u32::from(rs >> 4), u32::from(rs & 15));
        if size == 0 {
            if run == 15 {
                k += 16;
                continue;
            }
            break;
        }
        bits.drop_bits(size);
        k += run + 1;
    }
    Ok(*pred)
}

/// Block counts of the scan (MCUs across and down, largest sampling
/// factors) and of the 1/8-scale output.
struct Grid {
    hmax: usize,
    vmax: usize,
    mcux: usize,
    mcuy: usize,
    sw: usize,
    sh: usize,
}

fn decode_scan(plan: &Plan) -> Result<Eighth, PhotoError> {
    let hmax = plan.comps.iter().map(|c| c.h).max().unwrap_or(1);
    let vmax = plan.comps.iter().map(|c| c.v).max().unwrap_or(1);
    let grid = Grid {
        hmax,
        vmax,
        mcux: plan.width.div_ceil(8 * hmax),
        mcuy: plan.height.div_ceil(8 * vmax),
        sw: plan.width.div_ceil(8),
        sh: plan.height.div_ceil(8),
    };
    let (planes, full_mcus) = decode_planes(plan, &grid)?;
    let rgb = if plan.comps.len() == 1 {
        grey_to_rgb(&grid, &planes[0])
    } else {
        ycbcr_planes_to_rgb(plan, &grid, &planes)
    };
    Ok(Eighth {
        width: grid.sw as u32,
        height: grid.sh as u32,
        rgb,
        covered: covered_size(plan, &grid, full_mcus),
    })
}

/// The full-scale extent of the first `full_mcus` MCUs (in raster order):
/// `None` when that is every MCU of the frame.
fn covered_size(plan: &Plan, grid: &Grid, full_mcus: usize) -> Option<(u32, u32)> {
    if full_mcus >= grid.mcux * grid.mcuy {
        return None;
    }
    let (mw, mh) = (8 * grid.hmax, 8 * grid.vmax);
    let rows = full_mcus / grid.mcux;
    let (w, h) = if rows == 0 {
        ((full_mcus * mw).min(plan.width), mh.min(plan.height))
    } else {
        (plan.width, (rows * mh).min(plan.height))
    };
    Some((w as u32, h as u32))
}

/// Decodes every MCU of the scan into one plane of 1/8-scale samples per
/// component; also how many MCUs, in raster order, were decoded before the
/// data ran out (all of them for a sound file). Kept as one piece: it is
/// the hot loop the photo bench measures, and its nested loops stay
/// exactly as profiled (the coverage check is one comparison per MCU).
fn decode_planes(plan: &Plan, grid: &Grid) -> Result<(Vec<Vec<u8>>, usize), PhotoError> {
    let (mcux, mcuy) = (grid.mcux, grid.mcuy);
    let mut planes: Vec<Vec<u8>> = plan
        .comps
        .iter()
        .map(|c| vec![0u8; mcux * c.h * mcuy * c.v])
        .collect();
    let tables: Vec<(&Huffman, &Huffman)> = plan
        .comps
        .iter()
        .map(|c| match (&plan.dc_tables[c.dc], &plan.ac_tables[c.ac]) {
            (Some(d), Some(a)) => Ok((d, a)),
            _ => Err(corrupt("undefined Huffman table")),
        })
        .collect::<Result<_, _>>()?;
    let mut bits = Bits::new(plan.scan);
    let mut preds = [0i16; 3];
    let mut next_rst = 0u8;
    let ri = plan.restart_interval;
    let mut full = mcux * mcuy;
    for my in 0..mcuy {
        for mx in 0..mcux {
            let m = my * mcux + mx;
            if ri > 0 && m > 0 && m % ri == 0 {
                bits.restart(next_rst)?;
                next_rst = (next_rst + 1) & 7;
                preds = [0; 3];
            }
            for (ci, c) in plan.comps.iter().enumerate() {
                let (dc, ac) = tables[ci];
                let pw = mcux * c.h;
                for by in 0..c.v {
                    for bx in 0..c.h {
                        let p = block(&mut bits, dc, ac, &mut preds[ci])?;
                        // The 1x1 IDCT: (DC x Q[0] + 128 x 8) / 8, clamped
                        // (jpeg-decoder 0.3.2 `dequantize_and_idct_block_1x1`).
                        let s = (i32::from(p).wrapping_mul(c.dc_quant) + 1024) / 8;
                        planes[ci][(my * c.v + by) * pw + mx * c.h + bx] = s.clamp(0, 255) as u8;
                    }
                }
            }
            if full > m && bits.overran() {
                full = m;
            }
        }
        if bits.ended {
            return Err(corrupt("JPEG data ends early"));
        }
    }
    Ok((planes, full))
}

/// RGB of a grey scan: each sample repeated in the three channels.
fn grey_to_rgb(grid: &Grid, plane: &[u8]) -> Vec<u8> {
    let sw = grid.sw;
    let mut rgb = vec![0u8; sw * grid.sh * 3];
    let pw = grid.mcux;
    for (y, row) in rgb.chunks_exact_mut(sw * 3).enumerate() {
        for (px, &l) in row.chunks_exact_mut(3).zip(&plane[y * pw..]) {
            px.fill(l);
        }
    }
    rgb
}

/// RGB of a YCbCr scan, chroma replicated to the luma grid: output pixel x
/// reads sample x*h/hmax.
fn ycbcr_planes_to_rgb(plan: &Plan, grid: &Grid, planes: &[Vec<u8>]) -> Vec<u8> {
    let Grid {
        hmax,
        vmax,
        mcux,
        sw,
        sh,
        ..
    } = *grid;
    let mut rgb = vec![0u8; sw * sh * 3];
    let cols: Vec<Vec<usize>> = plan
        .comps
        .iter()
        .map(|c| (0..sw).map(|x| x * c.h / hmax).collect())
        .collect();
    for (y, row) in rgb.chunks_exact_mut(sw * 3).enumerate() {
        let line = |ci: usize| {
            let c = &plan.comps[ci];
            let start = (y * c.v / vmax) * mcux * c.h;
            &planes[ci][start..start + mcux * c.h]
        };
        let (ly, lb, lr) = (line(0), line(1), line(2));
        for (x, px) in row.chunks_exact_mut(3).enumerate() {
            let (r, g, b) = ycbcr_to_rgb(ly[cols[0][x]], lb[cols[1][x]], lr[cols[2][x]]);
            px.copy_from_slice(&[r, g, b]);
        }
    }
    rgb
}

/// JFIF YCbCr to RGB in 20-bit fixed point, the same arithmetic as
/// jpeg-decoder 0.3.2's `ycbcr_to_rgb` (coefficients from JFIF 1.02 section 7).
fn ycbcr_to_rgb(y: u8, cb: u8, cr: u8) -> (u8, u8, u8) {
    const SHIFT: i32 = 20;
    let f = |x: f32| (x * (1 << SHIFT) as f32 + 0.5) as i32;
    let y = i32::from(y) * (1 << SHIFT) + (1 << (SHIFT - 1));
    let (cb, cr) = (i32::from(cb) - 128, i32::from(cr) - 128);
    let c = |v: i32| (v >> SHIFT).clamp(0, 255) as u8;
    (
        c(y + f(1.402) * cr),
        c(y - f(0.34414) * cb - f(0.71414) * cr),
        c(y + f(1.772) * cb),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use jpeg_decoder::{Decoder, PixelFormat};
    use jpeg_encoder::{ColorType, Encoder, SamplingFactor};

    /// A size that is not a multiple of 8 or 16, so partial MCUs are decoded.
    const W: u16 = 203;
    const H: u16 = 157;

    /// Gradients plus a xorshift texture, so blocks carry many AC codes.
    fn pixels(channels: usize, grey_rgb: bool) -> Vec<u8> {
        let mut s: u32 = 0x1234_5678;
        let mut v = Vec::new();
        for y in 0..usize::from(H) {
            for x in 0..usize::from(W) {
                s ^= s << 13;
                s ^= s >> 17;
                s ^= s << 5;
                let n = (s & 63) as usize;
                let l = ((x + 2 * y + n) % 256) as u8;
                match (channels, grey_rgb) {
                    (1, _) => v.push(l),
                    (_, true) => v.extend_from_slice(&[l, l, l]),
                    // The texture shared by R, G and B (so it stays in
                    // luma) plus smooth colour gradients.
                    _ => {
                        let t = l / 2;
                        v.extend_from_slice(&[t + (x / 2) as u8, t + (y / 2) as u8, t + 40]);
                    }
                }
            }
        }
        v
    }

    fn encode(channels: usize, grey_rgb: bool, sampling: SamplingFactor, restart: u16) -> Vec<u8> {
        let mut out = Vec::new();
        let mut e = Encoder::new(&mut out, 90);
        e.set_sampling_factor(sampling);
        e.set_restart_interval(restart);
        let ct = if channels == 1 {
            ColorType::Luma
        } else {
            ColorType::Rgb
        };
        e.encode(&pixels(channels, grey_rgb), W, H, ct)
            .expect("encode");
        out
    }

    /// jpeg-decoder 0.3.2 at 1/8 scale, as 8-bit RGB.
    fn reference(bytes: &[u8]) -> Vec<u8> {
        let mut d = Decoder::new(bytes);
        d.scale(1, 1).expect("scale");
        let px = d.decode().expect("decode");
        match d.info().expect("info").pixel_format {
            PixelFormat::L8 => px.iter().flat_map(|&l| [l; 3]).collect(),
            PixelFormat::RGB24 => px,
            f => panic!("{f:?}"),
        }
    }

    fn max_diff(a: &[u8], b: &[u8]) -> u8 {
        assert_eq!(a.len(), b.len());
        a.iter()
            .zip(b)
            .map(|(x, y)| x.abs_diff(*y))
            .max()
            .unwrap_or(0)
    }

    fn eighth(bytes: &[u8]) -> Eighth {
        let e = decode_eighth(bytes, W.into(), H.into())
            .expect("decode")
            .expect("taken by this path");
        assert_eq!((e.width, e.height), (26, 20), "203/8 and 157/8 rounded up");
        e
    }

    #[test]
    fn grey_matches_jpeg_decoder_exactly() {
        // Check values: jpeg-decoder 0.3.2's own 1/8 decode of the same file.
        let jpg = encode(1, false, SamplingFactor::F_1_1, 0);
        assert_eq!(eighth(&jpg).rgb, reference(&jpg));
    }

    #[test]
    fn full_chroma_matches_jpeg_decoder() {
        // 4:4:4 needs no upsampling, so only the colour conversion could
        // differ (jpeg-decoder may take its SIMD path: at most 1 apart).
        let jpg = encode(3, false, SamplingFactor::F_1_1, 0);
        assert!(max_diff(&eighth(&jpg).rgb, &reference(&jpg)) <= 1);
    }

    #[test]
    fn subsampled_with_restarts_matches_jpeg_decoder() {
        // Grey content in a 4:2:0 file: chroma is flat, so replicating it
        // and jpeg-decoder's triangle upsampling agree; restart markers every
        // 3 MCUs exercise the resynchronisation and the predictor reset.
        let jpg = encode(3, true, SamplingFactor::F_2_2, 3);
        assert!(jpg.windows(2).any(|w| w == [0xFF, 0xD2]), "has RST2");
        assert!(max_diff(&eighth(&jpg).rgb, &reference(&jpg)) <= 1);
        // Coloured 4:2:0 with smooth chroma: triangle upsampling moves a
        // sample a quarter of the way to its neighbour (about 2 levels on these
        // gradients), replication does not; a misplaced chroma sample would
        // also show as a bias in one direction.
        let jpg = encode(3, false, SamplingFactor::F_2_2, 5);
        let (a, b) = (eighth(&jpg).rgb, reference(&jpg));
        for ch in 0..3 {
            let (abs, signed) =
                a.iter()
                    .zip(&b)
                    .skip(ch)
                    .step_by(3)
                    .fold((0i64, 0i64), |(s, d), (x, y)| {
                        let e = i64::from(*x) - i64::from(*y);
                        (s + e.abs(), d + e)
                    });
            let n = (a.len() / 3) as f64;
            let (abs, signed) = (abs as f64 / n, signed as f64 / n);
            assert!(
                abs < 3.0 && signed.abs() < 1.0,
                "channel {ch}: {abs} {signed}"
            );
        }
    }

    #[test]
    fn other_layouts_are_left_to_jpeg_decoder() {
        let mut out = Vec::new();
        let mut e = Encoder::new(&mut out, 90);
        e.set_progressive(true);
        e.encode(&pixels(3, false), W, H, ColorType::Rgb)
            .expect("encode");
        assert!(
            decode_eighth(&out, W.into(), H.into())
                .expect("no error")
                .is_none()
        );
        // An Adobe APP14 segment with odd component ids: colour space unclear.
        let mut jpg = encode(3, false, SamplingFactor::F_2_2, 0);
        let app14 = [
            0xFF, 0xEE, 0, 14, b'A', b'd', b'o', b'b', b'e', 0, 100, 0, 0, 0, 0, 0,
        ];
        jpg.splice(2..2, app14);
        let sof = jpg.windows(2).position(|w| w == [0xFF, 0xC0]).expect("sof");
        jpg[sof + 10] = 7;
        assert!(
            decode_eighth(&jpg, W.into(), H.into())
                .expect("no error")
                .is_none()
        );
    }

    #[test]
    fn damaged_scans_are_errors() {
        let jpg = encode(3, false, SamplingFactor::F_2_2, 4);
        // Cut inside the entropy-coded data: no marker, the bytes run out.
        assert!(decode_eighth(&jpg[..jpg.len() * 2 / 3], W.into(), H.into()).is_err());
        // RST1 where RST0 is due.
        let mut bad = jpg.clone();
        let rst0 = bad
            .windows(2)
            .position(|w| w == [0xFF, 0xD0])
            .expect("rst0");
        bad[rst0 + 1] = 0xD1;
        assert!(decode_eighth(&bad, W.into(), H.into()).is_err());
    }

    #[test]
    fn random_damage_never_panics() {
        // Untrusted input: whatever bytes are changed, the decoder answers
        // with an image, an error or "not mine", and never panics (the
        // intake catches panics, but one here would be a bug of ours).
        let base = encode(3, false, SamplingFactor::F_2_2, 4);
        let mut s: u64 = 0x9E37_79B9_7F4A_7C15;
        let mut next = move || {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            s
        };
        for round in 0..400 {
            let mut jpg = base.clone();
            for _ in 0..1 + round % 8 {
                let at = (next() as usize) % jpg.len();
                jpg[at] = next() as u8;
            }
            if round % 5 == 0 {
                let cut = (next() as usize) % jpg.len();
                jpg.truncate(cut);
            }
            let r = std::panic::catch_unwind(|| decode_eighth(&jpg, W.into(), H.into()));
            assert!(r.is_ok(), "round {round}: the decoder panicked");
        }
    }
}
