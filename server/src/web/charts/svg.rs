//! Low-level SVG writing: text escaping, the document frame every chart
//! shares (viewBox, width 100%, title, accessible role and label, fonts),
//! the "no data" document, and helpers for numbers and text elements.

use super::palette::{TEXT, TEXT_MUTED};
use std::fmt::{self, Write};

/// Escape text for an XML attribute or element body. Characters XML 1.0
/// forbids even when escaped (most C0 controls) become U+FFFD, so a hostile
/// name can never break the document.
pub use groundproof_sync::markup::escape_svg as escape;

/// A coordinate rounded to 0.1 px for compact output (non-finite becomes 0).
pub(crate) fn px(v: f64) -> f64 {
    if v.is_finite() {
        (v * 10.0).round() / 10.0
    } else {
        0.0
    }
}

/// Write the opening `<svg>` tag and its `<title>`.
pub(crate) fn open(out: &mut String, width: f64, height: f64, title: &str) -> fmt::Result {
    let t = escape(title);
    write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {} {}\" width=\"100%\" \
         role=\"img\" aria-label=\"{t}\" font-family=\"sans-serif\" font-size=\"12\">\
         <title>{t}</title>",
        px(width),
        px(height)
    )?;
    write!(
        out,
        "<rect class=\"background\" x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>",
        px(width),
        px(height)
    )
}

/// Close the document.
pub(crate) fn close(out: &mut String) -> fmt::Result {
    out.write_str("</svg>")
}

/// A text element in a text colour. `anchor` is start, middle or end.
pub(crate) fn text(
    out: &mut String,
    x: f64,
    y: f64,
    anchor: &str,
    class: &str,
    body: &str,
) -> fmt::Result {
    write!(
        out,
        "<text class=\"{class}\" x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" fill=\"{}\">{}</text>",
        px(x),
        px(y),
        TEXT.hex(),
        escape(body)
    )
}

/// The visible chart title at the top left.
pub(crate) fn heading(out: &mut String, title: &str) -> fmt::Result {
    write!(
        out,
        "<text class=\"chart-title\" x=\"12\" y=\"22\" font-size=\"15\" font-weight=\"bold\" \
         fill=\"{}\">{}</text>",
        TEXT.hex(),
        escape(title)
    )
}

/// A complete SVG that says there is nothing to draw.
/// `body` is the words "no data" in the page's language.
pub fn no_data(title: &str, body: &str) -> String {
    let (w, h) = (600.0, 160.0);
    let mut out = String::new();
    let written = open(&mut out, w, h, title)
        .and_then(|_| heading(&mut out, title))
        .and_then(|_| {
            write!(
                out,
                "<text class=\"no-data\" x=\"300\" y=\"95\" text-anchor=\"middle\" \
                 font-size=\"14\" fill=\"{}\">{}</text>",
                TEXT_MUTED.hex(),
                escape(body)
            )
        })
        .and_then(|_| close(&mut out));
    match written {
        Ok(()) => out,
        Err(_) => String::new(),
    }
}

/// Run a drawing closure into a fresh string; fall back to "no data" on
/// the (impossible for `String`) formatting error.
pub(crate) fn render_with(title: &str, draw: impl FnOnce(&mut String) -> fmt::Result) -> String {
    let mut out = String::new();
    match draw(&mut out) {
        Ok(()) => out,
        Err(_) => no_data(title, "no data"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escape_covers_markup_and_controls() {
        // Expected strings follow the XML 1.0 predefined entities (W3C XML 1.0, section 4.6).
        assert_eq!(escape("a<b>&\"'"), "a&lt;b&gt;&amp;&quot;&#39;");
        assert_eq!(escape("x\u{0}y\u{7}"), "x\u{FFFD}y\u{FFFD}");
        assert_eq!(escape("zone\nnorth"), "zone north");
    }

    #[test]
    fn no_data_is_valid_xml_with_message() {
        let svg = no_data("Empty <chart>", "no data");
        let doc = roxmltree::Document::parse(&svg).expect("valid XML");
        let root = doc.root_element();
        assert_eq!(root.attribute("role"), Some("img"));
        assert_eq!(root.attribute("aria-label"), Some("Empty <chart>"));
        assert!(doc.descendants().any(|n| n.text() == Some("no data")));
    }

    #[test]
    fn px_rounds_and_drops_non_finite() {
        assert_eq!(px(1.26), 1.3);
        assert_eq!(px(f64::NAN), 0.0);
    }
}
