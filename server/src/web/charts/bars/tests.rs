//! Tests of the bar charts.

use super::super::palette::{SKY_BLUE, status_colour};
use super::super::testutil::{check_frame, colour_roles_hold, text_colours_pass, with_class};
use super::super::types::{BarSeries, EventStatus, HBar};
use super::*;

fn num(n: &roxmltree::Node<'_, '_>, a: &str) -> f64 {
    n.attribute(a)
        .and_then(|v| v.parse().ok())
        .expect("numeric attribute")
}

fn months() -> BarChart {
    let categories: Vec<String> = (1..=12).map(|m| format!("2025-{m:02}")).collect();
    let issued: Vec<f64> = (0..12).map(|m| 40.0 + 5.0 * m as f64).collect(); // max 95
    let mut visited: Vec<f64> = issued.iter().map(|v| (v * 0.6).round()).collect();
    visited[3] = f64::NAN; // no bar
    let confirmed: Vec<f64> = visited.iter().map(|v| (v * 0.5).round()).take(10).collect();
    BarChart {
        title: "Coverage by month".into(),
        words: Default::default(),
        categories,
        x_label: "month of detection".into(),
        y_label: "events (count)".into(),
        series: vec![
            BarSeries {
                label: "issued".into(),
                values: issued,
                status: None,
            },
            BarSeries {
                label: "visited".into(),
                values: visited,
                status: None,
            },
            BarSeries {
                label: "confirmed".into(),
                values: confirmed,
                status: Some(EventStatus::Confirmed),
            },
        ],
    }
}

#[test]
fn one_bar_per_value_and_one_legend_entry_per_series() {
    let chart = months();
    let svg = render_grouped_bars(&chart);
    let doc = check_frame(&svg);
    text_colours_pass(&doc);
    // 12 issued + 11 finite visited + 9 confirmed (10 values; the NaN of month 4 carries over).
    let finite: usize = chart
        .series
        .iter()
        .map(|s| s.values.iter().filter(|v| v.is_finite()).count())
        .sum();
    assert_eq!(finite, 12 + 11 + 9);
    assert_eq!(with_class(&doc, "bar").len(), finite);
    assert_eq!(with_class(&doc, "legend-entry").len(), 3);
    assert_eq!(with_class(&doc, "category").len(), 12);
    assert!(
        doc.descendants()
            .any(|n| n.text() == Some("events (count)"))
    );
}

#[test]
fn bar_heights_follow_nice_ticks() {
    let svg = render_grouped_bars(&months());
    let doc = check_frame(&svg);
    // Max 95 with at most 6 intervals: 1-2-5 step 20, ticks 0..100 (Heckbert 1990).
    let labels: Vec<&str> = with_class(&doc, "tick")
        .iter()
        .filter_map(|n| n.text())
        .collect();
    assert_eq!(labels, ["0", "20", "40", "60", "80", "100"]);
    let tick_y = |l: &str| {
        let n = with_class(&doc, "tick")
            .into_iter()
            .find(|n| n.text() == Some(l))
            .expect("tick");
        num(&n, "y") - 4.0
    };
    let (y0, y100) = (tick_y("0"), tick_y("100"));
    // The first bar is issued in 2025-01: 40 events.
    let bar = with_class(&doc, "bar")[0];
    let want_top = y0 + 0.4 * (y100 - y0);
    assert!((num(&bar, "y") - want_top).abs() < 0.2);
    assert!((num(&bar, "y") + num(&bar, "height") - y0).abs() < 0.2);
    let tip = bar
        .children()
        .find(|c| c.has_tag_name("title"))
        .and_then(|t| t.text());
    assert_eq!(tip, Some("2025-01, issued: 40"));
}

#[test]
fn many_long_categories_rotate_and_stay_inside() {
    let mut chart = months();
    chart.categories = (0..30).map(|i| format!("category number {i}")).collect();
    chart.series[0].values = vec![3.0; 40]; // values past the categories are ignored
    let svg = render_grouped_bars(&chart);
    let doc = check_frame(&svg);
    assert!(svg.contains("rotate(-45"));
    assert_eq!(with_class(&doc, "bar").len(), 30 + 11 + 9);
}

