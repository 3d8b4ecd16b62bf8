//! Form input shared by every area: typed values with units, and the errors shown beside fields
//! when a form comes back.

use crate::units::{Unit, parse_value};

pub use crate::checks::FieldErrors;

/// Parses an optional typed value: empty means absent; anything else must parse and be finite.
pub fn optional_value(
    text: &str,
    unit: Unit,
    field: &str,
    errors: &mut FieldErrors,
) -> Option<f64> {
    if text.trim().is_empty() {
        return None;
    }
    match parse_value(text, unit) {
        Ok(value) => Some(value),
        Err(error) => {
            errors.add(field, error.to_string());
            None
        }
    }
}
