//! Writing SVG text: escaping caller text, compact coordinates, path data and element ids.

use std::fmt::Write;

/// Escapes text for use both as element content and inside a double- or single-quoted attribute.
pub fn escape_xml(text: &str) -> String {
    let mut escaped = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => escaped.push_str("&amp;"),
            '<' => escaped.push_str("&lt;"),
            '>' => escaped.push_str("&gt;"),
            '"' => escaped.push_str("&quot;"),
            '\'' => escaped.push_str("&#39;"),
            // Control characters other than tab and newline are not allowed in XML at all.
            c if c.is_control() && c != '\t' && c != '\n' => {}
            c => escaped.push(c),
        }
    }
    escaped
}

/// A viewBox coordinate with at most one decimal: a tenth of a unit is finer than any screen
/// shows at 640 units wide, and it keeps 600-point paths short.
pub(crate) fn num(value: f64) -> String {
    let rounded = (value * 10.0).round() / 10.0;
    if rounded == rounded.trunc() {
        format!("{}", rounded as i64)
    } else {
        format!("{rounded:.1}")
    }
}

/// Path data for a polyline, built point by point.
#[derive(Debug, Default)]
pub(crate) struct PathData {
    data: String,
}

impl PathData {
    pub fn polyline(points: &[(f64, f64)]) -> Self {
        let mut path = Self::default();
        for (i, (x, y)) in points.iter().enumerate() {
            let command = if i == 0 { 'M' } else { 'L' };
            if i > 0 {
                path.data.push(' ');
            }
            let _ = write!(path.data, "{command}{},{}", num(*x), num(*y));
        }
        path
    }

    pub fn as_str(&self) -> &str {
        &self.data
    }
}

/// An element id made only of letters, digits, `-` and `_`, so it is safe in `url(#…)` and in
/// `aria-labelledby`; an empty id becomes "chart".
pub(crate) fn sanitize_id(id: &str) -> String {
    let cleaned: String = id
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '-'
            }
        })
        .collect();
    if cleaned.is_empty() {
        String::from("chart")
    } else if cleaned.starts_with(|c: char| c.is_ascii_digit()) {
        format!("chart-{cleaned}")
    } else {
        cleaned
    }
}

/// Cuts a label to `max_chars` characters, ending it with an ellipsis when cut.
pub(crate) fn shorten(text: &str, max_chars: usize) -> String {
    if text.chars().count() <= max_chars {
        return text.to_string();
    }
    let mut short: String = text.chars().take(max_chars.saturating_sub(1)).collect();
    short.push('…');
    short
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_and_quotes() {
        assert_eq!(
            escape_xml(r#"a<b & "c" 'd'>"#),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;"
        );
        assert_eq!(escape_xml("limit 85 °C"), "limit 85 °C");
        assert_eq!(escape_xml("bell\u{7}"), "bell");
    }

    #[test]
    fn coordinates_are_short() {
        assert_eq!(num(12.0), "12");
        assert_eq!(num(12.04), "12");
        assert_eq!(num(12.06), "12.1");
        assert_eq!(num(-3.24), "-3.2");
        assert_eq!(num(-0.04), "0");
    }

    #[test]
    fn polyline_moves_then_draws() {
        let path = PathData::polyline(&[(0.0, 1.0), (2.5, 3.0), (4.0, 5.0)]);
        assert_eq!(path.as_str(), "M0,1 L2.5,3 L4,5");
    }

    #[test]
    fn ids_are_made_safe() {
        assert_eq!(sanitize_id("run-12 temps"), "run-12-temps");
        assert_eq!(sanitize_id("\"><x"), "---x");
        assert_eq!(sanitize_id(""), "chart");
        assert_eq!(sanitize_id("7"), "chart-7");
    }

    #[test]
    fn long_labels_are_shortened() {
        assert_eq!(shorten("tank capacitor C3", 8), "tank ca…");
        assert_eq!(shorten("coil", 8), "coil");
    }
}
