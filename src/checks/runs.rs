//! Starting a run and finishing one: the same verdict from the run form, the API and the
//! command line.

use crate::channel::Channel;
use crate::parts::{Parts, Role};

use super::FieldErrors;
use super::readings::ReadingBounds;
use super::text;

/// The loads a run can have (the `runs.load` column's allowed values).
pub const LOADS: [&str; 4] = ["none", "ferrous", "non_ferrous", "water"];
/// How a run can end (the `runs.outcome` column's allowed values).
pub const OUTCOMES: [&str; 3] = ["completed", "stopped", "part_failed"];

/// What the operator gives to start a run, already parsed into SI numbers.
#[derive(Debug, Clone, Default)]
pub struct RunStart<'a> {
    pub supply_setting_v: Option<f64>,
    pub supply_current_limit_a: Option<f64>,
    pub load: &'a str,
    pub water_mass_kg: Option<f64>,
    pub vessel_heat_capacity_j_per_k: Option<f64>,
    pub notes: &'a str,
    pub operator: &'a str,
    pub channels: &'a [String],
}

/// The cleaned text of a run that may start.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckedRunStart {
    pub notes: String,
    pub operator: String,
}

/// Upper bounds of the settings: far above any bench supply for these drivers, low enough that
/// a slipped digit is caught.
const SETTING_LIMITS: [(&str, f64, &str); 4] = [
    ("supply_setting_v", 10_000.0, "V"),
    ("supply_current_limit_a", 1_000.0, "A"),
    ("water_mass_kg", 1_000.0, "kg"),
    ("vessel_heat_capacity_j_per_k", 1e7, "J/K"),
];

/// A run may start on a revision with these settings and channels.
pub fn start(run: &RunStart, parts: &Parts) -> Result<CheckedRunStart, FieldErrors> {
    let mut errors = FieldErrors::default();
    // Without the supply setting no efficiency, power or margin can be worked out, and the
    // next run would copy the gap.
    if run.supply_setting_v.is_none() {
        errors.add(
            "supply_setting_v",
            "give the supply voltage setting to start a run",
        );
    }
    let values = [
        run.supply_setting_v,
        run.supply_current_limit_a,
        run.water_mass_kg,
        run.vessel_heat_capacity_j_per_k,
    ];
    for ((field, max, unit), value) in SETTING_LIMITS.iter().zip(values) {
        if let Some(v) = value
            && !(v.is_finite() && v > 0.0 && v <= *max)
        {
            errors.add(
                field,
                format!("must be above 0 and at most {max} {unit}, got {v} {unit}"),
            );
        }
    }
    if !LOADS.contains(&run.load) {
        errors.add("load", "choose a load: none, ferrous, non_ferrous or water");
    }
    if run.load == "water" && run.water_mass_kg.is_none() {
        errors.add(
            "water_mass_kg",
            "a water calorimeter run needs the mass of water",
        );
    }
    let known: Vec<String> = loggable_channels(parts)
        .iter()
        .map(Channel::to_string)
        .collect();
    if run.channels.is_empty() {
        errors.add("channel", "choose at least one channel to log");
    } else if let Some(bad) = run.channels.iter().find(|c| !known.contains(c)) {
        let bad: String = bad.chars().take(64).collect();
        errors.add(
            "channel",
            format!("{bad} is not a channel of this revision"),
        );
    }
    let notes = text::notes(run.notes).unwrap_or_else(|m| {
        errors.add("notes", m);
        String::new()
    });
    let operator = text::line(run.operator, 120).unwrap_or_else(|m| {
        errors.add("operator", m);
        String::new()
    });
    errors.into_result(CheckedRunStart { notes, operator })
}

/// Every channel a revision can log: the electrical ones, then each part's temperature (the
/// role as a whole, and each unit where a role has several, up to twelve: a bank of more is
/// logged as a whole).
pub fn loggable_channels(parts: &Parts) -> Vec<Channel> {
    let mut channels = vec![
        Channel::SupplyVoltage,
        Channel::SupplyCurrent,
        Channel::Frequency,
        Channel::TankVoltage,
        Channel::AmbientTemp,
        Channel::WaterTemp,
    ];
    for role in TEMPERATURE_ROLES {
        let quantity = parts.quantity(role);
        if quantity == 0 {
            continue;
        }
        channels.push(Channel::PartTemp { role, index: None });
        if quantity > 1 {
            channels.extend((1..=quantity.min(12)).map(|n| Channel::PartTemp {
                role,
                index: Some(n),
            }));
        }
    }
    channels
}

