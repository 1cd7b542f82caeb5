//! Static assets of the pages, embedded in the binary and served from
//! `/static/`: the style sheet, the site icon, and for the pan-and-zoom
//! maps the vendored Leaflet 1.9.4 (the very bytes the field app serves,
//! `templates/field/vendor/`, pinned by its `SHA256SUMS`) with the pages'
//! own map script and its style sheet (`templates/pages/js/`). Every page
//! works without scripts: the maps are printable SVG first. The test
//! here holds the style sheet to its own rule: every rule that sets a text
//! `color` sets its `background-color` too, and each pair passes WCAG AA.

use actix_web::{HttpResponse, web};

/// The style sheet (`server/static/app.css`).
pub const APP_CSS: &str = include_str!("../../../static/app.css");

/// The site icon (`server/static/icon.svg`); linked from every page so that
/// browsers do not ask for a `/favicon.ico` we do not have.
pub const ICON_SVG: &str = include_str!("../../../static/icon.svg");

/// Leaflet 1.9.4 (BSD-2-Clause), the field app's vendored copy.
pub const LEAFLET_JS: &str = include_str!("../../../../templates/field/vendor/leaflet.js");
/// Leaflet's style sheet, the field app's vendored copy.
pub const LEAFLET_CSS: &str = include_str!("../../../../templates/field/vendor/leaflet.css");
/// Leaflet's licence, served beside it.
pub const LEAFLET_LICENSE: &str =
    include_str!("../../../../templates/field/vendor/leaflet.LICENSE");
/// The pages' map script: draws `live_map`'s GeoJSON with Leaflet.
pub const PAGE_MAP_JS: &str = include_str!("../../../../templates/pages/js/page-map.js");
/// The pages' map styles (sizes, legend, print rules).
pub const PAGE_MAP_CSS: &str = include_str!("../../../../templates/pages/js/page-map.css");

/// A script or style served with a short cache time.
fn text(content_type: &str, body: &'static str) -> HttpResponse {
    HttpResponse::Ok()
        .content_type(content_type)
        .insert_header(("Cache-Control", "public, max-age=300"))
        .body(body)
}

/// `GET /static/{name}`.
pub async fn asset(path: web::Path<String>) -> HttpResponse {
    const JS: &str = "text/javascript; charset=utf-8";
    const CSS: &str = "text/css; charset=utf-8";
    match path.as_str() {
        "leaflet.js" => text(JS, LEAFLET_JS),
        "leaflet.css" => text(CSS, LEAFLET_CSS),
        "leaflet.LICENSE" => text("text/plain; charset=utf-8", LEAFLET_LICENSE),
        "page-map.js" => text(JS, PAGE_MAP_JS),
        "page-map.css" => text(CSS, PAGE_MAP_CSS),
        "app.css" => HttpResponse::Ok()
            .content_type("text/css; charset=utf-8")
            .insert_header(("Cache-Control", "public, max-age=300"))
            .body(APP_CSS),
        "icon.svg" => HttpResponse::Ok()
            .content_type("image/svg+xml")
            .insert_header(("Cache-Control", "public, max-age=86400"))
            .body(ICON_SVG),
        _ => HttpResponse::NotFound()
            .content_type("text/plain; charset=utf-8")
            .body("no such asset"),
    }
}

#[cfg(test)]
/// One CSS rule's selector and its `color` / `background-color` values.
#[derive(Debug, Clone, PartialEq)]
pub struct ColourRule {
    pub selector: String,
    pub color: Option<String>,
    pub background: Option<String>,
}

