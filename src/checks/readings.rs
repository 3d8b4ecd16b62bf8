//! One reading, however it arrives (typed at the bench, sent by a script, uploaded in a CSV):
//! a channel the revision has, a time within the run, and a value within the channel's
//! plausible range, said in the user's units.

use crate::analysis::sent_entry::check_elapsed_s;
use crate::channel::{Channel, Quantity, UnknownChannel};
use crate::parts::Parts;
use crate::units::{Unit, eng, parse_elapsed_s, parse_value};

/// The latest time a script or an import may give: a week after the start (a long soak test
/// still imports; a time sent in milliseconds or as a Unix timestamp does not).
pub use crate::analysis::sent_entry::MAX_ELAPSED_S as MAX_SCRIPT_ELAPSED_S;

/// Lowest frequency accepted: no self-oscillating driver of this kind runs below a few kHz
/// (common practice), so a smaller number is a value in kHz sent as Hz.
pub const MIN_FREQUENCY_HZ: f64 = 1e3;

/// On the page, a bare frequency under this is read as kHz, above as Hz (common practice: these
/// drivers run from a few kHz to a few MHz, so no reading is ambiguous).
pub const BARE_KHZ_BELOW: f64 = 10_000.0;

/// Names longer than this are not quoted back in an error.
const MAX_ECHO_CHARS: usize = 64;

/// The bounds of one run's readings: its revision's parts decide which part temperatures exist,
/// and the time elapsed so far (on the page) or a week (from scripts) bounds `t_s`.
pub struct ReadingBounds<'a> {
    parts: &'a Parts,
    max_t_s: f64,
    from_page: bool,
}

/// A typed value and what a bare number was taken to mean (for the confirmation).
#[derive(Debug, Clone, PartialEq)]
pub struct TypedValue {
    pub value: f64,
    pub assumed: Option<&'static str>,
}

