//! Decimal-degree text for field sheets and manual GPS entry.

/// Writes a position as signed decimal degrees, latitude first, six decimals (about 0.1 m),
/// e.g. `-3.100000, -60.025000`. Longitude is wrapped to −180..180. Non-finite values are
/// written as `NaN`/`inf` rather than causing a panic; callers should check positions first.
///
/// The one writer shared with the field tools ([`groundproof_sync::geodesy::format_dd`]); a
/// sheet takes UTM and MGRS from [`as_written`], the values these digits say.
pub use groundproof_sync::geodesy::{as_written, format_dd};

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        // Values chosen here; the format is the module's own definition.
        assert_eq!(format_dd(-3.1, -60.025), "-3.100000, -60.025000");
        assert_eq!(format_dd(33.333_333_3, 44.4), "33.333333, 44.400000");
        assert_eq!(format_dd(-0.0, 0.0), "0.000000, 0.000000");
        assert_eq!(format_dd(-0.000_000_1, 190.0), "0.000000, -170.000000");
        assert_eq!(format_dd(f64::NAN, 1.0), "NaN, 1.000000");
    }
}
