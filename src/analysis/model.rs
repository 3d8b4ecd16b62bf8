//! One operating point of one revision through the driver model (formulas and
//! their sources in `crate::physics`).

use serde::{Deserialize, Serialize};

use crate::analysis::flags::{self, Flag};
use crate::parts::{Conductor, Parts, WorkCoil};
use crate::physics::{capacitor, choke, coil, copper, driver, gate, resonance, switch, wire_gauge};

pub use crate::analysis::validate::{InputError, validate};

/// Ambient temperature assumed when none is given, °C.
pub const DEFAULT_AMBIENT_C: f64 = 25.0;

/// Switches, gate resistors and gate clamps the cross-coupled driver has by its topology.
pub const PER_DRIVER: f64 = 2.0;

/// Measured temperatures in °C, by role key.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PartTemperatures {
    #[serde(default)]
    pub tank_capacitor: Option<f64>,
    /// The switch's case (or tab).
    #[serde(default)]
    pub switch: Option<f64>,
    #[serde(default)]
    pub work_coil: Option<f64>,
    #[serde(default)]
    pub choke: Option<f64>,
    #[serde(default)]
    pub gate_resistor: Option<f64>,
}

/// What was set or measured on the bench for one evaluation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OperatingPoint {
    pub supply_voltage_v: f64,
    #[serde(default)]
    pub supply_current_a: Option<f64>,
    /// Measured; when `None` the model uses its prediction.
    #[serde(default)]
    pub frequency_hz: Option<f64>,
    /// `None` means [`DEFAULT_AMBIENT_C`].
    #[serde(default)]
    pub ambient_c: Option<f64>,
    #[serde(default)]
    pub temperatures_c: PartTemperatures,
}

/// Everything the model derives. A quantity whose inputs are missing is `None` (JSON `null`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelReport {
    pub tank_capacitance_f: Option<f64>,
    pub coil_inductance_h: Option<f64>,
    pub resonant_frequency_hz: Option<f64>,
    pub frequency_with_chokes_hz: Option<f64>,
    pub operating_frequency_hz: Option<f64>,
    pub tank_peak_voltage_v: Option<f64>,
    pub tank_rms_voltage_v: Option<f64>,
    pub coil_reactance_ohm: Option<f64>,
    pub tank_rms_current_a: Option<f64>,
    pub capacitor_rms_current_per_unit_a: Option<f64>,
    pub reactive_power_var: Option<f64>,
    /// Whole bank.
    pub capacitor_loss_w: Option<f64>,
    pub switch_peak_voltage_v: Option<f64>,
    pub switch_voltage_margin: Option<f64>,
    /// Per switch; `None` on thermal runaway, where no steady loss exists.
    pub switch_conduction_loss_w: Option<f64>,
    pub switch_junction_temp_c: Option<f64>,
    pub switch_thermal_runaway: bool,
    /// Per resistor.
    pub gate_resistor_power_w: Option<f64>,
    pub choke_reactance_ohm: Option<f64>,
    pub choke_reactance_ratio: Option<f64>,
    pub choke_ripple_a_pp: Option<f64>,
    pub choke_peak_current_a: Option<f64>,
    /// All chokes together.
    pub choke_dc_loss_w: Option<f64>,
    pub skin_depth_m: Option<f64>,
    /// Isolated-conductor value: proximity in the winding adds more (common practice).
    pub coil_ac_resistance_ohm: Option<f64>,
    pub coil_copper_loss_w: Option<f64>,
    pub input_power_w: Option<f64>,
    /// Reactive power over input power; `None` while the input power is zero.
    pub loaded_q: Option<f64>,
    /// With a supply current: capacitor bank + 2 × switch + 2 × gate resistor + chokes' DC loss +
    /// coil copper, summing only the terms that are known (unknown ones are left out, not
    /// guessed); `None` when no term is known.
    pub predicted_loss_w: Option<f64>,
    /// Input power less the predicted loss.
    pub workpiece_power_w: Option<f64>,
    pub model_efficiency: Option<f64>,
    /// With a measured frequency: 1/((2π·f)²·L‖L_choke).
    pub inferred_tank_capacitance_f: Option<f64>,
    /// Inferred over nominal capacitance, less one.
    pub capacitance_drift: Option<f64>,
    /// The ambient actually used, °C.
    pub ambient_c: f64,
    /// Worst first.
    pub flags: Vec<Flag>,
}

