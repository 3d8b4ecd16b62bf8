//! Values with SI prefixes and units, as people type them at the bench and read them on a page.
//!
//! Parsing accepts `0.47u`, `470 nF`, `12 V`, `102k`, `2.2 mΩ`, `2.2 mohm`, `1e-6`, `1,5 µH`: a
//! number, an optional SI prefix (`µ` and `u` both mean micro, `M` mega, `m` milli) and an
//! optional unit that must match the field's. The code-style `102k` (a value with a prefix and no
//! unit) is read as 102 000. Formatting prints engineering notation with three significant figures.

use std::fmt;

/// Why a typed value was not accepted; the message is shown beside the form field.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum UnitError {
    #[error("enter a value")]
    Empty,
    #[error("“{0}” is not a number")]
    NotANumber(String),
    #[error("“{got}” is not a unit of this field (expected {expected})")]
    WrongUnit { got: String, expected: &'static str },
}

/// The units a field can carry, with the spellings accepted for each.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    Farad,
    Henry,
    Ohm,
    Volt,
    Ampere,
    Watt,
    Hertz,
    Metre,
    Second,
    Celsius,
    KelvinPerWatt,
    /// Reactive power, volt-amperes reactive.
    Var,
    /// A bare number (counts, dissipation factors, percentages).
    None,
}

impl Unit {
    pub fn symbol(self) -> &'static str {
        match self {
            Unit::Farad => "F",
            Unit::Henry => "H",
            Unit::Ohm => "Ω",
            Unit::Volt => "V",
            Unit::Ampere => "A",
            Unit::Watt => "W",
            Unit::Hertz => "Hz",
            Unit::Metre => "m",
            Unit::Second => "s",
            Unit::Celsius => "°C",
            Unit::KelvinPerWatt => "K/W",
            Unit::Var => "var",
            Unit::None => "",
        }
    }

    fn spellings(self) -> &'static [&'static str] {
        match self {
            Unit::Farad => &["f"],
            Unit::Henry => &["h"],
            Unit::Ohm => &["ω", "Ω", "ohm", "ohms", "r"],
            Unit::Volt => &["v", "vdc", "vrms", "vac"],
            Unit::Ampere => &["a", "arms", "amp", "amps"],
            Unit::Watt => &["w"],
            Unit::Hertz => &["hz"],
            Unit::Metre => &["m"],
            Unit::Second => &["s", "sec"],
            Unit::Celsius => &["°c", "c", "degc"],
            Unit::KelvinPerWatt => &["k/w", "°c/w", "c/w"],
            Unit::Var => &["var"],
            Unit::None => &[],
        }
    }

    /// Whether SI prefixes make sense (nobody writes "k°C").
    fn takes_prefix(self) -> bool {
        !matches!(self, Unit::Celsius | Unit::None | Unit::KelvinPerWatt)
    }
}

const PREFIXES: [(&str, f64); 10] = [
    ("p", 1e-12),
    ("n", 1e-9),
    ("µ", 1e-6),
    ("μ", 1e-6), // Greek mu, U+03BC, which phones often type instead of the micro sign
    ("u", 1e-6),
    ("m", 1e-3),
    ("k", 1e3),
    ("K", 1e3),
    ("M", 1e6),
    ("G", 1e9),
];

/// Parses a typed value into SI base units for a field of the given unit.
pub fn parse_value(input: &str, unit: Unit) -> Result<f64, UnitError> {
    let text = input.trim();
    if text.is_empty() {
        return Err(UnitError::Empty);
    }
    let split = text
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit() || c == '.' || c == ',' || is_sign_or_exponent(text, i, c))
        })
        .map_or(text.len(), |(i, _)| i);
    let (number_text, rest) = text.split_at(split);
    let number: f64 = number_text
        .replace(',', ".")
        .parse()
        .map_err(|_| UnitError::NotANumber(quoted(text, 20)))?;
    if !number.is_finite() {
        return Err(UnitError::NotANumber(quoted(text, 20)));
    }
    let suffix = rest.trim();
    let scale = suffix_scale(suffix, unit).ok_or_else(|| UnitError::WrongUnit {
        got: quoted(suffix, 20),
        expected: expected_text(unit),
    })?;
    Ok(number * scale)
}

