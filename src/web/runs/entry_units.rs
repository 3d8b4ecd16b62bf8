//! The units of the bench entry fields: what a bare number means in each.

use crate::channel::{Channel, Quantity};
use crate::units::{Unit, parse_value};

/// What a bare number in an entry field means: the frequency field takes kHz (the numeric
/// keyboard of a phone has no `k`, and no driver of this kind runs below a few kHz); every other
/// field its SI unit. Typed units and prefixes always win: `152k`, `152000 Hz`.
pub(super) fn parse_entry(channel: Channel, text: &str) -> Result<f64, crate::units::UnitError> {
    let bare = text.trim().replace(',', ".").parse::<f64>().is_ok();
    let value = parse_value(text, unit_for(channel.quantity()))?;
    Ok(if bare && channel == Channel::Frequency {
        value * 1e3
    } else {
        value
    })
}

pub(super) fn entry_unit(channel: Channel) -> &'static str {
    match channel {
        Channel::Frequency => "kHz",
        other => other.quantity().unit(),
    }
}

pub(super) fn unit_for(quantity: Quantity) -> Unit {
    match quantity {
        Quantity::Voltage => Unit::Volt,
        Quantity::Current => Unit::Ampere,
        Quantity::Frequency => Unit::Hertz,
        Quantity::Temperature => Unit::Celsius,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
        assert_eq!(
            parse_entry(Channel::SupplyCurrent, "3").unwrap(),
            3.0,
            "other channels keep SI"
        );
        assert!(parse_entry(Channel::Frequency, "fast").is_err());
        assert_eq!(entry_unit(Channel::Frequency), "kHz");
    }
}