/// The switch's steady state at the operating point.
struct SwitchThermal {
    loss_w: Option<f64>,
    junction_temp_c: Option<f64>,
    runaway: bool,
}

/// Evaluates the model. Assumes [`validate`] passed; never panics on missing inputs.
pub fn evaluate(parts: &Parts, op: &OperatingPoint) -> ModelReport {
    let ambient_c = op.ambient_c.unwrap_or(DEFAULT_AMBIENT_C);
    let vin = op.supply_voltage_v;
    let iin = op.supply_current_a;
    let cap = parts.tank_capacitor.as_ref();
    let choke_part = parts.choke.as_ref();
    let choke_h = choke_part.map(|c| c.inductance_h);

    let unit_capacitance_f = cap.map(|c| c.capacitance_f);
    let tank_capacitance_f = cap.map(|c| c.capacitance_f * f64::from(c.count));
    let coil_inductance_h = parts.work_coil.as_ref().and_then(coil_inductance_h);
    let tank_inductance_h = coil_inductance_h
        .map(|l| choke_h.map_or(l, |lch| resonance::parallel_inductance_h(l, lch)));
    let resonant_frequency_hz = both(coil_inductance_h, tank_capacitance_f)
        .map(|(l, c)| resonance::resonant_frequency_hz(l, c));
    let frequency_with_chokes_hz = choke_h
        .and(both(tank_inductance_h, tank_capacitance_f))
        .map(|(l, c)| resonance::resonant_frequency_hz(l, c));
    let f = op
        .frequency_hz
        .or(frequency_with_chokes_hz)
        .or(resonant_frequency_hz);

    let tank_peak_voltage_v = driver::tank_peak_voltage_v(vin);
    let vrms = driver::tank_rms_voltage_v(vin);
    let coil_reactance_ohm =
        both(f, coil_inductance_h).map(|(f, l)| resonance::inductive_reactance_ohm(f, l));
    let tank_rms_current_a = coil_reactance_ohm.map(|x| vrms / x);
    let capacitor_rms_current_per_unit_a =
        both(f, unit_capacitance_f).map(|(f, c)| resonance::capacitor_current_a(vrms, f, c));
    let reactive_power_var =
        both(f, tank_capacitance_f).map(|(f, c)| resonance::reactive_power_var(vrms, f, c));
    let capacitor_loss_w = cap.and_then(|c| match (c.dissipation_factor, c.esr_ohm) {
        (Some(df), _) => {
            reactive_power_var.map(|q| capacitor::loss_from_dissipation_factor_w(q, df))
        }
        (None, Some(esr)) => capacitor_rms_current_per_unit_a
            .map(|i| f64::from(c.count) * capacitor::loss_from_esr_w(i, esr)),
        (None, None) => None,
    });

    let switch_part = parts.switch.as_ref();
    let switch_peak_voltage_v = driver::switch_peak_voltage_v(vin);
    let switch_voltage_margin = switch_part
        .and_then(|s| s.vds_max_v)
        .map(|vds| driver::switch_voltage_margin(switch_peak_voltage_v, vds));
    let case_c = op.temperatures_c.switch.unwrap_or(ambient_c);
    let switch_thermal = switch_thermal(parts, iin, case_c);

    let gate_resistor_power_w = parts.gate_resistor.as_ref().map(|r| {
        let zener_v = parts.gate_clamp.as_ref().map(|z| z.zener_voltage_v);
        gate::gate_resistor_power_w(vin, r.resistance_ohm, zener_v)
    });

    let choke_reactance_ohm =
        both(f, choke_h).map(|(f, l)| resonance::inductive_reactance_ohm(f, l));
    let choke_reactance_ratio = both(choke_reactance_ohm, coil_reactance_ohm).map(|(a, b)| a / b);
    let choke_ripple_a_pp = both(f, choke_h).map(|(f, l)| choke::ripple_a_pp(vin, f, l));
    let choke_peak_current_a = choke_part
        .zip(both(iin, choke_ripple_a_pp))
        .map(|(c, (i, ripple))| choke::peak_current_a(i, c.count, ripple));
    let choke_dc_loss_w =
        choke_part.and_then(|c| Some(choke::dc_loss_w(iin?, c.count, c.dcr_ohm?)));

    let coil_temp_c = op.temperatures_c.work_coil.unwrap_or(ambient_c);
    let resistivity_ohm_m = copper::resistivity_ohm_m(coil_temp_c);
    let skin_depth_m = f.map(|f| copper::skin_depth_m(resistivity_ohm_m, f, 1.0));
    let coil_ac_resistance_ohm = parts
        .work_coil
        .as_ref()
        .zip(skin_depth_m)
        .and_then(|(w, delta)| coil_ac_resistance_ohm(w, resistivity_ohm_m, delta));
    let coil_copper_loss_w =
        both(tank_rms_current_a, coil_ac_resistance_ohm).map(|(i, r)| i * i * r);

    let input_power_w = iin.map(|i| vin * i);
    // Ratios to the input power are undefined while the heater draws none.
    let drawing_w = input_power_w.filter(|p| *p > 0.0);
    let loaded_q = both(reactive_power_var, drawing_w).map(|(q, p)| resonance::loaded_q(q, p));
    let predicted_loss_w = input_power_w.and_then(|_| {
        sum_of_known([
            capacitor_loss_w,
            switch_thermal.loss_w.map(|p| PER_DRIVER * p),
            gate_resistor_power_w.map(|p| PER_DRIVER * p),
            choke_dc_loss_w,
            coil_copper_loss_w,
        ])
    });
    let workpiece_power_w = both(input_power_w, predicted_loss_w).map(|(p, loss)| p - loss);
    let model_efficiency = both(workpiece_power_w, drawing_w).map(|(out, p)| out / p);

    let inferred_tank_capacitance_f = both(op.frequency_hz, tank_inductance_h)
        .map(|(f, l)| resonance::resonating_capacitance_f(f, l));
    let capacitance_drift =
        both(inferred_tank_capacitance_f, tank_capacitance_f).map(|(c, nominal)| c / nominal - 1.0);

    let mut report = ModelReport {
        tank_capacitance_f,
        coil_inductance_h,
        resonant_frequency_hz,
        frequency_with_chokes_hz,
        operating_frequency_hz: f,
        tank_peak_voltage_v: Some(tank_peak_voltage_v),
        tank_rms_voltage_v: Some(vrms),
        coil_reactance_ohm,
        tank_rms_current_a,
        capacitor_rms_current_per_unit_a,
        reactive_power_var,
        capacitor_loss_w,
        switch_peak_voltage_v: Some(switch_peak_voltage_v),
        switch_voltage_margin,
        switch_conduction_loss_w: switch_thermal.loss_w,
        switch_junction_temp_c: switch_thermal.junction_temp_c,
        switch_thermal_runaway: switch_thermal.runaway,
        gate_resistor_power_w,
        choke_reactance_ohm,
        choke_reactance_ratio,
        choke_ripple_a_pp,
        choke_peak_current_a,
        choke_dc_loss_w,
        skin_depth_m,
        coil_ac_resistance_ohm,
        coil_copper_loss_w,
        input_power_w,
        loaded_q,
        predicted_loss_w,
        workpiece_power_w,
        model_efficiency,
        inferred_tank_capacitance_f,
        capacitance_drift,
        ambient_c,
        flags: Vec::new(),
    };
    report.flags = flags::flags(parts, op, &report);
    report
}

