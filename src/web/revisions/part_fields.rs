//! The parts editor's fields: how each part value is typed, shown and read back.

use std::collections::BTreeMap;

use serde_json::{Map, Number, Value};

use crate::parts::{Parts, Role};
use crate::units::{Unit, eng, three_significant};
use crate::web::forms::{FieldErrors, optional_value};

/// One field of the parts editor: `tank_capacitor.capacitance_f` and how to read it.
#[derive(Debug, Clone, Copy)]
pub struct PartField {
    pub role: Role,
    pub key: &'static str,
    pub title: &'static str,
    pub unit: Unit,
    pub required: bool,
    pub integer: bool,
    /// An example for the placeholder.
    pub example: &'static str,
}

const fn field(
    role: Role,
    key: &'static str,
    title: &'static str,
    unit: Unit,
    example: &'static str,
) -> PartField {
    PartField {
        role,
        key,
        title,
        unit,
        required: false,
        integer: false,
        example,
    }
}

const fn required(mut f: PartField) -> PartField {
    f.required = true;
    f
}

const fn integer(mut f: PartField) -> PartField {
    f.integer = true;
    f
}

use Role::*;

/// The editor's fields, in page order. Text fields (`label`) and the conductor are handled apart.
pub const PART_FIELDS: &[PartField] = &[
    required(field(
        TankCapacitor,
        "capacitance_f",
        "Capacitance of one unit",
        Unit::Farad,
        "330 nF",
    )),
    required(integer(field(
        TankCapacitor,
        "count",
        "Units in parallel",
        Unit::None,
        "6",
    ))),
    field(
        TankCapacitor,
        "dissipation_factor",
        "Dissipation factor tan δ",
        Unit::None,
        "0.0005",
    ),
    field(
        TankCapacitor,
        "esr_ohm",
        "ESR of one unit",
        Unit::Ohm,
        "12 mΩ",
    ),
    field(
        TankCapacitor,
        "voltage_rating_vrms",
        "AC voltage rating",
        Unit::Volt,
        "250 V",
    ),
    field(
        TankCapacitor,
        "current_rating_arms",
        "RMS current rating",
        Unit::Ampere,
        "8 A",
    ),
    field(
        TankCapacitor,
        "max_temp_c",
        "Rated temperature",
        Unit::Celsius,
        "85",
    ),
    field(
        TankCapacitor,
        "self_heating_limit_k",
        "Allowed self-heating (K)",
        Unit::None,
        "10",
    ),
    field(
        WorkCoil,
        "inductance_h",
        "Measured inductance",
        Unit::Henry,
        "1.1 µH",
    ),
    field(WorkCoil, "turns", "Turns", Unit::None, "6"),
    field(
        WorkCoil,
        "mean_diameter_m",
        "Mean diameter",
        Unit::Metre,
        "40 mm",
    ),
    field(WorkCoil, "length_m", "Winding length", Unit::Metre, "50 mm"),
    field(
        WorkCoil,
        "lead_length_m",
        "Lead length (both)",
        Unit::Metre,
        "200 mm",
    ),
    field(
        WorkCoil,
        "max_temp_c",
        "Maximum temperature",
        Unit::Celsius,
        "120",
    ),
    required(field(
        Choke,
        "inductance_h",
        "Inductance",
        Unit::Henry,
        "47 µH",
    )),
    required(integer(field(
        Choke,
        "count",
        "Number of chokes",
        Unit::None,
        "2",
    ))),
    field(Choke, "dcr_ohm", "DC resistance", Unit::Ohm, "15 mΩ"),
    field(
        Choke,
        "saturation_current_a",
        "Saturation current",
        Unit::Ampere,
        "20 A",
    ),
    field(
        Choke,
        "max_temp_c",
        "Maximum temperature",
        Unit::Celsius,
        "120",
    ),
    field(Switch, "vds_max_v", "V_DS maximum", Unit::Volt, "100 V"),
    field(Switch, "rds_on_ohm", "R_DS(on) at 25 °C", Unit::Ohm, "8 mΩ"),
    field(
        Switch,
        "rds_tempco_pct_per_k",
        "R_DS(on) rise (%/K)",
        Unit::None,
        "0.6",
    ),
    field(Switch, "tj_max_c", "Junction maximum", Unit::Celsius, "175"),
    field(
        Switch,
        "rth_jc_k_per_w",
        "Junction to case",
        Unit::KelvinPerWatt,
        "0.8",
    ),
    field(Switch, "vgs_max_v", "V_GS maximum", Unit::Volt, "20 V"),
    required(field(
        GateResistor,
        "resistance_ohm",
        "Resistance",
        Unit::Ohm,
        "470 Ω",
    )),
    field(
        GateResistor,
        "power_rating_w",
        "Power rating",
        Unit::Watt,
        "1 W",
    ),
    field(
        GateResistor,
        "max_temp_c",
        "Maximum temperature",
        Unit::Celsius,
        "155",
    ),
    required(field(
        GateClamp,
        "zener_voltage_v",
        "Zener voltage",
        Unit::Volt,
        "12 V",
    )),
    field(
        Supply,
        "nominal_voltage_v",
        "Nominal voltage",
        Unit::Volt,
        "24 V",
    ),
    field(
        Supply,
        "current_limit_a",
        "Current limit",
        Unit::Ampere,
        "20 A",
    ),
];

