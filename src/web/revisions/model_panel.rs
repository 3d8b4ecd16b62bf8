//! The model panel of a revision page: the model at the revision's nominal supply, or at the
//! what-if operating point typed into the panel (a GET form: nothing is saved, the URL can be
//! bookmarked and shared).

use serde::Deserialize;

use crate::analysis::flags::Flag;
use crate::analysis::model::{OperatingPoint, PartTemperatures, evaluate, validate};
use crate::analysis::model_table::{MODEL_CAVEATS, quantity_rows};
use crate::parts::Parts;
use crate::units::Unit;
use crate::web::forms::{FieldErrors, optional_value};

/// The what-if fields as typed (units and prefixes allowed).
#[derive(Debug, Clone, Default, Deserialize)]
pub struct WhatIfQuery {
    #[serde(default)]
    pub supply_voltage_v: String,
    #[serde(default)]
    pub supply_current_a: String,
    #[serde(default)]
    pub frequency_hz: String,
    #[serde(default)]
    pub ambient_c: String,
    #[serde(default)]
    pub t_tank_capacitor: String,
    #[serde(default)]
    pub t_switch: String,
    #[serde(default)]
    pub t_work_coil: String,
    #[serde(default)]
    pub t_choke: String,
}

pub struct ModelPanel {
    pub query: WhatIfQuery,
    pub errors: FieldErrors,
    /// Where the operating point came from, in words.
    pub basis: String,
    pub rows: Vec<(String, String, String)>,
    pub flags: Vec<FlagView>,
    pub runaway: bool,
    pub caveats: &'static [&'static str],
}

/// A flag as a page shows it.
pub struct FlagView {
    pub code: &'static str,
    pub severity: &'static str,
    pub part: String,
    pub message: String,
    pub source: &'static str,
}

impl FlagView {
    pub fn from_flag(flag: &Flag) -> FlagView {
        FlagView {
            code: flag.code,
            severity: match flag.severity {
                crate::analysis::flags::Severity::Note => "note",
                crate::analysis::flags::Severity::Warning => "warning",
                crate::analysis::flags::Severity::Failure => "failure",
            },
            part: flag.part.map(|r| r.title().to_string()).unwrap_or_default(),
            message: flag.message.clone(),
            source: flag.source,
        }
    }
}

impl ModelPanel {
    /// The what-if fields: name, title, typed value, placeholder.
    pub fn fields(&self) -> Vec<(&'static str, &'static str, String, &'static str)> {
        let q = &self.query;
        vec![
            (
                "supply_voltage_v",
                "Supply voltage",
                q.supply_voltage_v.clone(),
                "24 V",
            ),
            (
                "supply_current_a",
                "Supply current",
                q.supply_current_a.clone(),
                "10 A",
            ),
            (
                "frequency_hz",
                "Measured frequency",
                q.frequency_hz.clone(),
                "150k",
            ),
            ("ambient_c", "Ambient (°C)", q.ambient_c.clone(), "25"),
            (
                "t_tank_capacitor",
                "Tank capacitor (°C)",
                q.t_tank_capacitor.clone(),
                "",
            ),
            ("t_switch", "Switch case (°C)", q.t_switch.clone(), ""),
            ("t_work_coil", "Work coil (°C)", q.t_work_coil.clone(), ""),
            ("t_choke", "Choke (°C)", q.t_choke.clone(), ""),
        ]
    }

    /// Evaluates the panel. With no supply typed, the revision's nominal supply is used.
    pub fn build(parts: &Parts, mut query: WhatIfQuery) -> ModelPanel {
        let mut errors = FieldErrors::default();
        let typed = !query.supply_voltage_v.trim().is_empty();
        let nominal = parts.supply.as_ref().and_then(|s| s.nominal_voltage_v);
        if !typed && let Some(v) = nominal {
            query.supply_voltage_v = format!("{v}");
        }
        let temperature = |text: &str, name: &str, errors: &mut FieldErrors| {
            optional_value(text, Unit::Celsius, name, errors)
        };
        let supply = optional_value(
            &query.supply_voltage_v,
            Unit::Volt,
            "supply_voltage_v",
            &mut errors,
        );
        let op = OperatingPoint {
            supply_voltage_v: supply.unwrap_or(0.0),
            supply_current_a: optional_value(
                &query.supply_current_a,
                Unit::Ampere,
                "supply_current_a",
                &mut errors,
            ),
            frequency_hz: optional_value(
                &query.frequency_hz,
                Unit::Hertz,
                "frequency_hz",
                &mut errors,
            ),
            ambient_c: temperature(&query.ambient_c, "ambient_c", &mut errors),
            temperatures_c: PartTemperatures {
                tank_capacitor: temperature(
                    &query.t_tank_capacitor,
                    "t_tank_capacitor",
                    &mut errors,
                ),
                switch: temperature(&query.t_switch, "t_switch", &mut errors),
                work_coil: temperature(&query.t_work_coil, "t_work_coil", &mut errors),
                choke: temperature(&query.t_choke, "t_choke", &mut errors),
                gate_resistor: None,
            },
        };
        let mut panel = ModelPanel {
            basis: if typed {
                "at the operating point typed below".into()
            } else if nominal.is_some() {
                "at the revision's nominal supply".into()
            } else {
                "— type a supply voltage below (this revision has no nominal supply)".into()
            },
            query,
            errors,
            rows: Vec::new(),
            flags: Vec::new(),
            runaway: false,
            caveats: MODEL_CAVEATS,
        };
        if supply.is_none() || !panel.errors.is_empty() {
            return panel;
        }
        if let Err(error) = validate(parts, &op) {
            let field = error
                .field
                .rsplit('.')
                .next()
                .unwrap_or("supply_voltage_v")
                .to_string();
            let field = match field.as_str() {
                "tank_capacitor" | "switch" | "work_coil" | "choke" => format!("t_{field}"),
                _ => field,
            };
            panel.errors.add(&field, error.message);
            return panel;
        }
        let report = evaluate(parts, &op);
        panel.rows = quantity_rows(&report)
            .into_iter()
            .filter(|r| r.value.is_some())
            .map(|r| (r.name.to_string(), r.title.to_string(), r.display()))
            .collect();
        panel.flags = report.flags.iter().map(FlagView::from_flag).collect();
        panel.runaway = report.switch_thermal_runaway;
        panel
    }
}
