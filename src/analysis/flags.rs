//! Findings about a revision at an operating point: which part runs out of margin, by how much,
//! and where the limit comes from. Thresholds live in [`super::limits`].

use serde::{Deserialize, Serialize};

use super::limits::{self, Threshold};
use super::model::{ModelReport, OperatingPoint};
use crate::parts::{Parts, Role};
use crate::physics::capacitor;
use crate::units::{Unit, eng_precise};

/// How bad a finding is. Ordered: `Note < Warning < Failure`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Note,
    Warning,
    Failure,
}

/// One finding.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Flag {
    /// Stable rule name, e.g. `cap-overtemp`.
    pub code: &'static str,
    pub severity: Severity,
    pub part: Option<Role>,
    /// Plain language, with the numbers and their units.
    pub message: String,
    /// Where the limit comes from.
    pub source: &'static str,
}

/// Every rule that raises a flag. Rule names stay in the JSON and the logs; pages show titles.
pub const RULE_CODES: [&str; 20] = [
    "cap-overtemp",
    "cap-self-heating",
    "cap-current",
    "cap-voltage",
    "cap-drift",
    "cap-limit-assumed",
    "switch-voltage",
    "switch-overtemp",
    "switch-tempco-missing",
    "gate-overvoltage",
    "gate-resistor-power",
    "choke-saturation",
    "choke-ratio",
    "coil-proximity",
    "loss-exceeds-input",
    "supply-limit",
    "no-oscillation",
    "part-overtemp",
    "time-to-limit",
    "part-degrading",
];

/// The title a practitioner would give a finding, by its rule. Pages show this, never the rule.
pub fn flag_title(code: &str) -> &'static str {
    match code {
        "cap-overtemp" => "Tank capacitor too hot",
        "cap-self-heating" => "Tank capacitor heating itself",
        "cap-current" => "Tank capacitor current near or over its rating",
        "cap-voltage" => "Tank voltage near or over the capacitors' rating",
        "cap-drift" => "Tank capacitance off nominal",
        "cap-limit-assumed" => "Capacitor temperature rating assumed",
        "switch-voltage" => "Switch voltage near or over its rating",
        "switch-overtemp" => "Switch junction too hot",
        "switch-tempco-missing" => "Switch resistance taken at 25 °C",
        "gate-overvoltage" => "Gate voltage above its maximum",
        "gate-resistor-power" => "Gate resistor near or over its power rating",
        "choke-saturation" => "Choke close to saturation",
        "choke-ratio" => "Choke small against the coil",
        "coil-proximity" => "Coil loss underestimated",
        "loss-exceeds-input" => "Losses exceed the input power",
        "supply-limit" => "Supply in current limit",
        "no-oscillation" => "No oscillation recorded",
        "part-overtemp" => "Part over its temperature limit",
        "time-to-limit" => "Heading for its temperature limit",
        "part-degrading" => "Part wearing out",
        _ => "Finding",
    }
}

/// A limit and where it came from: the part's own rating, else the default threshold.
fn limit_or_default(own: Option<f64>, default: Threshold) -> (f64, &'static str, bool) {
    match own {
        Some(value) => (value, limits::PART_RATING, false),
        None => (default.value, default.source, true),
    }
}

/// All flags for one evaluation, worst first (then by part, then by code, for a stable order).
pub fn flags(parts: &Parts, op: &OperatingPoint, report: &ModelReport) -> Vec<Flag> {
    let mut found = Vec::new();
    tank_capacitor(parts, op, report, &mut found);
    switch(parts, op, report, &mut found);
    gate(parts, op, report, &mut found);
    chokes(parts, report, &mut found);
    model_notes(report, &mut found);
    found.sort_by(|a, b| {
        b.severity
            .cmp(&a.severity)
            .then(a.part.cmp(&b.part))
            .then(a.code.cmp(b.code))
    });
    found
}

/// `Failure` above `limit`, `Warning` above `fraction` of it, else nothing.
fn against_rating(value: f64, limit: f64, warning_fraction: f64) -> Option<Severity> {
    if value > limit {
        Some(Severity::Failure)
    } else if value > warning_fraction * limit {
        Some(Severity::Warning)
    } else {
        None
    }
}