impl<'a> ReadingBounds<'a> {
    /// Readings typed on the run page: no later than now.
    pub fn page(parts: &'a Parts, elapsed_so_far_s: f64) -> ReadingBounds<'a> {
        ReadingBounds {
            parts,
            max_t_s: elapsed_so_far_s.max(0.0),
            from_page: true,
        }
    }

    /// Readings from a script or an import (SI units, frequency in Hz).
    pub fn script(parts: &'a Parts) -> ReadingBounds<'a> {
        ReadingBounds {
            parts,
            max_t_s: MAX_SCRIPT_ELAPSED_S,
            from_page: false,
        }
    }

    /// A channel of this run's revision.
    pub fn channel(&self, name: &str) -> Result<Channel, String> {
        if name.len() > MAX_ECHO_CHARS {
            return Err("unknown channel (the name is far too long)".into());
        }
        let channel: Channel = name.parse().map_err(|e: UnknownChannel| e.to_string())?;
        if let Channel::PartTemp { role, index } = channel {
            let quantity = self.parts.quantity(role);
            let role = role.title().to_lowercase();
            if quantity == 0 {
                return Err(format!("this revision has no {role}"));
            }
            if let Some(n) = index.filter(|n| *n > quantity) {
                return Err(format!(
                    "this revision has {quantity} of {role}; there is no number {n}"
                ));
            }
        }
        Ok(channel)
    }

    /// The latest time a reading may carry: the time elapsed so far (page) or a week (scripts).
    pub fn max_t_s(&self) -> f64 {
        self.max_t_s
    }

    /// Seconds since the run started: finite, 0 or more, no later than the bound.
    pub fn t_s(&self, t_s: f64) -> Result<f64, String> {
        if self.from_page {
            page_t_s(t_s, self.max_t_s)
        } else {
            check_elapsed_s(t_s)
        }
    }

    /// A time typed for a reading (`2:30`, `150 s`), within the bound.
    pub fn typed_time(&self, text: &str) -> Result<f64, String> {
        let t_s = parse_typed_time(text)?;
        self.t_s(t_s)
    }

    /// A value in SI units for a channel: finite and within its plausible range.
    pub fn value(&self, channel: Channel, value: f64) -> Result<f64, String> {
        if !value.is_finite() {
            return Err("must be a finite number".into());
        }
        let unit = unit_of(channel.quantity());
        if channel == Channel::Frequency && value < MIN_FREQUENCY_HZ {
            return Err(if self.from_page {
                format!(
                    "{} is below 1 kHz; type the unit, e.g. 126.5 kHz",
                    eng(value, unit)
                )
            } else {
                format!(
                    "{value} Hz is below 1 kHz: frequencies are sent in Hz (did you mean {} kHz, \
                     which is {} Hz?)",
                    value,
                    value * 1e3
                )
            });
        }
        if let Some(message) = channel.range_error(value) {
            return Err(message);
        }
        Ok(value)
    }
}

/// A time since the start, on the page: finite, 0 or more, no later than the time run so far.
pub fn page_t_s(t_s: f64, elapsed_so_far_s: f64) -> Result<f64, String> {
    if !t_s.is_finite() {
        return Err("must be a finite number".into());
    }
    if t_s < 0.0 {
        return Err(format!(
            "must be 0 or more (seconds since the run started), got {t_s}"
        ));
    }
    // A second of slack: a typed time is whole seconds and the start is stored to the second.
    if t_s > elapsed_so_far_s.max(0.0) + 1.0 {
        return Err(format!(
            "{} is later than now: the run started {} ago",
            elapsed_words(t_s),
            elapsed_words(elapsed_so_far_s)
        ));
    }
    Ok(t_s)
}

/// A time typed on the page (`2:30`, `150 s`), not yet bounded.
fn parse_typed_time(text: &str) -> Result<f64, String> {
    if text.trim().starts_with('-') {
        return Err(format!(
            "{} is before the run started",
            text.trim().chars().take(MAX_ECHO_CHARS).collect::<String>()
        ));
    }
    parse_elapsed_s(text).map_err(|_| "use 2:30 or 150 s".to_string())
}

/// A time typed on the page for anything of the run (a reading, an event mark): within the run
/// so far.
pub fn page_typed_time(text: &str, elapsed_so_far_s: f64) -> Result<f64, String> {
    page_t_s(parse_typed_time(text)?, elapsed_so_far_s)
}

/// The unit a channel's values are typed and shown in.
pub fn unit_of(quantity: Quantity) -> Unit {
    match quantity {
        Quantity::Voltage => Unit::Volt,
        Quantity::Current => Unit::Ampere,
        Quantity::Frequency => Unit::Hertz,
        Quantity::Temperature => Unit::Celsius,
    }
}

/// A value typed on the page. Typed units and prefixes always win (`152k`, `152000 Hz`); a bare
/// frequency is kHz under 10,000 and Hz above, and the answer says which was assumed.
pub fn typed_value(channel: Channel, text: &str) -> Result<TypedValue, String> {
    let bare = text.trim().replace(',', ".").parse::<f64>().ok();
    let value = parse_value(text, unit_of(channel.quantity())).map_err(|e| e.to_string())?;
    Ok(match (channel, bare) {
        (Channel::Frequency, Some(number)) if number.abs() < BARE_KHZ_BELOW => TypedValue {
            value: number * 1e3,
            assumed: Some("kHz"),
        },
        (Channel::Frequency, Some(_)) => TypedValue {
            value,
            assumed: Some("Hz"),
        },
        _ => TypedValue {
            value,
            assumed: None,
        },
    })
}

/// `1 h 05 min`, `2 min 30 s`, `40 s`.
pub fn elapsed_words(seconds: f64) -> String {
    let total = seconds.max(0.0).round() as u64;
    let (h, m, s) = (total / 3600, total % 3600 / 60, total % 60);
    if h > 0 {
        format!("{h} h {m:02} min")
    } else if m > 0 {
        format!("{m} min {s:02} s")
    } else {
        format!("{s} s")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::Role;

    fn parts() -> Parts {
        serde_json::from_value(serde_json::json!({
            "tank_capacitor": {"capacitance_f": 330e-9, "count": 6},
            "work_coil": {"inductance_h": 1e-6}
        }))
        .unwrap()
    }

    #[test]
    fn a_bare_frequency_is_khz_below_ten_thousand_and_hz_above() {
        let khz = typed_value(Channel::Frequency, "126.5").unwrap();
        assert_eq!((khz.value, khz.assumed), (126_500.0, Some("kHz")));
        let hz = typed_value(Channel::Frequency, "126500").unwrap();
        assert_eq!((hz.value, hz.assumed), (126_500.0, Some("Hz")));
        let typed = typed_value(Channel::Frequency, "0.15 MHz").unwrap();
        assert_eq!((typed.value, typed.assumed), (150_000.0, None));
        assert_eq!(typed_value(Channel::SupplyCurrent, "3").unwrap().value, 3.0);
        assert!(typed_value(Channel::Frequency, "fast").is_err());
    }

    #[test]
    fn scripts_send_hz_and_a_khz_number_is_refused_with_a_hint() {
        let parts = parts();
        let bounds = ReadingBounds::script(&parts);
        let message = bounds.value(Channel::Frequency, 104.2).unwrap_err();
        assert!(message.contains("kHz"), "{message}");
        assert!(bounds.value(Channel::Frequency, 104_200.0).is_ok());
    }

    #[test]
    fn times_are_bounded_by_the_run() {
        let parts = parts();
        let page = ReadingBounds::page(&parts, 60.0);
        assert!(page.t_s(59.0).is_ok());
        let message = page.t_s(99.0 * 60.0).unwrap_err();
        assert!(message.contains("later than now"), "{message}");
        let script = ReadingBounds::script(&parts);
        assert!(script.t_s(1e12).is_err());
        assert!(script.t_s(f64::NAN).is_err());
        assert!(script.t_s(-1.0).is_err());
        assert!(script.t_s(6.0 * 86_400.0).is_ok());
    }

    #[test]
    fn only_units_the_revision_has() {
        let parts = parts();
        let bounds = ReadingBounds::script(&parts);
        assert!(bounds.channel("temp.tank_capacitor.6").is_ok());
        assert!(bounds.channel("temp.tank_capacitor.30").is_err());
        assert!(bounds.channel("temp.choke").is_err());
        let _ = Role::Choke;
    }

    #[test]
    fn ranges_are_stated_in_the_users_units() {
        let parts = parts();
        let bounds = ReadingBounds::script(&parts);
        let message = bounds.value(Channel::SupplyVoltage, 1e308).unwrap_err();
        assert!(message.contains("V"), "{message}");
        assert!(bounds.value(Channel::SupplyVoltage, f64::NAN).is_err());
    }
}