fn both(a: Option<f64>, b: Option<f64>) -> Option<(f64, f64)> {
    a.zip(b)
}

/// The sum of the terms that are known, or `None` when none is.
fn sum_of_known<const N: usize>(terms: [Option<f64>; N]) -> Option<f64> {
    terms.into_iter().flatten().reduce(|sum, term| sum + term)
}

/// The given inductance, else Wheeler's on the geometry (Wheeler, Proc. IRE, 1928).
fn coil_inductance_h(coil: &WorkCoil) -> Option<f64> {
    coil.inductance_h.or_else(|| {
        Some(coil::wheeler_inductance_h(
            coil.turns?,
            coil.mean_diameter_m?,
            coil.length_m?,
        ))
    })
}

/// AC resistance of the winding and its leads (skin effect, IEC 60028 copper); a round
/// conductor's diameter wins over its gauge when both are given.
fn coil_ac_resistance_ohm(
    coil: &WorkCoil,
    resistivity_ohm_m: f64,
    skin_depth_m: f64,
) -> Option<f64> {
    let length_m = coil::conductor_length_m(
        coil.turns?,
        coil.mean_diameter_m?,
        coil.lead_length_m.unwrap_or(0.0),
    );
    match coil.conductor.as_ref()? {
        Conductor::Round { diameter_m, awg } => {
            let diameter_m = diameter_m.or_else(|| awg.map(wire_gauge::awg_diameter_m))?;
            Some(copper::round_wire_ac_resistance_ohm(
                resistivity_ohm_m,
                length_m,
                diameter_m / 2.0,
                skin_depth_m,
            ))
        }
        Conductor::Tube {
            outer_diameter_m,
            wall_m,
        } => Some(copper::tube_ac_resistance_ohm(
            resistivity_ohm_m,
            length_m,
            outer_diameter_m / 2.0,
            *wall_m,
            skin_depth_m,
        )),
    }
}

