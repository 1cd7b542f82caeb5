//! Checks UTM and MGRS against the GeoConvert fixture in `tests/reference/coords/`.
//!
//! The fixture (3 354 points: random global, tropical, equator, zone and band edges, Norway and
//! Svalbard, latitude limits, ±180°) was made by `tests/reference/coords/make_fixture.py` with
//! GeoConvert from GeographicLib 2.1.2 (the version is in the file's header).

use super::{Hemisphere, MgrsPrecision, to_mgrs, to_utm};

const FIXTURE: &str = include_str!(concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/../tests/reference/coords/utm_mgrs_geoconvert.csv"
));

struct Row<'a> {
    lat: f64,
    lon: f64,
    zone: u8,
    hemi: Hemisphere,
    easting: f64,
    northing: f64,
    mgrs: [&'a str; 4],
}

fn rows() -> Vec<Row<'static>> {
    assert!(FIXTURE.contains("GeographicLib version 2.1.2"));
    FIXTURE
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("lat,"))
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            assert_eq!(f.len(), 10, "{l}");
            Row {
                lat: f[0].parse().unwrap(),
                lon: f[1].parse().unwrap(),
                zone: f[2].parse().unwrap(),
                hemi: if f[3] == "n" {
                    Hemisphere::North
                } else {
                    Hemisphere::South
                },
                easting: f[4].parse().unwrap(),
                northing: f[5].parse().unwrap(),
                mgrs: [f[6], f[7], f[8], f[9]],
            }
        })
        .collect()
}

#[test]
fn utm_matches_geoconvert_to_the_millimetre() {
    let rows = rows();
    assert!(rows.len() > 3000);
    let mut worst: f64 = 0.0;
    for r in &rows {
        let u = to_utm(r.lat, r.lon).unwrap();
        assert_eq!(
            (u.zone, u.hemisphere),
            (r.zone, r.hemi),
            "{} {}",
            r.lat,
            r.lon
        );
        // GeoConvert printed to 1 mm (-p 3), so agreement to the millimetre means the
        // difference is within half a millimetre plus float noise.
        let d = (u.easting - r.easting)
            .abs()
            .max((u.northing - r.northing).abs());
        worst = worst.max(d);
        assert!(
            d <= 0.000_501,
            "{} {}: {u} vs {} {}",
            r.lat,
            r.lon,
            r.easting,
            r.northing
        );
    }
    assert!(worst <= 0.000_501, "worst {worst}");
}

#[test]
fn mgrs_matches_geoconvert_exactly() {
    let precisions = [
        MgrsPrecision::ONE_METRE,
        MgrsPrecision::TEN_METRES,
        MgrsPrecision::ONE_KILOMETRE,
        MgrsPrecision::HUNDRED_KILOMETRES,
    ];
    for r in rows() {
        for (p, want) in precisions.iter().zip(r.mgrs) {
            assert_eq!(
                to_mgrs(r.lat, r.lon, *p).unwrap(),
                want,
                "{} {}",
                r.lat,
                r.lon
            );
        }
    }
}