/// A minus, plus or exponent marker that belongs to the number: at the start, or an `e` followed
/// by a digit or sign (so `1e-6` is a number while `1 m` keeps its prefix).
fn is_sign_or_exponent(text: &str, i: usize, c: char) -> bool {
    let next = text[i + c.len_utf8()..].chars().next();
    match c {
        '-' | '+' => i == 0 || text[..i].ends_with(['e', 'E']),
        'e' | 'E' => i > 0 && matches!(next, Some(n) if n.is_ascii_digit() || n == '-' || n == '+'),
        _ => false,
    }
}

fn expected_text(unit: Unit) -> &'static str {
    match unit {
        Unit::Farad => "F with a prefix, such as 470 nF",
        Unit::Henry => "H with a prefix, such as 1.2 µH",
        Unit::Ohm => "Ω or ohm with a prefix, such as 8 mΩ",
        Unit::Volt => "V, such as 24 V",
        Unit::Ampere => "A, such as 16 A",
        Unit::Watt => "W, such as 2.5 W",
        Unit::Hertz => "Hz with a prefix, such as 150 kHz",
        Unit::Metre => "m with a prefix, such as 40 mm",
        Unit::Second => "s, such as 150 s",
        Unit::Celsius => "°C, such as 85",
        Unit::KelvinPerWatt => "K/W, such as 0.8",
        Unit::Var => "var, such as 2.8 kvar",
        Unit::None => "a plain number",
    }
}

fn suffix_scale(suffix: &str, unit: Unit) -> Option<f64> {
    if suffix.is_empty() {
        return Some(1.0);
    }
    let matches_unit = |s: &str| {
        unit.spellings()
            .iter()
            .any(|u| u.eq_ignore_ascii_case(s) || *u == s.to_lowercase())
    };
    if matches_unit(suffix) {
        return Some(1.0);
    }
    if !unit.takes_prefix() && unit != Unit::None {
        return None;
    }
    for (prefix, scale) in PREFIXES {
        if let Some(rest) = suffix.strip_prefix(prefix) {
            // A bare "m" on a metre field is the unit, handled above; here "m" is milli.
            if rest.is_empty() || (unit.takes_prefix() && matches_unit(rest.trim())) {
                return Some(scale);
            }
        }
    }
    None
}

/// A value in engineering notation with its unit: `470 nF`, `1.2 µH`, `8 mΩ`, `16 A`.
pub struct Engineering {
    pub value: f64,
    pub unit: Unit,
    /// Significant figures: 3 for most quantities, 4 where a drift of tenths of a percent
    /// matters (frequency, inferred capacitance).
    pub figures: u8,
}

/// Shorthand for `Engineering { value, unit }` with three significant figures.
pub fn eng(value: f64, unit: Unit) -> Engineering {
    Engineering {
        value,
        unit,
        figures: 3,
    }
}

/// A value as a person types it back into a field or a terminal: the page's no-break space
/// becomes a plain one.
pub fn eng_typed(value: f64, unit: Unit) -> String {
    eng(value, unit).to_string().replace('\u{a0}', " ")
}

/// Four significant figures: 125.5 kHz and 125.9 kHz stay apart, as the capacitance inferred
/// from them must.
pub fn eng_precise(value: f64, unit: Unit) -> Engineering {
    Engineering {
        value,
        unit,
        figures: 4,
    }
}

impl fmt::Display for Engineering {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let value = self.value;
        let symbol = self.unit.symbol();
        // A no-break space: on a narrow screen a number never wraps away from its unit.
        let space = if symbol.is_empty() { "" } else { "\u{a0}" };
        if !value.is_finite() {
            return write!(f, "{value}{space}{symbol}");
        }
        if !self.unit.takes_prefix() || value == 0.0 {
            return write!(f, "{}{space}{symbol}", significant(value, self.figures));
        }
        let exponent = (value.abs().log10() / 3.0).floor() as i32 * 3;
        let exponent = exponent.clamp(-12, 9);
        let prefix = match exponent {
            -12 => "p",
            -9 => "n",
            -6 => "µ",
            -3 => "m",
            3 => "k",
            6 => "M",
            9 => "G",
            _ => "",
        };
        let scaled = value / 10f64.powi(exponent);
        // Rounding 999.7 to three figures gives 1000: step up a prefix instead.
        if significant(scaled, self.figures) == "1000" && exponent < 9 {
            return write!(f, "{}", eng_at(value, exponent + 3, symbol, self.figures));
        }
        write!(
            f,
            "{}\u{a0}{prefix}{symbol}",
            significant(scaled, self.figures)
        )
    }
}