/// Conduction loss and junction temperature of one switch (derived). Without R_thJC the
/// junction is taken at the case temperature; a missing R_DS(on) tempco is taken as 0 %/K (the
/// 25 °C value) and flagged as a note.
fn switch_thermal(parts: &Parts, supply_current_a: Option<f64>, case_c: f64) -> SwitchThermal {
    let none = SwitchThermal {
        loss_w: None,
        junction_temp_c: None,
        runaway: false,
    };
    let Some(part) = parts.switch.as_ref() else {
        return none;
    };
    let tempco = part.rds_tempco_pct_per_k.unwrap_or(0.0);
    let limit_c = part
        .tj_max_c
        .unwrap_or(super::limits::SWITCH_DEFAULT_TJ_MAX_C.value);
    match (supply_current_a.zip(part.rds_on_ohm), part.rth_jc_k_per_w) {
        (Some((i, r25)), Some(rth)) => {
            match switch::junction_state(i, r25, tempco, case_c, rth, limit_c) {
                switch::JunctionState::Settled {
                    junction_temp_c,
                    loss_w,
                } => SwitchThermal {
                    loss_w: Some(loss_w),
                    junction_temp_c: Some(junction_temp_c),
                    runaway: false,
                },
                switch::JunctionState::Runaway => SwitchThermal {
                    runaway: true,
                    ..none
                },
            }
        }
        (known, None) => SwitchThermal {
            loss_w: known.map(|(i, r25)| {
                switch::conduction_loss_w(i, switch::rds_on_ohm(r25, tempco, case_c))
            }),
            junction_temp_c: Some(case_c),
            runaway: false,
        },
        (None, Some(_)) => none,
    }
}
