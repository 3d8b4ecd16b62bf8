//! Supply chokes (derived from the idealised driver waveforms).

use super::angular_frequency_rad_per_s;
use std::f64::consts::PI;

/// k = 2·asin(1/π) + 2·√(π² − 1) − π ≈ 3.4627: the volt-seconds over the half-sine-and-flat drain
/// waveform, in units of V_in/ω (derived).
pub fn ripple_constant() -> f64 {
    2.0 * (1.0 / PI).asin() + 2.0 * (PI * PI - 1.0).sqrt() - PI
}

/// ΔI_pp = k·V_in/(2π·f·L_ch), the peak-to-peak ripple in each choke (derived from V = L·dI/dt).
pub fn ripple_a_pp(supply_voltage_v: f64, frequency_hz: f64, inductance_h: f64) -> f64 {
    ripple_constant() * supply_voltage_v
        / (angular_frequency_rad_per_s(frequency_hz) * inductance_h)
}

/// Peak current of one choke: its share of the supply current plus half the ripple.
pub fn peak_current_a(supply_current_a: f64, count: u32, ripple_a_pp: f64) -> f64 {
    supply_current_a / f64::from(count) + ripple_a_pp / 2.0
}

/// Copper loss of all chokes, count·(I_in/count)²·DCR, the ripple's share neglected.
pub fn dc_loss_w(supply_current_a: f64, count: u32, dcr_ohm: f64) -> f64 {
    let share_a = supply_current_a / f64::from(count);
    f64::from(count) * share_a * share_a * dcr_ohm
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ripple_constant_is_about_3_4627() {
        // Derived: k ≈ 3.4627.
        assert!(
            (ripple_constant() - 3.4627).abs() < 5e-5,
            "{}",
            ripple_constant()
        );
    }
}