/// The parts whose temperature is logged and which can fail on the bench.
pub const TEMPERATURE_ROLES: [Role; 5] = [
    Role::TankCapacitor,
    Role::Switch,
    Role::WorkCoil,
    Role::Choke,
    Role::GateResistor,
];

/// How a run ended, checked.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckedFinish {
    pub outcome: &'static str,
    pub failed_part: Option<String>,
    pub note: String,
}

/// A run may end this way: a failed part goes with the outcome "part failed" and only then.
pub fn finish(
    outcome: &str,
    failed_part: &str,
    note: &str,
    parts: &Parts,
) -> Result<CheckedFinish, FieldErrors> {
    let mut errors = FieldErrors::default();
    let outcome = OUTCOMES.iter().copied().find(|o| *o == outcome.trim());
    let part = failed_part.trim();
    match (outcome, part) {
        (None, _) => errors.add("outcome", "choose how the run ended"),
        (Some("part_failed"), "") => errors.add("failed_part", "say which part failed"),
        (Some("part_failed"), part) => {
            // A role (`tank_capacitor`) or one unit of it (`tank_capacitor.3`), as its
            // temperature channel names it.
            let channel = ReadingBounds::script(parts).channel(&format!("temp.{part}"));
            if !matches!(channel, Ok(Channel::PartTemp { .. })) {
                errors.add("failed_part", "that part is not in this revision");
            }
        }
        (Some(_), "") => {}
        (Some(_), _) => errors.add(
            "outcome",
            "a part failed: choose the outcome \u{201c}part failed\u{201d}",
        ),
    }
    let note = text::notes(note).unwrap_or_else(|m| {
        errors.add("note", m);
        String::new()
    });
    let outcome = outcome.unwrap_or("completed");
    let failed_part = (outcome == "part_failed").then(|| part.to_string());
    errors.into_result(CheckedFinish {
        outcome,
        failed_part,
        note,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parts() -> Parts {
        serde_json::from_value(serde_json::json!({
            "tank_capacitor": {"capacitance_f": 330e-9, "count": 6},
            "work_coil": {"inductance_h": 1e-6}
        }))
        .unwrap()
    }

    fn run<'a>(channels: &'a [String]) -> RunStart<'a> {
        RunStart {
            supply_setting_v: Some(24.0),
            load: "none",
            channels,
            ..RunStart::default()
        }
    }

    #[test]
    fn a_run_needs_its_supply_setting() {
        let channels = vec!["frequency".to_string()];
        assert!(start(&run(&channels), &parts()).is_ok());
        let mut no_supply = run(&channels);
        no_supply.supply_setting_v = None;
        let errors = start(&no_supply, &parts()).unwrap_err();
        assert_ne!(errors.get("supply_setting_v"), "");
    }

    #[test]
    fn bad_settings_and_channels_are_named() {
        let channels = vec!["temp.choke".to_string()];
        let mut bad = run(&channels);
        bad.supply_setting_v = Some(f64::NAN);
        bad.load = "plasma";
        let errors = start(&bad, &parts()).unwrap_err();
        for field in ["supply_setting_v", "load", "channel"] {
            assert_ne!(errors.get(field), "", "{field}");
        }
    }

    #[test]
    fn a_failed_part_needs_the_part_failed_outcome() {
        let parts = parts();
        let errors = finish("completed", "tank_capacitor", "", &parts).unwrap_err();
        assert_ne!(errors.get("outcome"), "");
        assert!(finish("part_failed", "", "", &parts).is_err());
        assert!(finish("part_failed", "choke", "", &parts).is_err());
        let ok = finish("part_failed", "tank_capacitor", "popped", &parts).unwrap();
        assert_eq!(ok.failed_part.as_deref(), Some("tank_capacitor"));
        assert!(finish("part_failed", "tank_capacitor.6", "", &parts).is_ok());
        assert!(finish("part_failed", "tank_capacitor.7", "", &parts).is_err());
        assert_eq!(
            finish("stopped", " ", "", &parts).unwrap().failed_part,
            None
        );
    }
}
