//! The check of one set of readings logged at the bench: a value per channel in use (any
//! subset), each stamped with the time it was read. A set is all or nothing: one bad field and
//! none of it is logged. The run page's form, its offline queue and anything else that logs a
//! set call this one check.
//!
//! Form fields: `value.<channel>` (what was typed, with units or prefixes, or a bare number in
//! the field's unit), and when the page's script is on, `at.<channel>` (seconds since the run
//! started at the moment the field was filled in, taken on the phone against the server's clock)
//! and `id.<channel>` (an id made on the phone, so a resend stores nothing twice). `time` is a
//! time typed for the whole set (`2:30`, `150 s`), for values written on paper.

use crate::analysis::sent_entry::{check_elapsed_s, check_sender_id};
use crate::channel::{Channel, Quantity};
use crate::units::{Unit, UnitError, parse_elapsed_s, parse_value};

/// How far ahead of the server's clock a phone's stamp may be before it is refused: the offset
/// is measured on each page load and each answer, so a few seconds cover a slow network.
pub const AHEAD_OF_SERVER_SLACK_S: f64 = 30.0;

/// A value checked and stamped.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckedReading {
    pub channel: Channel,
    pub t_s: f64,
    pub value: f64,
    pub client_id: Option<String>,
}

/// A field of the set and what is wrong with it. `field` is the channel name, `time`, or `set`
/// (the set as a whole).
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct FieldError {
    pub field: String,
    pub message: String,
}

impl FieldError {
    fn new(field: impl Into<String>, message: impl Into<String>) -> FieldError {
        FieldError {
            field: field.into(),
            message: message.into(),
        }
    }
}

/// What a bare number in an entry field means: the frequency field takes kHz (the numeric
/// keyboard of a phone has no `k`, and no driver of this kind runs below a few kHz); every other
/// field its SI unit. Typed units and prefixes always win: `152k`, `152000 Hz`.
pub fn parse_entry(channel: Channel, text: &str) -> Result<f64, UnitError> {
    let bare = text.trim().replace(',', ".").parse::<f64>().is_ok();
    let value = parse_value(text, unit_for(channel.quantity()))?;
    Ok(if bare && channel == Channel::Frequency {
        value * 1e3
    } else {
        value
    })
}

/// The unit a bare number in the channel's field is read in.
pub fn entry_unit(channel: Channel) -> &'static str {
    match channel {
        Channel::Frequency => "kHz",
        other => other.quantity().unit(),
    }
}

pub fn unit_for(quantity: Quantity) -> Unit {
    match quantity {
        Quantity::Voltage => Unit::Volt,
        Quantity::Current => Unit::Ampere,
        Quantity::Frequency => Unit::Hertz,
        Quantity::Temperature => Unit::Celsius,
    }
}

/// A value typed into a channel's field, in SI units and within the channel's plausible range.
pub fn check_entry_value(channel: Channel, text: &str) -> Result<f64, String> {
    let value = parse_entry(channel, text).map_err(|e| e.to_string())?;
    let (low, high) = channel.plausible_range();
    if !(low..=high).contains(&value) {
        let unit = channel.quantity().unit();
        return Err(format!(
            "{} is outside what this channel can read ({low} to {high} {unit})",
            text.trim()
        ));
    }
    Ok(value)
}

/// A time typed on the page: not before the start, not later than the time elapsed so far.
pub fn check_typed_time(text: &str, elapsed_now_s: f64) -> Result<f64, String> {
    if text.trim().starts_with('-') {
        return Err(format!("{} is before the run started", text.trim()));
    }
    let t_s = parse_elapsed_s(text).map_err(|_| "use 2:30 or 150 s".to_string())?;
    if t_s > elapsed_now_s + 1.0 {
        return Err(format!("{} is later than the time run so far", text.trim()));
    }
    Ok(t_s)
}