#[cfg(test)]
/// The rules of a (flat or `@media`-nested) style sheet that set `color`
/// or `background-color`. Comments are dropped; `@media` blocks are read
/// as if their rules stood at the top level.
pub fn colour_rules(css: &str) -> Vec<ColourRule> {
    let mut text = String::new();
    let mut rest = css;
    while let Some(i) = rest.find("/*") {
        text.push_str(&rest[..i]);
        rest = rest[i + 2..]
            .find("*/")
            .map_or("", |j| &rest[i + 2 + j + 2..]);
    }
    text.push_str(rest);
    let mut out = Vec::new();
    let mut selector = String::new();
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '{' => {
                let sel = selector.trim().to_string();
                selector.clear();
                if sel.starts_with('@') {
                    continue; // descend into @media: its rules follow
                }
                let mut body = String::new();
                for d in chars.by_ref() {
                    if d == '}' {
                        break;
                    }
                    body.push(d);
                }
                let mut rule = ColourRule {
                    selector: sel,
                    color: None,
                    background: None,
                };
                for decl in body.split(';') {
                    if let Some((k, v)) = decl.split_once(':') {
                        match k.trim() {
                            "color" => rule.color = Some(v.trim().to_string()),
                            "background-color" | "background" => {
                                rule.background = Some(v.trim().to_string())
                            }
                            _ => {}
                        }
                    }
                }
                if rule.color.is_some() || rule.background.is_some() {
                    out.push(rule);
                }
            }
            '}' => selector.clear(),
            _ => selector.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::web::charts::{Rgb, contrast_ratio};

    #[test]
    fn leaflet_is_served_from_the_vendored_bytes_the_checksums_pin() {
        use sha2::{Digest, Sha256};
        let sums = include_str!("../../../../templates/field/vendor/SHA256SUMS");
        for (name, bytes) in [("leaflet.js", LEAFLET_JS), ("leaflet.css", LEAFLET_CSS)] {
            let line = sums
                .lines()
                .find(|l| l.ends_with(name))
                .unwrap_or_else(|| panic!("{name} is in SHA256SUMS"));
            let want = line.split_whitespace().next().unwrap();
            assert_eq!(
                hex::encode(Sha256::digest(bytes.as_bytes())),
                want,
                "{name}"
            );
        }
    }

    #[test]
    fn every_text_colour_of_the_map_styles_passes_wcag_aa() {
        for r in colour_rules(PAGE_MAP_CSS)
            .iter()
            .filter(|r| r.color.is_some())
        {
            let fg = r.color.as_deref().and_then(Rgb::from_hex).expect("#rrggbb");
            let bg = r
                .background
                .as_deref()
                .and_then(Rgb::from_hex)
                .expect("#rrggbb");
            // WCAG 2.1 success criterion 1.4.3 (AA): at least 4.5:1 for text.
            assert!(contrast_ratio(fg, bg) >= 4.5, "'{}'", r.selector);
        }
    }

    #[test]
    fn contrast_ratio_matches_the_wcag_definition() {
        // WCAG 2.x: black on white is 21:1; #767676 on white is about 4.54:1
        // (the lightest grey that passes AA; common practice, value recalled from memory).
        let white = Rgb(255, 255, 255);
        assert!((contrast_ratio(Rgb(0, 0, 0), white) - 21.0).abs() < 1e-9);
        let r = contrast_ratio(Rgb(0x76, 0x76, 0x76), white);
        assert!((r - 4.54).abs() < 0.01, "{r}");
        assert!(contrast_ratio(Rgb(0x77, 0x77, 0x77), white) < 4.5);
    }

    #[test]
    fn the_parser_finds_pairs_in_media_blocks_and_skips_comments() {
        let css = "/* a { color: #ffffff; } */ p { color: #111111; background-color: #eeeeee; }\n\
                   @media print { h1 { color: #000000; background: #ffffff } }";
        let rules = colour_rules(css);
        assert_eq!(rules.len(), 2, "{rules:?}");
        assert_eq!(rules[0].selector, "p");
        assert_eq!(rules[1].selector, "h1");
        assert_eq!(rules[1].background.as_deref(), Some("#ffffff"));
    }

    #[test]
    fn every_text_colour_of_the_style_sheet_passes_wcag_aa() {
        let rules = colour_rules(APP_CSS);
        let with_text: Vec<&ColourRule> = rules.iter().filter(|r| r.color.is_some()).collect();
        assert!(
            with_text.len() > 20,
            "the parser found the rules: {}",
            with_text.len()
        );
        for r in with_text {
            let fg = r.color.as_deref().and_then(Rgb::from_hex);
            let bg = r.background.as_deref().and_then(Rgb::from_hex);
            let (Some(fg), Some(bg)) = (fg, bg) else {
                panic!(
                    "rule '{}' must set color and background-color as #rrggbb: {r:?}",
                    r.selector
                );
            };
            let ratio = contrast_ratio(fg, bg);
            // WCAG 2.1 success criterion 1.4.3 (AA): at least 4.5:1 for text.
            assert!(ratio >= 4.5, "'{}' has contrast {ratio:.2}:1", r.selector);
        }
    }
}
