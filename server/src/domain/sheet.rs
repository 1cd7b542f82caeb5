//! The identifier printed on a trip's paper field sheet, which the station
//! operator copies back when entering the sheet: `FS-` and the first eight
//! hexadecimal digits of the bundle id, upper case (our choice: short enough
//! to copy by hand, and the station checks it against the chosen trip).

/// The sheet identifier of bundle `bundle_id`.
pub fn sheet_id(bundle_id: &str) -> String {
    let hex: String = bundle_id
        .chars()
        .filter(char::is_ascii_hexdigit)
        .take(8)
        .collect();
    format!("FS-{}", hex.to_ascii_uppercase())
}

/// Whether `typed` names the sheet of `bundle_id` (spaces and case ignored).
pub fn is_sheet_of(typed: &str, bundle_id: &str) -> bool {
    let clean: String = typed.chars().filter(|c| !c.is_whitespace()).collect();
    clean.eq_ignore_ascii_case(&sheet_id(bundle_id))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_sheet_id_is_short_and_checked_loosely() {
        let b = "1a2b3c4d-5e6f-4a7b-8c9d-0e1f2a3b4c5d";
        assert_eq!(sheet_id(b), "FS-1A2B3C4D");
        assert!(is_sheet_of(" fs-1a2b 3c4d ", b));
        assert!(!is_sheet_of("FS-1A2B3C4E", b));
        assert!(!is_sheet_of("", b));
    }
}
