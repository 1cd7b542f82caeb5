//! EXIF time, position and view direction of a field photo.
//!
//! [`read_photo_meta`] reads the tags a patrol photo needs (CIPA DC-008 /
//! JEITA CP-3451, Exif 2.3x, tag table in kamadak-exif 0.6.2 `src/tag.rs`):
//! DateTimeOriginal (0x9003) with OffsetTimeOriginal (0x9011) and
//! SubSecTimeOriginal (0x9291) from the Exif IFD, and GPSLatitude/Ref
//! (0x0002/0x0001), GPSLongitude/Ref (0x0004/0x0003), GPSImgDirection/Ref
//! (0x0011/0x0010), GPSTimeStamp (0x0007) and GPSDateStamp (0x001D) from the
//! GPS IFD. Missing or malformed EXIF is not an error: the
//! field it would have filled stays `None`. Only input that is not a JPEG is
//! refused. EXIF is parsed with `continue_on_error`, so one bad IFD entry does
//! not hide the good ones (reliability notes §1.3).

use chrono::{DateTime, FixedOffset, NaiveDate, Offset, Utc};
use exif::{Exif, Field, In, Reader, Tag, Value};
use serde::{Deserialize, Serialize};

/// What a photo's EXIF says about when, where and which way it was taken.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct PhotoMeta {
    /// When the photo was taken. DateTimeOriginal is the camera's local time: with
    /// OffsetTimeOriginal the offset is applied; without it the GPS time stamp (UTC) is used
    /// when the photo has one; otherwise the local time is placed in the camera's zone given to
    /// [`read_photo_meta_in`] ([`read_photo_meta`] takes UTC). [`PhotoMeta::time_basis`] says
    /// which.
    pub taken_at: Option<DateTime<Utc>>,
    /// What [`PhotoMeta::taken_at`] rests on; `None` when there is no time.
    #[serde(default)]
    pub time_basis: Option<TimeBasis>,
    /// WGS-84 latitude in decimal degrees, south negative.
    pub lat: Option<f64>,
    /// WGS-84 longitude in decimal degrees, west negative.
    pub lon: Option<f64>,
    /// GPSImgDirection in degrees, as written, from the north that
    /// [`PhotoMeta::direction_north`] names.
    pub direction_deg: Option<f64>,
    /// GPSImgDirectionRef: true or magnetic north (true when the tag is absent, its default in
    /// Exif 2.32). A magnetic direction is not a bearing from true north: see
    /// [`PhotoMeta::true_direction_deg`].
    #[serde(default)]
    pub direction_north: Option<North>,
}

/// What a photo's time rests on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TimeBasis {
    /// DateTimeOriginal with its OffsetTimeOriginal.
    Offset,
    /// The GPS date and time stamps (UTC).
    GpsUtc,
    /// DateTimeOriginal placed in the camera's zone, given by the reader.
    CameraZone,
}

/// The north an image direction is measured from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum North {
    True,
    Magnetic,
}

impl PhotoMeta {
    /// The image direction as a bearing from true north; `None` for a magnetic direction
    /// (the declination is not known here) or no direction.
    pub fn true_direction_deg(&self) -> Option<f64> {
        match self.direction_north {
            Some(North::True) => self.direction_deg,
            _ => None,
        }
    }
}

/// Reads [`PhotoMeta`] from the bytes of a JPEG file; a time with neither offset nor GPS
/// stamp is taken as UTC (see [`read_photo_meta_in`]).
///
/// Returns `Err` only when `bytes` does not start with the JPEG SOI marker
/// (`FF D8`); a JPEG without EXIF, or with broken EXIF, gives a `PhotoMeta`
/// whose unreadable fields are `None`.
pub fn read_photo_meta(bytes: &[u8]) -> Result<PhotoMeta, String> {
    read_photo_meta_in(bytes, Utc.fix())
}

