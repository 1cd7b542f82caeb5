//! Robustness of the alert CSV and GeoJSON readers and the zone reader
//! (`parse_alerts`, `parse_zones`): files damaged from the committed seeds in
//! `tests/corpus/{alerts-csv,alerts-geojson,zones}/` (byte damage; cells,
//! lines and JSON values replaced by out-of-range numbers such as `1e400`,
//! wrong types, long texts and deep nesting; values swapped; keys
//! duplicated) give valid rows and errors that say where, never a panic, and
//! nothing out of range is taken in.

use groundproof::alerts::import::{Format, ReadOptions, parse_alerts, parse_zones};
use mock_patrols::damage::{damage_bytes, damage_csv, damage_json};
use proptest::prelude::*;
use std::path::PathBuf;

fn corpus_dir(target: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../tests/corpus")
        .join(target)
}

/// The committed seeds of `target`, sorted by name.
fn corpus(target: &str) -> Vec<(String, Vec<u8>)> {
    let dir = corpus_dir(target);
    let mut out: Vec<(String, Vec<u8>)> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("corpus {}: {e}", dir.display()))
        .map(|e| {
            let p = e.expect("corpus entry").path();
            let name = p
                .file_name()
                .unwrap_or_default()
                .to_string_lossy()
                .into_owned();
            (name, std::fs::read(&p).expect("corpus file"))
        })
        .collect();
    out.sort();
    assert!(!out.is_empty(), "corpus {} is empty", dir.display());
    out
}

/// The generated seeds: a few days of alerts of one source as CSV and as
/// GeoJSON, and the scenario's zones.
fn generated() -> [(&'static str, &'static str, Vec<u8>); 3] {
    let scenario = mock_patrols::scenario();
    let alerts = mock_patrols::generate_alerts(&scenario, 42);
    let rows: Vec<_> = alerts[0].1.iter().take(40).cloned().collect();
    [
        (
            "alerts-csv",
            "valid-generated.csv",
            mock_patrols::alerts_csv(&rows).into_bytes(),
        ),
        (
            "alerts-geojson",
            "valid-generated.geojson",
            mock_patrols::alerts_geojson(&rows[..12]).into_bytes(),
        ),
        (
            "zones",
            "valid-scenario.geojson",
            mock_patrols::zones_geojson(&scenario).into_bytes(),
        ),
    ]
}

/// Most memory this test process may have held at any time: files of a few
/// kilobytes (and a few hundred with a long cell) must not make a reader
/// hold anything near the 512 MiB file limit.
const PEAK_RSS_LIMIT: u64 = 512 << 20;

/// The process's peak resident size so far (`VmHWM` in `/proc/self/status`);
/// 0 where the system does not report it.
fn peak_rss_bytes() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            let line = s.lines().find(|l| l.starts_with("VmHWM:"))?.to_owned();
            line.split_whitespace().nth(1)?.parse::<u64>().ok()
        })
        .map_or(0, |kib| kib * 1024)
}

fn judge_alerts(file: &str, bytes: &[u8], format: Format) -> Result<(), TestCaseError> {
    let p = parse_alerts(file, bytes, format, &ReadOptions::default());
    prop_assert!(
        peak_rss_bytes() < PEAK_RSS_LIMIT,
        "peak {}",
        peak_rss_bytes()
    );
    prop_assert!(p.alerts.len() <= p.rows_read, "more alerts than rows read");
    for a in &p.alerts {
        let (lon, lat) = (a.at.lon(), a.at.lat());
        prop_assert!(
            lon.is_finite() && (-180.0..=180.0).contains(&lon),
            "lon {lon}"
        );
        prop_assert!(
            lat.is_finite() && (-90.0..=90.0).contains(&lat),
            "lat {lat}"
        );
    }
    for e in &p.errors {
        prop_assert_eq!(&e.file, file);
        prop_assert!(
            !e.message.trim().is_empty() && !e.field.is_empty(),
            "{:?}",
            e
        );
    }
    Ok(())
}

fn judge_zones(file: &str, bytes: &[u8]) -> Result<(), TestCaseError> {
    let parsed = parse_zones(file, bytes);
    prop_assert!(
        peak_rss_bytes() < PEAK_RSS_LIMIT,
        "peak {}",
        peak_rss_bytes()
    );
    match parsed {
        Ok(zones) => {
            for z in zones {
                let (w, s, e, n) = z.bbox;
                prop_assert!([w, s, e, n].iter().all(|v| v.is_finite()), "{:?}", z.bbox);
                prop_assert!(w >= -180.0 && e <= 180.0 && s >= -90.0 && n <= 90.0);
            }
        }
        Err(errors) => {
            prop_assert!(!errors.is_empty());
            for e in errors {
                prop_assert!(e.starts_with(file) && e.len() > file.len() + 2, "{e}");
            }
        }
    }
    Ok(())
}

