//! The check of an event mark ("workpiece in", "fan on"): a short text at a time of the run.

use crate::analysis::reading_set::{FieldError, check_stamp, check_typed_time};
use crate::analysis::sent_entry::check_sender_id;

/// Longer than this is a note, not a mark on a timeline.
pub const MAX_MARK_CHARS: usize = 80;

#[derive(Debug, Clone, PartialEq)]
pub struct CheckedMark {
    pub t_s: f64,
    pub text: String,
    pub client_id: Option<String>,
}

/// `text`; `time` typed by the user (optional), else `at` stamped by the page's script
/// (optional), else now; `id` made by the phone (optional).
pub fn check_event_mark(
    text: &str,
    time: &str,
    at: &str,
    id: &str,
    elapsed_now_s: f64,
) -> Result<CheckedMark, FieldError> {
    let refuse = |field: &str, message: String| FieldError {
        field: field.to_string(),
        message,
    };
    let text = text.trim();
    if text.is_empty() {
        return Err(refuse("text", "say what happened (\"fan on\")".into()));
    }
    if text.chars().count() > MAX_MARK_CHARS {
        return Err(refuse(
            "text",
            format!("keep it under {MAX_MARK_CHARS} characters; notes go with the run"),
        ));
    }
    if text.chars().any(char::is_control) {
        return Err(refuse("text", "one line of text, please".into()));
    }
    let t_s = if !time.trim().is_empty() {
        check_typed_time(time, elapsed_now_s).map_err(|m| refuse("time", m))?
    } else if !at.trim().is_empty() {
        check_stamp(at, elapsed_now_s).map_err(|m| refuse("time", m))?
    } else {
        elapsed_now_s.max(0.0)
    };
    let client_id = match id {
        "" => None,
        id => Some(check_sender_id(id).map_err(|m| refuse("id", m))?),
    };
    Ok(CheckedMark {
        t_s,
        text: text.to_string(),
        client_id,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_mark_is_a_short_line_at_a_time() {
        let now = check_event_mark(" fan on ", "", "", "", 42.0).unwrap();
        assert_eq!((now.t_s, now.text.as_str()), (42.0, "fan on"));
        let stamped = check_event_mark("workpiece in", "", "40.5", "ph-9", 42.0).unwrap();
        assert_eq!(
            (stamped.t_s, stamped.client_id.as_deref()),
            (40.5, Some("ph-9"))
        );
        let typed = check_event_mark("supply to 30 V", "0:30", "40.5", "", 42.0).unwrap();
        assert_eq!(typed.t_s, 30.0);
    }

    #[test]
    fn empty_long_multi_line_or_late_marks_are_refused() {
        for (text, time, field) in [
            ("", "", "text"),
            ("   ", "", "text"),
            (&"x".repeat(81)[..], "", "text"),
            ("two\nlines", "", "text"),
            ("fan on", "9:00", "time"),
            ("fan on", "later", "time"),
        ] {
            let error = check_event_mark(text, time, "", "", 42.0).unwrap_err();
            assert_eq!(error.field, field, "{text:?} {time:?}");
        }
    }
}
