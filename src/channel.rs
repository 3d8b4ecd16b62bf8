//! Reading channels: what a bench reading measured, by the names the API and CSV use.
//!
//! `supply_voltage`, `supply_current`, `frequency`, `tank_voltage`, `ambient_temp`, `water_temp`,
//! and `temp.<role>` or `temp.<role>.<n>` for the n-th part (1-based) of a role. Values are in SI
//! units: V, A, Hz, °C.

use std::fmt;
use std::str::FromStr;

use crate::parts::Role;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Channel {
    SupplyVoltage,
    SupplyCurrent,
    Frequency,
    TankVoltage,
    AmbientTemp,
    WaterTemp,
    /// Temperature of a part; `index` is `None` for the role as a whole (the hottest unit the
    /// user could find) or `Some(n)`, 1-based, for one unit of several.
    PartTemp {
        role: Role,
        index: Option<u32>,
    },
}

/// What a channel measures, for units and display.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    Voltage,
    Current,
    Frequency,
    Temperature,
}

impl Quantity {
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::Voltage => "V",
            Quantity::Current => "A",
            Quantity::Frequency => "Hz",
            Quantity::Temperature => "°C",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "unknown channel `{0}`: use supply_voltage, supply_current, frequency, tank_voltage, ambient_temp, water_temp, temp.<role> or temp.<role>.<n>"
)]
pub struct UnknownChannel(pub String);

impl Channel {
    pub fn quantity(self) -> Quantity {
        match self {
            Channel::SupplyVoltage | Channel::TankVoltage => Quantity::Voltage,
            Channel::SupplyCurrent => Quantity::Current,
            Channel::Frequency => Quantity::Frequency,
            Channel::AmbientTemp | Channel::WaterTemp | Channel::PartTemp { .. } => {
                Quantity::Temperature
            }
        }
    }

    /// The part role a temperature channel belongs to.
    pub fn role(self) -> Option<Role> {
        match self {
            Channel::PartTemp { role, .. } => Some(role),
            _ => None,
        }
    }

    /// How a person reads the channel: "Tank capacitor 2 temperature".
    pub fn title(self) -> String {
        match self {
            Channel::SupplyVoltage => "Supply voltage".into(),
            Channel::SupplyCurrent => "Supply current".into(),
            Channel::Frequency => "Frequency".into(),
            Channel::TankVoltage => "Tank voltage".into(),
            Channel::AmbientTemp => "Ambient temperature".into(),
            Channel::WaterTemp => "Water temperature".into(),
            Channel::PartTemp { role, index: None } => format!("{} temperature", role.title()),
            Channel::PartTemp {
                role,
                index: Some(n),
            } => format!("{} {n} temperature", role.title()),
        }
    }

    /// Why `value` (SI) is refused on this channel, in the channel's unit and in a sentence
    /// short enough for a phone; `None` when it is plausible.
    pub fn range_error(self, value: f64) -> Option<String> {
        let (low, high) = self.plausible_range();
        if (low..=high).contains(&value) {
            return None;
        }
        let unit = match self.quantity() {
            Quantity::Voltage => crate::units::Unit::Volt,
            Quantity::Current => crate::units::Unit::Ampere,
            Quantity::Frequency => crate::units::Unit::Hertz,
            Quantity::Temperature => crate::units::Unit::Celsius,
        };
        let shown = |v: f64| {
            if v.is_finite() && v.abs() < 1e12 {
                crate::units::eng(v, unit).to_string()
            } else {
                format!("{}\u{a0}{}", crate::units::short_number(v), unit.symbol())
            }
        };
        Some(format!(
            "{} is outside what a {} reading can be ({} to {})",
            shown(value),
            self.title().to_lowercase(),
            shown(low),
            shown(high)
        ))
    }

    /// Plausible bounds of a value on this channel, to refuse typos such as a frequency in kHz
    /// typed as Hz or a temperature of 4000 °C. Wide on purpose: they catch slips, not physics.
    pub fn plausible_range(self) -> (f64, f64) {
        match self.quantity() {
            Quantity::Voltage => (0.0, 10_000.0),
            Quantity::Current => (0.0, 1_000.0),
            Quantity::Frequency => (0.0, 100e6),
            Quantity::Temperature => (-60.0, 1_500.0),
        }
    }
}

impl fmt::Display for Channel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Channel::SupplyVoltage => f.write_str("supply_voltage"),
            Channel::SupplyCurrent => f.write_str("supply_current"),
            Channel::Frequency => f.write_str("frequency"),
            Channel::TankVoltage => f.write_str("tank_voltage"),
            Channel::AmbientTemp => f.write_str("ambient_temp"),
            Channel::WaterTemp => f.write_str("water_temp"),
            Channel::PartTemp { role, index: None } => write!(f, "temp.{}", role.key()),
            Channel::PartTemp {
                role,
                index: Some(n),
            } => write!(f, "temp.{}.{n}", role.key()),
        }
    }
}

impl FromStr for Channel {
    type Err = UnknownChannel;

    fn from_str(name: &str) -> Result<Self, Self::Err> {
        let unknown = || UnknownChannel(name.to_string());
        Ok(match name.trim() {
            "supply_voltage" => Channel::SupplyVoltage,
            "supply_current" => Channel::SupplyCurrent,
            "frequency" => Channel::Frequency,
            "tank_voltage" => Channel::TankVoltage,
            "ambient_temp" => Channel::AmbientTemp,
            "water_temp" => Channel::WaterTemp,
            other => {
                let rest = other.strip_prefix("temp.").ok_or_else(unknown)?;
                let (role_key, index) = match rest.split_once('.') {
                    Some((role, n)) => {
                        let n: u32 = n.parse().map_err(|_| unknown())?;
                        if n == 0 {
                            return Err(unknown());
                        }
                        (role, Some(n))
                    }
                    None => (rest, None),
                };
                let role = Role::from_key(role_key)
                    .filter(|r| !matches!(r, Role::Supply))
                    .ok_or_else(unknown)?;
                Channel::PartTemp { role, index }
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_refused_value_reads_short_in_the_users_unit() {
        let huge = Channel::SupplyVoltage.range_error(1e300).unwrap();
        assert_eq!(
            huge,
            "1e300\u{a0}V is outside what a supply voltage reading can be (0\u{a0}V to 10\u{a0}kV)"
        );
        assert!(Channel::Frequency.range_error(152e3).is_none());
        assert_eq!(
            Channel::Frequency.range_error(-5.0).unwrap(),
            "-5\u{a0}Hz is outside what a frequency reading can be (0\u{a0}Hz to 100\u{a0}MHz)"
        );
    }

    #[test]
    fn names_round_trip() {
        for name in [
            "supply_voltage",
            "supply_current",
            "frequency",
            "tank_voltage",
            "ambient_temp",
            "water_temp",
            "temp.tank_capacitor",
            "temp.tank_capacitor.3",
            "temp.switch.2",
            "temp.work_coil",
            "temp.other.1",
        ] {
            let channel: Channel = name.parse().unwrap();
            assert_eq!(channel.to_string(), name);
        }
    }

    #[test]
    fn refuses_unknown_names() {
        for name in [
            "",
            "voltage",
            "temp.",
            "temp.capacitor",
            "temp.switch.0",
            "temp.switch.x",
            "temp.supply",
            "temp.switch.1.2",
        ] {
            assert!(name.parse::<Channel>().is_err(), "{name} should be refused");
        }
    }
}
