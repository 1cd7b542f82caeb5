//! Colours and fill patterns for alert sources, chosen to stay apart for colour-blind readers
//! and in black-and-white print: the Okabe–Ito colour set (Okabe & Ito 2008, "Color Universal
//! Design"; as tabulated by Wong 2011, Nature Methods 8:441) without black, which marks the
//! centroid, combined with three fill patterns. Source `i` of the sorted list gets colour
//! `i mod 7` and pattern `i mod 3`, so the first 21 sources all differ. A source missing from
//! the palette is drawn in neutral grey.

use super::raster::Canvas;
use groundproof_sync::bundle::BundleEvent;

/// Okabe–Ito colours, black left out, yellow last (weakest on white paper).
pub const SOURCE_COLOURS: [[u8; 3]; 7] = [
    [0, 114, 178],   // blue
    [230, 159, 0],   // orange
    [0, 158, 115],   // bluish green
    [213, 94, 0],    // vermillion
    [204, 121, 167], // reddish purple
    [86, 180, 233],  // sky blue
    [240, 228, 66],  // yellow
];

/// Colour of alert pixels whose source is not in the palette.
pub const UNKNOWN_SOURCE_COLOUR: [u8; 3] = [153, 153, 153];

/// How a source's pixel squares are filled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pattern {
    /// Every pixel in the colour.
    Solid,
    /// Diagonal stripes two pixels wide, colour on a light tint.
    Stripes,
    /// A 2×2 checker board, colour on a light tint.
    Checks,
}

/// Colour plus pattern of one source.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FillStyle {
    /// Full colour (RGB).
    pub colour: [u8; 3],
    /// Fill pattern.
    pub pattern: Pattern,
}

impl FillStyle {
    /// The colour painted at image pixel (`x`, `y`).
    pub fn paint(&self, x: i64, y: i64) -> [u8; 3] {
        let on = match self.pattern {
            Pattern::Solid => true,
            Pattern::Stripes => (x + y).rem_euclid(4) < 2,
            Pattern::Checks => (x.div_euclid(2) + y.div_euclid(2)).rem_euclid(2) == 0,
        };
        if on { self.colour } else { self.tint() }
    }

    /// The light tint between pattern marks: 40 % colour, 60 % white.
    pub fn tint(&self) -> [u8; 3] {
        self.colour.map(|c| {
            let mixed = (u16::from(c) * 2 + 255 * 3) / 5;
            u8::try_from(mixed).unwrap_or(u8::MAX)
        })
    }

    /// CSS hex notation of the colour, e.g. `#0072b2`.
    pub fn hex(&self) -> String {
        let [r, g, b] = self.colour;
        format!("#{r:02x}{g:02x}{b:02x}")
    }

    /// A small square PNG swatch of this style with a dark border, for legends.
    pub fn swatch_png(&self, size_px: u32) -> Result<Vec<u8>, super::SheetError> {
        let size = size_px.clamp(4, 64);
        let mut c = Canvas::new(size, size, [255, 255, 255]);
        let last = i64::from(size) - 1;
        c.fill_rect_with(0, 0, last, last, |x, y| self.paint(x, y));
        for (a, b) in [((0, 0), (last, 0)), ((0, last), (last, last))] {
            c.fill_rect(a.0, a.1, b.0, b.1, [51, 51, 51]);
        }
        c.fill_rect(0, 0, 0, last, [51, 51, 51]);
        c.fill_rect(last, 0, last, last, [51, 51, 51]);
        c.to_png()
    }
}

/// The sources of a sheet (or one preview) in a fixed order, each with its [`FillStyle`].
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct SourcePalette {
    sources: Vec<String>,
}

impl SourcePalette {
    /// A palette over `sources`, sorted and without duplicates (so the result does not
    /// depend on the order they were given in).
    pub fn new<I, S>(sources: I) -> Self
    where
        I: IntoIterator<Item = S>,
        S: AsRef<str>,
    {
        let mut sources: Vec<String> = sources.into_iter().map(|s| s.as_ref().to_owned()).collect();
        sources.sort();
        sources.dedup();
        SourcePalette { sources }
    }

    /// A palette over every source of `events`: use the same palette for all previews of
    /// one sheet so that a source has one colour throughout.
    pub fn for_events<'a>(events: impl IntoIterator<Item = &'a BundleEvent>) -> Self {
        Self::new(events.into_iter().flat_map(|e| e.sources.iter()))
    }

    /// The style of `source`; grey and solid for a source not in the palette.
    pub fn style(&self, source: &str) -> FillStyle {
        match self.index(source) {
            Some(i) => FillStyle {
                colour: SOURCE_COLOURS[i % SOURCE_COLOURS.len()],
                pattern: [Pattern::Solid, Pattern::Stripes, Pattern::Checks][i % 3],
            },
            None => FillStyle {
                colour: UNKNOWN_SOURCE_COLOUR,
                pattern: Pattern::Solid,
            },
        }
    }

    /// Position of `source` in the palette.
    pub fn index(&self, source: &str) -> Option<usize> {
        self.sources
            .binary_search_by(|s| s.as_str().cmp(source))
            .ok()
    }

    /// The sources in palette order.
    pub fn sources(&self) -> &[String] {
        &self.sources
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn okabe_ito_values() {
        // Wong 2011 (Nature Methods 8:441), Fig. 2: blue 0,114,178; orange 230,159,0;
        // bluish green 0,158,115; vermillion 213,94,0; reddish purple 204,121,167;
        // sky blue 86,180,233; yellow 240,228,66.
        let p = SourcePalette::new(["radar-10m", "optical-10m", "optical-30m", "radar-10m"]);
        assert_eq!(p.sources(), ["optical-10m", "optical-30m", "radar-10m"]);
        assert_eq!(p.style("optical-10m").hex(), "#0072b2");
        assert_eq!(p.style("optical-30m").hex(), "#e69f00");
        assert_eq!(p.style("radar-10m").hex(), "#009e73");
        assert_eq!(p.style("optical-30m").pattern, Pattern::Stripes);
        assert_eq!(p.style("elsewhere").colour, UNKNOWN_SOURCE_COLOUR);
    }

    #[test]
    fn first_21_sources_all_differ() {
        let names: Vec<String> = (0..21).map(|i| format!("source-{i:02}")).collect();
        let p = SourcePalette::new(&names);
        let styles: Vec<FillStyle> = names.iter().map(|n| p.style(n)).collect();
        for (i, a) in styles.iter().enumerate() {
            for b in &styles[..i] {
                assert_ne!(a, b);
            }
        }
    }

    #[test]
    fn patterns_and_tint() {
        let s = FillStyle {
            colour: [0, 114, 178],
            pattern: Pattern::Stripes,
        };
        // (0*2 + 255*3)/5 = 153; (114*2 + 765)/5 = 198.6 -> 198; (178*2 + 765)/5 = 224.2 -> 224.
        assert_eq!(s.tint(), [153, 198, 224]);
        assert_eq!(s.paint(0, 0), s.colour);
        assert_eq!(s.paint(1, 1), s.tint());
        let swatch = s.swatch_png(12).expect("encodes");
        let img = image::load_from_memory(&swatch).expect("decodes").to_rgb8();
        assert_eq!(img.dimensions(), (12, 12));
        assert_eq!(img.get_pixel(0, 0).0, [51, 51, 51]);
    }
}
