//! Colours: the Okabe–Ito colour-blind-safe palette (Okabe & Ito 2008,
//! "Color Universal Design", <https://jfly.uni-koeln.de/color/>), split in
//! two roles that never share a hue, the text colours (each must pass WCAG
//! AA, 4.5:1, on white), and the WCAG 2.x contrast ratio used to check them.
//!
//! # Roles (one meaning per colour, everywhere)
//!
//! - **Status colours** ([`status_colour`]): six of the eight hues, one per
//!   event status (grey for "unvisited"). Only a status is ever drawn in
//!   them: map footprints, event badges, a bar series that *is* a status
//!   (confirmed events). An element drawn in a status colour carries
//!   `data-status="…"` naming its status, so tests can check the role.
//! - **Series colours** ([`SERIES`]): the three remaining Okabe–Ito hues
//!   (black, sky blue, orange). Lines add dash patterns and bars add
//!   hatching past the third series, so up to twelve series stay apart, in
//!   greyscale print too.
//!
//! The other map marks (start, route, zones) use black, orange and greys,
//! never a status hue. Pages reuse [`status_colour`] for their badges
//! (`server/static/app.css`, checked by a test here).
//!
//! Contrast note: the Okabe–Ito hues are used only for fills, strokes and
//! swatches, never for text; every label is drawn in `TEXT` or
//! `TEXT_MUTED`, and `contrast_ratio` guards both (see the tests).

use std::fmt;

use crate::domain::EventStatus;

/// An sRGB colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Rgb(pub u8, pub u8, pub u8);

impl Rgb {
    /// Parse `#rrggbb` (or `rrggbb`); `None` for anything else.
    pub fn from_hex(s: &str) -> Option<Rgb> {
        let h = s.strip_prefix('#').unwrap_or(s);
        if h.len() != 6 || !h.is_ascii() {
            return None;
        }
        let c = |i: usize| u8::from_str_radix(h.get(i..i + 2)?, 16).ok();
        Some(Rgb(c(0)?, c(2)?, c(4)?))
    }

    /// `#rrggbb`.
    pub fn hex(self) -> HexColour {
        HexColour(self)
    }

    /// WCAG 2.x relative luminance (sRGB, 0 for black to 1 for white).
    pub fn relative_luminance(self) -> f64 {
        let lin = |v: u8| {
            let c = f64::from(v) / 255.0;
            if c <= 0.039_28 {
                c / 12.92
            } else {
                ((c + 0.055) / 1.055).powf(2.4)
            }
        };
        0.2126 * lin(self.0) + 0.7152 * lin(self.1) + 0.0722 * lin(self.2)
    }
}

/// Display wrapper that prints `#rrggbb`.
#[derive(Debug, Clone, Copy)]
pub struct HexColour(Rgb);

impl fmt::Display for HexColour {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "#{:02x}{:02x}{:02x}", self.0.0, self.0.1, self.0.2)
    }
}

/// WCAG 2.x contrast ratio (L1 + 0.05) / (L2 + 0.05), from 1 to 21.
pub fn contrast_ratio(fg: Rgb, bg: Rgb) -> f64 {
    let (a, b) = (fg.relative_luminance(), bg.relative_luminance());
    let (hi, lo) = if a >= b { (a, b) } else { (b, a) };
    (hi + 0.05) / (lo + 0.05)
}

/// Main text colour.
pub const TEXT: Rgb = Rgb(0x1a, 0x1a, 0x1a);
/// Secondary text (notes, "no data").
pub const TEXT_MUTED: Rgb = Rgb(0x59, 0x59, 0x59);
/// Every colour any chart uses for text.
pub const TEXT_COLOURS: [Rgb; 2] = [TEXT, TEXT_MUTED];
/// Background the charts draw on.
pub const BACKGROUND: Rgb = Rgb(0xff, 0xff, 0xff);

/// Axis lines and tick marks.
pub const AXIS: Rgb = Rgb(0x4d, 0x4d, 0x4d);
/// Gridlines.
pub const GRID: Rgb = Rgb(0xdd, 0xdd, 0xdd);
/// Zone fill on the map.
pub const ZONE_FILL: Rgb = Rgb(0xf3, 0xf3, 0xec);

/// Okabe–Ito (Okabe & Ito 2008, "Color Universal Design") hues.
pub const BLACK: Rgb = Rgb(0x00, 0x00, 0x00);
pub const ORANGE: Rgb = Rgb(0xe6, 0x9f, 0x00);
pub const SKY_BLUE: Rgb = Rgb(0x56, 0xb4, 0xe9);
pub const BLUISH_GREEN: Rgb = Rgb(0x00, 0x9e, 0x73);
pub const YELLOW: Rgb = Rgb(0xf0, 0xe4, 0x42);
pub const BLUE: Rgb = Rgb(0x00, 0x72, 0xb2);
pub const VERMILLION: Rgb = Rgb(0xd5, 0x5e, 0x00);
pub const REDDISH_PURPLE: Rgb = Rgb(0xcc, 0x79, 0xa7);
/// Neutral grey for "not yet known" (a common companion to Okabe–Ito).
pub const GREY: Rgb = Rgb(0x99, 0x99, 0x99);

