//! A new build, however it arrives (the new-build form, the API): a name of 1 to 120
//! characters with no control or override characters, a purpose and notes within their limits.

use super::FieldErrors;
use super::text::{self, MAX_BUILD_NAME_CHARS, refuse_characters};

/// The longest purpose kept: a paragraph or two.
pub const MAX_PURPOSE_CHARS: usize = 4_000;

/// A build's fields, trimmed and checked.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CheckedBuild {
    pub name: String,
    pub purpose: String,
    pub notes: String,
}

/// The one check of a new build.
pub fn new_build(name: &str, purpose: &str, notes: &str) -> Result<CheckedBuild, FieldErrors> {
    let mut errors = FieldErrors::default();
    let name = text::name(name, MAX_BUILD_NAME_CHARS).unwrap_or_else(|message| {
        errors.add("name", message);
        String::new()
    });
    let purpose = purpose.trim();
    if purpose.chars().count() > MAX_PURPOSE_CHARS {
        errors.add(
            "purpose",
            format!("keep the purpose to {MAX_PURPOSE_CHARS} characters"),
        );
    } else if let Some(message) = refuse_characters(purpose, true) {
        errors.add("purpose", message);
    }
    let notes = text::notes(notes).unwrap_or_else(|message| {
        errors.add("notes", message);
        String::new()
    });
    errors.into_result(CheckedBuild {
        name,
        purpose: purpose.to_string(),
        notes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_good_build_is_trimmed() {
        let build = new_build("  Bench heater ", " soft start ", "").unwrap();
        assert_eq!(
            (build.name.as_str(), build.purpose.as_str()),
            ("Bench heater", "soft start")
        );
    }

    #[test]
    fn each_bad_field_is_named() {
        for (name, purpose, notes, field) in [
            ("", "", "", "name"),
            ("a\u{0}b", "", "", "name"),
            ("coil\u{202E}lioc", "", "", "name"),
            (&*"x".repeat(121), "", "", "name"),
            ("ok", &*"p".repeat(4001), "", "purpose"),
            ("ok", "bell\u{7}", "", "purpose"),
            ("ok", "", &*"n".repeat(20_001), "notes"),
        ] {
            let errors = new_build(name, purpose, notes).unwrap_err();
            assert_eq!(errors.first().unwrap().0, field, "{name:?} {purpose:?}");
        }
    }
}