fn eng_at(value: f64, exponent: i32, symbol: &str, figures: u8) -> String {
    let prefix = match exponent {
        -9 => "n",
        -6 => "µ",
        -3 => "m",
        0 => "",
        3 => "k",
        6 => "M",
        _ => "G",
    };
    format!(
        "{}\u{a0}{prefix}{symbol}",
        significant(value / 10f64.powi(exponent), figures)
    )
}

/// A number as short as a person would write it back: four significant figures, and powers
/// of ten beyond a million or below a thousandth (`1e300`, `2.5e-9`), never hundreds of digits.
pub fn short_number(value: f64) -> String {
    let magnitude = value.abs();
    if !value.is_finite() || value == 0.0 || (1e-3..1e6).contains(&magnitude) {
        return significant(value, 4);
    }
    let text = format!("{value:.3e}");
    match text.split_once('e') {
        Some((mantissa, exponent)) if mantissa.contains('.') => format!(
            "{}e{exponent}",
            mantissa.trim_end_matches('0').trim_end_matches('.')
        ),
        _ => text,
    }
}

/// At most `max` characters of what someone typed, to quote it back in an error.
pub fn quoted(text: &str, max: usize) -> String {
    let text = text.trim();
    if text.chars().count() <= max {
        text.to_string()
    } else {
        format!("{}…", text.chars().take(max).collect::<String>())
    }
}

/// A signed number with `decimals` places and a true minus sign (U+2212), as a page prints a
/// change: +1.3, −0.2, 0.0.
pub fn signed(value: f64, decimals: usize) -> String {
    let text = format!("{:.decimals$}", value.abs());
    let zero = text.chars().all(|c| c == '0' || c == '.');
    match (zero, value < 0.0) {
        (true, _) => text,
        (false, true) => format!("−{text}"),
        (false, false) => format!("+{text}"),
    }
}

/// Three significant figures without trailing zeros: 470, 1.2, 0.0331, 12.5.
pub fn three_significant(value: f64) -> String {
    significant(value, 3)
}