/// [`read_photo_meta`] with the camera's zone, used for a DateTimeOriginal that has neither
/// OffsetTimeOriginal nor a GPS time stamp.
pub fn read_photo_meta_in(bytes: &[u8], camera_zone: FixedOffset) -> Result<PhotoMeta, String> {
    if !is_jpeg(bytes) {
        return Err("not a JPEG file (no SOI marker FF D8)".to_string());
    }
    let mut cursor = std::io::Cursor::new(bytes);
    let parsed = Reader::new()
        .continue_on_error(true)
        .read_from_container(&mut cursor)
        .or_else(|e| e.distill_partial_result(|_ignored| {}));
    Ok(match parsed {
        Ok(exif) => meta_from_exif(&exif, camera_zone),
        Err(_) => PhotoMeta::default(),
    })
}

/// True when `bytes` starts with the JPEG SOI marker.
pub(crate) fn is_jpeg(bytes: &[u8]) -> bool {
    bytes.len() >= 2 && bytes[0] == 0xFF && bytes[1] == 0xD8
}

fn meta_from_exif(exif: &Exif, camera_zone: FixedOffset) -> PhotoMeta {
    let (taken_at, time_basis) = match taken_at(exif, camera_zone) {
        Some((t, basis)) => (Some(t), Some(basis)),
        None => (None, None),
    };
    let direction_deg = direction(exif);
    PhotoMeta {
        taken_at,
        time_basis,
        lat: coordinate(
            exif,
            Tag::GPSLatitude,
            Tag::GPSLatitudeRef,
            90.0,
            b'N',
            b'S',
        ),
        lon: coordinate(
            exif,
            Tag::GPSLongitude,
            Tag::GPSLongitudeRef,
            180.0,
            b'E',
            b'W',
        ),
        direction_deg,
        direction_north: direction_deg.and_then(|_| direction_north(exif)),
    }
}

fn field(exif: &Exif, tag: Tag) -> Option<&Field> {
    exif.get_field(tag, In::PRIMARY)
}

fn first_ascii(exif: &Exif, tag: Tag) -> Option<&[u8]> {
    match &field(exif, tag)?.value {
        Value::Ascii(v) => v.first().map(Vec::as_slice),
        _ => None,
    }
}

/// The time of the photo and what it rests on: the offset when written, else the GPS stamp,
/// else the camera's zone.
fn taken_at(exif: &Exif, camera_zone: FixedOffset) -> Option<(DateTime<Utc>, TimeBasis)> {
    let Some(mut dt) = first_ascii(exif, Tag::DateTimeOriginal)
        .and_then(|raw| exif::DateTime::from_ascii(raw).ok())
    else {
        return gps_time(exif).map(|t| (t, TimeBasis::GpsUtc));
    };
    if let Some(sub) = first_ascii(exif, Tag::SubSecTimeOriginal) {
        // A bad SubSecTimeOriginal is dropped, not fatal.
        if dt.parse_subsec(sub).is_err() {
            dt.nanosecond = None;
        }
    }
    if let Some(off) = first_ascii(exif, Tag::OffsetTimeOriginal)
        && dt.parse_offset(off).is_err()
    {
        dt.offset = None;
    }
    let local =
        NaiveDate::from_ymd_opt(i32::from(dt.year), u32::from(dt.month), u32::from(dt.day))?
            .and_hms_nano_opt(
                u32::from(dt.hour),
                u32::from(dt.minute),
                u32::from(dt.second),
                dt.nanosecond.unwrap_or(0),
            )?;
    let (offset_s, basis) = match dt.offset {
        Some(minutes) => (i64::from(minutes) * 60, TimeBasis::Offset),
        None => {
            if let Some(t) = gps_time(exif) {
                return Some((t, TimeBasis::GpsUtc));
            }
            (
                i64::from(camera_zone.local_minus_utc()),
                TimeBasis::CameraZone,
            )
        }
    };
    let utc = local.checked_sub_signed(chrono::TimeDelta::try_seconds(offset_s)?)?;
    Some((utc.and_utc(), basis))
}

