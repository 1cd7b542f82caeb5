//! The words of the figures pages (dashboard, summary, disputes) that are
//! built from numbers and fixed labels: the charts' own words, group and
//! cause names, and the status notes of reconciliation, in the user's
//! language (ids `chart-*`, `fig-*`, `note-*` of `pages.ftl`).
//!
//! The statistics stay pure: they hand over numbers and fixed English
//! labels (the stable ids of their groups); only this layer looks words up.

use crate::domain::EventStatus;
use crate::domain::localtime::OrgZone;
use crate::platform::i18n::Tr;
use crate::statistics::figures::GroupKey;
use crate::web::adjudication::{decision_parts, local_time, readable_note};
use crate::web::charts::{ChartWords, MapEvent, MapInput, MapZone};

/// The charts' own words in `tr`'s language. The placeholders the charts
/// fill themselves go through the catalogue as literal `{name}` text.
pub fn chart_words(tr: &Tr) -> ChartWords {
    ChartWords {
        no_data: tr.t("chart-no-data"),
        censored: tr.t("chart-censored"),
        band: tr.t("chart-band"),
        interval_key: tr.t("chart-interval-key"),
        interval_tip: tr.t2("chart-interval-tip", "lower", "{lower}", "upper", "{upper}"),
        open: tr.t("chart-open"),
        zone: tr.t("chart-zone"),
        priority_zone: tr.t("chart-priority-zone"),
        route: tr.t("chart-route"),
        start: tr.t("chart-start"),
        north: tr.t("chart-north"),
        projection: tr.t1("chart-projection", "lat", "{lat}"),
        statuses: EventStatus::ALL
            .iter()
            .map(|s| tr.t(&super::views::status_id(*s)))
            .collect(),
    }
}

/// A map with a title, zones and events, its legend and notes in `tr`'s
/// language.
pub fn map_input_in(
    tr: &Tr,
    title: String,
    zones: Vec<MapZone>,
    events: Vec<MapEvent>,
) -> MapInput {
    let mut m = super::views::map_input(&title, zones, events);
    m.words = chart_words(tr);
    m
}

/// A stored cause word ("selective_logging") as the field app names it.
pub fn cause_name(tr: &Tr, cause: &str) -> String {
    tr.get(&format!("cause-{cause}"))
        .unwrap_or_else(|| cause.replace('_', " "))
}

/// A group of a figure table as people read it: the fixed group names of
/// the statistics (all, corroborated, high, a cause, a stratum…) in the
/// user's language; names people gave (zones, teams, sources) as they are.
pub fn group_name(tr: &Tr, key: GroupKey, group: &str) -> String {
    let fixed = match group {
        "all" => Some("fig-group-all"),
        "(none)" => Some("fig-group-none"),
        "(not sampled)" => Some("fig-group-not-sampled"),
        _ => None,
    };
    if let Some(id) = fixed {
        return tr.t(id);
    }
    match key {
        GroupKey::Confidence => tr
            .get(&format!("confidence-{group}"))
            .unwrap_or_else(|| group.to_string()),
        GroupKey::Corroborated if group == "corroborated" => tr.t("fig-group-corroborated"),
        GroupKey::Corroborated if group == "single source" => tr.t("fig-group-single-source"),
        GroupKey::Cause => cause_name(tr, group),
        GroupKey::Stratum => stratum_label(tr, group),
        _ => group.to_string(),
    }
}

/// A sample stratum as the page names it: strata are stored as
/// "sources|confidence" with the stored confidence word; the page says
/// "high" or "low confidence" so that "confirmed" is only an outcome.
pub fn stratum_label(tr: &Tr, stratum: &str) -> String {
    match stratum.rsplit_once('|') {
        Some((sources, conf)) => {
            let level = match conf {
                "confirmed" | "high" => tr.t("fig-high-confidence"),
                "tentative" | "low" => tr.t("fig-low-confidence"),
                other => other.to_string(),
            };
            tr.t2("fig-stratum", "sources", sources, "level", level)
        }
        None => stratum.to_string(),
    }
}

/// A status note of reconciliation (`reconcile::status`) in the user's
/// language. A note of a form this does not know reads as
/// [`readable_note`] (English, with labels and local time).
pub fn status_note(tr: &Tr, note: &str, zone: OrgZone) -> String {
    let known = match note.strip_prefix("adjudicated ") {
        Some(rest) => decided_note(tr, rest, zone),
        None => plain_note(tr, note),
    };
    known.unwrap_or_else(|| readable_note(note, zone))
}

/// "{outcome} by {by} at {time}: {reason} (reports gave {status}: {note})".
fn decided_note(tr: &Tr, rest: &str, zone: OrgZone) -> Option<String> {
    let (outcome, by, at, rest) = decision_parts(rest)?;
    let inner = rest.strip_suffix(')')?;
    let (reason, gave) = inner.rsplit_once(" (reports gave ")?;
    let (status, before) = gave.split_once(": ")?;
    let word = |s: &str| -> Option<String> {
        let s: EventStatus = s.parse().ok()?;
        Some(tr.t(&super::views::status_id(s)))
    };
    let (outcome, status) = (word(outcome)?, word(status)?);
    let (when, note) = (local_time(zone, at), plain_note(tr, before)?);
    Some(tr.tn(
        "note-decided",
        &[
            ("outcome", &outcome),
            ("by", &by),
            ("when", &when),
            ("reason", &reason),
            ("status", &status),
            ("note", &note),
        ],
    ))
}

/// The parts of a note joined by "; ", each a known sentence.
fn plain_note(tr: &Tr, note: &str) -> Option<String> {
    let mut parts = note.split("; ");
    let mut out = vec![head_note(tr, parts.next()?)?];
    for p in parts {
        out.push(tail_note(tr, p)?);
    }
    Some(out.join("; "))
}