/// A stamp taken by the page's script: within bounds and not ahead of the server's clock (a
/// stamp up to the slack ahead is taken as now).
pub fn check_stamp(text: &str, elapsed_now_s: f64) -> Result<f64, String> {
    let t_s: f64 = text
        .trim()
        .parse()
        .map_err(|_| "the time of this value was not understood".to_string())?;
    let t_s = check_elapsed_s(t_s)?;
    if t_s > elapsed_now_s + AHEAD_OF_SERVER_SLACK_S {
        return Err("this value is stamped later than the server's clock; reload the page".into());
    }
    Ok(t_s.min(elapsed_now_s))
}

/// Checks a set from the form's fields. `channels` are the run's channels in use;
/// `elapsed_now_s` is the server's time since the run started.
pub fn check_reading_set(
    fields: &[(String, String)],
    channels: &[Channel],
    elapsed_now_s: f64,
) -> Result<Vec<CheckedReading>, Vec<FieldError>> {
    let field = |name: &str| {
        fields
            .iter()
            .find(|(k, _)| k == name)
            .map(|(_, v)| v.as_str())
    };
    let mut errors = Vec::new();
    for (name, _) in fields {
        if let Some(channel) = name.strip_prefix("value.")
            && !channels.iter().any(|c| c.to_string() == channel)
        {
            errors.push(FieldError::new(
                "set",
                "a value for a channel this run does not log",
            ));
        }
    }
    let typed_time = match field("time").map(str::trim).filter(|t| !t.is_empty()) {
        None => None,
        Some(text) => match check_typed_time(text, elapsed_now_s) {
            Ok(t_s) => Some(t_s),
            Err(message) => {
                errors.push(FieldError::new("time", message));
                None
            }
        },
    };
    let mut set = Vec::new();
    for &channel in channels {
        let name = channel.to_string();
        let Some(text) = field(&format!("value.{name}")).filter(|t| !t.trim().is_empty()) else {
            continue;
        };
        let value = check_entry_value(channel, text);
        let t_s = match (typed_time, field(&format!("at.{name}"))) {
            (Some(t_s), _) => Ok(t_s),
            (None, Some(stamp)) if !stamp.trim().is_empty() => check_stamp(stamp, elapsed_now_s),
            (None, _) => Ok(elapsed_now_s.max(0.0)),
        };
        let client_id = match field(&format!("id.{name}")).filter(|t| !t.is_empty()) {
            None => Ok(None),
            Some(id) => check_sender_id(id).map(Some),
        };
        match (value, t_s, client_id) {
            (Ok(value), Ok(t_s), Ok(client_id)) => set.push(CheckedReading {
                channel,
                t_s,
                value,
                client_id,
            }),
            (value, t_s, client_id) => {
                let message = [value.err(), t_s.err(), client_id.err()]
                    .into_iter()
                    .flatten()
                    .collect::<Vec<_>>()
                    .join("; ");
                errors.push(FieldError::new(name, message));
            }
        }
    }
    if set.is_empty() && errors.is_empty() {
        errors.push(FieldError::new("set", "type at least one value"));
    }
    if errors.is_empty() {
        Ok(set)
    } else {
        Err(errors)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parts::Role;

    fn pairs(items: &[(&str, &str)]) -> Vec<(String, String)> {
        items
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect()
    }

    fn channels() -> Vec<Channel> {
        vec![
            Channel::SupplyVoltage,
            Channel::SupplyCurrent,
            Channel::Frequency,
            Channel::PartTemp {
                role: Role::TankCapacitor,
                index: None,
            },
        ]
    }

    #[test]
    fn a_bare_frequency_is_khz_and_typed_units_win() {
        for (text, hz) in [
            ("152", 152e3),
            ("152,5", 152.5e3),
            ("152k", 152e3),
            ("152000 Hz", 152e3),
            ("0.15 MHz", 150e3),
        ] {
            let got = parse_entry(Channel::Frequency, text).unwrap();
            assert!((got - hz).abs() < 1e-6, "{text}: {got}");
        }
        assert_eq!(parse_entry(Channel::SupplyCurrent, "3").unwrap(), 3.0);
        assert!(parse_entry(Channel::Frequency, "fast").is_err());
        assert_eq!(entry_unit(Channel::Frequency), "kHz");
    }

    #[test]
    fn a_subset_is_logged_each_value_at_its_own_stamp() {
        let set = check_reading_set(
            &pairs(&[
                ("value.supply_voltage", "24.1"),
                ("at.supply_voltage", "120.5"),
                ("id.supply_voltage", "ph-1"),
                ("value.supply_current", ""),
                ("value.temp.tank_capacitor", "41"),
                ("at.temp.tank_capacitor", "123.0"),
            ]),
            &channels(),
            130.0,
        )
        .unwrap();
        assert_eq!(set.len(), 2);
        assert_eq!((set[0].t_s, set[0].value), (120.5, 24.1));
        assert_eq!(set[0].client_id.as_deref(), Some("ph-1"));
        assert_eq!((set[1].t_s, set[1].value), (123.0, 41.0));
    }

    #[test]
    fn without_script_the_set_is_stamped_now_or_at_the_typed_time() {
        let now = check_reading_set(&pairs(&[("value.frequency", "150")]), &channels(), 90.0);
        assert_eq!(now.unwrap()[0].t_s, 90.0);
        let typed = check_reading_set(
            &pairs(&[("value.frequency", "150"), ("time", "1:15")]),
            &channels(),
            90.0,
        );
        assert_eq!(typed.unwrap()[0].t_s, 75.0);
    }

    #[test]
    fn one_bad_field_refuses_the_set_and_names_the_field() {
        let errors = check_reading_set(
            &pairs(&[
                ("value.supply_voltage", "24"),
                ("value.supply_current", "8,2x"),
                ("value.temp.tank_capacitor", "4000"),
            ]),
            &channels(),
            60.0,
        )
        .unwrap_err();
        let fields: Vec<&str> = errors.iter().map(|e| e.field.as_str()).collect();
        assert_eq!(fields, ["supply_current", "temp.tank_capacitor"]);
        assert!(errors[1].message.contains("outside"), "{errors:?}");
    }

    #[test]
    fn times_before_the_start_or_beyond_now_are_refused() {
        for (time, says) in [
            ("5:00", "later than"),
            ("-3 s", "before the run"),
            ("-0:10", "before the run"),
            ("soon", "2:30"),
        ] {
            let errors = check_reading_set(
                &pairs(&[("value.frequency", "150"), ("time", time)]),
                &channels(),
                60.0,
            )
            .unwrap_err();
            assert_eq!(errors[0].field, "time", "{time}");
            assert!(errors[0].message.contains(says), "{time}: {errors:?}");
        }
        for stamp in ["-1", "1e12", "NaN", "200"] {
            let errors = check_reading_set(
                &pairs(&[("value.frequency", "150"), ("at.frequency", stamp)]),
                &channels(),
                60.0,
            )
            .unwrap_err();
            assert_eq!(errors[0].field, "frequency", "{stamp}");
        }
        let slightly_ahead = check_reading_set(
            &pairs(&[("value.frequency", "150"), ("at.frequency", "62")]),
            &channels(),
            60.0,
        );
        assert_eq!(slightly_ahead.unwrap()[0].t_s, 60.0, "a small lead is now");
    }

    #[test]
    fn an_empty_set_or_a_channel_not_logged_is_refused() {
        let empty = check_reading_set(&pairs(&[("value.frequency", " ")]), &channels(), 9.0);
        assert_eq!(empty.unwrap_err()[0].field, "set");
        let stranger = check_reading_set(&pairs(&[("value.water_temp", "20")]), &channels(), 9.0);
        assert_eq!(stranger.unwrap_err()[0].field, "set");
        let bad_id = check_reading_set(
            &pairs(&[("value.frequency", "150"), ("id.frequency", "a b")]),
            &channels(),
            9.0,
        );
        assert_eq!(bad_id.unwrap_err()[0].field, "frequency");
    }
}
