//! Escaping text for XML and HTML, once for every document we write: the
//! bundle's GPX, the pages' SVG charts and the plain HTML answers of the
//! server. The five markup characters always become entities; the
//! documents differ only in the apostrophe's entity and in what happens to
//! control characters, which [`Escaping`] names.

/// How one kind of document escapes text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Escaping {
    /// Entity written for `'`.
    pub apostrophe: &'static str,
    /// What becomes of control characters.
    pub controls: Controls,
}

/// What becomes of control characters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Controls {
    /// Kept as they are (HTML text the browser reads).
    Keep,
    /// Tab, line feed and carriage return kept; the other C0 controls,
    /// which XML 1.0 forbids (§2.2), dropped.
    DropForbidden,
    /// Tab, line feed and carriage return become a space; the other C0
    /// controls, U+FFFE and U+FFFF become U+FFFD (one-line SVG labels).
    Replace,
}

/// HTML text and attribute values.
pub const HTML: Escaping = Escaping {
    apostrophe: "&#39;",
    controls: Controls::Keep,
};

/// XML element content and attribute values (GPX).
pub const XML: Escaping = Escaping {
    apostrophe: "&apos;",
    controls: Controls::DropForbidden,
};

/// Labels of SVG charts: a hostile name can never break the document.
pub const SVG: Escaping = Escaping {
    apostrophe: "&#39;",
    controls: Controls::Replace,
};

/// `text` escaped the way `how` says.
pub fn escape(text: &str, how: Escaping) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str(how.apostrophe),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => match how.controls {
                Controls::Keep => out.push(c),
                Controls::DropForbidden if matches!(c, '\t' | '\n' | '\r') => out.push(c),
                Controls::DropForbidden if (c as u32) < 0x20 => {}
                Controls::DropForbidden => out.push(c),
                Controls::Replace if matches!(c, '\t' | '\n' | '\r') => out.push(' '),
                Controls::Replace => out.push('\u{FFFD}'),
            },
            c => out.push(c),
        }
    }
    out
}

/// [`escape`] for HTML.
pub fn escape_html(text: &str) -> String {
    escape(text, HTML)
}

/// [`escape`] for XML (GPX).
pub fn escape_xml(text: &str) -> String {
    escape(text, XML)
}

/// [`escape`] for SVG labels.
pub fn escape_svg(text: &str) -> String {
    escape(text, SVG)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_five_characters_and_the_apostrophe() {
        assert_eq!(escape_html("a<b>&\"'"), "a&lt;b&gt;&amp;&quot;&#39;");
        assert_eq!(escape_svg("a<b>&\"'"), "a&lt;b&gt;&amp;&quot;&#39;");
        assert_eq!(escape_xml("a<b>&\"c'"), "a&lt;b&gt;&amp;&quot;c&apos;");
        assert_eq!(escape_html("&amp;"), "&amp;amp;");
        assert_eq!(escape_html("Zone é ✓"), "Zone é ✓");
    }

    #[test]
    fn control_characters_per_document() {
        let s = "a\tb\nc\u{1}d\u{FFFF}";
        assert_eq!(escape_html(s), s);
        assert_eq!(escape_xml(s), "a\tb\ncd\u{FFFF}");
        assert_eq!(escape_svg(s), "a b c\u{FFFD}d\u{FFFD}");
        assert_eq!(escape_svg("x\u{0}y\u{7}"), "x\u{FFFD}y\u{FFFD}");
        assert_eq!(escape_xml("x\u{1}y\r"), "xy\r");
    }
}
