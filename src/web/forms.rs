//! Form input shared by every area: typed values with units, and the errors shown beside fields
//! when a form comes back.

use std::collections::BTreeMap;

use crate::units::{Unit, parse_value};

/// Messages by field name, shown beside each field of a form that comes back.
#[derive(Debug, Clone, Default)]
pub struct FieldErrors(pub BTreeMap<String, String>);

impl FieldErrors {
    pub fn add(&mut self, field: &str, message: impl Into<String>) {
        self.0
            .entry(field.to_string())
            .or_insert_with(|| message.into());
    }

    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// The message for a field, or "" (templates test `!= ""`).
    pub fn get(&self, field: &str) -> &str {
        self.0.get(field).map_or("", String::as_str)
    }
}

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
