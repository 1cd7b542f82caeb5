//! Short codes: one letter and four digits, such as `K0417`.
//!
//! Event codes come from the event id, so an event keeps its code in every
//! bundle. The letters leave out C (kept for control points), and I, O and
//! Q (read as digits or each other over a radio); that gives 22 × 10,000
//! distinct event codes. Control points are `C0001`, `C0002`, … within a
//! bundle.

pub(crate) const LETTERS: &[u8] = b"ABDEFGHJKLMNPRSTUVWXYZ";

/// The code of an event id (ids past 220,000 wrap around; the bundle
/// checks that its codes are distinct).
pub fn event_code(id: i64) -> String {
    let n = id.rem_euclid(LETTERS.len() as i64 * 10_000);
    let letter = LETTERS[(n / 10_000) as usize] as char;
    format!("{letter}{:04}", n % 10_000)
}

/// The code of the `i`-th control point of a bundle (1-based).
pub fn control_code(i: usize) -> String {
    format!("C{:04}", i % 10_000)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes() {
        assert_eq!(event_code(1), "A0001");
        assert_eq!(event_code(10_417), "B0417");
        assert_eq!(event_code(219_999), "Z9999");
        assert_eq!(control_code(3), "C0003");
        let all: std::collections::HashSet<_> = (0..220_000).map(event_code).collect();
        assert_eq!(all.len(), 220_000);
        assert!(all.iter().all(|c| !c.starts_with(['C', 'I', 'O', 'Q'])));
    }
}
