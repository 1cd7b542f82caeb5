//! A tiny built-in 5×7 bitmap font for the few characters the preview images need (the
//! north arrow's `N` and scale-bar labels such as `500 m` or `2 km`), so that drawing needs
//! no font file. Glyph shapes follow the classic 5×7 dot-matrix character set (common
//! practice; drawn from memory).

use super::raster::Canvas;

/// Width of a glyph in font pixels.
pub const GLYPH_W: u32 = 5;
/// Height of a glyph in font pixels.
pub const GLYPH_H: u32 = 7;
/// Advance from one glyph to the next, in font pixels (one blank column).
pub const ADVANCE: u32 = GLYPH_W + 1;

/// Rows top to bottom; bit 4 is the leftmost column. `None` for an unknown character.
fn glyph(c: char) -> Option<[u8; 7]> {
    Some(match c {
        '0' => [0x0E, 0x11, 0x13, 0x15, 0x19, 0x11, 0x0E],
        '1' => [0x04, 0x0C, 0x04, 0x04, 0x04, 0x04, 0x0E],
        '2' => [0x0E, 0x11, 0x01, 0x02, 0x04, 0x08, 0x1F],
        '3' => [0x1F, 0x02, 0x04, 0x02, 0x01, 0x11, 0x0E],
        '4' => [0x02, 0x06, 0x0A, 0x12, 0x1F, 0x02, 0x02],
        '5' => [0x1F, 0x10, 0x1E, 0x01, 0x01, 0x11, 0x0E],
        '6' => [0x06, 0x08, 0x10, 0x1E, 0x11, 0x11, 0x0E],
        '7' => [0x1F, 0x01, 0x02, 0x04, 0x08, 0x08, 0x08],
        '8' => [0x0E, 0x11, 0x11, 0x0E, 0x11, 0x11, 0x0E],
        '9' => [0x0E, 0x11, 0x11, 0x0F, 0x01, 0x02, 0x0C],
        'N' => [0x11, 0x19, 0x15, 0x13, 0x11, 0x11, 0x11],
        'k' => [0x10, 0x10, 0x12, 0x14, 0x18, 0x14, 0x12],
        'm' => [0x00, 0x00, 0x1A, 0x15, 0x15, 0x11, 0x11],
        '.' => [0x00, 0x00, 0x00, 0x00, 0x00, 0x0C, 0x0C],
        ' ' => [0; 7],
        _ => return None,
    })
}

/// Width in image pixels of `text` drawn at `scale` (no trailing blank column).
pub fn text_width(text: &str, scale: u32) -> u32 {
    let n = u32::try_from(text.chars().count()).unwrap_or(u32::MAX);
    if n == 0 {
        0
    } else {
        n.saturating_mul(ADVANCE)
            .saturating_sub(1)
            .saturating_mul(scale)
    }
}

/// Draws `text` with its top-left corner at (`x`, `y`), each font pixel a `scale`×`scale`
/// square. Unknown characters are drawn as a hollow box so that nothing is silently lost.
pub fn draw_text(canvas: &mut Canvas, x: i64, y: i64, text: &str, scale: u32, colour: [u8; 3]) {
    let s = i64::from(scale.max(1));
    let box_glyph = [0x1F, 0x11, 0x11, 0x11, 0x11, 0x11, 0x1F];
    for (i, c) in text.chars().enumerate() {
        let rows = glyph(c).unwrap_or(box_glyph);
        let gx = x + i64::try_from(i).unwrap_or(i64::MAX / 8) * i64::from(ADVANCE) * s;
        for (row, bits) in rows.iter().enumerate() {
            for col in 0..GLYPH_W {
                if bits & (1 << (GLYPH_W - 1 - col)) != 0 {
                    let px = gx + i64::from(col) * s;
                    let py = y + i64::try_from(row).unwrap_or(0) * s;
                    canvas.fill_rect(px, py, px + s - 1, py + s - 1, colour);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_label_character_has_a_glyph() {
        // Characters used by the north arrow and by every scale label the preview can write.
        for c in "0123456789Nkm. ".chars() {
            assert!(glyph(c).is_some(), "{c:?}");
        }
        assert!(glyph('Z').is_none());
    }

    #[test]
    fn glyphs_fit_five_columns() {
        for c in "0123456789Nkm.".chars() {
            let rows = glyph(c).expect("known glyph");
            assert!(rows.iter().all(|r| *r < 0x20), "{c:?}");
            assert!(rows.iter().any(|r| *r != 0), "{c:?} is blank");
        }
    }

    #[test]
    fn width_and_drawing() {
        // "N" at scale 2 covers 10x14 pixels; "10 m" is 4 glyphs: 4*6-1 = 23 columns.
        assert_eq!(text_width("N", 2), 10);
        assert_eq!(text_width("10 m", 1), 23);
        assert_eq!(text_width("", 3), 0);
        let mut c = Canvas::new(20, 20, [255, 255, 255]);
        draw_text(&mut c, 1, 1, "N", 2, [0, 0, 0]);
        // Top-left dot of 'N' (row 0 bit 4) and the blank centre of row 0 (bit 2).
        assert_eq!(c.get(1, 1), Some([0, 0, 0]));
        assert_eq!(c.get(2, 2), Some([0, 0, 0]));
        assert_eq!(c.get(5, 1), Some([255, 255, 255]));
    }
}