/// Fill of an event status: the only place a status gets a colour.
pub fn status_colour(s: EventStatus) -> Rgb {
    match s {
        EventStatus::Unvisited => GREY,
        EventStatus::NotReached => REDDISH_PURPLE,
        EventStatus::Confirmed => VERMILLION,
        EventStatus::FalseAlarm => BLUISH_GREEN,
        EventStatus::Inconclusive => YELLOW,
        EventStatus::Disputed => BLUE,
    }
}

/// Every status colour, in the order of [`EventStatus::ALL`].
pub fn status_colours() -> Vec<(EventStatus, Rgb)> {
    EventStatus::ALL
        .iter()
        .map(|&s| (s, status_colour(s)))
        .collect()
}

/// The status a colour stands for, if it is a status colour.
pub fn status_of_colour(c: Rgb) -> Option<EventStatus> {
    EventStatus::ALL
        .iter()
        .copied()
        .find(|&s| status_colour(s) == c)
}

/// Series colours in order: the Okabe–Ito hues no status uses. Series past
/// the third reuse them with another dash (lines) or hatching (bars).
pub const SERIES: [Rgb; 3] = [BLACK, SKY_BLUE, ORANGE];

/// Dash patterns paired with series colours so lines stay apart in
/// greyscale print ("none" is solid).
pub const DASHES: [&str; 4] = ["none", "6 3", "2 2", "8 3 2 3"];

/// Colour of series `i`.
pub fn series_colour(i: usize) -> Rgb {
    SERIES[i % SERIES.len()]
}

/// Dash pattern of series `i`: solid for the first three, then the next
/// pattern each time the colours come round again.
pub fn series_dash(i: usize) -> &'static str {
    DASHES[(i / SERIES.len()) % DASHES.len()]
}

/// Hatching of bar series `i`: `None` (solid) for the first three, then
/// the angle in degrees of its diagonal lines.
pub fn series_hatch(i: usize) -> Option<u32> {
    match (i / SERIES.len()) % 4 {
        0 => None,
        1 => Some(45),
        2 => Some(135),
        _ => Some(90),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn contrast_matches_wcag_reference_points() {
        // 21:1 and 1:1 follow from the WCAG 2.1 definition of contrast ratio.
        let white = BACKGROUND;
        assert!((contrast_ratio(BLACK, white) - 21.0).abs() < 1e-9);
        assert!((contrast_ratio(white, white) - 1.0).abs() < 1e-12);
        // #767676 on white is 4.54:1 and #777777 is 4.48:1 (recalled from memory:
        // the commonly quoted lightest grey that passes AA on white).
        assert!((contrast_ratio(Rgb(0x76, 0x76, 0x76), white) - 4.54).abs() < 0.01);
        assert!((contrast_ratio(Rgb(0x77, 0x77, 0x77), white) - 4.48).abs() < 0.01);
        // Order of arguments does not matter.
        assert_eq!(
            contrast_ratio(white, TEXT_MUTED),
            contrast_ratio(TEXT_MUTED, white)
        );
    }

    #[test]
    fn every_text_colour_passes_aa_on_white() {
        // WCAG 2.1 success criterion 1.4.3: 4.5:1 for normal text.
        for c in TEXT_COLOURS {
            assert!(contrast_ratio(c, BACKGROUND) >= 4.5, "{} fails", c.hex());
        }
        // The palette hues themselves would not all pass: that is why they are never text.
        assert!(contrast_ratio(YELLOW, BACKGROUND) < 4.5);
    }

    #[test]
    fn series_colours_never_reuse_a_status_colour() {
        for c in SERIES {
            assert_eq!(status_of_colour(c), None, "{} is a status colour", c.hex());
        }
        // Six statuses, six distinct colours.
        let mut all: Vec<Rgb> = status_colours().into_iter().map(|(_, c)| c).collect();
        all.dedup();
        assert_eq!(all.len(), 6);
        // Twelve series are told apart by colour, dash and hatch.
        let keys: std::collections::BTreeSet<(String, &str, Option<u32>)> = (0..12)
            .map(|i| {
                (
                    series_colour(i).hex().to_string(),
                    series_dash(i),
                    series_hatch(i),
                )
            })
            .collect();
        assert_eq!(keys.len(), 12);
    }

    #[test]
    fn event_badges_use_the_status_colours_and_nothing_else_does() {
        // The badges of the pages (server/static/app.css) mark each event
        // status with its status colour; no other badge uses a status hue.
        let css = include_str!("../../../static/app.css");
        for (s, c) in status_colours() {
            let rule = css
                .lines()
                .find(|l| l.starts_with(&format!(".st-{} ", s.as_str())))
                .unwrap_or_else(|| panic!("no badge rule for {}", s.as_str()));
            assert!(rule.contains(&c.hex().to_string()), "{rule}");
        }
        for l in css.lines().filter(|l| l.starts_with(".st-")) {
            let status = EventStatus::ALL
                .iter()
                .any(|s| l.starts_with(&format!(".st-{} ", s.as_str())));
            if !status {
                for (_, c) in status_colours() {
                    assert!(
                        !l.contains(&c.hex().to_string()),
                        "{l} uses a status colour"
                    );
                }
            }
        }
    }

    #[test]
    fn hex_round_trip() {
        assert_eq!(Rgb::from_hex("#d55e00"), Some(VERMILLION));
        assert_eq!(VERMILLION.hex().to_string(), "#d55e00");
        assert_eq!(Rgb::from_hex("#12345"), None);
        assert_eq!(Rgb::from_hex("#12345é"), None);
        assert_eq!(Rgb::from_hex("zz0000"), None);
    }
}
