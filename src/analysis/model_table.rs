//! The model's quantities as rows a person reads: title, value, unit, in the report's order.
//! Shared by the revision page's what-if panel, the run page and `eddybench model --table`, so
//! all three show the same numbers.

use super::model::ModelReport;
use crate::units::Unit;

/// One line of the model table.
#[derive(Debug, Clone, PartialEq)]
pub struct QuantityRow {
    /// The JSON name (`tank_rms_current_a`).
    pub name: &'static str,
    pub title: &'static str,
    pub value: Option<f64>,
    pub unit: Unit,
    /// Shown as a percentage (margins, drift, efficiency).
    pub percent: bool,
}

/// The rows of a report, every quantity including the absent ones.
pub fn quantity_rows(report: &ModelReport) -> Vec<QuantityRow> {
    let row = |name, title, value, unit| QuantityRow {
        name,
        title,
        value,
        unit,
        percent: false,
    };
    let pct = |name, title, value| QuantityRow {
        name,
        title,
        value,
        unit: Unit::None,
        percent: true,
    };
    vec![
        row(
            "tank_capacitance_f",
            "Tank capacitance",
            report.tank_capacitance_f,
            Unit::Farad,
        ),
        row(
            "coil_inductance_h",
            "Coil inductance",
            report.coil_inductance_h,
            Unit::Henry,
        ),
        row(
            "resonant_frequency_hz",
            "Resonant frequency (coil and tank)",
            report.resonant_frequency_hz,
            Unit::Hertz,
        ),
        row(
            "frequency_with_chokes_hz",
            "Frequency with a choke across the tank",
            report.frequency_with_chokes_hz,
            Unit::Hertz,
        ),
        row(
            "operating_frequency_hz",
            "Operating frequency used",
            report.operating_frequency_hz,
            Unit::Hertz,
        ),
        row(
            "tank_peak_voltage_v",
            "Tank peak voltage",
            report.tank_peak_voltage_v,
            Unit::Volt,
        ),
        row(
            "tank_rms_voltage_v",
            "Tank RMS voltage",
            report.tank_rms_voltage_v,
            Unit::Volt,
        ),
        row(
            "coil_reactance_ohm",
            "Coil reactance",
            report.coil_reactance_ohm,
            Unit::Ohm,
        ),
        row(
            "tank_rms_current_a",
            "Tank circulating current (RMS)",
            report.tank_rms_current_a,
            Unit::Ampere,
        ),
        row(
            "capacitor_rms_current_per_unit_a",
            "Current per tank capacitor (RMS)",
            report.capacitor_rms_current_per_unit_a,
            Unit::Ampere,
        ),
        row(
            "reactive_power_var",
            "Reactive power",
            report.reactive_power_var,
            Unit::Var,
        ),
        row(
            "capacitor_loss_w",
            "Capacitor bank loss",
            report.capacitor_loss_w,
            Unit::Watt,
        ),
        row(
            "switch_peak_voltage_v",
            "Switch peak voltage",
            report.switch_peak_voltage_v,
            Unit::Volt,
        ),
        pct(
            "switch_voltage_margin",
            "Switch voltage margin",
            report.switch_voltage_margin,
        ),
        row(
            "switch_conduction_loss_w",
            "Conduction loss per switch",
            report.switch_conduction_loss_w,
            Unit::Watt,
        ),
        row(
            "switch_junction_temp_c",
            "Switch junction temperature",
            report.switch_junction_temp_c,
            Unit::Celsius,
        ),
        row(
            "gate_resistor_power_w",
            "Power per gate resistor",
            report.gate_resistor_power_w,
            Unit::Watt,
        ),
        row(
            "choke_reactance_ohm",
            "Choke reactance",
            report.choke_reactance_ohm,
            Unit::Ohm,
        ),
        row(
            "choke_reactance_ratio",
            "Choke / coil reactance",
            report.choke_reactance_ratio,
            Unit::None,
        ),
        row(
            "choke_ripple_a_pp",
            "Choke ripple (peak to peak)",
            report.choke_ripple_a_pp,
            Unit::Ampere,
        ),
        row(
            "choke_peak_current_a",
            "Choke peak current",
            report.choke_peak_current_a,
            Unit::Ampere,
        ),
        row(
            "choke_dc_loss_w",
            "Chokes' DC loss",
            report.choke_dc_loss_w,
            Unit::Watt,
        ),
        row(
            "skin_depth_m",
            "Skin depth in the coil",
            report.skin_depth_m,
            Unit::Metre,
        ),
        row(
            "coil_ac_resistance_ohm",
            "Coil AC resistance (isolated conductor)",
            report.coil_ac_resistance_ohm,
            Unit::Ohm,
        ),
        row(
            "coil_copper_loss_w",
            "Coil copper loss (no proximity effect)",
            report.coil_copper_loss_w,
            Unit::Watt,
        ),
        row(
            "input_power_w",
            "Input power",
            report.input_power_w,
            Unit::Watt,
        ),
        row("loaded_q", "Loaded Q", report.loaded_q, Unit::None),
        row(
            "predicted_loss_w",
            "Predicted loss (sum of the known parts)",
            report.predicted_loss_w,
            Unit::Watt,
        ),
        row(
            "workpiece_power_w",
            "Power into the workpiece",
            report.workpiece_power_w,
            Unit::Watt,
        ),
        pct(
            "model_efficiency",
            "Efficiency by the loss budget",
            report.model_efficiency,
        ),
        row(
            "inferred_tank_capacitance_f",
            "Tank capacitance inferred from frequency",
            report.inferred_tank_capacitance_f,
            Unit::Farad,
        ),
        pct(
            "capacitance_drift",
            "Capacitance drift from nominal",
            report.capacitance_drift,
        ),
    ]
}

impl QuantityRow {
    /// The value as shown: engineering notation with its unit, a percentage, or an em dash.
    pub fn display(&self) -> String {
        match self.value {
            None => "—".to_string(),
            // Drift in tenths of a percent; the non-breaking space keeps "%" with its number.
            Some(v) if self.percent => format!("{:.1}\u{a0}%", v * 100.0),
            Some(v) if self.unit == Unit::None => crate::units::three_significant(v),
            // Frequency and capacitance keep four figures: the drift between runs is in them.
            Some(v) if matches!(self.unit, Unit::Hertz | Unit::Farad) => {
                crate::units::eng_precise(v, self.unit).to_string()
            }
            Some(v) => crate::units::eng(v, self.unit).to_string(),
        }
    }
}

/// What the page and the terminal say under the model, always.
pub const MODEL_CAVEATS: &[&str] = &[
    "The coil's copper loss is for an isolated conductor and ignores the proximity effect: real coils lose roughly 1.5–3× more.",
    "The tank voltage assumes the ideal waveform of the cross-coupled driver (peak π × supply); ringing adds to the switches' stress.",
    "Quantities whose inputs are missing are left out, never guessed.",
];