/// `figures` significant figures without trailing zeros.
pub fn significant(value: f64, figures: u8) -> String {
    if value == 0.0 {
        return "0".into();
    }
    let magnitude = value.abs().log10().floor() as i32;
    let decimals = (i32::from(figures) - 1 - magnitude).max(0) as usize;
    let text = format!("{value:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-30)
    }

    #[test]
    fn parses_prefixes_and_units() {
        let cases = [
            ("0.47u", Unit::Farad, 0.47e-6),
            ("470 nF", Unit::Farad, 470e-9),
            ("470nF", Unit::Farad, 470e-9),
            ("0.47 µF", Unit::Farad, 0.47e-6),
            ("0.47 μF", Unit::Farad, 0.47e-6),
            ("12 V", Unit::Volt, 12.0),
            ("12", Unit::Volt, 12.0),
            ("102k", Unit::Ohm, 102e3),
            ("2.2 mΩ", Unit::Ohm, 2.2e-3),
            ("2.2 mohm", Unit::Ohm, 2.2e-3),
            ("470 ohm", Unit::Ohm, 470.0),
            ("1e-6", Unit::Henry, 1e-6),
            ("1,5 µH", Unit::Henry, 1.5e-6),
            ("150 kHz", Unit::Hertz, 150e3),
            ("40 mm", Unit::Metre, 0.040),
            ("2 m", Unit::Metre, 2.0),
            ("85 °C", Unit::Celsius, 85.0),
            ("-5", Unit::Celsius, -5.0),
            ("0.8 K/W", Unit::KelvinPerWatt, 0.8),
            ("16 A", Unit::Ampere, 16.0),
            ("500 mA", Unit::Ampere, 0.5),
        ];
        for (text, unit, expected) in cases {
            let got = parse_value(text, unit).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!(
                close(got, expected),
                "{text}: got {got}, expected {expected}"
            );
        }
    }

    #[test]
    fn refuses_garbage() {
        for (text, unit) in [
            ("", Unit::Volt),
            ("   ", Unit::Volt),
            ("abc", Unit::Volt),
            ("12 A", Unit::Volt),
            ("470 nH", Unit::Farad),
            ("4k7", Unit::Ohm),
            ("1..2", Unit::Volt),
            ("NaN", Unit::Volt),
            ("inf", Unit::Volt),
            ("1e999", Unit::Volt),
            ("12 kV V", Unit::Volt),
            ("5 k°C", Unit::Celsius),
        ] {
            assert!(
                parse_value(text, unit).is_err(),
                "{text:?} should be refused"
            );
        }
    }

    #[test]
    fn formats_engineering_notation() {
        assert_eq!(eng(470e-9, Unit::Farad).to_string(), "470\u{a0}nF");
        assert_eq!(eng(1.2e-6, Unit::Henry).to_string(), "1.2\u{a0}µH");
        assert_eq!(eng(8e-3, Unit::Ohm).to_string(), "8\u{a0}mΩ");
        assert_eq!(eng(16.0, Unit::Ampere).to_string(), "16\u{a0}A");
        assert_eq!(eng(159_154.9, Unit::Hertz).to_string(), "159\u{a0}kHz");
        assert_eq!(short_number(1e300), "1e300");
        assert_eq!(short_number(-2.5e-9), "-2.5e-9");
        assert_eq!(short_number(10_000.0), "10000");
        assert_eq!(short_number(0.0125), "0.0125");
        assert_eq!(quoted(&"9".repeat(300), 12), format!("{}…", "9".repeat(12)));
        assert_eq!(signed(-1.34, 1), "−1.3");
        assert_eq!(signed(0.04, 1), "0.0");
        assert_eq!(signed(2.0, 2), "+2.00");
        // Four figures keep a drift of a tenth of a percent visible.
        assert_eq!(
            eng_precise(125_549.0, Unit::Hertz).to_string(),
            "125.5\u{a0}kHz"
        );
        assert_eq!(
            eng_precise(125_949.0, Unit::Hertz).to_string(),
            "125.9\u{a0}kHz"
        );
        assert_eq!(
            eng_precise(330.5e-9, Unit::Farad).to_string(),
            "330.5\u{a0}nF"
        );
        assert_eq!(eng_precise(999.97e3, Unit::Hertz).to_string(), "1\u{a0}MHz");
        assert_eq!(eng(0.9997e-6, Unit::Farad).to_string(), "1\u{a0}µF");
        assert_eq!(eng(85.0, Unit::Celsius).to_string(), "85\u{a0}°C");
        assert_eq!(eng(0.0, Unit::Volt).to_string(), "0\u{a0}V");
        assert_eq!(eng(-2.5e-3, Unit::Ampere).to_string(), "-2.5\u{a0}mA");
    }
}

/// Time since a run started, as typed: `2:30`, `1:02:03`, `150 s`, `150`, `2.5 min`.
pub fn parse_elapsed_s(input: &str) -> Result<f64, UnitError> {
    let text = input.trim();
    if text.is_empty() {
        return Err(UnitError::Empty);
    }
    let not_time = || UnitError::NotANumber(quoted(text, 20));
    let seconds = if text.contains(':') {
        let fields: Vec<&str> = text.split(':').collect();
        if fields.len() > 3 || fields.iter().any(|f| f.trim().is_empty()) {
            return Err(not_time());
        }
        let mut total = 0.0;
        for (i, field) in fields.iter().enumerate() {
            let value: f64 = field.trim().parse().map_err(|_| not_time())?;
            if value < 0.0 || (i > 0 && value >= 60.0) {
                return Err(not_time());
            }
            total = total * 60.0 + value;
        }
        total
    } else if let Some(minutes) = text.strip_suffix("min") {
        minutes.trim().parse::<f64>().map_err(|_| not_time())? * 60.0
    } else {
        parse_value(text, Unit::Second)?
    };
    if !seconds.is_finite() || seconds < 0.0 {
        return Err(not_time());
    }
    Ok(seconds)
}

#[cfg(test)]
mod elapsed_tests {
    use super::parse_elapsed_s;

    #[test]
    fn reads_bench_times() {
        assert_eq!(parse_elapsed_s("2:30"), Ok(150.0));
        assert_eq!(parse_elapsed_s("1:02:03"), Ok(3723.0));
        assert_eq!(parse_elapsed_s("150 s"), Ok(150.0));
        assert_eq!(parse_elapsed_s("150"), Ok(150.0));
        assert_eq!(parse_elapsed_s("2.5 min"), Ok(150.0));
        for bad in ["", "2:75", "a:b", "-5", "1:2:3:4", "2:", "5 V"] {
            assert!(parse_elapsed_s(bad).is_err(), "{bad:?} should be refused");
        }
    }
}
