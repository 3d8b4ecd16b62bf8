//! Checks of what a sender attaches to a reading or a mark: the id it made (so a resend stores
//! nothing twice) and the time since the run started.

/// The longest sender id kept. A phone's id is 20–40 characters; a longer one is not an id.
pub const MAX_SENDER_ID_CHARS: usize = 64;

/// The latest time since the start a reading may carry: a week. No bench run of a heater lasts
/// that long, yet a logger's file of a long soak still imports; `1e12 s` is a typo, not a time.
pub const MAX_ELAPSED_S: f64 = 7.0 * 24.0 * 3600.0;

/// A sender id as stored: 1 to 64 visible ASCII characters (letters, digits, `-`, `_`, `.`,
/// `:`), so it is safe in a page, a log line and a CSV cell as it is.
pub fn check_sender_id(id: &str) -> Result<String, String> {
    if id.is_empty() {
        return Err("must not be empty (leave it out for a reading without an id)".into());
    }
    if id.chars().count() > MAX_SENDER_ID_CHARS {
        return Err(format!("is longer than {MAX_SENDER_ID_CHARS} characters"));
    }
    let allowed = |c: char| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.' | ':');
    if !id.chars().all(allowed) {
        return Err("may hold only letters, digits and - _ . :".into());
    }
    Ok(id.to_string())
}

/// A time since the run started: finite, not negative, at most [`MAX_ELAPSED_S`].
pub fn check_elapsed_s(t_s: f64) -> Result<f64, String> {
    if !t_s.is_finite() {
        return Err("must be a finite number".into());
    }
    if t_s < 0.0 {
        return Err(format!(
            "must be 0 or more (seconds since the run started), got {t_s}"
        ));
    }
    if t_s > MAX_ELAPSED_S {
        return Err(format!(
            "{t_s} s is more than a week after the start; no bench run lasts that long"
        ));
    }
    Ok(t_s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sender_ids_are_short_plain_text() {
        assert_eq!(check_sender_id("p7k2-0001").unwrap(), "p7k2-0001");
        assert!(check_sender_id("a:b.c_d-9").is_ok());
        assert!(check_sender_id("").is_err());
        assert!(check_sender_id(&"x".repeat(65)).is_err());
        assert!(check_sender_id(&"x".repeat(64)).is_ok());
        for bad in ["with space", "<b>", "tab\there", "é"] {
            assert!(check_sender_id(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn elapsed_times_stop_at_a_week() {
        assert_eq!(check_elapsed_s(0.0), Ok(0.0));
        assert_eq!(check_elapsed_s(MAX_ELAPSED_S), Ok(MAX_ELAPSED_S));
        for bad in [-1.0, f64::NAN, f64::INFINITY, MAX_ELAPSED_S + 1.0, 1e12] {
            assert!(check_elapsed_s(bad).is_err(), "{bad}");
        }
    }
}