/// The number before `suffix` in `s`, if `s` is "{n}{suffix}".
fn count_before(s: &str, suffix: &str) -> Option<u64> {
    s.strip_suffix(suffix)?.parse().ok()
}

fn head_note(tr: &Tr, s: &str) -> Option<String> {
    let t = match s {
        "no counted report" => tr.t("note-no-report"),
        "confirmed" => tr.t("note-confirmed"),
        "false alarm" => tr.t("note-false-alarm"),
        _ => {
            if let Some(n) = count_before(s, " report(s), none reached the event") {
                tr.t1("note-none-reached", "n", n)
            } else if let Some(n) = count_before(s, " visit(s), all inconclusive") {
                tr.t1("note-all-inconclusive", "n", n)
            } else if let Some(d) = s
                .strip_prefix("confirmed more than ")
                .and_then(|r| count_before(r, " days after a false alarm: new clearing"))
            {
                tr.t1("note-new-clearing", "days", d)
            } else {
                let d = s
                    .strip_prefix("confirmed and false_alarm within ")
                    .and_then(|r| count_before(r, " days, evidence does not settle it"))?;
                tr.t1("note-disputed", "days", d)
            }
        }
    };
    Some(t)
}

fn tail_note(tr: &Tr, s: &str) -> Option<String> {
    if s == "a later false alarm does not undo the confirmed clearing" {
        return Some(tr.t("note-later-false-alarm"));
    }
    count_before(s, " disagreement(s) settled by passing evidence")
        .map(|n| tr.t1("note-settled", "n", n))
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::{DateTime, Utc};

    #[test]
    fn every_note_of_reconciliation_reads_in_english_as_before() {
        // The forms `reconcile::status::status_of_sorted` and
        // `from_episodes` write (copied from there).
        let (en, zone) = (Tr::new("en"), OrgZone::default());
        for (note, shown) in [
            ("no counted report", "no counted report"),
            (
                "2 report(s), none reached the event",
                "2 report(s), none reached the event",
            ),
            (
                "1 visit(s), all inconclusive",
                "1 visit(s), all inconclusive",
            ),
            (
                "confirmed more than 30 days after a false alarm: new clearing; a later false alarm does not undo the confirmed clearing",
                "confirmed more than 30 days after a false alarm: new clearing; a later false alarm does not undo the confirmed clearing",
            ),
            (
                "confirmed and false_alarm within 30 days, evidence does not settle it; 2 disagreement(s) settled by passing evidence",
                "confirmed and false alarm within 30 days, evidence does not settle it; 2 disagreement(s) settled by passing evidence",
            ),
            ("false alarm", "false alarm"),
        ] {
            assert_eq!(status_note(&en, note, zone), shown);
            assert_eq!(readable_note(note, zone), shown, "the same as before");
        }
    }

    #[test]
    fn notes_and_decisions_read_in_portuguese() {
        let (pt, zone) = (Tr::new("pt"), OrgZone::default());
        let disputed = "confirmed and false_alarm within 30 days, evidence does not settle it";
        let shown = status_note(&pt, disputed, zone);
        assert!(!shown.contains("evidence"), "{shown}");
        assert!(shown.contains("30"), "{shown}");
        let at: DateTime<Utc> = "2026-12-04T15:02:03Z".parse().unwrap();
        let note = format!(
            "adjudicated false_alarm by Ana at {}: standing forest (reports gave disputed: {disputed})",
            at.to_rfc3339()
        );
        let d = status_note(&pt, &note, zone);
        assert!(d.contains("Ana") && d.contains("standing forest"), "{d}");
        assert!(d.contains(&local_time(zone, at)), "{d}");
        assert!(d.contains(&pt.t("status-false-alarm")), "{d}");
        assert!(!d.contains("reports gave") && !d.contains("Decided"), "{d}");
        // Counts choose their plural form (CLDR rules of the language).
        assert_eq!(
            status_note(&pt, "1 report(s), none reached the event", zone),
            "1 relatório, que não alcançou o evento"
        );
        assert_eq!(
            status_note(&pt, "3 report(s), none reached the event", zone),
            "3 relatórios, nenhum alcançou o evento"
        );
        let en = Tr::new("en");
        let ground = en.t2("dash-ground", "clearings", 1u64, "hectares", "0.5");
        assert!(ground.ends_with(": 1 clearing, 0.5 ha."), "{ground}");
        let ground = pt.t2("dash-ground", "clearings", 2u64, "hectares", "0.5");
        assert!(ground.ends_with(": 2 desmatamentos, 0.5 ha."), "{ground}");
        // A form not known here stays readable English, never lost.
        assert_eq!(status_note(&pt, "something new", zone), "something new");
    }

    #[test]
    fn fixed_group_names_are_translated_and_names_people_gave_are_not() {
        let pt = Tr::new("pt");
        assert_eq!(group_name(&pt, GroupKey::Zone, "Core"), "Core");
        assert_eq!(
            group_name(&pt, GroupKey::Confidence, "high"),
            pt.t("confidence-high")
        );
        assert_eq!(group_name(&pt, GroupKey::Cause, "fire"), pt.t("cause-fire"));
        let en = Tr::new("en");
        assert_eq!(
            group_name(&en, GroupKey::Corroborated, "single source"),
            "single source"
        );
        assert_eq!(cause_name(&en, "unknown_word"), "unknown word");
        assert_eq!(
            stratum_label(&en, "optical-10m|confirmed"),
            "optical-10m, high confidence"
        );
        assert_eq!(
            stratum_label(&en, "optical-10m+radar-10m|tentative"),
            "optical-10m+radar-10m, low confidence"
        );
        assert_eq!(stratum_label(&en, "control"), "control");
    }
}
