//! Thin adapter for the photo metadata the field kit records with each photo
//! (time taken, GPS position, image direction). It keeps the signature of
//! `crate::photo::read_photo_meta`, which the photo module provides; until
//! that is wired in, this minimal reader uses kamadak-exif 0.6 directly.
//!
//! Time: the GPS date and time stamps (UTC by definition, EXIF 2.3 §4.6.6)
//! win; otherwise `DateTimeOriginal` with `OffsetTimeOriginal`; a local time
//! without offset is not guessed and gives `None`.

use chrono::{DateTime, NaiveDate, NaiveDateTime, Utc};
use exif::{In, Tag, Value};

/// Metadata read from a photo's EXIF block; every field is optional.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct PhotoMeta {
    /// When the photo was taken.
    pub taken_at: Option<DateTime<Utc>>,
    /// GPS latitude, degrees (south negative).
    pub lat: Option<f64>,
    /// GPS longitude, degrees (west negative).
    pub lon: Option<f64>,
    /// Image direction, degrees from north.
    pub direction_deg: Option<f64>,
}

/// Reads [`PhotoMeta`] from JPEG bytes; `Err` when there is no readable EXIF block.
pub fn read_photo_meta(bytes: &[u8]) -> Result<PhotoMeta, String> {
    let exif = exif::Reader::new()
        .read_from_container(&mut std::io::Cursor::new(bytes))
        .map_err(|e| format!("no readable EXIF: {e}"))?;
    let field = |tag: Tag| exif.get_field(tag, In::PRIMARY).map(|f| &f.value);
    let ascii = |tag: Tag| match field(tag) {
        Some(Value::Ascii(v)) => v
            .first()
            .and_then(|s| std::str::from_utf8(s).ok())
            .map(|s| s.trim_end_matches('\0').trim().to_owned()),
        _ => None,
    };
    let rationals = |tag: Tag| match field(tag) {
        Some(Value::Rational(v)) => Some(v.iter().map(|r| r.to_f64()).collect::<Vec<_>>()),
        _ => None,
    };
    let dms = |tag: Tag, reference: Tag, negative: &str, max: f64| {
        let v = rationals(tag)?;
        let deg = match v.as_slice() {
            [d, m, s] => d + m / 60.0 + s / 3600.0,
            [d, m] => d + m / 60.0,
            [d] => *d,
            _ => return None,
        };
        let sign = if ascii(reference).as_deref() == Some(negative) {
            -1.0
        } else {
            1.0
        };
        let deg = sign * deg;
        (deg.is_finite() && deg.abs() <= max).then_some(deg)
    };
    let lat = dms(Tag::GPSLatitude, Tag::GPSLatitudeRef, "S", 90.0);
    let lon = dms(Tag::GPSLongitude, Tag::GPSLongitudeRef, "W", 180.0);
    let (lat, lon) = match (lat, lon) {
        (Some(a), Some(b)) => (Some(a), Some(b)),
        _ => (None, None),
    };
    let direction_deg = rationals(Tag::GPSImgDirection)
        .and_then(|v| v.first().copied())
        .filter(|d| d.is_finite() && (0.0..=360.0).contains(d));

    let gps_time = || {
        let date = NaiveDate::parse_from_str(&ascii(Tag::GPSDateStamp)?, "%Y:%m:%d").ok()?;
        let hms = rationals(Tag::GPSTimeStamp)?;
        let [h, m, s] = hms.as_slice() else {
            return None;
        };
        let secs = h * 3600.0 + m * 60.0 + s;
        if !(0.0..86_400.0).contains(&secs) {
            return None;
        }
        let t = date.and_hms_opt(0, 0, 0)? + chrono::Duration::milliseconds((secs * 1000.0) as i64);
        Some(t.and_utc())
    };
    let original_time = || {
        let local =
            NaiveDateTime::parse_from_str(&ascii(Tag::DateTimeOriginal)?, "%Y:%m:%d %H:%M:%S")
                .ok()?;
        let offset = ascii(Tag::OffsetTimeOriginal)?;
        let stamp = format!("{}{}", local.format("%Y-%m-%dT%H:%M:%S"), offset);
        DateTime::parse_from_rfc3339(&stamp)
            .ok()
            .map(|t| t.with_timezone(&Utc))
    };
    Ok(PhotoMeta {
        taken_at: gps_time().or_else(original_time),
        lat,
        lon,
        direction_deg,
    })
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use exif::{Field, Rational};

    /// A minimal JPEG-like byte string: SOI, an APP1 EXIF segment written by
    /// kamadak-exif's own writer, EOI (enough for the EXIF container reader).
    pub(crate) fn jpeg_with_exif(fields: &[Field]) -> Vec<u8> {
        let mut w = exif::experimental::Writer::new();
        for f in fields {
            w.push_field(f);
        }
        let mut tiff = std::io::Cursor::new(Vec::new());
        w.write(&mut tiff, false).expect("write exif");
        let tiff = tiff.into_inner();
        let mut out = vec![0xff, 0xd8, 0xff, 0xe1];
        let len = u16::try_from(tiff.len() + 8).expect("small");
        out.extend_from_slice(&len.to_be_bytes());
        out.extend_from_slice(b"Exif\0\0");
        out.extend_from_slice(&tiff);
        out.extend_from_slice(&[0xff, 0xd9]);
        out
    }

    pub(crate) fn gps_fields(lat: f64, lon: f64) -> Vec<Field> {
        let r = |v: f64| Rational {
            num: (v.abs() * 1e6).round() as u32,
            denom: 1_000_000,
        };
        let f = |tag, value| Field {
            tag,
            ifd_num: In::PRIMARY,
            value,
        };
        vec![
            f(
                Tag::GPSLatitudeRef,
                Value::Ascii(vec![if lat < 0.0 {
                    b"S".to_vec()
                } else {
                    b"N".to_vec()
                }]),
            ),
            f(
                Tag::GPSLatitude,
                Value::Rational(vec![r(lat), r(0.0), r(0.0)]),
            ),
            f(
                Tag::GPSLongitudeRef,
                Value::Ascii(vec![if lon < 0.0 {
                    b"W".to_vec()
                } else {
                    b"E".to_vec()
                }]),
            ),
            f(
                Tag::GPSLongitude,
                Value::Rational(vec![r(lon), r(0.0), r(0.0)]),
            ),
            f(Tag::GPSImgDirection, Value::Rational(vec![r(123.5)])),
            f(
                Tag::GPSDateStamp,
                Value::Ascii(vec![b"2026:09:03".to_vec()]),
            ),
            f(
                Tag::GPSTimeStamp,
                Value::Rational(vec![r(10.0), r(15.0), r(30.0)]),
            ),
        ]
    }

    #[test]
    fn reads_gps_direction_and_time() {
        // Values are the ones written just above (round trip through kamadak-exif 0.6.2).
        let bytes = jpeg_with_exif(&gps_fields(-1.2345, 23.4567));
        let m = read_photo_meta(&bytes).expect("meta");
        assert!((m.lat.expect("lat") + 1.2345).abs() < 1e-6);
        assert!((m.lon.expect("lon") - 23.4567).abs() < 1e-6);
        assert_eq!(m.direction_deg, Some(123.5));
        assert_eq!(
            m.taken_at.map(|t| t.to_rfc3339()),
            Some("2026-09-03T10:15:30+00:00".into())
        );
        assert!(read_photo_meta(b"\xff\xd8\xff\xd9").is_err());
    }
}
