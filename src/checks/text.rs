//! Names and free text people type: length limits, and the characters that make a name lie
//! about itself (control characters, and the bidirectional overrides of Unicode Technical
//! Standard #39 and CVE-2021-42574, which reorder what is shown) are refused.

/// A build name, trimmed: 1 to 120 characters.
pub const MAX_BUILD_NAME_CHARS: usize = 120;
/// Notes of a build, revision or run.
pub const MAX_NOTES_CHARS: usize = 20_000;
/// A one-line label: a purpose, an operator, a void reason.
pub const MAX_LINE_CHARS: usize = 200;

/// Words that are pages of their own under `/builds/` (or the site): a build never takes them as
/// its address.
pub const RESERVED_SLUGS: &[&str] = &[
    "new", "api", "s", "static", "admin", "account", "login", "logout", "healthz", "edit",
    "archive", "archived", "compare", "export",
];

/// The bidirectional formatting characters (Unicode Standard Annex #9, section 2): embeddings,
/// overrides and isolates, and the implicit marks.
fn is_bidi_control(c: char) -> bool {
    matches!(
        c,
        '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}'
    )
}

/// Why a piece of text cannot be stored, if it cannot; `multi_line` lets line breaks and tabs
/// through (notes), a name or a label takes none.
pub fn refuse_characters(text: &str, multi_line: bool) -> Option<String> {
    let allowed = |c: char| multi_line && matches!(c, '\n' | '\r' | '\t');
    if text.chars().any(|c| c.is_control() && !allowed(c)) {
        return Some("remove the control characters (line breaks, tabs or invisible codes)".into());
    }
    if text.chars().any(is_bidi_control) {
        return Some("remove the right-to-left override characters".into());
    }
    None
}

/// A required one-line name, trimmed.
pub fn name(text: &str, max_chars: usize) -> Result<String, String> {
    let name = text.trim();
    if name.is_empty() {
        return Err("give it a name".into());
    }
    if name.chars().count() > max_chars {
        return Err(format!("keep it to {max_chars} characters"));
    }
    if let Some(message) = refuse_characters(name, false) {
        return Err(message);
    }
    Ok(name.to_string())
}

/// An optional one-line text, trimmed.
pub fn line(text: &str, max_chars: usize) -> Result<String, String> {
    let line = text.trim();
    if line.chars().count() > max_chars {
        return Err(format!("keep it to {max_chars} characters"));
    }
    if let Some(message) = refuse_characters(line, false) {
        return Err(message);
    }
    Ok(line.to_string())
}

/// Notes, trimmed: line breaks allowed.
pub fn notes(text: &str) -> Result<String, String> {
    let notes = text.trim();
    if notes.chars().count() > MAX_NOTES_CHARS {
        return Err(format!("keep the notes under {MAX_NOTES_CHARS} characters"));
    }
    if let Some(message) = refuse_characters(notes, true) {
        return Err(message);
    }
    Ok(notes.to_string())
}

/// Whether a slug is one of the reserved words.
pub fn is_reserved_slug(slug: &str) -> bool {
    RESERVED_SLUGS.contains(&slug)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_refuse_control_and_override_characters() {
        assert_eq!(name("  Bench heater ", 120).unwrap(), "Bench heater");
        assert!(name("", 120).is_err());
        assert!(name("a\u{0}b", 120).is_err());
        assert!(name("evil\u{202E}txt.exe", 120).is_err());
        assert!(name("two\nlines", 120).is_err());
        assert!(name(&"x".repeat(121), 120).is_err());
        assert!(notes("two\nlines").is_ok());
        assert!(notes("bell\u{7}").is_err());
    }

    #[test]
    fn reserved_words_are_known() {
        assert!(is_reserved_slug("new"));
        assert!(!is_reserved_slug("new-coil"));
    }
}

/// Why something is voided: required, one line, so the history says why.
pub fn void_reason(text: &str) -> Result<String, String> {
    let reason = line(text, MAX_LINE_CHARS)?;
    if reason.is_empty() {
        return Err("say why (it stays in the history)".into());
    }
    Ok(reason)
}

#[cfg(test)]
mod void_tests {
    use super::*;

    #[test]
    fn a_void_needs_a_reason() {
        assert_eq!(void_reason(" typo ").unwrap(), "typo");
        assert!(void_reason("  ").is_err());
        assert!(void_reason("a\u{202E}b").is_err());
        assert!(void_reason(&"x".repeat(201)).is_err());
    }
}
