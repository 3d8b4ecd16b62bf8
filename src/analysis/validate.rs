//! Refusal of inputs the model cannot or should not evaluate: non-finite numbers, non-positive
//! physical magnitudes, counts of zero, and magnitudes no bench heater has (typos such as kHz
//! typed as Hz). The first bad field, in the order of the parts contract, wins.

use crate::analysis::model::OperatingPoint;
use crate::parts::{Conductor, Parts};
use crate::physics::wire_gauge::MAX_AWG;
use crate::units::short_number as n;

/// A refused input: the field as a JSON path and a plain message.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{field}: {message}")]
pub struct InputError {
    /// JSON path, e.g. `parts.tank_capacitor.capacitance_f` or `operating_point.supply_voltage_v`.
    pub field: String,
    pub message: String,
}

type Checked = Result<(), InputError>;

fn refuse(field: &str, message: String) -> Checked {
    Err(InputError {
        field: field.to_string(),
        message,
    })
}

/// Greater than zero and at most `max`.
fn positive(field: &str, value: f64, max: f64, unit: &str) -> Checked {
    if !value.is_finite() {
        return refuse(field, "must be a finite number".into());
    }
    if value <= 0.0 {
        return refuse(
            field,
            format!("must be greater than 0 {unit}, not {}", n(value)),
        );
    }
    if value > max {
        return refuse(
            field,
            format!(
                "{} {unit} is implausibly large (at most {} {unit})",
                n(value),
                n(max)
            ),
        );
    }
    Ok(())
}

/// Between `min` and `max`, both included.
fn within(field: &str, value: f64, min: f64, max: f64, unit: &str) -> Checked {
    if !value.is_finite() {
        return refuse(field, "must be a finite number".into());
    }
    if !(min..=max).contains(&value) {
        return refuse(
            field,
            format!(
                "must be between {} and {} {unit}, not {}",
                n(min),
                n(max),
                n(value)
            ),
        );
    }
    Ok(())
}

fn count(field: &str, value: u32) -> Checked {
    if value == 0 {
        return refuse(field, "must be at least 1".into());
    }
    if value > MAX_COUNT {
        return refuse(
            field,
            format!("{value} is implausibly many (at most {MAX_COUNT})"),
        );
    }
    Ok(())
}

fn optional(value: Option<f64>, check: impl FnOnce(f64) -> Checked) -> Checked {
    value.map_or(Ok(()), check)
}

const MAX_COUNT: u32 = 100_000;
const MAX_CAPACITANCE_F: f64 = 1.0;
const MAX_INDUCTANCE_H: f64 = 1.0;
const MAX_PART_RESISTANCE_OHM: f64 = 1e3;
const MAX_GATE_RESISTANCE_OHM: f64 = 1e7;
const MAX_RATING_V: f64 = 1e5;
const MAX_SUPPLY_V: f64 = 10e3;
const MAX_CURRENT_A: f64 = 1e4;
const MAX_SUPPLY_CURRENT_A: f64 = 1e3;
const MAX_FREQUENCY_HZ: f64 = 100e6;
const MIN_TEMP_C: f64 = -60.0;
const MAX_TEMP_C: f64 = 1500.0;

fn temperature(field: &str, value: f64) -> Checked {
    within(field, value, MIN_TEMP_C, MAX_TEMP_C, "°C")
}

/// Checks every number of the parts and the operating point; see the module doc.
pub fn validate(parts: &Parts, op: &OperatingPoint) -> Checked {
    validate_parts(parts)?;
    validate_operating_point(op)
}

