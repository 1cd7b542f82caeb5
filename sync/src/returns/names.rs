//! The entry names a return may hold: three fixed JSON entries and photos
//! named `photos/<64 lowercase hex>.jpg`. Nothing else passes, so no name can
//! traverse, be absolute, hide, or collide after case folding.

/// The manifest, the bytes the signature covers.
pub const RETURN_MANIFEST: &str = "return-manifest.json";
/// The JSON array of reports.
pub const REPORTS: &str = "reports.json";
/// The signature `{algorithm, key_id, mac}`.
pub const SIGNATURE: &str = "signature.json";
/// Folder of photos.
pub const PHOTO_PREFIX: &str = "photos/";

/// Entry name of the photo with this SHA-256.
pub fn photo_entry_name(sha256: &str) -> String {
    format!("{PHOTO_PREFIX}{sha256}.jpg")
}

/// The SHA-256 in a photo entry name, if `name` is one.
pub fn photo_sha_of(name: &str) -> Option<&str> {
    let sha = name.strip_prefix(PHOTO_PREFIX)?.strip_suffix(".jpg")?;
    crate::Sha256Digest::is_valid(sha).then_some(sha)
}

/// Accepts the names allowed in a return; the error says why a name is refused.
pub fn check_return_entry_name(name: &str) -> Result<(), String> {
    if name == RETURN_MANIFEST
        || name == REPORTS
        || name == SIGNATURE
        || photo_sha_of(name).is_some()
    {
        Ok(())
    } else {
        Err(format!(
            "not a return entry name ({RETURN_MANIFEST}, {REPORTS}, {SIGNATURE}, photos/<sha256>.jpg)"
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn allow_list() {
        let sha = "ab".repeat(32);
        assert!(check_return_entry_name(&photo_entry_name(&sha)).is_ok());
        assert!(check_return_entry_name("reports.json").is_ok());
        for bad in [
            "../reports.json",
            "/reports.json",
            "photos/../reports.json",
            "photos/AB.jpg",
            &format!("photos/{}.jpg", "AB".repeat(32)),
            &format!("photos/{sha}.JPG"),
            &format!("photos/{sha}.jpg/"),
            &format!("photos\\{sha}.jpg"),
            "Reports.json",
            "./reports.json",
            "reports.json\0",
        ] {
            assert!(check_return_entry_name(bad).is_err(), "{bad:?}");
        }
    }
}
