//! Tests of the step-curve chart.

use super::super::testutil::{
    check_frame, colour_roles_hold, pairs, text_colours_pass, with_class,
};
use super::super::types::StepSeries;
use super::*;

fn st(x: f64, y: f64, band: Option<(f64, f64)>) -> Step {
    Step { x_days: x, y, band }
}

fn sample() -> StepChart {
    let a = StepSeries {
        label: "optical-10m".into(),
        steps: vec![
            st(0.0, 1.0, Some((1.0, 1.0))),
            st(3.0, 0.8, Some((0.6, 0.95))),
            st(9.0, 0.5, Some((0.3, 0.7))),
        ],
        censored: vec![4.0, 12.0, 30.0],
    };
    let b = StepSeries {
        label: "radar-10m".into(),
        steps: vec![st(0.0, 1.0, None), st(7.0, 0.25, None)],
        censored: vec![],
    };
    StepChart::time_to_visit("Time to visit", vec![a, b], Some(14.0))
}

#[test]
fn counts_and_frame() {
    let svg = render_step_curve(&sample());
    let doc = check_frame(&svg);
    text_colours_pass(&doc);
    assert_eq!(with_class(&doc, "curve").len(), 2);
    assert_eq!(with_class(&doc, "legend-entry").len(), 2);
    assert_eq!(with_class(&doc, "censor").len(), 3);
    assert_eq!(with_class(&doc, "band").len(), 1);
    assert_eq!(with_class(&doc, "target").len(), 1);
    let texts: Vec<&str> = doc.descendants().filter_map(|n| n.text()).collect();
    assert!(texts.contains(&"days since detection (days)"));
    assert!(texts.contains(&"share not yet visited (0–1)"));
    assert!(texts.contains(&"target: 14 days"));
}

/// Pixel position of a tick label on the axis (x for the day axis).
fn tick_x(doc: &roxmltree::Document<'_>, label: &str) -> f64 {
    with_class(doc, "tick")
        .into_iter()
        .filter(|n| n.text() == Some(label) && n.attribute("text-anchor") == Some("middle"))
        .map(|n| n.attribute("x").and_then(|v| v.parse().ok()).expect("x"))
        .next()
        .expect("tick label")
}

fn tick_y(doc: &roxmltree::Document<'_>, label: &str) -> f64 {
    with_class(doc, "tick")
        .into_iter()
        .filter(|n| n.text() == Some(label) && n.attribute("text-anchor") == Some("end"))
        .map(|n| {
            n.attribute("y")
                .and_then(|v| v.parse::<f64>().ok())
                .expect("y")
                - 4.0
        })
        .next()
        .expect("tick label")
}

#[test]
fn geometry_follows_the_axes() {
    let svg = render_step_curve(&sample());
    let doc = check_frame(&svg);
    // Day ticks: data reach 30 days, 8 ticks at most -> step 5 (1-2-5 rule).
    let (x10, x20) = (tick_x(&doc, "10"), tick_x(&doc, "20"));
    let day = |d: f64| x10 + (d - 10.0) / 10.0 * (x20 - x10);
    let (y0, y1) = (tick_y(&doc, "0.0"), tick_y(&doc, "1.0"));
    let share = |v: f64| y0 + v * (y1 - y0);
    let target = with_class(&doc, "target")[0];
    let tx: f64 = target
        .attribute("x1")
        .and_then(|v| v.parse().ok())
        .expect("x1");
    assert!(
        (tx - day(14.0)).abs() < 0.2,
        "target at {tx}, expected {}",
        day(14.0)
    );
    // First curve: drops to 0.8 at day 3 and to 0.5 at day 9, runs on to day 30.
    let pts = pairs(with_class(&doc, "curve")[0].attribute("d").expect("d"));
    let near = |p: (f64, f64), q: (f64, f64)| (p.0 - q.0).abs() < 0.2 && (p.1 - q.1).abs() < 0.2;
    for want in [
        (day(3.0), share(1.0)),
        (day(3.0), share(0.8)),
        (day(9.0), share(0.5)),
        (day(30.0), share(0.5)),
    ] {
        assert!(
            pts.iter().any(|&p| near(p, want)),
            "{want:?} not on curve {pts:?}"
        );
    }
    // Censor at day 4 sits on the curve value 0.8 (the '+' centre is the middle of its bar).
    let c = pairs(with_class(&doc, "censor")[0].attribute("d").expect("d"));
    let centre = ((c[0].0 + c[1].0) / 2.0, c[0].1);
    assert!(near(centre, (day(4.0), share(0.8))), "censor at {centre:?}");
}

#[test]
fn empty_and_non_finite_give_no_data() {
    let empty = StepChart::time_to_visit("Nothing", vec![], Some(14.0));
    let svg = render_step_curve(&empty);
    let doc = check_frame(&svg);
    assert!(doc.descendants().any(|n| n.text() == Some("no data")));
    let nan = StepChart::time_to_visit(
        "NaN",
        vec![StepSeries {
            label: "x".into(),
            steps: vec![st(f64::NAN, 0.5, None)],
            censored: vec![],
        }],
        None,
    );
    let svg = render_step_curve(&nan);
    assert!(
        check_frame(&svg)
            .descendants()
            .any(|n| n.text() == Some("no data"))
    );
}

#[test]
fn hostile_labels_are_escaped() {
    let mut chart = sample();
    chart.title = "</svg><script>alert(1)</script>".into();
    chart.series[0].label = "a & b \"<x>\" \u{1}".into();
    let svg = render_step_curve(&chart);
    assert!(!svg.contains("<script>"));
    let doc = check_frame(&svg);
    assert_eq!(
        doc.root_element().attribute("aria-label"),
        Some("</svg><script>alert(1)</script>")
    );
    assert!(
        doc.descendants()
            .any(|n| n.text() == Some("a & b \"<x>\" \u{FFFD}"))
    );
}

#[test]
fn out_of_range_values_are_clamped() {
    let chart = StepChart::time_to_visit(
        "clamp",
        vec![StepSeries {
            label: "s".into(),
            steps: vec![st(-5.0, 1.7, Some((-1.0, 3.0))), st(2.0, -0.2, None)],
            censored: vec![f64::INFINITY, 1.0],
        }],
        Some(f64::NAN),
    );
    let svg = render_step_curve(&chart);
    let doc = check_frame(&svg);
    assert_eq!(with_class(&doc, "censor").len(), 1);
    assert!(with_class(&doc, "target").is_empty());
}

#[test]
fn curves_never_wear_a_status_colour() {
    // Issue 14: the time-to-visit chart drew a series in vermillion, the
    // colour of confirmed loss on the map.
    let mut chart = sample();
    for k in 0..4 {
        chart.series.push(StepSeries {
            label: format!("team {k}"),
            steps: vec![
                st(0.0, 1.0, Some((1.0, 1.0))),
                st(2.0 + k as f64, 0.5, Some((0.3, 0.7))),
            ],
            censored: vec![20.0],
        });
    }
    let svg = render_step_curve(&chart);
    let doc = check_frame(&svg);
    colour_roles_hold(&doc);
    // Six series, six distinct (colour, dash) pairs in the legend.
    let looks: std::collections::BTreeSet<(String, String)> = with_class(&doc, "legend-entry")
        .iter()
        .filter_map(|g| g.children().find(|c| c.has_tag_name("line")))
        .map(|l| {
            (
                l.attribute("stroke").unwrap_or_default().to_string(),
                l.attribute("stroke-dasharray")
                    .unwrap_or_default()
                    .to_string(),
            )
        })
        .collect();
    assert_eq!(looks.len(), 6);
}