/// GPSDateStamp (`YYYY:MM:DD`) and GPSTimeStamp (hour, minute, second as rationals), UTC.
fn gps_time(exif: &Exif) -> Option<DateTime<Utc>> {
    let date = std::str::from_utf8(first_ascii(exif, Tag::GPSDateStamp)?).ok()?;
    let date = NaiveDate::parse_from_str(date.trim_end_matches('\0'), "%Y:%m:%d").ok()?;
    let Value::Rational(v) = &field(exif, Tag::GPSTimeStamp)?.value else {
        return None;
    };
    let parts = v
        .iter()
        .map(|r| (r.denom != 0).then(|| r.to_f64()))
        .collect::<Option<Vec<f64>>>()?;
    let [h, m, s] = parts.as_slice() else {
        return None;
    };
    if !((0.0..24.0).contains(h) && (0.0..60.0).contains(m) && (0.0..61.0).contains(s)) {
        return None;
    }
    let nanos = (h * 3600.0 + m * 60.0 + s) * 1e9;
    Some(
        date.and_hms_opt(0, 0, 0)?.and_utc() + chrono::TimeDelta::nanoseconds(nanos.round() as i64),
    )
}

/// GPSImgDirectionRef: `T` true north (also when absent, its default), `M` magnetic north.
fn direction_north(exif: &Exif) -> Option<North> {
    match first_ascii(exif, Tag::GPSImgDirectionRef) {
        None => Some(North::True),
        Some(v) => match v.first()?.to_ascii_uppercase() {
            b'T' => Some(North::True),
            b'M' => Some(North::Magnetic),
            _ => None,
        },
    }
}

/// Degrees from three unsigned rationals (d, m, s), signed by the Ref tag.
fn coordinate(exif: &Exif, tag: Tag, ref_tag: Tag, max: f64, pos: u8, neg: u8) -> Option<f64> {
    let Value::Rational(v) = &field(exif, tag)?.value else {
        return None;
    };
    let sign = match first_ascii(exif, ref_tag)?.first()?.to_ascii_uppercase() {
        c if c == pos => 1.0,
        c if c == neg => -1.0,
        _ => return None,
    };
    let parts = v
        .iter()
        .take(3)
        .map(|r| (r.denom != 0).then(|| r.to_f64()))
        .collect::<Option<Vec<f64>>>()?;
    let (d, m, s) = match parts.as_slice() {
        [d, m, s] => (*d, *m, *s),
        // Some writers give degrees and decimal minutes only (common practice).
        [d, m] => (*d, *m, 0.0),
        [d] => (*d, 0.0, 0.0),
        _ => return None,
    };
    let deg = d + m / 60.0 + s / 3600.0;
    (deg.is_finite() && deg <= max).then_some(sign * deg)
}

fn direction(exif: &Exif) -> Option<f64> {
    let Value::Rational(v) = &field(exif, Tag::GPSImgDirection)?.value else {
        return None;
    };
    let r = v.first()?;
    if r.denom == 0 {
        return None;
    }
    let d = r.to_f64();
    // CIPA DC-008 gives the range 0.00 to 359.99; 360 is accepted as north.
    (d.is_finite() && (0.0..=360.0).contains(&d)).then_some(d)
}

#[cfg(test)]
mod tests {
    use super::*;
    use exif::Rational;
    use exif::experimental::Writer;

    /// Builds a minimal JPEG (SOI, APP1 Exif, EOI) around the given fields.
    /// Not decodable as an image, but a valid EXIF container.
    fn jpeg_with_fields(fields: &[Field]) -> Vec<u8> {
        let mut w = Writer::new();
        for f in fields {
            w.push_field(f);
        }
        let mut tiff = std::io::Cursor::new(Vec::new());
        w.write(&mut tiff, false).expect("write exif");
        let tiff = tiff.into_inner();
        let mut out = vec![0xFF, 0xD8, 0xFF, 0xE1];
        let len = u16::try_from(tiff.len() + 8).expect("small");
        out.extend_from_slice(&len.to_be_bytes());
        out.extend_from_slice(b"Exif\0\0");
        out.extend_from_slice(&tiff);
        out.extend_from_slice(&[0xFF, 0xD9]);
        out
    }