#[test]
fn grouped_empty_and_hostile() {
    let empty = BarChart {
        title: "none".into(),
        words: Default::default(),
        ..Default::default()
    };
    let doc_svg = render_grouped_bars(&empty);
    assert!(
        check_frame(&doc_svg)
            .descendants()
            .any(|n| n.text() == Some("no data"))
    );
    let mut chart = months();
    chart.series[0].label = "<b>issued</b> & \"more\"".into();
    chart.categories[0] = "]]><!--".into();
    let svg = render_grouped_bars(&chart);
    assert!(!svg.contains("<b>"));
    let doc = check_frame(&svg);
    assert!(
        doc.descendants()
            .any(|n| n.text() == Some("<b>issued</b> & \"more\""))
    );
    assert!(doc.descendants().any(|n| n.text() == Some("]]><!--")));
}

fn causes() -> HBarChart {
    HBarChart {
        title: "Causes of confirmed clearing".into(),
        words: Default::default(),
        value_label: "cleared area".into(),
        unit: "ha".into(),
        bars: vec![
            HBar {
                label: "smallholder clearing".into(),
                value: 12.5,
            },
            HBar {
                label: "pasture conversion".into(),
                value: 50.0,
            },
            HBar {
                label: "logging road".into(),
                value: f64::INFINITY,
            },
            HBar {
                label: "mining".into(),
                value: 25.0,
            },
        ],
    }
}

#[test]
fn horizontal_bars_are_proportional_with_units() {
    let svg = render_horizontal_bars(&causes());
    let doc = check_frame(&svg);
    text_colours_pass(&doc);
    let bars = with_class(&doc, "bar");
    assert_eq!(bars.len(), 3);
    let w: Vec<f64> = bars.iter().map(|b| num(b, "width")).collect();
    assert!(
        (w[0] / w[1] - 0.25).abs() < 0.01 && (w[2] / w[1] - 0.5).abs() < 0.01,
        "{w:?}"
    );
    let values: Vec<&str> = with_class(&doc, "bar-value")
        .iter()
        .filter_map(|n| n.text())
        .collect();
    assert_eq!(values, ["12.5 ha", "50 ha", "25 ha"]);
    assert!(
        doc.descendants()
            .any(|n| n.text() == Some("cleared area (ha)"))
    );
}

#[test]
fn horizontal_empty_long_and_hostile() {
    let mut chart = causes();
    chart.bars.clear();
    let svg = render_horizontal_bars(&chart);
    assert!(
        check_frame(&svg)
            .descendants()
            .any(|n| n.text() == Some("no data"))
    );
    let mut chart = causes();
    chart.unit = "events".into();
    chart.bars = vec![HBar {
        label: format!("<x>{}", "very long cause ".repeat(20)),
        value: 3.0,
    }];
    let svg = render_horizontal_bars(&chart);
    let doc = check_frame(&svg);
    let label = with_class(&doc, "bar-label")[0].text().expect("label");
    assert!(label.starts_with("<x>very") && label.ends_with('…'));
    assert_eq!(with_class(&doc, "bar-value")[0].text(), Some("3 events"));
}

#[test]
fn a_status_series_wears_its_status_colour_and_the_others_never_do() {
    // Issue 14: "visited" was vermillion (the colour of confirmed loss on
    // the map) and "confirmed" green (the colour of a false alarm).
    let svg = render_grouped_bars(&months());
    let doc = check_frame(&svg);
    colour_roles_hold(&doc);
    let confirmed: Vec<_> = with_class(&doc, "bar")
        .into_iter()
        .filter(|n| n.attribute("data-status") == Some("confirmed"))
        .collect();
    assert_eq!(confirmed.len(), 9);
    let vermillion = status_colour(EventStatus::Confirmed).hex().to_string();
    assert!(
        confirmed
            .iter()
            .all(|n| n.attribute("fill") == Some(vermillion.as_str()))
    );
}

#[test]
fn series_past_the_third_colour_are_hatched() {
    let mut chart = months();
    for k in 0..3 {
        chart.series.push(BarSeries {
            label: format!("extra {k}"),
            values: vec![1.0; 12],
            status: None,
        });
    }
    let svg = render_grouped_bars(&chart);
    let doc = check_frame(&svg);
    colour_roles_hold(&doc);
    assert_eq!(
        doc.descendants()
            .filter(|n| n.has_tag_name("pattern"))
            .count(),
        2
    );
    assert_eq!(with_class(&doc, "legend-entry").len(), 6);
}

#[test]
fn horizontal_bars_have_a_legend_and_no_status_colour() {
    let svg = render_horizontal_bars(&causes());
    let doc = check_frame(&svg);
    colour_roles_hold(&doc);
    let sky = SKY_BLUE.hex().to_string();
    assert!(
        with_class(&doc, "bar")
            .iter()
            .all(|n| n.attribute("fill") == Some(sky.as_str()))
    );
}
