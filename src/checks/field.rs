//! Typed field errors: what every check returns, and what every door renders (a form marks the
//! field, the API names it in JSON, an import adds the row and column, the CLI prints it).

use std::collections::BTreeMap;

/// Messages by field name; the first message of a field is kept.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
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

    /// The first field refused and its message (fields in name order), for the doors that
    /// answer with one error (the API, the command line).
    pub fn first(&self) -> Option<(&str, &str)> {
        self.0.iter().next().map(|(f, m)| (f.as_str(), m.as_str()))
    }

    /// `Ok(value)` when nothing was refused.
    pub fn into_result<T>(self, value: T) -> Result<T, FieldErrors> {
        if self.is_empty() {
            Ok(value)
        } else {
            Err(self)
        }
    }

    /// A single refusal.
    pub fn one(field: &str, message: impl Into<String>) -> FieldErrors {
        let mut errors = FieldErrors::default();
        errors.add(field, message);
        errors
    }
}
