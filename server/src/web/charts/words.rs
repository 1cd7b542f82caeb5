//! The charts' own words: "no data", the notes under the legends, the
//! point tooltips and the map's legend. English by default
//! ([`ChartWords::default`]); a page fills them in its user's language from
//! the catalogues (`pages::figure_words::chart_words`), so this module
//! still uses nothing of the rest of the crate's text.
//!
//! A word that carries numbers holds a placeholder in braces (`{days}`,
//! `{lower}`, `{upper}`, `{lat}`) that the chart replaces with the number
//! as it formats it, so numbers keep their formatting in every language.

use crate::domain::EventStatus;

/// Every fixed word a chart draws.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartWords {
    /// The body of an empty chart.
    pub no_data: String,
    /// Step charts: what the '+' marks are.
    pub censored: String,
    /// Step charts: what the shaded band is.
    pub band: String,
    /// Interval charts: the key to the marks, under the legend.
    pub interval_key: String,
    /// Interval charts: a point's interval in its tooltip, `{lower}` and `{upper}`.
    pub interval_tip: String,
    /// Interval charts: a bound the data do not reach.
    pub open: String,
    /// Maps: the legend's zone kinds, route and start.
    pub zone: String,
    pub priority_zone: String,
    pub route: String,
    pub start: String,
    /// Maps: the letter on the north arrow.
    pub north: String,
    /// Maps: the projection note, `{lat}` for the centre latitude.
    pub projection: String,
    /// Maps: each status's word, in the order of `EventStatus::ALL`.
    pub statuses: Vec<String>,
}

impl Default for ChartWords {
    fn default() -> Self {
        ChartWords {
            no_data: "no data".into(),
            censored: "+ censored (not yet visited)".into(),
            band: "shaded: confidence band".into(),
            interval_key:
                "marker: estimate; vertical line: 95% interval (to the edge when a bound is not reached)"
                    .into(),
            interval_tip: "95% interval {lower} to {upper}".into(),
            open: "open".into(),
            zone: "zone".into(),
            priority_zone: "priority zone".into(),
            route: "route".into(),
            start: "start".into(),
            north: "N".into(),
            projection: "equirectangular, centre latitude {lat}°".into(),
            statuses: EventStatus::ALL.iter().map(|s| s.label().into()).collect(),
        }
    }
}

impl ChartWords {
    /// The word of status `s` (English when the list is short).
    pub fn status(&self, s: EventStatus) -> String {
        EventStatus::ALL
            .iter()
            .position(|x| *x == s)
            .and_then(|i| self.statuses.get(i))
            .cloned()
            .unwrap_or_else(|| s.label().to_string())
    }
}

/// `template` with each `{name}` replaced by its value.
pub fn fill(template: &str, values: &[(&str, &str)]) -> String {
    let mut out = template.to_string();
    for (name, value) in values {
        out = out.replace(&format!("{{{name}}}"), value);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn placeholders_take_the_numbers_as_formatted() {
        let w = ChartWords::default();
        assert_eq!(
            fill(&w.interval_tip, &[("lower", "0.25"), ("upper", "open")]),
            "95% interval 0.25 to open"
        );
        assert_eq!(fill("{a}{a} {b}", &[("a", "1")]), "11 {b}");
    }

    #[test]
    fn every_status_has_its_word() {
        let w = ChartWords::default();
        for s in EventStatus::ALL {
            assert_eq!(w.status(s), s.label());
        }
        let short = ChartWords {
            statuses: vec![],
            ..ChartWords::default()
        };
        assert_eq!(short.status(EventStatus::Disputed), "disputed");
    }
}