fn validate_parts(parts: &Parts) -> Checked {
    if let Some(c) = &parts.tank_capacitor {
        let p = "parts.tank_capacitor";
        positive(
            &format!("{p}.capacitance_f"),
            c.capacitance_f,
            MAX_CAPACITANCE_F,
            "F",
        )?;
        count(&format!("{p}.count"), c.count)?;
        optional(c.dissipation_factor, |v| {
            within(&format!("{p}.dissipation_factor"), v, 0.0, 1.0, "")
        })?;
        optional(c.esr_ohm, |v| {
            positive(&format!("{p}.esr_ohm"), v, MAX_PART_RESISTANCE_OHM, "Ω")
        })?;
        optional(c.voltage_rating_vrms, |v| {
            positive(&format!("{p}.voltage_rating_vrms"), v, MAX_RATING_V, "V")
        })?;
        optional(c.current_rating_arms, |v| {
            positive(&format!("{p}.current_rating_arms"), v, MAX_CURRENT_A, "A")
        })?;
        optional(c.max_temp_c, |v| temperature(&format!("{p}.max_temp_c"), v))?;
        optional(c.self_heating_limit_k, |v| {
            positive(&format!("{p}.self_heating_limit_k"), v, 1000.0, "K")
        })?;
    }
    if let Some(w) = &parts.work_coil {
        let p = "parts.work_coil";
        optional(w.inductance_h, |v| {
            positive(&format!("{p}.inductance_h"), v, MAX_INDUCTANCE_H, "H")
        })?;
        optional(w.turns, |v| {
            positive(&format!("{p}.turns"), v, 1e5, "turns")
        })?;
        optional(w.mean_diameter_m, |v| {
            positive(&format!("{p}.mean_diameter_m"), v, 10.0, "m")
        })?;
        optional(w.length_m, |v| {
            positive(&format!("{p}.length_m"), v, 100.0, "m")
        })?;
        optional(w.lead_length_m, |v| {
            within(&format!("{p}.lead_length_m"), v, 0.0, 1000.0, "m")
        })?;
        match &w.conductor {
            Some(Conductor::Round { diameter_m, awg }) => {
                optional(*diameter_m, |v| {
                    positive(&format!("{p}.conductor.diameter_m"), v, 0.1, "m")
                })?;
                if let Some(gauge) = awg.filter(|g| *g > MAX_AWG) {
                    refuse(
                        &format!("{p}.conductor.awg"),
                        format!("AWG {gauge} is beyond the gauge table (0 to {MAX_AWG})"),
                    )?;
                }
            }
            Some(Conductor::Tube {
                outer_diameter_m,
                wall_m,
            }) => {
                positive(
                    &format!("{p}.conductor.outer_diameter_m"),
                    *outer_diameter_m,
                    0.5,
                    "m",
                )?;
                positive(
                    &format!("{p}.conductor.wall_m"),
                    *wall_m,
                    outer_diameter_m / 2.0,
                    "m",
                )?;
            }
            None => {}
        }
        optional(w.max_temp_c, |v| temperature(&format!("{p}.max_temp_c"), v))?;
    }
    if let Some(c) = &parts.choke {
        let p = "parts.choke";
        positive(
            &format!("{p}.inductance_h"),
            c.inductance_h,
            MAX_INDUCTANCE_H,
            "H",
        )?;
        count(&format!("{p}.count"), c.count)?;
        optional(c.dcr_ohm, |v| {
            positive(&format!("{p}.dcr_ohm"), v, MAX_PART_RESISTANCE_OHM, "Ω")
        })?;
        optional(c.saturation_current_a, |v| {
            positive(&format!("{p}.saturation_current_a"), v, MAX_CURRENT_A, "A")
        })?;
        optional(c.max_temp_c, |v| temperature(&format!("{p}.max_temp_c"), v))?;
    }
    if let Some(s) = &parts.switch {
        let p = "parts.switch";
        optional(s.vds_max_v, |v| {
            positive(&format!("{p}.vds_max_v"), v, MAX_RATING_V, "V")
        })?;
        optional(s.rds_on_ohm, |v| {
            positive(&format!("{p}.rds_on_ohm"), v, MAX_PART_RESISTANCE_OHM, "Ω")
        })?;
        optional(s.rds_tempco_pct_per_k, |v| {
            within(&format!("{p}.rds_tempco_pct_per_k"), v, 0.0, 5.0, "%/K")
        })?;
        optional(s.tj_max_c, |v| temperature(&format!("{p}.tj_max_c"), v))?;
        optional(s.rth_jc_k_per_w, |v| {
            positive(&format!("{p}.rth_jc_k_per_w"), v, 1000.0, "K/W")
        })?;
        optional(s.vgs_max_v, |v| {
            positive(&format!("{p}.vgs_max_v"), v, 1000.0, "V")
        })?;
    }
    if let Some(r) = &parts.gate_resistor {
        let p = "parts.gate_resistor";
        positive(
            &format!("{p}.resistance_ohm"),
            r.resistance_ohm,
            MAX_GATE_RESISTANCE_OHM,
            "Ω",
        )?;
        optional(r.power_rating_w, |v| {
            positive(&format!("{p}.power_rating_w"), v, 1e4, "W")
        })?;
        optional(r.max_temp_c, |v| temperature(&format!("{p}.max_temp_c"), v))?;
    }
    if let Some(z) = &parts.gate_clamp {
        positive(
            "parts.gate_clamp.zener_voltage_v",
            z.zener_voltage_v,
            1000.0,
            "V",
        )?;
    }
    if let Some(s) = &parts.supply {
        let p = "parts.supply";
        optional(s.nominal_voltage_v, |v| {
            within(&format!("{p}.nominal_voltage_v"), v, 0.0, MAX_SUPPLY_V, "V")
        })?;
        optional(s.current_limit_a, |v| {
            within(
                &format!("{p}.current_limit_a"),
                v,
                0.0,
                MAX_SUPPLY_CURRENT_A,
                "A",
            )
        })?;
    }
    for (i, other) in parts.other.iter().enumerate() {
        count(&format!("parts.other[{i}].quantity"), other.quantity)?;
        optional(other.max_temp_c, |v| {
            temperature(&format!("parts.other[{i}].max_temp_c"), v)
        })?;
    }
    Ok(())
}

fn validate_operating_point(op: &OperatingPoint) -> Checked {
    let p = "operating_point";
    within(
        &format!("{p}.supply_voltage_v"),
        op.supply_voltage_v,
        0.0,
        MAX_SUPPLY_V,
        "V",
    )?;
    optional(op.supply_current_a, |v| {
        within(
            &format!("{p}.supply_current_a"),
            v,
            0.0,
            MAX_SUPPLY_CURRENT_A,
            "A",
        )
    })?;
    optional(op.frequency_hz, |v| {
        positive(&format!("{p}.frequency_hz"), v, MAX_FREQUENCY_HZ, "Hz")
    })?;
    optional(op.ambient_c, |v| temperature(&format!("{p}.ambient_c"), v))?;
    let t = &op.temperatures_c;
    for (role, value) in [
        ("tank_capacitor", t.tank_capacitor),
        ("switch", t.switch),
        ("work_coil", t.work_coil),
        ("choke", t.choke),
        ("gate_resistor", t.gate_resistor),
    ] {
        optional(value, |v| {
            temperature(&format!("{p}.temperatures_c.{role}"), v)
        })?;
    }
    Ok(())
}
