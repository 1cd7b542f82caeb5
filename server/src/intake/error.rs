//! Intake's errors are the crate's [`crate::Error`]: a refused signature is
//! `Refused`, a broken package `Package`, a lost upload `Gone`, a body over
//! its bound `TooLarge`, too many open uploads `Limit`, an offset clash
//! `OffsetMismatch` or `Busy`. The name below keeps intake's signatures
//! readable; it is the same type, so there is no conversion.

/// Why an upload or a return was refused (the crate's one error type).
pub type IntakeError = crate::Error;

/// The number a failed upload row keeps for its final refusal (see
/// [`crate::Error::is_final`]): 403 for a refused signature or key, 422 for
/// a broken package. The numbers are those of the HTTP answers so that rows
/// written before this function existed read back the same; [`replay`]
/// turns the row back into the same error.
pub(crate) fn refusal_code(e: &IntakeError) -> u16 {
    match e {
        IntakeError::Refused(_) => 403,
        _ => 422,
    }
}

/// The error a failed upload row stands for (see [`refusal_code`]).
pub(crate) fn replay(code: Option<u16>, message: String) -> IntakeError {
    match code {
        Some(403) => IntakeError::Refused(message),
        _ => IntakeError::Package(message),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_final_refusal_reads_back_as_itself() {
        for e in [
            IntakeError::Refused("forged signature".into()),
            IntakeError::Package("bad manifest".into()),
        ] {
            assert!(e.is_final());
            let back = replay(Some(refusal_code(&e)), e.to_string());
            assert_eq!(format!("{back:?}"), format!("{e:?}"));
        }
        assert!(!IntakeError::Invalid("x".into()).is_final());
    }
}