fn flag(
    code: &'static str,
    severity: Severity,
    part: Role,
    message: String,
    source: &'static str,
) -> Flag {
    Flag {
        code,
        severity,
        part: Some(part),
        message,
        source,
    }
}

fn tank_capacitor(parts: &Parts, op: &OperatingPoint, report: &ModelReport, found: &mut Vec<Flag>) {
    let Some(cap) = parts.tank_capacitor.as_ref() else {
        return;
    };
    let role = Role::TankCapacitor;
    let measured_c = op.temperatures_c.tank_capacitor;
    if let Some(temp_c) = measured_c {
        let (max_c, source, assumed) =
            limit_or_default(cap.max_temp_c, limits::CAP_DEFAULT_MAX_TEMP_C);
        let band_k = limits::CAP_TEMP_WARNING_BAND_K.value;
        let rating = if assumed {
            format!("{max_c} °C, the usual rating (none given)")
        } else {
            format!("its {max_c} °C rating")
        };
        if temp_c >= max_c {
            let message = format!("Tank capacitor at {temp_c:.1} °C has reached {rating}");
            found.push(flag(
                "cap-overtemp",
                Severity::Failure,
                role,
                message,
                source,
            ));
        } else if temp_c >= max_c - band_k {
            let message =
                format!("Tank capacitor at {temp_c:.1} °C is within {band_k} K of {rating}");
            found.push(flag(
                "cap-overtemp",
                Severity::Warning,
                role,
                message,
                source,
            ));
        }

        let (rise_limit_k, source, _) =
            limit_or_default(cap.self_heating_limit_k, limits::CAP_DEFAULT_SELF_HEATING_K);
        let rise_k = temp_c - report.ambient_c;
        if rise_k > rise_limit_k {
            let message = format!(
                "Tank capacitor is {rise_k:.1} K above the {:.1} °C ambient, more than the {rise_limit_k} K \
                 of self-heating allowed",
                report.ambient_c
            );
            found.push(flag(
                "cap-self-heating",
                Severity::Warning,
                role,
                message,
                source,
            ));
        }
    }

    if let Some((current_a, rating_a)) = report
        .capacitor_rms_current_per_unit_a
        .zip(cap.current_rating_arms)
    {
        let warning = limits::CAP_CURRENT_WARNING_FRACTION.value;
        if let Some(severity) = against_rating(current_a, rating_a, warning) {
            let message = format!(
                "Each tank capacitor carries {current_a:.2} A rms, {:.0} % of its {rating_a} A rms rating",
                100.0 * current_a / rating_a
            );
            found.push(flag(
                "cap-current",
                severity,
                role,
                message,
                limits::PART_RATING,
            ));
        }
    }

    if let Some((voltage_v, rating_v)) = report.tank_rms_voltage_v.zip(cap.voltage_rating_vrms) {
        let temp_c = measured_c.unwrap_or(report.ambient_c);
        let derated_v = capacitor::derated_voltage_rating_v(rating_v, temp_c);
        let warning = limits::CAP_VOLTAGE_WARNING_FRACTION.value;
        if let Some(severity) = against_rating(voltage_v, derated_v, warning) {
            let rating = if derated_v < rating_v {
                format!(
                    "its {rating_v} V rms rating derated to {derated_v:.1} V rms at {temp_c:.1} °C"
                )
            } else {
                format!("its {rating_v} V rms rating")
            };
            let message = format!(
                "Tank voltage {voltage_v:.1} V rms is {:.0} % of {rating}",
                100.0 * voltage_v / derated_v
            );
            found.push(flag(
                "cap-voltage",
                severity,
                role,
                message,
                limits::CAP_VOLTAGE_DERATING,
            ));
        }
    }

    if let Some(drift) = report.capacitance_drift {
        let severity = if drift.abs() > limits::CAP_DRIFT_FAILURE.value {
            Some((Severity::Failure, limits::CAP_DRIFT_FAILURE.source))
        } else if drift.abs() > limits::CAP_DRIFT_WARNING.value {
            Some((Severity::Warning, limits::CAP_DRIFT_WARNING.source))
        } else {
            None
        };
        if let Some((severity, source)) = severity {
            let direction = if drift < 0.0 { "below" } else { "above" };
            // Four figures and tenths of a percent: the drift is the finding.
            let message = format!(
                "Tank capacitance inferred from the measured {} is {}, {:.1}\u{a0}% {direction} \
                 the nominal {}",
                eng_precise(op.frequency_hz.unwrap_or(f64::NAN), Unit::Hertz),
                eng_precise(
                    report.inferred_tank_capacitance_f.unwrap_or(f64::NAN),
                    Unit::Farad
                ),
                100.0 * drift.abs(),
                eng_precise(report.tank_capacitance_f.unwrap_or(f64::NAN), Unit::Farad),
            );
            found.push(flag("cap-drift", severity, role, message, source));
        }
    }
}

