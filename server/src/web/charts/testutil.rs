//! Test helpers: parse an SVG strictly as XML and check that every drawn
//! coordinate lies inside its viewBox.

use roxmltree::{Document, Node};

/// The viewBox as (min_x, min_y, width, height).
pub fn view_box(doc: &Document<'_>) -> (f64, f64, f64, f64) {
    let vb: Vec<f64> = doc
        .root_element()
        .attribute("viewBox")
        .expect("viewBox")
        .split_whitespace()
        .map(|v| v.parse().expect("number"))
        .collect();
    (vb[0], vb[1], vb[2], vb[3])
}

/// Numbers of a path `d` or polyline `points` attribute, as (x, y) pairs.
pub fn pairs(s: &str) -> Vec<(f64, f64)> {
    let nums: Vec<f64> = s
        .split(|c: char| c.is_whitespace() || c == ',' || c.is_ascii_alphabetic())
        .filter(|t| !t.is_empty())
        .map(|t| t.parse().expect("number"))
        .collect();
    nums.chunks(2).map(|c| (c[0], c[1])).collect()
}

/// Assert the SVG is XML, has the accessibility frame, and every x/y
/// coordinate of every element is inside the viewBox. Returns the document
/// text back for further checks.
pub fn check_frame(svg: &str) -> Document<'_> {
    let doc = Document::parse(svg).expect("SVG must parse as XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(root.attribute("width"), Some("100%"));
    assert_eq!(root.attribute("role"), Some("img"));
    assert!(root.attribute("aria-label").is_some());
    let first = root.children().find(Node::is_element).expect("a child");
    assert_eq!(first.tag_name().name(), "title");
    let (x0, y0, w, h) = view_box(&doc);
    let inside = |x: f64, y: f64, n: &Node<'_, '_>| {
        assert!(
            x >= x0 - 1e-6 && x <= x0 + w + 1e-6 && y >= y0 - 1e-6 && y <= y0 + h + 1e-6,
            "({x}, {y}) outside viewBox in {:?}",
            n.tag_name().name()
        );
    };
    for n in root.descendants().skip(1).filter(Node::is_element) {
        let num = |a: &str| n.attribute(a).map(|v| v.parse::<f64>().expect("number"));
        for (ax, ay) in [("x", "y"), ("x1", "y1"), ("x2", "y2"), ("cx", "cy")] {
            if let (Some(x), Some(y)) = (num(ax), num(ay)) {
                inside(x, y, &n);
            }
        }
        if let (Some(x), Some(y), Some(rw), Some(rh)) =
            (num("x"), num("y"), num("width"), num("height"))
        {
            inside(x + rw, y + rh, &n);
        }
        for attr in ["d", "points"] {
            if let Some(d) = n.attribute(attr) {
                for (x, y) in pairs(d) {
                    inside(x, y, &n);
                }
            }
        }
    }
    doc
}

/// Elements with a given class.
pub fn with_class<'a, 'i>(doc: &'a Document<'i>, class: &str) -> Vec<Node<'a, 'i>> {
    doc.descendants()
        .filter(|n| {
            n.attribute("class")
                .is_some_and(|c| c.split(' ').any(|k| k == class))
        })
        .collect()
}

/// Every text colour used must pass WCAG AA on white.
pub fn text_colours_pass(doc: &Document<'_>) {
    use super::palette::{BACKGROUND, Rgb, contrast_ratio};
    for n in doc.descendants().filter(|n| n.has_tag_name("text")) {
        let fill = n
            .attribute("fill")
            .expect("every text has an explicit fill");
        let c = Rgb::from_hex(fill).expect("hex fill");
        assert!(
            contrast_ratio(c, BACKGROUND) >= 4.5,
            "text fill {fill} fails AA"
        );
    }
}

/// Colours keep one meaning: every element filled or stroked in a status
/// colour carries `data-status` naming that very status, and the chart has
/// a legend.
pub fn colour_roles_hold(doc: &Document<'_>) {
    use super::palette::{Rgb, status_of_colour};
    for n in doc.descendants().filter(Node::is_element) {
        for attr in ["fill", "stroke"] {
            let Some(c) = n.attribute(attr).and_then(Rgb::from_hex) else {
                continue;
            };
            if let Some(s) = status_of_colour(c) {
                assert_eq!(
                    n.attribute("data-status"),
                    Some(s.as_str()),
                    "<{}> {attr}={} is the colour of status {} but is not that status",
                    n.tag_name().name(),
                    c.hex(),
                    s.as_str()
                );
            }
        }
    }
    assert!(
        !with_class(doc, "legend-entry").is_empty(),
        "every chart has a legend"
    );
}
