//! Parallel LC resonance and tank quantities (any circuits textbook).

use super::angular_frequency_rad_per_s;
use std::f64::consts::PI;

/// f0 = 1/(2π·√(L·C)) of an ideal LC tank. Any circuits textbook.
pub fn resonant_frequency_hz(inductance_h: f64, capacitance_f: f64) -> f64 {
    1.0 / (2.0 * PI * (inductance_h * capacitance_f).sqrt())
}

/// Z0 = √(L/C), the characteristic impedance of the tank (any circuits textbook).
pub fn characteristic_impedance_ohm(inductance_h: f64, capacitance_f: f64) -> f64 {
    (inductance_h / capacitance_f).sqrt()
}

/// C = 1/((2π·f)²·L): the capacitance that resonates with `inductance_h` at `frequency_hz`,
/// f0 solved for C (derived).
pub fn resonating_capacitance_f(frequency_hz: f64, inductance_h: f64) -> f64 {
    let omega = angular_frequency_rad_per_s(frequency_hz);
    1.0 / (omega * omega * inductance_h)
}

/// L1‖L2 = L1·L2/(L1 + L2). While one switch conducts, the other choke sits across the tank
/// (derived).
pub fn parallel_inductance_h(first_h: f64, second_h: f64) -> f64 {
    first_h * second_h / (first_h + second_h)
}

/// X_L = 2π·f·L (textbook).
pub fn inductive_reactance_ohm(frequency_hz: f64, inductance_h: f64) -> f64 {
    angular_frequency_rad_per_s(frequency_hz) * inductance_h
}

/// I = V·ω·C, the current a capacitor draws at a sinusoidal voltage (derived);
/// RMS in, RMS out; peak in, peak out.
pub fn capacitor_current_a(voltage_v: f64, frequency_hz: f64, capacitance_f: f64) -> f64 {
    voltage_v * angular_frequency_rad_per_s(frequency_hz) * capacitance_f
}

/// Q = V_rms²·ω·C, the reactive power circulating in the tank (derived).
pub fn reactive_power_var(rms_voltage_v: f64, frequency_hz: f64, capacitance_f: f64) -> f64 {
    rms_voltage_v * capacitor_current_a(rms_voltage_v, frequency_hz, capacitance_f)
}

/// E = ½·C·V_p², the energy stored in the tank (derived).
pub fn stored_energy_j(capacitance_f: f64, peak_voltage_v: f64) -> f64 {
    0.5 * capacitance_f * peak_voltage_v * peak_voltage_v
}

/// Q_L = Q/P_in, the loaded quality factor (derived).
pub fn loaded_q(reactive_power_var: f64, input_power_w: f64) -> f64 {
    reactive_power_var / input_power_w
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parallel_of_equal_inductors_is_half() {
        // Arithmetic identity: L‖L = L/2.
        assert!((parallel_inductance_h(2e-6, 2e-6) - 1e-6).abs() < 1e-18);
    }

    #[test]
    fn resonating_capacitance_inverts_the_resonant_frequency() {
        // Derived: f0 solved for C at 100 kHz and 2 µH is 1.2665 µF (1/((2π·1e5)²·2e-6)).
        let c = resonating_capacitance_f(100e3, 2e-6);
        assert!((c - 1.266_515e-6).abs() < 1e-11, "{c}");
    }
}
