//! Gate resistors fed from the supply (derived from the idealised driver waveforms).

/// Forward drop of the cross-coupling diode that pulls the gate low, ≈ 0.7 V for a silicon diode
/// (common practice).
pub const DIODE_FORWARD_VOLTAGE_V: f64 = 0.7;

/// Power in one gate resistor: P = [(V_in − V_F)² + max(0, V_in − V_Z)²]/(2·R). It sees V_in − V_F
/// while its gate is pulled low (half the time) and V_in − V_Z while the zener clamps the gate the
/// other half; without a clamp the gate charges to V_in and the resistor then carries nothing
/// (derived).
pub fn gate_resistor_power_w(
    supply_voltage_v: f64,
    resistance_ohm: f64,
    zener_voltage_v: Option<f64>,
) -> f64 {
    let pulled_low_v = (supply_voltage_v - DIODE_FORWARD_VOLTAGE_V).max(0.0);
    let clamped_v = zener_voltage_v.map_or(0.0, |vz| (supply_voltage_v - vz).max(0.0));
    (pulled_low_v * pulled_low_v + clamped_v * clamped_v) / (2.0 * resistance_ohm)
}