/// The editor's conductor fields of the work coil (stored under `work_coil.conductor`).
pub const CONDUCTOR_FIELDS: &[(&str, &str, &str)] = &[
    ("diameter_m", "Wire diameter", "2.6 mm"),
    ("awg", "or wire gauge (AWG)", "10"),
    ("outer_diameter_m", "Tube outer diameter", "6 mm"),
    ("wall_m", "Tube wall", "0.8 mm"),
];

/// The roles the editor shows, in order.
pub const EDITOR_ROLES: [Role; 7] = [
    TankCapacitor,
    WorkCoil,
    Choke,
    Switch,
    GateResistor,
    GateClamp,
    Supply,
];

pub fn field_name(role: Role, key: &str) -> String {
    format!("{}.{key}", role.key())
}

/// The editor's text values for a parts list (engineering notation, so they parse back).
pub fn parts_to_form(parts: &Parts) -> BTreeMap<String, String> {
    let value = serde_json::to_value(parts).expect("parts always serialise");
    let mut form = BTreeMap::new();
    for role in EDITOR_ROLES {
        let Some(object) = value.get(role.key()) else {
            continue;
        };
        form.insert(field_name(role, "present"), "on".into());
        if let Some(label) = object.get("label").and_then(Value::as_str) {
            form.insert(field_name(role, "label"), label.to_string());
        }
        for spec in PART_FIELDS.iter().filter(|f| f.role == role) {
            if let Some(number) = object.get(spec.key).and_then(Value::as_f64) {
                form.insert(field_name(role, spec.key), format_for_field(number, spec));
            }
        }
        if let Some(conductor) = object.get("conductor") {
            if let Some(kind) = conductor.get("kind").and_then(Value::as_str) {
                form.insert("work_coil.conductor_kind".into(), kind.to_string());
            }
            for (key, _, _) in CONDUCTOR_FIELDS {
                if let Some(number) = conductor.get(*key).and_then(Value::as_f64) {
                    let text = if *key == "awg" {
                        format!("{number}")
                    } else {
                        eng(number, Unit::Metre).to_string()
                    };
                    form.insert(format!("work_coil.conductor_{key}"), text);
                }
            }
        }
    }
    form
}

fn format_for_field(number: f64, spec: &PartField) -> String {
    if spec.integer {
        format!("{number}")
    } else if spec.unit == Unit::None {
        // Full precision: a dissipation factor rounded to three figures is still exact enough,
        // but a user's 0.00047 must come back as typed.
        let text = format!("{number}");
        if text.len() <= 10 {
            text
        } else {
            three_significant(number)
        }
    } else {
        eng(number, spec.unit).to_string()
    }
}

