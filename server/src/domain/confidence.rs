//! Alert confidence: `tentative` or `confirmed`, and the documented mapping
//! from numeric confidence columns.

use serde::{Deserialize, Serialize};
use std::fmt;

/// How sure the alert system was. Ordered: `Tentative < Confirmed`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Confidence {
    Tentative,
    Confirmed,
}

impl Confidence {
    /// The stored integer (0 tentative, 1 confirmed).
    pub fn as_i64(self) -> i64 {
        match self {
            Confidence::Tentative => 0,
            Confidence::Confirmed => 1,
        }
    }

    /// Inverse of [`Confidence::as_i64`]; anything else is `None`.
    pub fn from_i64(v: i64) -> Option<Self> {
        match v {
            0 => Some(Confidence::Tentative),
            1 => Some(Confidence::Confirmed),
            _ => None,
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            Confidence::Tentative => "tentative",
            Confidence::Confirmed => "confirmed",
        }
    }
}

impl Confidence {
    /// The level as pages, exports and new API fields name it: "high" or
    /// "low" (alert) confidence, so that "confirmed" is only ever a visit's
    /// outcome. [`Confidence::as_str`] stays the stored and bundle form.
    pub fn level(self) -> &'static str {
        match self {
            Confidence::Tentative => "low",
            Confidence::Confirmed => "high",
        }
    }
}

impl fmt::Display for Confidence {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// How a confidence cell is read.
///
/// Words are always accepted (`tentative`, `confirmed`, any case; also
/// `low`/`high` as synonyms). A number is accepted only when the user
/// gives a threshold (`--confidence-threshold T`): values `>= T` are
/// `confirmed`, values below are `tentative`. Without a threshold a number
/// is an error, because alert systems disagree on what their numbers mean.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ConfidenceMap {
    pub numeric_threshold: Option<f64>,
}

impl ConfidenceMap {
    /// Parse one cell; the error says what was expected.
    pub fn parse(&self, raw: &str) -> Result<Confidence, String> {
        let s = raw.trim();
        match s.to_ascii_lowercase().as_str() {
            "tentative" | "low" => return Ok(Confidence::Tentative),
            "confirmed" | "high" => return Ok(Confidence::Confirmed),
            _ => {}
        }
        match (s.parse::<f64>(), self.numeric_threshold) {
            (Ok(v), Some(t)) if v.is_finite() => Ok(if v >= t {
                Confidence::Confirmed
            } else {
                Confidence::Tentative
            }),
            (Ok(_), None) => Err(format!(
                "numeric confidence '{s}' needs --confidence-threshold to say which values are confirmed"
            )),
            _ => Err(format!("expected 'tentative' or 'confirmed', found '{s}'")),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_and_numbers() {
        let plain = ConfidenceMap::default();
        assert_eq!(plain.parse(" Confirmed "), Ok(Confidence::Confirmed));
        assert_eq!(plain.parse("tentative"), Ok(Confidence::Tentative));
        assert!(
            plain
                .parse("3")
                .unwrap_err()
                .contains("--confidence-threshold")
        );
        assert!(plain.parse("maybe").unwrap_err().contains("expected"));
        let mapped = ConfidenceMap {
            numeric_threshold: Some(3.0),
        };
        assert_eq!(mapped.parse("2"), Ok(Confidence::Tentative));
        assert_eq!(mapped.parse("3"), Ok(Confidence::Confirmed));
        assert!(mapped.parse("NaN").is_err());
    }
}
