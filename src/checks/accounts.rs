//! Account names and passwords, as the admin page and `eddybench user` check them.

/// Shortest password accepted (OWASP Application Security Verification Standard 4.0.3, V2.1.1:
/// at least 12 characters).
pub const MIN_PASSWORD_CHARS: usize = 12;
/// Longest sign-in name.
pub const MAX_USER_NAME_CHARS: usize = 64;
/// Longest name shown on pages; a longer one is cut.
pub const MAX_DISPLAY_NAME_CHARS: usize = 80;

/// A sign-in name, trimmed: 1 to 64 characters without spaces or control characters.
pub fn user_name(text: &str) -> Result<String, String> {
    let name = text.trim();
    if name.is_empty()
        || name.chars().count() > MAX_USER_NAME_CHARS
        || name.chars().any(|c| c.is_whitespace() || c.is_control())
    {
        return Err(format!(
            "1 to {MAX_USER_NAME_CHARS} characters without spaces"
        ));
    }
    Ok(name.to_string())
}

/// The name shown on pages: the one given, cut to its limit, or the sign-in name.
pub fn display_name(text: &str, user_name: &str) -> String {
    match text.trim() {
        "" => user_name.to_string(),
        given => given.chars().take(MAX_DISPLAY_NAME_CHARS).collect(),
    }
}

/// A new password long enough.
pub fn new_password(text: &str) -> Result<(), String> {
    if text.chars().count() < MIN_PASSWORD_CHARS {
        return Err(format!("use at least {MIN_PASSWORD_CHARS} characters"));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn user_names_are_trimmed_and_bounded() {
        assert_eq!(user_name("  ada ").unwrap(), "ada");
        for bad in ["", "   ", "a b", "a\u{0}b", &"x".repeat(65)] {
            assert!(user_name(bad).is_err(), "{bad:?}");
        }
        assert!(user_name(&"x".repeat(64)).is_ok());
    }

    #[test]
    fn display_names_fall_back_and_are_cut() {
        assert_eq!(display_name(" ", "ada"), "ada");
        assert_eq!(display_name(&"y".repeat(100), "ada").chars().count(), 80);
    }

    #[test]
    fn passwords_need_twelve_characters() {
        assert!(new_password("elevenchars").is_err());
        assert!(new_password("twelve chars").is_ok());
    }
}