fn switch(parts: &Parts, op: &OperatingPoint, report: &ModelReport, found: &mut Vec<Flag>) {
    let Some(part) = parts.switch.as_ref() else {
        return;
    };
    let role = Role::Switch;
    if let Some((peak_v, vds_v)) = report.switch_peak_voltage_v.zip(part.vds_max_v) {
        let warning = limits::SWITCH_VOLTAGE_WARNING_FRACTION.value;
        if let Some(severity) = against_rating(peak_v, vds_v, warning) {
            let message = format!(
                "Switch peak drain voltage {peak_v:.1} V (π × {:.2} V supply) is {:.0} % of its {vds_v} V rating",
                op.supply_voltage_v,
                100.0 * peak_v / vds_v
            );
            let source = match severity {
                Severity::Warning => limits::SWITCH_VOLTAGE_WARNING_FRACTION.source,
                _ => limits::PART_RATING,
            };
            found.push(flag("switch-voltage", severity, role, message, source));
        }
    }

    let (tj_max_c, source, assumed) =
        limit_or_default(part.tj_max_c, limits::SWITCH_DEFAULT_TJ_MAX_C);
    let rating = if assumed {
        format!("{tj_max_c} °C, a common default (no maximum given)")
    } else {
        format!("its {tj_max_c} °C maximum")
    };
    if report.switch_thermal_runaway {
        let message = format!(
            "Thermal runaway: at {:.2} A the switch junction has no steady temperature below {rating}",
            op.supply_current_a.unwrap_or(f64::NAN)
        );
        found.push(flag(
            "switch-overtemp",
            Severity::Failure,
            role,
            message,
            source,
        ));
    } else if let Some(tj_c) = report.switch_junction_temp_c {
        let band_k = limits::SWITCH_TJ_WARNING_BAND_K.value;
        if tj_c > tj_max_c {
            let message = format!("Switch junction at {tj_c:.1} °C is above {rating}");
            found.push(flag(
                "switch-overtemp",
                Severity::Failure,
                role,
                message,
                source,
            ));
        } else if tj_c >= tj_max_c - band_k {
            let message =
                format!("Switch junction at {tj_c:.1} °C is within {band_k} K of {rating}");
            found.push(flag(
                "switch-overtemp",
                Severity::Warning,
                role,
                message,
                source,
            ));
        }
    }

    if part.rds_tempco_pct_per_k.is_none() && report.switch_conduction_loss_w.is_some() {
        let message =
            "No R_DS(on) temperature coefficient given: the conduction loss uses the 25 °C \
                       value, an underestimate for a hot switch (typically +0.5 to 0.7 %/K)"
                .to_string();
        found.push(flag(
            "switch-tempco-missing",
            Severity::Note,
            role,
            message,
            "A typical figure from MOSFET makers' power-loss application notes, not this part's",
        ));
    }
}

