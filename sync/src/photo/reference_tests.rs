//! Agreement of [`read_photo_meta`] and [`inspect_jpeg`] with exiftool and
//! Pillow on the reference photos in tests/reference/photo/.
//!
//! The photos are made by mock-patrols' `make_photo`; what exiftool 12.57
//! (`-n -json`) and Pillow 13.0.0 read from them is in tools_read.json,
//! written by tests/reference/photo/read_with_tools.py (versions recorded
//! in the file). Tolerances: time exact, latitude/longitude 1e-7 degree,
//! direction 1e-3 degree.

use chrono::{DateTime, NaiveDateTime, Utc};
use serde_json::Value;

use super::{PhotoLimits, inspect_jpeg, read_photo_meta};

const DIR: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/../tests/reference/photo");

fn fixture() -> Value {
    let text = std::fs::read_to_string(format!("{DIR}/tools_read.json")).expect("tools_read.json");
    serde_json::from_str(&text).expect("json")
}

/// exiftool's Composite SubSecDateTimeOriginal, "YYYY:MM:DD HH:MM:SS[.f]±HH:MM".
fn exiftool_instant(s: &str) -> DateTime<Utc> {
    let (local, off) = s.split_at(s.len() - 6);
    let fmt = if local.contains('.') {
        "%Y:%m:%d %H:%M:%S%.f"
    } else {
        "%Y:%m:%d %H:%M:%S"
    };
    let local = NaiveDateTime::parse_from_str(local, fmt).expect("exiftool time");
    let sign = if off.starts_with('-') { -1 } else { 1 };
    let minutes =
        off[1..3].parse::<i64>().expect("hh") * 60 + off[4..6].parse::<i64>().expect("mm");
    (local - chrono::TimeDelta::minutes(sign * minutes)).and_utc()
}

#[test]
fn read_photo_meta_agrees_with_exiftool_and_pillow() {
    let fx = fixture();
    let photos = fx["photos"].as_array().expect("photos");
    assert_eq!(photos.len(), 5);
    for p in photos {
        let name = p["file"].as_str().expect("file");
        let bytes = std::fs::read(format!("{DIR}/{name}")).expect("photo");
        let m = read_photo_meta(&bytes).expect("jpeg");
        let (e, pil) = (&p["exiftool"], &p["pillow"]);
        let num = |v: &Value| v.as_f64().expect("number");

        let want = exiftool_instant(e["SubSecDateTimeOriginal"].as_str().expect("time"));
        assert_eq!(m.taken_at, Some(want), "{name} time");
        assert!(
            (m.lat.expect("lat") - num(&e["GPSLatitude"])).abs() < 1e-7,
            "{name} lat"
        );
        assert!(
            (m.lon.expect("lon") - num(&e["GPSLongitude"])).abs() < 1e-7,
            "{name} lon"
        );
        let dir = m.direction_deg.expect("direction");
        assert!(
            (dir - num(&e["GPSImgDirection"])).abs() < 1e-3,
            "{name} direction"
        );

        assert!(
            (m.lat.expect("lat") - num(&pil["lat"])).abs() < 1e-7,
            "{name} pillow lat"
        );
        assert!(
            (m.lon.expect("lon") - num(&pil["lon"])).abs() < 1e-7,
            "{name} pillow lon"
        );
        assert!(
            (dir - num(&pil["direction_deg"])).abs() < 1e-3,
            "{name} pillow direction"
        );
    }
}

#[test]
fn inspect_jpeg_agrees_on_size_and_hash() {
    let fx = fixture();
    for p in fx["photos"].as_array().expect("photos") {
        let name = p["file"].as_str().expect("file");
        let bytes = std::fs::read(format!("{DIR}/{name}")).expect("photo");
        let c = inspect_jpeg(&bytes, &PhotoLimits::default()).expect("inspect");
        let pil = &p["pillow"];
        assert_eq!(Some(u64::from(c.width)), pil["width"].as_u64(), "{name}");
        assert_eq!(Some(u64::from(c.height)), pil["height"].as_u64(), "{name}");
        assert_eq!(c.meta, read_photo_meta(&bytes).expect("jpeg"));
        // Python hashlib's SHA-256 of the same file, recorded by the script.
        assert_eq!(Some(c.sha256.as_str()), p["sha256"].as_str(), "{name}");
    }
}