    fn ascii(tag: Tag, s: &str) -> Field {
        Field {
            tag,
            ifd_num: In::PRIMARY,
            value: Value::Ascii(vec![s.as_bytes().to_vec()]),
        }
    }

    fn rationals(tag: Tag, v: &[(u32, u32)]) -> Field {
        let value = Value::Rational(
            v.iter()
                .map(|&(num, denom)| Rational { num, denom })
                .collect(),
        );
        Field {
            tag,
            ifd_num: In::PRIMARY,
            value,
        }
    }

    #[test]
    fn png_is_refused() {
        // PNG signature, ISO/IEC 15948 §5.2.
        let png = [0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A, 0, 0, 0, 0];
        assert!(read_photo_meta(&png).is_err());
        assert!(read_photo_meta(&[]).is_err());
    }

    #[test]
    fn jpeg_without_exif_gives_empty_meta() {
        let bare = [0xFF, 0xD8, 0xFF, 0xD9];
        assert_eq!(read_photo_meta(&bare), Ok(PhotoMeta::default()));
        // Garbage after SOI is still "a JPEG with no readable EXIF".
        let garbled = [
            0xFF, 0xD8, 0xFF, 0xE1, 0x00, 0x10, b'E', b'x', b'i', b'f', 0, 0, 1, 2,
        ];
        assert_eq!(read_photo_meta(&garbled), Ok(PhotoMeta::default()));
    }

    #[test]
    fn reads_time_with_offset_and_southern_western_position() {
        // Values follow the probe in formats-and-crates.md §4: 10:05:30 at
        // -04:00 is 14:05:30Z; 3 deg 6 min 0 sec S.
        let f = [
            ascii(Tag::DateTimeOriginal, "2026:11:30 10:05:30"),
            ascii(Tag::OffsetTimeOriginal, "-04:00"),
            ascii(Tag::SubSecTimeOriginal, "12"),
            ascii(Tag::GPSLatitudeRef, "S"),
            rationals(Tag::GPSLatitude, &[(3, 1), (6, 1), (0, 1)]),
            ascii(Tag::GPSLongitudeRef, "W"),
            rationals(Tag::GPSLongitude, &[(60, 1), (1, 1), (3000, 100)]),
            ascii(Tag::GPSImgDirectionRef, "T"),
            rationals(Tag::GPSImgDirection, &[(2735, 10)]),
        ];
        let m = read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg");
        let t = m.taken_at.expect("time");
        assert_eq!(t.to_rfc3339(), "2026-11-30T14:05:30.120+00:00");
        // 3 + 6/60 = 3.1 (exact arithmetic).
        assert!((m.lat.expect("lat") + 3.1).abs() < 1e-12);
        // 60 + 1/60 + 30/3600 = 60.025 (exact arithmetic).
        assert!((m.lon.expect("lon") + 60.025).abs() < 1e-12);
        assert_eq!(m.direction_deg, Some(273.5));
    }

    #[test]
    fn time_without_offset_is_taken_as_utc() {
        let f = [ascii(Tag::DateTimeOriginal, "2025:01:02 03:04:05")];
        let m = read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg");
        assert_eq!(
            m.taken_at.map(|t| t.to_rfc3339()).as_deref(),
            Some("2025-01-02T03:04:05+00:00")
        );
        assert_eq!((m.lat, m.lon, m.direction_deg), (None, None, None));
    }