fn gate(parts: &Parts, op: &OperatingPoint, report: &ModelReport, found: &mut Vec<Flag>) {
    if let Some(part) = parts.switch.as_ref() {
        let (vgs_max_v, source, _) =
            limit_or_default(part.vgs_max_v, limits::GATE_DEFAULT_VGS_MAX_V);
        let vin = op.supply_voltage_v;
        match parts.gate_clamp.as_ref() {
            None if vin > vgs_max_v => {
                let message = format!(
                    "Supply {vin:.1} V reaches the gates unclamped, above the {vgs_max_v} V gate-source maximum"
                );
                found.push(flag(
                    "gate-overvoltage",
                    Severity::Failure,
                    Role::Switch,
                    message,
                    source,
                ));
            }
            Some(clamp) if clamp.zener_voltage_v >= vgs_max_v => {
                let message = format!(
                    "Gate clamp {} V is at or above the {vgs_max_v} V gate-source maximum, so it does not \
                     protect the gates",
                    clamp.zener_voltage_v
                );
                found.push(flag(
                    "gate-overvoltage",
                    Severity::Failure,
                    Role::GateClamp,
                    message,
                    source,
                ));
            }
            _ => {}
        }
    }

    let rated = parts.gate_resistor.as_ref().and_then(|r| r.power_rating_w);
    if let Some((power_w, rating_w)) = report.gate_resistor_power_w.zip(rated) {
        let warning = limits::GATE_RESISTOR_WARNING_FRACTION.value;
        if let Some(severity) = against_rating(power_w, rating_w, warning) {
            let message = format!(
                "Each gate resistor dissipates {power_w:.2} W, {:.0} % of its {rating_w} W rating",
                100.0 * power_w / rating_w
            );
            let source = match severity {
                Severity::Warning => limits::GATE_RESISTOR_WARNING_FRACTION.source,
                _ => limits::PART_RATING,
            };
            found.push(flag(
                "gate-resistor-power",
                severity,
                Role::GateResistor,
                message,
                source,
            ));
        }
    }
}

fn chokes(parts: &Parts, report: &ModelReport, found: &mut Vec<Flag>) {
    let Some(part) = parts.choke.as_ref() else {
        return;
    };
    let role = Role::Choke;
    if let Some((peak_a, saturation_a)) = report.choke_peak_current_a.zip(part.saturation_current_a)
    {
        let warning = limits::CHOKE_SATURATION_WARNING_FRACTION.value;
        if let Some(severity) = against_rating(peak_a, saturation_a, warning) {
            let message = format!(
                "Choke peak current {peak_a:.2} A is {:.0} % of its {saturation_a} A saturation current",
                100.0 * peak_a / saturation_a
            );
            let source = match severity {
                Severity::Warning => limits::CHOKE_SATURATION_WARNING_FRACTION.source,
                _ => limits::PART_RATING,
            };
            found.push(flag("choke-saturation", severity, role, message, source));
        }
    }
    if let Some(ratio) = report.choke_reactance_ratio {
        let minimum = limits::CHOKE_MIN_REACTANCE_RATIO;
        if ratio < minimum.value {
            let message = format!(
                "Choke reactance {:.2} Ω is only {ratio:.1}× the coil's {:.2} Ω (aim for at least {}×)",
                report.choke_reactance_ohm.unwrap_or(f64::NAN),
                report.coil_reactance_ohm.unwrap_or(f64::NAN),
                minimum.value
            );
            found.push(flag(
                "choke-ratio",
                Severity::Warning,
                role,
                message,
                minimum.source,
            ));
        }
    }
}

fn model_notes(report: &ModelReport, found: &mut Vec<Flag>) {
    if let Some(r_ohm) = report.coil_ac_resistance_ohm {
        let message = format!(
            "Coil AC resistance {:.2} mΩ is for an isolated conductor; proximity in the winding adds a \
             factor of about 1.5 to 3",
            r_ohm * 1e3
        );
        found.push(flag(
            "coil-proximity",
            Severity::Note,
            Role::WorkCoil,
            message,
            "A typical figure for close-wound coils; the isolated-conductor resistance follows \
             Terman, Radio Engineers' Handbook, 1943",
        ));
    }
    if let Some((workpiece_w, input_w)) = report.workpiece_power_w.zip(report.input_power_w)
        && workpiece_w < 0.0
    {
        let message = format!(
            "The predicted losses ({:.1} W) exceed the {input_w:.1} W input: a reading or a part value is off",
            input_w - workpiece_w
        );
        found.push(Flag {
            code: "loss-exceeds-input",
            severity: Severity::Note,
            part: None,
            message,
            source: "Energy balance: the losses cannot exceed the power put in",
        });
    }
}