#[test]
fn the_seeds_are_the_generated_files_and_read_cleanly() {
    for (target, name, bytes) in generated() {
        if std::env::var_os("GROUNDPROOF_WRITE_CORPUS").is_some() {
            std::fs::create_dir_all(corpus_dir(target)).expect("corpus folder");
            std::fs::write(corpus_dir(target).join(name), &bytes).expect("seed");
        }
        let seeds = corpus(target);
        let (_, seed) = seeds
            .iter()
            .find(|(n, _)| n == name)
            .unwrap_or_else(|| panic!("{target}/{name} in the corpus"));
        assert_eq!(
            seed, &bytes,
            "{target}/{name} differs from the generator: rerun with GROUNDPROOF_WRITE_CORPUS=1"
        );
    }
    for (name, bytes) in corpus("alerts-csv") {
        let p = parse_alerts(&name, &bytes, Format::Csv, &ReadOptions::default());
        assert!(
            p.errors.is_empty() && !p.alerts.is_empty(),
            "{name}: {:?}",
            p.errors
        );
    }
    for (name, bytes) in corpus("alerts-geojson") {
        let p = parse_alerts(&name, &bytes, Format::GeoJson, &ReadOptions::default());
        assert!(
            p.errors.is_empty() && !p.alerts.is_empty(),
            "{name}: {:?}",
            p.errors
        );
    }
    for (name, bytes) in corpus("zones") {
        let z = parse_zones(&name, &bytes).unwrap_or_else(|e| panic!("{name}: {e:?}"));
        assert!(!z.is_empty());
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: mock_patrols::damage::cases(256), ..ProptestConfig::default() })]

    #[test]
    fn damaged_alert_csv_gives_rows_and_placed_errors(
        pick in any::<prop::sample::Index>(),
        seed in any::<u64>(),
        structured in any::<bool>(),
    ) {
        let seeds = corpus("alerts-csv");
        let (name, valid) = pick.get(&seeds);
        let bytes = if structured { damage_csv(valid, seed) } else { damage_bytes(valid, seed) };
        judge_alerts(name, &bytes, Format::Csv)?;
    }

    #[test]
    fn damaged_alert_geojson_gives_rows_and_placed_errors(
        pick in any::<prop::sample::Index>(),
        seed in any::<u64>(),
        structured in any::<bool>(),
    ) {
        let seeds = corpus("alerts-geojson");
        let (name, valid) = pick.get(&seeds);
        let bytes = if structured { damage_json(valid, seed) } else { damage_bytes(valid, seed) };
        judge_alerts(name, &bytes, Format::GeoJson)?;
    }

    #[test]
    fn damaged_zone_files_give_zones_or_placed_errors(
        pick in any::<prop::sample::Index>(),
        seed in any::<u64>(),
        structured in any::<bool>(),
    ) {
        let seeds = corpus("zones");
        let (name, valid) = pick.get(&seeds);
        let bytes = if structured { damage_json(valid, seed) } else { damage_bytes(valid, seed) };
        judge_zones(name, &bytes)?;
    }
}

/// Found by `damaged_zone_files_give_zones_or_placed_errors`: a position of
/// fewer than two numbers passed the geojson crate's reader and then
/// panicked in its conversion to geo (geojson 1.0.0,
/// `src/conversion/to_geo_types.rs:310`, index out of bounds).
#[test]
fn a_zone_position_without_a_latitude_is_an_error_not_a_panic() {
    for coordinates in [
        "[[[0],[1,0],[1,1],[0,0]]]",
        "[[[0,0],[1,0],[1,1],[]]]",
        "[[[0,0],[1,0],[1,1],[0,0]],[[0.2]]]",
    ] {
        let file = format!(
            r#"{{"type":"FeatureCollection","features":[{{"type":"Feature","properties":{{"name":"Core"}},"geometry":{{"type":"Polygon","coordinates":{coordinates}}}}}]}}"#
        );
        let errors = parse_zones("z.geojson", file.as_bytes()).expect_err(coordinates);
        assert!(
            errors[0].contains(
                "feature 0: field 'geometry': a position needs a longitude and a latitude"
            ),
            "{errors:?}"
        );
    }
}