    /// A camera writes DateTimeOriginal in its own local time with no offset (CIPA DC-008,
    /// Exif 2.32 §4.6.5: OffsetTimeOriginal is optional); the GPS time stamp is UTC (Exif 2.32,
    /// GPSTimeStamp and GPSDateStamp "UTC"). With both and no offset, the GPS stamp is the
    /// instant: 06:04:05 local at UTC+3 is 03:04:05Z.
    #[test]
    fn time_without_offset_uses_the_gps_utc_stamp() {
        let f = [
            ascii(Tag::DateTimeOriginal, "2025:01:02 06:04:05"),
            ascii(Tag::GPSDateStamp, "2025:01:02"),
            rationals(Tag::GPSTimeStamp, &[(3, 1), (4, 1), (5, 1)]),
        ];
        let m = read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg");
        assert_eq!(
            m.taken_at.map(|t| t.to_rfc3339()).as_deref(),
            Some("2025-01-02T03:04:05+00:00")
        );
        assert_eq!(m.time_basis, Some(TimeBasis::GpsUtc));
        // An offset, when written, wins over the GPS stamp.
        let mut with_offset = f.to_vec();
        with_offset.push(ascii(Tag::OffsetTimeOriginal, "+03:00"));
        let m = read_photo_meta(&jpeg_with_fields(&with_offset)).expect("jpeg");
        assert_eq!(m.time_basis, Some(TimeBasis::Offset));
        assert_eq!(
            m.taken_at.map(|t| t.to_rfc3339()).as_deref(),
            Some("2025-01-02T03:04:05+00:00")
        );
    }

    /// Without offset and GPS stamp the camera's zone, given per return, places the local time:
    /// 06:04:05 at UTC+03:00 is 03:04:05Z (hand computation).
    #[test]
    fn time_without_offset_or_gps_uses_the_camera_zone() {
        let f = [ascii(Tag::DateTimeOriginal, "2025:01:02 06:04:05")];
        let zone = chrono::FixedOffset::east_opt(3 * 3600).expect("offset");
        let m = read_photo_meta_in(&jpeg_with_fields(&f), zone).expect("jpeg");
        assert_eq!(
            m.taken_at.map(|t| t.to_rfc3339()).as_deref(),
            Some("2025-01-02T03:04:05+00:00")
        );
        assert_eq!(m.time_basis, Some(TimeBasis::CameraZone));
    }

    /// GPSImgDirectionRef `M` means magnetic north (Exif 2.32, GPS tag 0x0010): the direction
    /// is kept and labelled magnetic, and not given out as a bearing from true north.
    #[test]
    fn a_magnetic_direction_is_labelled_magnetic() {
        let f = [
            ascii(Tag::GPSImgDirectionRef, "M"),
            rationals(Tag::GPSImgDirection, &[(2735, 10)]),
        ];
        let m = read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg");
        assert_eq!(m.direction_deg, Some(273.5));
        assert_eq!(m.direction_north, Some(North::Magnetic));
        assert_eq!(m.true_direction_deg(), None);
        let t = [
            ascii(Tag::GPSImgDirectionRef, "T"),
            rationals(Tag::GPSImgDirection, &[(2735, 10)]),
        ];
        let m = read_photo_meta(&jpeg_with_fields(&t)).expect("jpeg");
        assert_eq!(m.direction_north, Some(North::True));
        assert_eq!(m.true_direction_deg(), Some(273.5));
    }

    #[test]
    fn bad_values_become_none() {
        let f = [
            ascii(Tag::DateTimeOriginal, "2025:13:40 99:04:05"),
            ascii(Tag::GPSLatitudeRef, "X"),
            rationals(Tag::GPSLatitude, &[(3, 1), (6, 1), (0, 1)]),
            ascii(Tag::GPSLongitudeRef, "E"),
            rationals(Tag::GPSLongitude, &[(3, 0), (6, 1), (0, 1)]),
            rationals(Tag::GPSImgDirection, &[(400, 1)]),
        ];
        let m = read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg");
        assert_eq!(m, PhotoMeta::default());
    }

    #[test]
    fn latitude_beyond_90_is_refused() {
        let f = [
            ascii(Tag::GPSLatitudeRef, "N"),
            rationals(Tag::GPSLatitude, &[(91, 1), (0, 1), (0, 1)]),
        ];
        assert_eq!(
            read_photo_meta(&jpeg_with_fields(&f)).expect("jpeg").lat,
            None
        );
    }
}
