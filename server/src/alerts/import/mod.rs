//! Import of alert files (CSV and GeoJSON) and zone files.
//!
//! Parsing is separate from storing: a file is parsed completely first, and
//! a file with any error imports nothing unless the caller asked to skip
//! invalid rows. Storing is one transaction (see [`crate::alerts::events`]), so a
//! failure leaves the database as it was.

mod csv_file;
mod geojson_file;
mod shape;
mod zones;

pub use shape::to_multipolygon;
pub use zones::{ParsedZone, parse_zones};

use crate::domain::{Confidence, ConfidenceMap, Day, LonLat};
use serde::Serialize;

/// Largest alert file accepted, bytes (documented in the README).
pub const MAX_FILE_BYTES: usize = 512 * 1024 * 1024;
/// Errors listed in full in a refusal; the count of the rest is given.
pub const MAX_LISTED_ERRORS: usize = 200;

/// One valid alert row.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParsedAlert {
    pub at: LonLat,
    pub day: Day,
    pub confidence: Confidence,
    /// Line in the file (CSV) or feature index (GeoJSON).
    pub line: usize,
}

// What a failed import reports travels in `crate::Error::ImportRejected`,
// so it is defined beside the error type (below this module).
pub use crate::error::{ImportFailure, RowError};

/// The file formats we read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Format {
    Csv,
    GeoJson,
}

impl Format {
    /// From a name given by the user (`csv`, `geojson`, `json`).
    pub fn parse(raw: &str) -> Result<Self, String> {
        match raw.to_ascii_lowercase().as_str() {
            "csv" | "txt" => Ok(Format::Csv),
            "geojson" | "json" => Ok(Format::GeoJson),
            other => Err(format!("unknown format '{other}': expected csv or geojson")),
        }
    }

    /// From the file name's ending, else from the first non-blank byte.
    pub fn detect(file_name: &str, bytes: &[u8]) -> Self {
        let lower = file_name.to_ascii_lowercase();
        if lower.ends_with(".geojson") || lower.ends_with(".json") {
            return Format::GeoJson;
        }
        if lower.ends_with(".csv") {
            return Format::Csv;
        }
        match bytes.iter().find(|b| !b.is_ascii_whitespace()) {
            Some(b'{') => Format::GeoJson,
            _ => Format::Csv,
        }
    }
}

/// How to read an alert file.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReadOptions {
    pub lon_column: Option<String>,
    pub lat_column: Option<String>,
    pub date_column: Option<String>,
    pub confidence_column: Option<String>,
    pub confidence: ConfidenceMap,
    /// The last detection day accepted; a later date is refused with its line. The import
    /// sets it to [`latest_import_day`] whatever the caller gave.
    pub not_after: Option<Day>,
}

/// The import day as the latest calendar day anywhere on Earth (UTC+14, the easternmost
/// zone in use: Line Islands, from memory of the IANA tz database), so that no detection
/// dated "today" in its own zone is refused, and anything later is.
pub fn latest_import_day() -> Day {
    Day::from_date((chrono::Utc::now() + chrono::Duration::hours(14)).date_naive())
}

/// Everything read from one file.
#[derive(Debug, Clone, PartialEq)]
pub struct Parsed {
    pub rows_read: usize,
    pub alerts: Vec<ParsedAlert>,
    pub errors: Vec<RowError>,
}

/// Parse a whole alert file. A file-level problem (not UTF-8, no header,
/// not GeoJSON) is one error at line/feature 0.
pub fn parse_alerts(file: &str, bytes: &[u8], format: Format, opts: &ReadOptions) -> Parsed {
    if bytes.len() > MAX_FILE_BYTES {
        return Parsed {
            rows_read: 0,
            alerts: vec![],
            errors: vec![RowError {
                file: file.into(),
                line: 0,
                unit: "line",
                field: "(file)".into(),
                message: format!("file is larger than the {MAX_FILE_BYTES} byte limit"),
            }],
        };
    }
    match format {
        Format::Csv => csv_file::parse(file, bytes, opts),
        Format::GeoJson => geojson_file::parse(file, bytes, opts),
    }
}

/// Column and property names recognised without flags.
pub(crate) const LON_NAMES: &[&str] = &["longitude", "lon", "lng", "long", "x"];
pub(crate) const LAT_NAMES: &[&str] = &["latitude", "lat", "y"];
pub(crate) const DATE_NAMES: &[&str] = &[
    "detected_on",
    "date",
    "detection_date",
    "alert_date",
    "detected",
    "acq_date",
    "time",
];
pub(crate) const CONFIDENCE_NAMES: &[&str] = &["confidence", "conf", "confidence_level"];

/// Build a row from raw cells; the first failing field becomes the error.
pub(crate) fn build_row(
    raw: [&str; 4],
    opts: &ReadOptions,
    line: usize,
    fields: [&str; 4],
) -> Result<ParsedAlert, (String, String)> {
    let [lon_s, lat_s, date_s, conf_s] = raw;
    let num = |s: &str, f: &str| -> Result<f64, (String, String)> {
        s.trim().parse::<f64>().map_err(|_| {
            (
                f.to_string(),
                format!("expected a number in decimal degrees, found '{s}'"),
            )
        })
    };
    let lon = num(lon_s, fields[0])?;
    let lat = num(lat_s, fields[1])?;
    let at = LonLat::new(lon, lat).map_err(|m| {
        let f = if m.starts_with("longitude") {
            fields[0]
        } else {
            fields[1]
        };
        (f.to_string(), m)
    })?;
    let day = Day::parse(date_s).map_err(|m| (fields[2].to_string(), m))?;
    if let Some(latest) = opts.not_after
        && day > latest
    {
        return Err((
            fields[2].to_string(),
            format!(
                "detection date {} is after the import day {}: alert systems do not report the future",
                day.date(),
                latest.date()
            ),
        ));
    }
    let confidence = opts
        .confidence
        .parse(conf_s)
        .map_err(|m| (fields[3].to_string(), m))?;
    Ok(ParsedAlert {
        at,
        day,
        confidence,
        line,
    })
}