/// Reads the parts editor. A role is part of the revision when its "present" box is ticked;
/// its required fields must then be filled. Every bad value is reported by field.
pub fn parts_from_form(form: &BTreeMap<String, String>) -> Result<Parts, FieldErrors> {
    let mut errors = FieldErrors::default();
    let mut object = Map::new();
    let text = |name: &str| form.get(name).map_or("", |v| v.trim());
    for role in EDITOR_ROLES {
        if text(&field_name(role, "present")).is_empty() {
            continue;
        }
        let mut params = Map::new();
        let label = text(&field_name(role, "label"));
        if !label.is_empty() {
            params.insert(
                "label".into(),
                Value::String(label.chars().take(200).collect()),
            );
        }
        for spec in PART_FIELDS.iter().filter(|f| f.role == role) {
            let name = field_name(role, spec.key);
            let raw = text(&name);
            if raw.is_empty() {
                if spec.required {
                    errors.add(&name, "required for this part");
                }
                continue;
            }
            let Some(number) = optional_value(raw, spec.unit, &name, &mut errors) else {
                continue;
            };
            // Temperatures may be anything plausible; every other part value is a positive size.
            if spec.unit != Unit::Celsius && number <= 0.0 {
                errors.add(&name, "must be greater than zero");
                continue;
            }
            if spec.integer {
                if number.fract() != 0.0 || !(1.0..=10_000.0).contains(&number) {
                    errors.add(&name, "must be a whole number from 1 to 10000");
                    continue;
                }
                params.insert(spec.key.into(), Value::from(number as u64));
            } else {
                params.insert(
                    spec.key.into(),
                    Value::Number(Number::from_f64(number).expect("finite")),
                );
            }
        }
        if role == WorkCoil
            && let Some(conductor) = conductor_from_form(form, &mut errors)
        {
            params.insert("conductor".into(), conductor);
        }
        object.insert(role.key().into(), Value::Object(params));
    }
    if !errors.is_empty() {
        return Err(errors);
    }
    serde_json::from_value(Value::Object(object)).map_err(|error| {
        let mut errors = FieldErrors::default();
        errors.add("parts", format!("these parts do not fit together: {error}"));
        errors
    })
}

fn conductor_from_form(form: &BTreeMap<String, String>, errors: &mut FieldErrors) -> Option<Value> {
    let text = |key: &str| {
        form.get(&format!("work_coil.conductor_{key}"))
            .map_or("", |v| v.trim())
    };
    let mut length = |key: &str| {
        let name = format!("work_coil.conductor_{key}");
        let value = optional_value(text(key), Unit::Metre, &name, errors)?;
        if value <= 0.0 {
            errors.add(&name, "must be greater than zero");
            return None;
        }
        Some(Value::from(value))
    };
    match text("kind") {
        "round" => {
            let diameter = length("diameter_m");
            let awg = match text("awg") {
                "" => None,
                gauge => match gauge.parse::<u32>() {
                    Ok(n) if n <= 40 => Some(Value::from(n)),
                    _ => {
                        errors.add("work_coil.conductor_awg", "a gauge from 0 to 40");
                        None
                    }
                },
            };
            let mut object = Map::new();
            object.insert("kind".into(), "round".into());
            if let Some(d) = diameter {
                object.insert("diameter_m".into(), d);
            }
            if let Some(n) = awg {
                object.insert("awg".into(), n);
            }
            Some(Value::Object(object))
        }
        "tube" => {
            let outer = length("outer_diameter_m");
            let wall = length("wall_m");
            match (outer, wall) {
                (Some(outer), Some(wall)) => {
                    let mut object = Map::new();
                    object.insert("kind".into(), "tube".into());
                    object.insert("outer_diameter_m".into(), outer);
                    object.insert("wall_m".into(), wall);
                    Some(Value::Object(object))
                }
                _ => {
                    errors.add(
                        "work_coil.conductor_outer_diameter_m",
                        "a tube needs its outer diameter and wall",
                    );
                    None
                }
            }
        }
        _ => None,
    }
}
