//! The camera: JPEG files with EXIF for each photo a visit takes.

use std::path::PathBuf;

use chrono::{DateTime, Utc};

use super::device::Device;
use crate::photos::{PhotoMetaIn, make_photo};

/// One photo to take.
#[derive(Debug, Clone)]
pub(super) struct Shot {
    pub(super) lat: f64,
    pub(super) lon: f64,
    pub(super) taken_at: DateTime<Utc>,
    pub(super) direction_deg: f64,
}

impl Device {
    /// Writes the photo files of `shots` into the camera folder.
    pub(super) fn take(&mut self, shots: &[Shot]) -> Result<Vec<PathBuf>, String> {
        let mut paths = Vec::new();
        for s in shots {
            self.photos_taken += 1;
            let meta = PhotoMetaIn {
                taken_at_rfc3339: s
                    .taken_at
                    .with_timezone(&self.tz)
                    .to_rfc3339_opts(chrono::SecondsFormat::Secs, false),
                lat: s.lat,
                lon: s.lon,
                direction_deg: s.direction_deg,
            };
            let pixel_seed = self
                .seed
                .wrapping_mul(0x9E37_79B9_7F4A_7C15)
                .wrapping_add(self.photos_taken);
            let bytes = make_photo(
                pixel_seed,
                self.plan.photo_width,
                self.plan.photo_height,
                &meta,
            );
            if bytes.is_empty() {
                return Err("the photo encoder failed".into());
            }
            let path = self
                .camera
                .join(format!("IMG_{:04}.jpg", self.photos_taken));
            std::fs::write(&path, bytes).map_err(|e| format!("write {}: {e}", path.display()))?;
            paths.push(path);
        }
        Ok(paths)
    }
}
